//! Where the tiles go: a drawing's parts (bands with clear paper between
//! them), each in columns and rows over what is drawn, and tiles shorter
//! than a page packed several to a page (the drawing onto paper in
//! `tiling`).

use crate::template::drawing::{Drawing, Item};
use crate::template::print::{HEADER, MARGIN, OVERLAP, footer_height, text_width};

/// What a drawing holds, for finding where it needs paper: each segment
/// of a line, and each label's box.
pub(super) enum Piece {
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

    /// Its box: left, bottom, right, top.
    fn bounds(&self) -> [f64; 4] {
        match *self {
            Piece::Segment(a, b) => [
                a[0].min(b[0]),
                a[1].min(b[1]),
                a[0].max(b[0]),
                a[1].max(b[1]),
            ],
            Piece::Label(r) => r,
        }
    }
}

pub(super) fn pieces(drawing: &Drawing) -> Vec<Piece> {
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

/// Paper left round what is drawn inside a tile, mm: a line on the
/// window's edge is not half clipped.
const PAD: f64 = 2.0;
/// Clear height between two drawn parts that lets each be printed on its
/// own (a stack of sections), mm.
const PART_GAP: f64 = 10.0;
/// Height of the caption over each tile on a page that holds several, mm.
pub(super) const CAPTION: f64 = 6.0;

/// One tile: a window onto the drawing.
#[derive(Debug, Clone, Copy)]
pub(super) struct Window {
    /// The part of the drawing (a band of it with clear paper above and
    /// below) it belongs to.
    pub(super) part: usize,
    /// Column within the part, row within the column.
    pub(super) column: usize,
    pub(super) row: usize,
    /// Lower-left corner in the drawing, and size, mm.
    pub(super) origin: [f64; 2],
    pub(super) size: [f64; 2],
}

/// A sheet's tiles over a drawing, and the pages they go on.
pub(super) struct Layout {
    pub(super) pw: f64,
    pub(super) ph: f64,
    /// The printable window's size, mm: the most one tile can be.
    pub(super) ww: f64,
    pub(super) wh: f64,
    /// Columns in each part.
    pub(super) cols: Vec<usize>,
    pub(super) windows: Vec<Window>,
    /// Windows on each page, top to bottom (indices into `windows`).
    pub(super) pages: Vec<Vec<usize>>,
}

impl Layout {
    fn rows(&self, w: &Window) -> usize {
        self.windows
            .iter()
            .filter(|v| v.part == w.part && v.column == w.column)
            .count()
    }

    /// A tile's name on its page: which part, column and row, as far as
    /// there is more than one.
    pub(super) fn name(&self, w: &Window) -> String {
        let (cols, rows) = (self.cols[w.part], self.rows(w));
        let mut words = vec![];
        if self.cols.len() > 1 {
            words.push(format!("part {} of {}", w.part + 1, self.cols.len()));
        }
        if cols > 1 || rows > 1 {
            words.push(format!("column {} of {cols}", w.column + 1));
        }
        if rows > 1 {
            words.push(format!("row {} of {rows}", w.row + 1));
        }
        if words.is_empty() {
            words.push("one tile".into());
        }
        words.join(", ")
    }
}

/// The bands of a drawing with clear paper between them, bottom to top:
/// each printed on its own.
fn parts(pieces: &[Piece]) -> Vec<(f64, f64)> {
    let mut spans: Vec<(f64, f64)> = pieces
        .iter()
        .map(|p| {
            let b = p.bounds();
            (b[1], b[3])
        })
        .collect();
    spans.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<(f64, f64)> = vec![];
    for (lo, hi) in spans {
        match out.last_mut() {
            Some(last) if lo <= last.1 + PART_GAP => last.1 = last.1.max(hi),
            _ => out.push((lo, hi)),
        }
    }
    out
}

/// The tiles of a page `pw` × `ph` over a drawing's content. Each part
/// (see [`parts`]; the whole drawing on a roll) in columns `ww − OVERLAP`
/// apart from its leftmost line; in each column, rows from the lowest
/// thing drawn there to the highest, the last row only as tall as what it
/// holds (a column with nothing drawn gets no tiles, and a long, low
/// drawing needs no empty rows where it is low). Tiles shorter than the
/// page share pages, top to bottom, each under a caption.
pub(super) fn layout(pieces: &[Piece], pw: f64, ph: f64, whole: bool) -> Layout {
    let (ww, wh) = (
        pw - 2.0 * MARGIN,
        ph - 2.0 * MARGIN - footer_height(pw) - HEADER,
    );
    let (sx, sy) = (ww - OVERLAP, wh - OVERLAP);
    let bands = if whole {
        vec![(f64::NEG_INFINITY, f64::INFINITY)]
    } else {
        parts(pieces)
    };
    let mut cols = vec![];
    let mut windows = vec![];
    for (part, &(blo, bhi)) in bands.iter().enumerate() {
        let own: Vec<&Piece> = pieces
            .iter()
            .filter(|p| {
                let b = p.bounds();
                b[1] >= blo && b[3] <= bhi
            })
            .collect();
        let (left, right) = own.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |a, p| {
            let b = p.bounds();
            (a.0.min(b[0]), a.1.max(b[2]))
        });
        let (left, right) = (left - PAD, right + PAD);
        let n = (((right - left - OVERLAP) / sx).ceil().max(1.0)) as usize;
        cols.push(n);
        for c in 0..n {
            let (x0, x1) = (left + c as f64 * sx, left + c as f64 * sx + ww);
            let (lo, hi) = own
                .iter()
                .filter_map(|p| p.span(x0, x1))
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), b| {
                    (lo.min(b.0), hi.max(b.1))
                });
            if lo > hi {
                continue;
            }
            let (lo, hi) = (lo - PAD, hi + PAD);
            // From the lowest thing drawn in the column, as many rows as
            // reach the highest.
            let rows = (((hi - lo - wh) / sy).ceil().max(0.0) as usize) + 1;
            for r in 0..rows {
                let y = lo + r as f64 * sy;
                windows.push(Window {
                    part,
                    column: c,
                    row: r,
                    origin: [x0, y],
                    size: [ww, (hi - y).min(wh)],
                });
            }
        }
    }
    let pages = if whole {
        (0..windows.len()).map(|k| vec![k]).collect()
    } else {
        pack(&windows, wh)
    };
    Layout {
        pw,
        ph,
        ww,
        wh,
        cols,
        windows,
        pages,
    }
}

/// Windows onto pages of window height `wh`: in order, each on the first
/// page with room for it (a page of several gives each a caption).
fn pack(windows: &[Window], wh: f64) -> Vec<Vec<usize>> {
    let mut pages: Vec<Vec<usize>> = vec![];
    let used = |page: &[usize]| -> f64 { page.iter().map(|&k| windows[k].size[1] + CAPTION).sum() };
    for (k, w) in windows.iter().enumerate() {
        let room = pages
            .iter()
            .position(|p| used(p) + w.size[1] + CAPTION <= wh + 1e-9);
        match room {
            Some(i) => pages[i].push(k),
            None => pages.push(vec![k]),
        }
    }
    pages
}
