//! Drawings laid onto ordinary paper at 1:1: pages of exact physical size,
//! margins for printers that cannot print to the edge, tiles that overlap
//! with alignment crosses and cut lines, a label on each tile, an assembly
//! map first, and on every page a 100 mm and a 4 in calibration bar with
//! the instruction to print at actual size. Written as PDF (pdf-writer):
//! 1 pt = 1/72 in (ISO 32000-1), so 1 mm = 72/25.4 pt.

use pdf_writer::{Content, Finish, Name, Pdf, Rect, Ref, Str};

use crate::template::drawing::{Drawing, Item, Role};
use crate::units::MM_PER_INCH;

/// Points per millimetre.
pub const PT_PER_MM: f64 = 72.0 / MM_PER_INCH;
/// Unprintable margin kept clear on every edge, mm.
pub const MARGIN: f64 = 10.0;
/// Overlap between neighbouring tiles, mm.
pub const OVERLAP: f64 = 20.0;
/// Space at the foot of each page for the label and calibration bars, mm.
pub const FOOTER: f64 = 24.0;
/// Line widths, mm.
pub const CUT_WIDTH: f64 = 0.5;
/// Guide line width, mm.
pub const GUIDE_WIDTH: f64 = 0.2;

/// A sheet of paper.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Paper {
    /// Name for labels.
    pub name: &'static str,
    /// Width, mm (portrait).
    pub width: f64,
    /// Height, mm (portrait); for a roll, as long as the drawing needs.
    pub height: f64,
    /// A roll: pages are cut to length.
    pub roll: bool,
}

/// ISO 216 A4, 210 × 297 mm.
pub const A4: Paper = Paper {
    name: "A4",
    width: 210.0,
    height: 297.0,
    roll: false,
};
/// ISO 216 A3, 297 × 420 mm.
pub const A3: Paper = Paper {
    name: "A3",
    width: 297.0,
    height: 420.0,
    roll: false,
};
/// US Letter, 8.5 × 11 in.
pub const LETTER: Paper = Paper {
    name: "Letter",
    width: 8.5 * MM_PER_INCH,
    height: 11.0 * MM_PER_INCH,
    roll: false,
};
/// US Tabloid, 11 × 17 in.
pub const TABLOID: Paper = Paper {
    name: "Tabloid",
    width: 11.0 * MM_PER_INCH,
    height: 17.0 * MM_PER_INCH,
    roll: false,
};

/// Reads `a4`, `a3`, `letter`, `tabloid` or `roll:WIDTH` (a length).
pub fn paper(text: &str) -> Result<Paper, String> {
    match text.trim().to_ascii_lowercase().as_str() {
        "a4" => Ok(A4),
        "a3" => Ok(A3),
        "letter" => Ok(LETTER),
        "tabloid" => Ok(TABLOID),
        other => match other.strip_prefix("roll:") {
            Some(w) => {
                let mm = crate::units::parse_length(w)
                    .map_err(|e| e.to_string())?
                    .to_mm(crate::units::Unit::Mm);
                if (150.0..=2000.0).contains(&mm) {
                    Ok(Paper {
                        name: "roll",
                        width: mm,
                        height: 0.0,
                        roll: true,
                    })
                } else {
                    Err(format!(
                        "roll width {mm:.0} mm: give 150 mm to 2 m, e.g. roll:914mm or roll:36in"
                    ))
                }
            }
            None => Err(format!(
                "paper `{text}`: use a4, a3, letter, tabloid or roll:WIDTH"
            )),
        },
    }
}

/// One thing on a page, in page millimetres from the bottom-left corner,
/// or (inside a tile) in drawing millimetres.
#[derive(Debug, Clone, PartialEq)]
pub enum Mark {
    /// A polyline of a given width (mm), dashed or not, grey or black.
    Line {
        points: Vec<[f64; 2]>,
        closed: bool,
        width: f64,
        dashed: bool,
        grey: bool,
    },
    /// Text.
    Text {
        at: [f64; 2],
        size: f64,
        text: String,
    },
}

/// A tile of a drawing on a page.
#[derive(Debug, Clone, PartialEq)]
pub struct Tile {
    /// Row from the bottom, column from the left (0-based).
    pub row: usize,
    /// Column.
    pub column: usize,
    /// Drawing region shown: lower-left corner, mm.
    pub origin: [f64; 2],
    /// Size of the printable window, mm.
    pub window: [f64; 2],
    /// Where the window's lower-left corner sits on the page, mm.
    pub at: [f64; 2],
    /// The drawing's marks in drawing mm (clipped to the window when drawn).
    pub marks: Vec<Mark>,
}

/// A page: its size, marks in page mm, and maybe a tile.
#[derive(Debug, Clone, PartialEq)]
pub struct Page {
    /// Width, mm.
    pub width: f64,
    /// Height, mm.
    pub height: f64,
    /// Marks in page coordinates.
    pub marks: Vec<Mark>,
    /// The tile shown, if any.
    pub tile: Option<Tile>,
}

fn drawing_marks(d: &Drawing) -> Vec<Mark> {
    d.items
        .iter()
        .map(|i| match i {
            Item::Line {
                points,
                closed,
                role,
            } => Mark::Line {
                points: points.clone(),
                closed: *closed,
                width: if *role == Role::Cut {
                    CUT_WIDTH
                } else {
                    GUIDE_WIDTH
                },
                dashed: false,
                grey: *role == Role::Guide,
            },
            Item::Text { at, size, text } => Mark::Text {
                at: *at,
                size: *size,
                text: text.clone(),
            },
        })
        .collect()
}

/// The two calibration bars and the printing instruction, at the page's foot.
fn footer(width: f64, label: &str) -> Vec<Mark> {
    let y = MARGIN + 6.0;
    let mut m = vec![];
    let bar = |x0: f64, len: f64, name: &str, m: &mut Vec<Mark>| {
        m.push(Mark::Line {
            points: vec![[x0, y], [x0 + len, y]],
            closed: false,
            width: 0.4,
            dashed: false,
            grey: false,
        });
        for x in [x0, x0 + len] {
            m.push(Mark::Line {
                points: vec![[x, y - 2.0], [x, y + 2.0]],
                closed: false,
                width: 0.3,
                dashed: false,
                grey: false,
            });
        }
        m.push(Mark::Text {
            at: [x0, y + 3.0],
            size: 2.5,
            text: name.into(),
        });
    };
    let x0 = MARGIN + 2.0;
    bar(x0, 100.0, "100 mm", &mut m);
    let x1 = if width - 2.0 * MARGIN > 230.0 {
        x0 + 110.0
    } else {
        x0
    };
    let y1 = if x1 == x0 { 9.0 } else { 0.0 };
    m.push(Mark::Line {
        points: vec![[x1, y + y1], [x1 + 4.0 * MM_PER_INCH, y + y1]],
        closed: false,
        width: 0.4,
        dashed: false,
        grey: false,
    });
    for x in [x1, x1 + 4.0 * MM_PER_INCH] {
        m.push(Mark::Line {
            points: vec![[x, y + y1 - 2.0], [x, y + y1 + 2.0]],
            closed: false,
            width: 0.3,
            dashed: false,
            grey: false,
        });
    }
    m.push(Mark::Text {
        at: [x1, y + y1 + 3.0],
        size: 2.5,
        text: "4 in".into(),
    });
    m.push(Mark::Text {
        at: [MARGIN + 2.0, MARGIN + 1.0],
        size: 2.6,
        text: format!("PRINT AT 100 % / ACTUAL SIZE, no fit to page. Measure both bars before cutting. {label}"),
    });
    m
}

/// Lays `drawing` onto `paper`: an assembly map, then the tiles (in the
/// orientation that needs fewer pages).
pub fn tile(drawing: &Drawing, paper: Paper, board: &str) -> Vec<Page> {
    // On a roll the board's length runs along the roll: turn the drawing a
    // quarter turn, so one length of roll holds what is narrower than it.
    if paper.roll && drawing.width > drawing.height {
        return tile(&quarter_turn(drawing), paper, board);
    }
    let layout = |pw: f64, ph: f64| {
        let (ww, wh) = (pw - 2.0 * MARGIN, ph - 2.0 * MARGIN - FOOTER);
        let (sx, sy) = (ww - OVERLAP, wh - OVERLAP);
        let cols = (((drawing.width - OVERLAP) / sx).ceil() as usize).max(1);
        let rows = (((drawing.height - OVERLAP) / sy).ceil() as usize).max(1);
        (pw, ph, ww, wh, sx, sy, cols, rows)
    };
    let options = if paper.roll {
        let ph = drawing.height + 2.0 * MARGIN + FOOTER;
        vec![layout(paper.width, ph.max(200.0))]
    } else {
        vec![
            layout(paper.width, paper.height),
            layout(paper.height, paper.width),
        ]
    };
    let (pw, ph, ww, wh, sx, sy, cols, rows) = options
        .into_iter()
        .min_by_key(|o| o.6 * o.7)
        .expect("a layout");
    let marks = drawing_marks(drawing);
    let mut pages = vec![];
    // Assembly map: the drawing scaled to fit, the tile grid over it.
    let scale = ((pw - 2.0 * MARGIN) / drawing.width)
        .min((ph - 2.0 * MARGIN - FOOTER - 40.0) / drawing.height)
        .min(1.0);
    let (mx, my) = (MARGIN, MARGIN + FOOTER + 10.0);
    let mut map = footer(pw, &format!("{board} {}: assembly map", drawing.kind));
    map.push(Mark::Text {
        at: [MARGIN, ph - MARGIN - 6.0],
        size: 5.0,
        text: drawing.title.clone(),
    });
    map.push(Mark::Text {
        at: [MARGIN, ph - MARGIN - 13.0],
        size: 3.0,
        text: format!("{} pages of {} ({} rows x {} columns); tiles overlap {OVERLAP:.0} mm; trim on the dashed lines, match the crosses, tape.", rows * cols, paper.name, rows, cols),
    });
    for m in &marks {
        if let Mark::Line {
            points,
            closed,
            grey: false,
            ..
        } = m
        {
            map.push(Mark::Line {
                points: points
                    .iter()
                    .map(|p| [mx + p[0] * scale, my + p[1] * scale])
                    .collect(),
                closed: *closed,
                width: 0.3,
                dashed: false,
                grey: false,
            });
        }
    }
    for r in 0..rows {
        for c in 0..cols {
            let (x0, y0) = (c as f64 * sx, r as f64 * sy);
            let rect = [[x0, y0], [x0 + ww, y0], [x0 + ww, y0 + wh], [x0, y0 + wh]];
            map.push(Mark::Line {
                points: rect
                    .iter()
                    .map(|p| [mx + p[0] * scale, my + p[1] * scale])
                    .collect(),
                closed: true,
                width: 0.2,
                dashed: true,
                grey: true,
            });
            map.push(Mark::Text {
                at: [mx + (x0 + 3.0) * scale, my + (y0 + 3.0) * scale + 1.0],
                size: 2.5,
                text: format!("r{} c{}", r + 1, c + 1),
            });
        }
    }
    pages.push(Page {
        width: pw,
        height: ph,
        marks: map,
        tile: None,
    });
    for r in 0..rows {
        for c in 0..cols {
            let origin = [c as f64 * sx, r as f64 * sy];
            let mut tm = marks.clone();
            // Cut lines through the middle of each overlap, crosses where they meet.
            let cut_x: Vec<f64> = (1..cols).map(|k| k as f64 * sx + OVERLAP / 2.0).collect();
            let cut_y: Vec<f64> = (1..rows).map(|k| k as f64 * sy + OVERLAP / 2.0).collect();
            for &x in &cut_x {
                tm.push(Mark::Line {
                    points: vec![[x, origin[1]], [x, origin[1] + wh]],
                    closed: false,
                    width: 0.2,
                    dashed: true,
                    grey: true,
                });
            }
            for &y in &cut_y {
                tm.push(Mark::Line {
                    points: vec![[origin[0], y], [origin[0] + ww, y]],
                    closed: false,
                    width: 0.2,
                    dashed: true,
                    grey: true,
                });
            }
            let xs: Vec<f64> = std::iter::once(OVERLAP / 2.0)
                .chain(cut_x.iter().copied())
                .chain(std::iter::once(drawing.width - OVERLAP / 2.0))
                .collect();
            let ys: Vec<f64> = std::iter::once(OVERLAP / 2.0)
                .chain(cut_y.iter().copied())
                .chain(std::iter::once(drawing.height - OVERLAP / 2.0))
                .collect();
            for &x in &xs {
                for &y in &ys {
                    for (a, b) in [([x - 5.0, y], [x + 5.0, y]), ([x, y - 5.0], [x, y + 5.0])] {
                        tm.push(Mark::Line {
                            points: vec![a, b],
                            closed: false,
                            width: 0.25,
                            dashed: false,
                            grey: false,
                        });
                    }
                }
            }
            let mut page_marks = footer(
                pw,
                &format!(
                    "{board} {}: row {} of {rows}, column {} of {cols} (rows from the bottom).",
                    drawing.kind,
                    r + 1,
                    c + 1
                ),
            );
            page_marks.push(Mark::Text {
                at: [MARGIN, ph - MARGIN + 3.0],
                size: 3.0,
                text: format!("{} - r{} c{}", drawing.title, r + 1, c + 1),
            });
            let window = [MARGIN, MARGIN + FOOTER];
            page_marks.push(Mark::Line {
                points: vec![
                    window,
                    [window[0] + ww, window[1]],
                    [window[0] + ww, window[1] + wh],
                    [window[0], window[1] + wh],
                ],
                closed: true,
                width: 0.1,
                dashed: false,
                grey: true,
            });
            pages.push(Page {
                width: pw,
                height: ph,
                marks: page_marks,
                tile: Some(Tile {
                    row: r,
                    column: c,
                    origin,
                    window: [ww, wh],
                    at: window,
                    marks: tm,
                }),
            });
        }
    }
    pages
}

/// The drawing turned a quarter turn anticlockwise: (x, y) → (H − y, x).
/// Text keeps reading left to right at its turned anchor.
fn quarter_turn(d: &Drawing) -> Drawing {
    let turn = |p: &[f64; 2]| [d.height - p[1], p[0]];
    let items = d
        .items
        .iter()
        .map(|i| match i {
            Item::Line {
                points,
                closed,
                role,
            } => Item::Line {
                points: points.iter().map(turn).collect(),
                closed: *closed,
                role: *role,
            },
            Item::Text { at, size, text } => Item::Text {
                at: turn(at),
                size: *size,
                text: text.clone(),
            },
        })
        .collect();
    Drawing {
        kind: d.kind,
        title: d.title.clone(),
        width: d.height,
        height: d.width,
        items,
    }
}

fn ascii(text: &str) -> Vec<u8> {
    text.chars()
        .map(|c| if c.is_ascii() { c as u8 } else { b'?' })
        .collect()
}

fn draw(content: &mut Content, marks: &[Mark], font: Name) {
    let p = |v: f64| (v * PT_PER_MM) as f32;
    for m in marks {
        match m {
            Mark::Line {
                points,
                closed,
                width,
                dashed,
                grey,
            } => {
                if points.len() < 2 {
                    continue;
                }
                content.set_line_width(p(*width));
                let g = if *grey { 0.45 } else { 0.0 };
                content.set_stroke_rgb(g, g, g);
                if *dashed {
                    content.set_dash_pattern([p(3.0), p(2.0)], 0.0);
                } else {
                    content.set_dash_pattern([], 0.0);
                }
                content.move_to(p(points[0][0]), p(points[0][1]));
                for q in &points[1..] {
                    content.line_to(p(q[0]), p(q[1]));
                }
                if *closed {
                    content.close_path();
                }
                content.stroke();
            }
            Mark::Text { at, size, text } => {
                content.set_fill_rgb(0.0, 0.0, 0.0);
                content.begin_text();
                content.set_font(font, p(*size) * 1.4);
                content.next_line(p(at[0]), p(at[1]));
                content.show(Str(&ascii(text)));
                content.end_text();
            }
        }
    }
}

/// The pages as a PDF. Inside a tile the content is drawn in drawing
/// coordinates under one translation (`cm`), clipped to the window.
pub fn to_pdf(pages: &[Page]) -> Vec<u8> {
    let mut pdf = Pdf::new();
    let catalog = Ref::new(1);
    let tree = Ref::new(2);
    let font = Ref::new(3);
    let font_name = Name(b"F1");
    let page_ids: Vec<Ref> = (0..pages.len())
        .map(|i| Ref::new(4 + 2 * i as i32))
        .collect();
    pdf.catalog(catalog).pages(tree);
    pdf.pages(tree)
        .kids(page_ids.iter().copied())
        .count(pages.len() as i32);
    pdf.type1_font(font).base_font(Name(b"Helvetica"));
    for (i, page) in pages.iter().enumerate() {
        let content_id = Ref::new(5 + 2 * i as i32);
        let mut w = pdf.page(page_ids[i]);
        w.media_box(Rect::new(
            0.0,
            0.0,
            (page.width * PT_PER_MM) as f32,
            (page.height * PT_PER_MM) as f32,
        ));
        w.parent(tree);
        w.contents(content_id);
        w.resources().fonts().pair(font_name, font);
        w.finish();
        let mut c = Content::new();
        draw(&mut c, &page.marks, font_name);
        if let Some(t) = &page.tile {
            let p = |v: f64| (v * PT_PER_MM) as f32;
            c.save_state();
            c.rect(p(t.at[0]), p(t.at[1]), p(t.window[0]), p(t.window[1]));
            c.clip_nonzero();
            c.end_path();
            c.transform([
                1.0,
                0.0,
                0.0,
                1.0,
                p(t.at[0] - t.origin[0]),
                p(t.at[1] - t.origin[1]),
            ]);
            draw(&mut c, &t.marks, font_name);
            c.restore_state();
        }
        pdf.stream(content_id, &c.finish());
    }
    pdf.finish()
}

/// The shaping sheet as one page of text with the calibration bars.
pub fn sheet_page(lines: &[String], paper: Paper, board: &str) -> Page {
    let (w, h) = if paper.roll {
        (paper.width, 297.0)
    } else {
        (paper.height, paper.width)
    };
    let mut marks = footer(w, &format!("{board}: shaping sheet"));
    let mut y = h - MARGIN - 6.0;
    for (i, l) in lines.iter().enumerate() {
        let size = if i == 0 { 5.0 } else { 2.6 };
        marks.push(Mark::Text {
            at: [MARGIN, y],
            size,
            text: l.clone(),
        });
        y -= if i == 0 { 8.0 } else { 4.2 };
    }
    Page {
        width: w,
        height: h,
        marks,
        tile: None,
    }
}
