//! Drawings laid onto paper at 1:1: each drawing cut into pages only
//! where it holds something, tiles that overlap with alignment crosses and
//! cut lines, a label on each tile, and an assembly map first (the paper
//! and the page furniture in `print`).

use crate::template::drawing::{Drawing, Item, Role};
use crate::template::print::*;

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
