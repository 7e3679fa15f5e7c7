//! Printing at 1:1 on ordinary paper: the paper sizes, the margins kept
//! clear for printers that cannot print to the edge, the page furniture
//! (title, a 100 mm and a 4 in calibration bar, the instruction to print
//! at actual size), text measured to fit, and the pages written as PDF
//! (pdf-writer): 1 pt = 1/72 in (ISO 32000-1), so 1 mm = 72/25.4 pt.

use pdf_writer::{Content, Finish, Name, Pdf, Rect, Ref, Str};

use crate::units::MM_PER_INCH;

/// Points per millimetre.
pub const PT_PER_MM: f64 = 72.0 / MM_PER_INCH;
/// Unprintable margin kept clear on every edge, mm.
pub const MARGIN: f64 = 10.0;
/// Overlap between neighbouring tiles, mm.
pub const OVERLAP: f64 = 20.0;
/// Space at the foot of a narrow page for the instruction and the two
/// calibration bars one above the other, mm.
pub const FOOTER: f64 = 24.0;
/// Space at the foot of a page wide enough for the bars side by side, mm.
pub const FOOTER_WIDE: f64 = 15.0;

/// Printable width above which the bars sit side by side, mm.
const BARS_SIDE_BY_SIDE: f64 = 230.0;

/// The footer's height on a page `width` wide, mm.
pub fn footer_height(width: f64) -> f64 {
    if width - 2.0 * MARGIN > BARS_SIDE_BY_SIDE {
        FOOTER_WIDE
    } else {
        FOOTER
    }
}
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
    /// Text in a fixed-pitch face (Courier), for columns that line up.
    Mono {
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

/// A page: its size, marks in page mm, and the tiles it shows.
#[derive(Debug, Clone, PartialEq)]
pub struct Page {
    /// Width, mm.
    pub width: f64,
    /// Height, mm.
    pub height: f64,
    /// Marks in page coordinates.
    pub marks: Vec<Mark>,
    /// The tiles shown (none on a sheet or a map), top to bottom.
    pub tiles: Vec<Tile>,
}

/// Space at the head of each page for its title, mm.
pub const HEADER: f64 = 8.0;

/// Widest a line of Helvetica can be, mm, for `text` at `size` (the
/// drawing's text height; the font is set at 1.4 times it): the widest
/// letters (M, W, m, w, %, @) at a full em, other capitals at 0.78,
/// spaces at 0.28, everything else at 0.68 of the font size — at or above
/// Helvetica's own widths, so text measured so fits.
pub fn text_width(text: &str, size: f64) -> f64 {
    let em = size * 1.4;
    text.chars()
        .map(|c| match c {
            ' ' => 0.28,
            'M' | 'W' | 'm' | 'w' | '%' | '@' => 1.0,
            c if c.is_ascii_uppercase() => 0.78,
            _ => 0.68,
        })
        .sum::<f64>()
        * em
}

/// A line of text at `at` no wider than `room`: set smaller (down to
/// 1.8 mm) when it would run over, and shortened with an ellipsis if even
/// that is too wide.
pub fn fitted(at: [f64; 2], size: f64, text: &str, room: f64) -> Mark {
    let size = (size * room / text_width(text, size)).clamp(1.8, size);
    let mut text = text.to_string();
    while text_width(&text, size) > room && text.len() > 4 {
        text.truncate(text.len() - 4);
        text.push_str("...");
    }
    Mark::Text { at, size, text }
}

/// The two calibration bars and the printing instruction, at the page's
/// foot, inside the printable area of a page `width` wide.
pub fn footer(width: f64) -> Vec<Mark> {
    let y = MARGIN + 7.0;
    let mut m = vec![];
    let bar = |x0: f64, y: f64, len: f64, name: &str, m: &mut Vec<Mark>| {
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
    bar(x0, y, 100.0, "100 mm", &mut m);
    // Side by side where they fit, else the 4 in bar above the 100 mm one.
    let (x1, y1) = if width - 2.0 * MARGIN > BARS_SIDE_BY_SIDE {
        (x0 + 110.0, y)
    } else {
        (x0, y + 9.0)
    };
    bar(x1, y1, 4.0 * MM_PER_INCH, "4 in", &mut m);
    m.push(fitted(
        [MARGIN + 2.0, MARGIN + 1.5],
        2.6,
        "PRINT AT 100 % / ACTUAL SIZE, no fit to page. Measure both bars before cutting.",
        width - 2.0 * MARGIN - 4.0,
    ));
    m
}

/// The title line at the page's head, inside the printable area.
pub fn header(width: f64, height: f64, text: &str) -> Mark {
    fitted(
        [MARGIN, height - MARGIN - 4.5],
        3.0,
        text,
        width - 2.0 * MARGIN,
    )
}

/// The shaping sheet as one page with the calibration bars: the title,
/// then every line in a fixed-pitch face (Courier: each character 0.6 of
/// the font size wide) so the table's columns line up, set as large as the
/// longest line lets (2.0 to 2.6 mm).
pub fn sheet_page(lines: &[String], paper: Paper) -> Page {
    let (w, h) = if paper.roll {
        (paper.width, 297.0)
    } else {
        (paper.height, paper.width)
    };
    let mut marks = footer(w);
    let longest = lines
        .iter()
        .skip(1)
        .map(|l| l.chars().count())
        .max()
        .unwrap_or(1) as f64;
    let size = ((w - 2.0 * MARGIN) / (longest * 0.6 * 1.4)).clamp(2.0, 2.6);
    let mut y = h - MARGIN - 6.0;
    for (i, l) in lines.iter().enumerate() {
        if i == 0 {
            marks.push(fitted([MARGIN, y], 5.0, l, w - 2.0 * MARGIN));
            y -= 8.0;
        } else {
            marks.push(Mark::Mono {
                at: [MARGIN, y],
                size,
                text: l.clone(),
            });
            y -= size * 1.6;
        }
    }
    Page {
        width: w,
        height: h,
        marks,
        tiles: vec![],
    }
}

fn ascii(text: &str) -> Vec<u8> {
    text.chars()
        .map(|c| if c.is_ascii() { c as u8 } else { b'?' })
        .collect()
}

/// Marks drawn into a PDF content stream (`font` for text, `mono` for
/// fixed-pitch text).
pub fn draw(content: &mut Content, marks: &[Mark], font: Name, mono: Name) {
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
            Mark::Text { at, size, text } | Mark::Mono { at, size, text } => {
                content.set_fill_rgb(0.0, 0.0, 0.0);
                content.begin_text();
                let face = if matches!(m, Mark::Mono { .. }) {
                    mono
                } else {
                    font
                };
                content.set_font(face, p(*size) * 1.4);
                content.next_line(p(at[0]), p(at[1]));
                content.show(Str(&ascii(text)));
                content.end_text();
            }
        }
    }
}

/// The pages as a PDF. Inside each tile the content is drawn in drawing
/// coordinates under one translation (`cm`), clipped to its window.
pub fn to_pdf(pages: &[Page]) -> Vec<u8> {
    let mut pdf = Pdf::new();
    let catalog = Ref::new(1);
    let tree = Ref::new(2);
    let font = Ref::new(3);
    let font_name = Name(b"F1");
    let mono = Ref::new(4);
    let mono_name = Name(b"F2");
    let page_ids: Vec<Ref> = (0..pages.len())
        .map(|i| Ref::new(5 + 2 * i as i32))
        .collect();
    pdf.catalog(catalog).pages(tree);
    pdf.pages(tree)
        .kids(page_ids.iter().copied())
        .count(pages.len() as i32);
    pdf.type1_font(font).base_font(Name(b"Helvetica"));
    pdf.type1_font(mono).base_font(Name(b"Courier"));
    for (i, page) in pages.iter().enumerate() {
        let content_id = Ref::new(6 + 2 * i as i32);
        let mut w = pdf.page(page_ids[i]);
        w.media_box(Rect::new(
            0.0,
            0.0,
            (page.width * PT_PER_MM) as f32,
            (page.height * PT_PER_MM) as f32,
        ));
        w.parent(tree);
        w.contents(content_id);
        w.resources()
            .fonts()
            .pair(font_name, font)
            .pair(mono_name, mono);
        w.finish();
        let mut c = Content::new();
        draw(&mut c, &page.marks, font_name, mono_name);
        for t in &page.tiles {
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
            draw(&mut c, &t.marks, font_name, mono_name);
            c.restore_state();
        }
        pdf.stream(content_id, &c.finish());
    }
    pdf.finish()
}
