//! Drawings laid onto paper at 1:1: each drawing's tiles (where they go,
//! and which share a page, from `layout`) on their pages, overlapping with
//! alignment crosses and cut lines, each tile named, and an assembly map
//! first (the paper and the page furniture in `print`).

use crate::template::drawing::{Drawing, Item, Role};
use crate::template::layout::{CAPTION, Layout, layout, pieces};
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
    if pieces.is_empty() {
        return None;
    }
    let options = if paper.roll {
        let ph = drawing.height + 2.0 * MARGIN + footer_height(paper.width) + HEADER;
        vec![layout(&pieces, paper.width, ph.max(200.0), true)]
    } else {
        vec![
            layout(&pieces, paper.width, paper.height, false),
            layout(&pieces, paper.height, paper.width, false),
        ]
    };
    let layout = options.into_iter().min_by_key(|o| o.pages.len())?;
    Some(Planned { drawing, layout })
}

/// Lays `drawing` onto `paper`: an assembly map when it takes more than
/// one tile, then the tiles.
pub fn tile(drawing: &Drawing, paper: Paper) -> Vec<Page> {
    tile_all(std::slice::from_ref(drawing), paper)
}

/// Lays `drawings` onto `paper`: one assembly page with the map of every
/// drawing that is printed in more than one tile of a part, then each
/// drawing's pages.
pub fn tile_all(drawings: &[Drawing], paper: Paper) -> Vec<Page> {
    let planned: Vec<Planned> = drawings.iter().filter_map(|d| plan(d, paper)).collect();
    let mut pages = vec![];
    let assembled: Vec<&Planned> = planned.iter().filter(|p| needs_map(&p.layout)).collect();
    if !assembled.is_empty() {
        pages.push(assembly_page(&assembled, paper));
    }
    for p in &planned {
        pages.extend(tiles(&p.drawing, &p.layout));
    }
    pages
}

/// Whether some part of the drawing takes more than one tile.
fn needs_map(l: &Layout) -> bool {
    (0..l.cols.len()).any(|part| l.windows.iter().filter(|w| w.part == part).count() > 1)
}

/// A drawing's pages: one tile under the page's heading, or several one
/// above the other, each under its caption.
fn tiles(drawing: &Drawing, l: &Layout) -> Vec<Page> {
    let marks = drawing_marks(drawing);
    let guides = cut_lines_and_crosses(l);
    let mut tm = marks;
    tm.extend(guides);
    let mut pages = vec![];
    for on_page in &l.pages {
        let mut page_marks = footer(l.pw);
        let heading = match on_page.as_slice() {
            [k] => format!("{} - {}", drawing.title, l.name(&l.windows[*k])),
            _ => format!("{} - {} tiles", drawing.title, on_page.len()),
        };
        page_marks.push(header(l.pw, l.ph, &heading));
        let mut top = l.ph - MARGIN - HEADER;
        let mut tiles = vec![];
        for &k in on_page {
            let w = &l.windows[k];
            if on_page.len() > 1 {
                page_marks.push(fitted(
                    [MARGIN, top - CAPTION + 1.8],
                    2.8,
                    &format!("{} - {}", drawing.kind, l.name(w)),
                    l.ww,
                ));
                top -= CAPTION;
            }
            let at = [MARGIN, top - w.size[1]];
            page_marks.push(Mark::Line {
                points: vec![
                    at,
                    [at[0] + w.size[0], at[1]],
                    [at[0] + w.size[0], at[1] + w.size[1]],
                    [at[0], at[1] + w.size[1]],
                ],
                closed: true,
                width: 0.1,
                dashed: false,
                grey: true,
            });
            tiles.push(Tile {
                row: w.row,
                column: w.column,
                origin: w.origin,
                window: w.size,
                at,
                marks: tm.clone(),
            });
            top -= w.size[1];
        }
        pages.push(Page {
            width: l.pw,
            height: l.ph,
            marks: page_marks,
            tiles,
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
    for (part, &cols) in l.cols.iter().enumerate() {
        let column = |c: usize| {
            l.windows
                .iter()
                .filter(move |w| w.part == part && w.column == c)
        };
        let span = |c: usize| {
            column(c).fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), w| {
                (lo.min(w.origin[1]), hi.max(w.origin[1] + w.size[1]))
            })
        };
        for c in 0..cols {
            let Some(first) = column(c).next() else {
                continue;
            };
            let x0 = first.origin[0];
            let (lo, hi) = span(c);
            // Between this column's rows.
            for w in column(c).filter(|w| w.row > 0) {
                let y = w.origin[1] + OVERLAP / 2.0;
                out.push(dashed([x0, y], [x0 + l.ww, y]));
                cross(x0 + OVERLAP / 2.0 + 10.0, y, &mut out);
                cross(x0 + l.ww - OVERLAP / 2.0 - 10.0, y, &mut out);
            }
            // Between this column and the next, over the height both cover.
            let (nlo, nhi) = if c + 1 < cols {
                span(c + 1)
            } else {
                (1.0, 0.0)
            };
            let (a, b) = (lo.max(nlo), hi.min(nhi));
            if a < b {
                let x = x0 + l.ww - OVERLAP / 2.0;
                out.push(dashed([x, lo.min(nlo)], [x, hi.max(nhi)]));
                let n = ((b - a) / (l.wh / 2.0)).ceil().max(1.0) as usize;
                for k in 0..=n {
                    let y = a + 8.0 + (b - a - 16.0).max(0.0) * k as f64 / n as f64;
                    cross(x, y, &mut out);
                }
            }
        }
    }
    out
}

/// The assembly page: every drawing's map one above the other at one
/// scale, each printed tile over it with its column and row.
fn assembly_page(planned: &[&Planned], paper: Paper) -> Page {
    // The extent of each map: its drawing and every tile.
    let extents: Vec<([f64; 2], [f64; 2])> = planned
        .iter()
        .map(|p| {
            let (mut lo, mut hi) = ([0.0f64, 0.0f64], [p.drawing.width, p.drawing.height]);
            for w in &p.layout.windows {
                lo = [lo[0].min(w.origin[0]), lo[1].min(w.origin[1])];
                hi = [
                    hi[0].max(w.origin[0] + w.size[0]),
                    hi[1].max(w.origin[1] + w.size[1]),
                ];
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
            "{count} tiles on {}; overlaps {OVERLAP:.0} mm: trim on the dashed lines, match the crosses, tape. Blank areas are left out.",
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
        for w in &l.windows {
            let ([x0, y0], [sw, sh]) = (w.origin, w.size);
            let rect = [[x0, y0], [x0 + sw, y0], [x0 + sw, y0 + sh], [x0, y0 + sh]];
            marks.push(Mark::Line {
                points: rect.iter().map(at).collect(),
                closed: true,
                width: 0.2,
                dashed: true,
                grey: true,
            });
            let part = if l.cols.len() > 1 {
                format!("p{} ", w.part + 1)
            } else {
                String::new()
            };
            marks.push(Mark::Text {
                at: at(&[x0 + 3.0 / scale, y0 + 3.0 / scale]),
                size: 2.0,
                text: format!("{part}c{} r{}", w.column + 1, w.row + 1),
            });
        }
        top -= (hi[1] - lo[1]) * scale;
    }
    Page {
        width: pw,
        height: ph,
        marks,
        tiles: vec![],
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
