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
fn fitted(at: [f64; 2], size: f64, text: &str, room: f64) -> Mark {
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
fn footer(width: f64) -> Vec<Mark> {
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
fn header(width: f64, height: f64, text: &str) -> Mark {
    fitted(
        [MARGIN, height - MARGIN - 4.5],
        3.0,
        text,
        width - 2.0 * MARGIN,
    )
}

/// What a drawing holds, for finding where it needs paper: each segment
/// of a line, and each label's box.
enum Piece {
    Segment([f64; 2], [f64; 2]),
    Label([f64; 4]),
}

impl Piece {
    /// The heights it reaches between `x0` and `x1`, if it reaches there.
    fn span(&self, x0: f64, x1: f64) -> Option<(f64, f64)> {
        match *self {
            Piece::Segment(a, b) => {
                let (lo, hi) = (a[0].min(b[0]), a[0].max(b[0]));
                if hi < x0 || lo > x1 {
                    return None;
                }
                let y = |x: f64| {
                    if (b[0] - a[0]).abs() < 1e-12 {
                        a[1]
                    } else {
                        a[1] + (b[1] - a[1]) * (x - a[0]) / (b[0] - a[0])
                    }
                };
                let (ya, yb) = if (b[0] - a[0]).abs() < 1e-12 {
                    (a[1], b[1])
                } else {
                    (y(lo.max(x0)), y(hi.min(x1)))
                };
                Some((ya.min(yb), ya.max(yb)))
            }
            Piece::Label(r) => (r[2] >= x0 && r[0] <= x1).then_some((r[1], r[3])),
        }
    }
}

fn pieces(drawing: &Drawing) -> Vec<Piece> {
    let mut out = vec![];
    for item in &drawing.items {
        match item {
            Item::Line { points, closed, .. } => {
                let n = points.len();
                let segments = if *closed { n } else { n.saturating_sub(1) };
                for k in 0..segments {
                    out.push(Piece::Segment(points[k], points[(k + 1) % n]));
                }
            }
            Item::Text { at, size, text } => out.push(Piece::Label([
                at[0],
                at[1] - 0.3 * size,
                at[0] + text_width(text, *size),
                at[1] + size,
            ])),
        }
    }
    out
}

/// A sheet's tiles over a drawing: `windows` (lower-left corners in the
/// drawing, mm) of `ww` × `wh` with their row within their column.
struct Layout {
    pw: f64,
    ph: f64,
    ww: f64,
    wh: f64,
    sx: f64,
    cols: usize,
    /// (column, row within it, lower-left corner).
    windows: Vec<(usize, usize, [f64; 2])>,
}

/// The tiles of a page `pw` × `ph` over a drawing's content: columns
/// `ww − OVERLAP` apart; in each column, rows from the lowest thing drawn
/// there to the highest (a column with nothing drawn gets no tiles, and a
/// long, low drawing needs no empty rows where it is low).
fn layout(pieces: &[Piece], drawing: &Drawing, pw: f64, ph: f64) -> Layout {
    let (ww, wh) = (
        pw - 2.0 * MARGIN,
        ph - 2.0 * MARGIN - footer_height(pw) - HEADER,
    );
    let (sx, sy) = (ww - OVERLAP, wh - OVERLAP);
    let cols = (((drawing.width - OVERLAP) / sx).ceil() as usize).max(1);
    let mut windows = vec![];
    for c in 0..cols {
        let (x0, x1) = (c as f64 * sx, c as f64 * sx + ww);
        let (lo, hi) = pieces
            .iter()
            .filter_map(|p| p.span(x0, x1))
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), b| {
                (lo.min(b.0), hi.max(b.1))
            });
        if lo > hi {
            continue;
        }
        // From the lowest thing drawn in the column, as many rows as reach
        // the highest.
        let rows = (((hi - lo - wh) / sy).ceil().max(0.0) as usize) + 1;
        for r in 0..rows {
            windows.push((c, r, [x0, lo + r as f64 * sy]));
        }
    }
    Layout {
        pw,
        ph,
        ww,
        wh,
        sx,
        cols,
        windows,
    }
}

/// A drawing ready to lay out: turned for a roll where it must be, its
/// tiles chosen (the orientation that needs fewer pages).
struct Planned {
    drawing: Drawing,
    layout: Layout,
}

fn plan(drawing: &Drawing, paper: Paper) -> Option<Planned> {
    // On a roll the board's length runs along the roll: turn the drawing a
    // quarter turn, so one length of roll holds what is narrower than it.
    let drawing = if paper.roll && drawing.width > drawing.height {
        quarter_turn(drawing)
    } else {
        drawing.clone()
    };
    let pieces = pieces(&drawing);
    let options = if paper.roll {
        let ph = drawing.height + 2.0 * MARGIN + footer_height(paper.width) + HEADER;
        vec![layout(&pieces, &drawing, paper.width, ph.max(200.0))]
    } else {
        vec![
            layout(&pieces, &drawing, paper.width, paper.height),
            layout(&pieces, &drawing, paper.height, paper.width),
        ]
    };
    let layout = options.into_iter().min_by_key(|o| o.windows.len())?;
    Some(Planned { drawing, layout })
}

/// Lays `drawing` onto `paper`: an assembly map when it takes more than
/// one tile, then the tiles.
pub fn tile(drawing: &Drawing, paper: Paper) -> Vec<Page> {
    tile_all(std::slice::from_ref(drawing), paper)
}

/// Lays `drawings` onto `paper`: one assembly page with every drawing's
/// map (when any takes more than one tile), then each drawing's tiles.
pub fn tile_all(drawings: &[Drawing], paper: Paper) -> Vec<Page> {
    let planned: Vec<Planned> = drawings.iter().filter_map(|d| plan(d, paper)).collect();
    let mut pages = vec![];
    if planned.iter().any(|p| p.layout.windows.len() > 1) {
        pages.push(assembly_page(&planned, paper));
    }
    for p in &planned {
        pages.extend(tiles(&p.drawing, &p.layout));
    }
    pages
}

/// A drawing's tile pages.
fn tiles(drawing: &Drawing, l: &Layout) -> Vec<Page> {
    let marks = drawing_marks(drawing);
    let guides = cut_lines_and_crosses(l);
    let mut pages = vec![];
    for &(c, r, origin) in &l.windows {
        let rows = l.windows.iter().filter(|w| w.0 == c).count();
        let mut tm = marks.clone();
        tm.extend(guides.iter().cloned());
        let mut page_marks = footer(l.pw);
        page_marks.push(header(
            l.pw,
            l.ph,
            &format!(
                "{} - column {} of {}, row {} of {rows}",
                drawing.title,
                c + 1,
                l.cols,
                r + 1
            ),
        ));
        let window = [MARGIN, MARGIN + footer_height(l.pw)];
        page_marks.push(Mark::Line {
            points: vec![
                window,
                [window[0] + l.ww, window[1]],
                [window[0] + l.ww, window[1] + l.wh],
                [window[0], window[1] + l.wh],
            ],
            closed: true,
            width: 0.1,
            dashed: false,
            grey: true,
        });
        pages.push(Page {
            width: l.pw,
            height: l.ph,
            marks: page_marks,
            tile: Some(Tile {
                row: r,
                column: c,
                origin,
                window: [l.ww, l.wh],
                at: window,
                marks: tm,
            }),
        });
    }
    pages
}

/// The dashed cut lines through the middle of each overlap, and alignment
/// crosses where both neighbours print them, in drawing mm.
fn cut_lines_and_crosses(l: &Layout) -> Vec<Mark> {
    let mut out = vec![];
    let dashed = |a: [f64; 2], b: [f64; 2]| Mark::Line {
        points: vec![a, b],
        closed: false,
        width: 0.2,
        dashed: true,
        grey: true,
    };
    let cross = |x: f64, y: f64, out: &mut Vec<Mark>| {
        for (a, b) in [([x - 5.0, y], [x + 5.0, y]), ([x, y - 5.0], [x, y + 5.0])] {
            out.push(Mark::Line {
                points: vec![a, b],
                closed: false,
                width: 0.25,
                dashed: false,
                grey: false,
            });
        }
    };
    let span = |c: usize| {
        l.windows
            .iter()
            .filter(|w| w.0 == c)
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), w| {
                (lo.min(w.2[1]), hi.max(w.2[1] + l.wh))
            })
    };
    for c in 0..l.cols {
        let (lo, hi) = span(c);
        if lo > hi {
            continue;
        }
        // Between this column's rows.
        let mut ys: Vec<f64> = l
            .windows
            .iter()
            .filter(|w| w.0 == c && w.1 > 0)
            .map(|w| w.2[1] + OVERLAP / 2.0)
            .collect();
        let x0 = c as f64 * l.sx;
        for &y in &ys {
            out.push(dashed([x0, y], [x0 + l.ww, y]));
            cross(x0 + OVERLAP / 2.0 + 10.0, y, &mut out);
            cross(x0 + l.ww - OVERLAP / 2.0 - 10.0, y, &mut out);
        }
        // Between this column and the next, over the height both cover.
        let (nlo, nhi) = if c + 1 < l.cols {
            span(c + 1)
        } else {
            (1.0, 0.0)
        };
        let (a, b) = (lo.max(nlo), hi.min(nhi));
        if a < b {
            let x = (c + 1) as f64 * l.sx + OVERLAP / 2.0;
            out.push(dashed([x, lo.min(nlo)], [x, hi.max(nhi)]));
            ys.clear();
            let n = ((b - a) / (l.wh / 2.0)).ceil().max(1.0) as usize;
            for k in 0..=n {
                let y = a + 8.0 + (b - a - 16.0).max(0.0) * k as f64 / n as f64;
                cross(x, y, &mut out);
            }
        }
    }
    out
}

/// The assembly page: every drawing's map one above the other at one
/// scale, each printed tile over it with its column and row.
fn assembly_page(planned: &[Planned], paper: Paper) -> Page {
    // The extent of each map: its drawing and every tile.
    let extents: Vec<([f64; 2], [f64; 2])> = planned
        .iter()
        .map(|p| {
            let l = &p.layout;
            let (mut lo, mut hi) = ([0.0f64, 0.0f64], [p.drawing.width, p.drawing.height]);
            for w in &l.windows {
                lo = [lo[0].min(w.2[0]), lo[1].min(w.2[1])];
                hi = [hi[0].max(w.2[0] + l.ww), hi[1].max(w.2[1] + l.wh)];
            }
            (lo, hi)
        })
        .collect();
    let widest = extents
        .iter()
        .map(|(lo, hi)| hi[0] - lo[0])
        .fold(1.0, f64::max);
    let tallest: f64 = extents.iter().map(|(lo, hi)| hi[1] - lo[1]).sum();
    // Landscape sheets; a roll as long as the maps need.
    const TITLE: f64 = 9.0;
    let pw = if paper.roll {
        paper.width
    } else {
        paper.height
    };
    let room_w = pw - 2.0 * MARGIN;
    let furniture = 2.0 * MARGIN + footer_height(pw) + HEADER + 8.0 + TITLE * planned.len() as f64;
    let ph = if paper.roll {
        (furniture + tallest * room_w / widest).max(200.0)
    } else {
        paper.width
    };
    let scale = (room_w / widest).min((ph - furniture) / tallest).min(1.0);
    let count: usize = planned.iter().map(|p| p.layout.windows.len()).sum();
    let mut marks = footer(pw);
    marks.push(header(pw, ph, "Assembly: where each tile goes"));
    marks.push(fitted(
        [MARGIN, ph - MARGIN - HEADER - 4.0],
        2.6,
        &format!(
            "{count} tiles, one a page of {}; tiles overlap {OVERLAP:.0} mm; trim on the dashed lines, match the crosses, tape. Blank areas are not printed.",
            paper.name
        ),
        room_w,
    ));
    let mut top = ph - MARGIN - HEADER - 8.0;
    for (p, (lo, hi)) in planned.iter().zip(&extents) {
        let l = &p.layout;
        marks.push(fitted([MARGIN, top - 5.0], 3.0, &p.drawing.title, room_w));
        top -= TITLE;
        let (mx, my) = (MARGIN - lo[0] * scale, top - hi[1] * scale);
        let at = |q: &[f64; 2]| [mx + q[0] * scale, my + q[1] * scale];
        for m in drawing_marks(&p.drawing) {
            if let Mark::Line {
                points,
                closed,
                grey: false,
                ..
            } = m
            {
                marks.push(Mark::Line {
                    points: points.iter().map(at).collect(),
                    closed,
                    width: 0.3,
                    dashed: false,
                    grey: false,
                });
            }
        }
        for &(c, r, [x0, y0]) in &l.windows {
            let rect = [
                [x0, y0],
                [x0 + l.ww, y0],
                [x0 + l.ww, y0 + l.wh],
                [x0, y0 + l.wh],
            ];
            marks.push(Mark::Line {
                points: rect.iter().map(at).collect(),
                closed: true,
                width: 0.2,
                dashed: true,
                grey: true,
            });
            marks.push(Mark::Text {
                at: at(&[x0 + 3.0 / scale, y0 + 3.0 / scale]),
                size: 2.0,
                text: format!("c{} r{}", c + 1, r + 1),
            });
        }
        top -= (hi[1] - lo[1]) * scale;
    }
    Page {
        width: pw,
        height: ph,
        marks,
        tile: None,
    }
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

fn draw(content: &mut Content, marks: &[Mark], font: Name, mono: Name) {
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

/// The pages as a PDF. Inside a tile the content is drawn in drawing
/// coordinates under one translation (`cm`), clipped to the window.
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
            draw(&mut c, &t.marks, font_name, mono_name);
            c.restore_state();
        }
        pdf.stream(content_id, &c.finish());
    }
    pdf.finish()
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
        tile: None,
    }
}
