//! Meshes' triangles made ready for the drop-cutter: each one's plane,
//! edges and bounds, and a grid over the plan view whose every cell lists,
//! highest first, the triangles whose plan box meets it (with each one's
//! bounds inline, so a search reads memory in order), and each cell's
//! highest corner. One grid serves every tool: a tool's reach is which
//! cells it looks at, not how the triangles are filed.

use rayon::prelude::*;

use crate::geom::contact::Tri;
use crate::model::mesh::{Mesh, cross, norm, sub};

/// What the search reads of every candidate before it looks at the
/// triangle itself: the plan box and top corner, rounded outwards to `f32`,
/// and the triangle's index (24 bytes, kept in its cell's run so a query
/// reads memory in order; the exact test uses `Tri`).
#[derive(Debug, Clone, Copy)]
pub(super) struct Entry {
    pub bb: [f32; 4],
    pub zmax: f32,
    pub tri: u32,
}

/// `v` rounded to an `f32` no greater (`down`) or no less than it.
fn f32_toward(v: f64, down: bool) -> f32 {
    let f = v as f32;
    match (down, (f as f64).partial_cmp(&v)) {
        (true, Some(std::cmp::Ordering::Greater)) => f.next_down(),
        (false, Some(std::cmp::Ordering::Less)) => f.next_up(),
        _ => f,
    }
}

/// The least plan cell side of the grid, mm. A cell is as wide as the
/// median triangle's longer plan side, and no narrower than this: a few
/// triangles a cell, so a cell's run is short, a triangle is filed in few
/// cells, and a tool's reach is covered by tens of cells, not thousands
/// (measured on the demo: a 4 mm cell for the cutting mesh, whose
/// triangles are about 5 × 1 mm; 4 mm cells over a coarse mesh of 20 mm
/// strips cost 40 % more than cells as long as its triangles).
const CELL: f64 = 4.0;

/// Meshes' triangles made ready for dropping any cutter: each one's
/// plane and edges, and a grid over the plan view whose every cell lists
/// the triangles whose plan box meets it, highest first. Built once for a
/// mesh and shared by the drop-cutters of every tool on it.
#[derive(Debug)]
pub struct Prepared {
    /// In the meshes' order, which keeps neighbours near in memory.
    pub(super) tris: Vec<Tri>,
    /// Where each mesh's triangles end in `tris`.
    pub(super) ends: Vec<usize>,
    /// Each triangle's place in the order by highest corner, highest
    /// first (then in the meshes' order): of two triangles a tool touches
    /// at the same height, the one first in it is the one reported.
    pub(super) rank: Vec<u32>,
    pub(super) origin: [f64; 2],
    pub(super) cell: f64,
    pub(super) dims: [usize; 2],
    /// Start of each cell's run in `entries` (dims[0] * dims[1] + 1).
    pub(super) starts: Vec<u32>,
    pub(super) entries: Vec<Entry>,
    /// Each cell's highest corner (−∞ when empty).
    pub(super) tops: Vec<f32>,
    /// The highest of `tops` over each square of [`BLOCK`] × [`BLOCK`]
    /// cells, row by row: a tool that cannot reach a block's highest
    /// corner skips its cells without reading them.
    pub(super) block_tops: Vec<f32>,
    /// Blocks along X and Y.
    pub(super) block_dims: [usize; 2],
    /// Along each axis, for each cell index i, the least offset d from
    /// the origin that [`index`](Self::index) places in cell i or beyond
    /// (`(d / cell) >= i` as rounded): [`extent`](Self::extent) reads
    /// these, so a search tells which cell holds a point as `index` does,
    /// without dividing.
    pub(super) from: [Vec<f64>; 2],
}

/// Cells along each side of a block of [`Prepared::block_tops`].
pub(super) const BLOCK: usize = 4;

impl Prepared {
    /// Prepares `meshes` (all together).
    pub fn new(meshes: &[&Mesh]) -> Prepared {
        let mut tris: Vec<Tri> = Vec::new();
        let mut ends = Vec::with_capacity(meshes.len());
        for m in meshes {
            // Written in place when no triangle is degenerate (as in a
            // mesh of our own), else gathered without those.
            if m.triangles
                .par_iter()
                .all(|t| normal(m.corners(t)).is_some())
            {
                tris.par_extend(m.triangles.par_iter().map(|t| {
                    let p = m.corners(t);
                    ready(p, normal(p).unwrap_or_default())
                }));
            } else {
                tris.par_extend(m.triangles.par_iter().filter_map(|t| prepare(m.corners(t))));
            }
            ends.push(tris.len());
        }
        // A total order (height, then input order), so the unstable sort
        // is deterministic.
        let mut keys: Vec<(f64, u32)> = tris
            .iter()
            .enumerate()
            .map(|(i, t)| (t.zmax, i as u32))
            .collect();
        keys.par_sort_unstable_by(|a, c| c.0.total_cmp(&a.0).then(a.1.cmp(&c.1)));
        let order: Vec<u32> = keys.into_iter().map(|(_, i)| i).collect();
        let mut rank = vec![0u32; tris.len()];
        for (k, &i) in order.iter().enumerate() {
            rank[i as usize] = k as u32;
        }
        let bound = |t: &Tri, tri: u32| Entry {
            bb: [
                f32_toward(t.bb[0], true),
                f32_toward(t.bb[1], true),
                f32_toward(t.bb[2], false),
                f32_toward(t.bb[3], false),
            ],
            zmax: f32_toward(t.zmax, false),
            tri,
        };
        let bounds: Vec<Entry> = tris
            .par_iter()
            .enumerate()
            .map(|(i, t)| bound(t, i as u32))
            .collect();
        // The plan box of every (rounded) corner, so every triangle's
        // rounded box lies within the grid's cells.
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for e in &bounds {
            lo = [lo[0].min(e.bb[0] as f64), lo[1].min(e.bb[1] as f64)];
            hi = [hi[0].max(e.bb[2] as f64), hi[1].max(e.bb[3] as f64)];
        }
        if tris.is_empty() {
            lo = [0.0, 0.0];
            hi = [1.0, 1.0];
        }
        let span = [hi[0] - lo[0], hi[1] - lo[1]];
        let mut sides: Vec<f64> = tris
            .iter()
            .map(|t| (t.bb[2] - t.bb[0]).max(t.bb[3] - t.bb[1]))
            .collect();
        let mid = sides.len() / 2;
        let typical = if sides.is_empty() {
            0.0
        } else {
            *sides.select_nth_unstable_by(mid, f64::total_cmp).1
        };
        let mut cell = typical.max(CELL);
        while (span[0] / cell + 1.0) * (span[1] / cell + 1.0) > 4.0e6 {
            cell *= 1.5;
        }
        let dims = [
            (span[0] / cell).floor() as usize + 1,
            (span[1] / cell).floor() as usize + 1,
        ];
        let mut grid = Prepared {
            tris: Vec::new(),
            ends,
            rank,
            origin: lo,
            cell,
            dims,
            starts: Vec::new(),
            entries: Vec::new(),
            tops: Vec::new(),
            block_tops: Vec::new(),
            block_dims: [dims[0].div_ceil(BLOCK), dims[1].div_ceil(BLOCK)],
            from: dims.map(|n| (0..=n).map(|i| least_offset(i, cell)).collect()),
        };
        // Each triangle in every cell its (rounded) plan box meets.
        let cells = |e: &Entry| {
            let (i0, j0) = grid.cell_of(e.bb[0] as f64, e.bb[1] as f64);
            let (i1, j1) = grid.cell_of(e.bb[2] as f64, e.bb[3] as f64);
            (i0, i1, j0, j1)
        };
        let nb = dims[0] * dims[1];
        let mut counts = vec![0u32; nb + 1];
        for e in &bounds {
            let (i0, i1, j0, j1) = cells(e);
            for j in j0..=j1 {
                for i in i0..=i1 {
                    counts[j * dims[0] + i + 1] += 1;
                }
            }
        }
        for k in 0..nb {
            counts[k + 1] += counts[k];
        }
        let starts = counts.clone();
        // Cells filled highest first come out sorted by height without a
        // sort of their own.
        let mut fill = counts;
        let empty = Entry {
            bb: [0.0; 4],
            zmax: f32::NEG_INFINITY,
            tri: 0,
        };
        let mut entries = vec![empty; starts[nb] as usize];
        let mut tops = vec![f32::NEG_INFINITY; nb];
        for &ti in &order {
            let e = bounds[ti as usize];
            let (i0, i1, j0, j1) = cells(&e);
            for j in j0..=j1 {
                for i in i0..=i1 {
                    let b = j * dims[0] + i;
                    entries[fill[b] as usize] = e;
                    fill[b] += 1;
                    tops[b] = tops[b].max(e.zmax);
                }
            }
        }
        let [bx, by] = grid.block_dims;
        let mut block_tops = vec![f32::NEG_INFINITY; bx * by];
        for j in 0..dims[1] {
            for i in 0..dims[0] {
                let b = (j / BLOCK) * bx + i / BLOCK;
                block_tops[b] = block_tops[b].max(tops[j * dims[0] + i]);
            }
        }
        grid.block_tops = block_tops;
        grid.tris = tris;
        grid.starts = starts;
        grid.entries = entries;
        grid.tops = tops;
        grid
    }

    /// The cell holding plan point (x, y), clamped to the grid (a point
    /// beyond it to the nearest edge cell).
    #[inline]
    pub(super) fn cell_of(&self, x: f64, y: f64) -> (usize, usize) {
        (self.index(x, 0), self.index(y, 1))
    }

    /// The cell index along axis `k` holding coordinate `v` (clamped to
    /// the grid). Truncation is the floor of what is not negative, and
    /// cheaper than `floor` where the processor has no rounding
    /// instruction to call on.
    #[inline]
    pub(super) fn index(&self, v: f64, k: usize) -> usize {
        let t = (v - self.origin[k]) / self.cell;
        if t >= 0.0 {
            (t as usize).min(self.dims[k] - 1)
        } else {
            0
        }
    }

    /// The squared plan distance from (x, y) to cell (i, j) (0 inside it).
    #[inline]
    pub(super) fn distance2(&self, i: usize, j: usize, x: f64, y: f64) -> f64 {
        let (c, o) = (self.cell, self.origin);
        let cx = o[0] + c * i as f64;
        let cy = o[1] + c * j as f64;
        let dx = (cx - x).max(x - (cx + c)).max(0.0);
        let dy = (cy - y).max(y - (cy + c)).max(0.0);
        dx * dx + dy * dy
    }

    /// The squared plan distance from (x, y) to block (bi, bj) (0 inside it).
    #[inline]
    pub(super) fn block_distance2(&self, bi: usize, bj: usize, x: f64, y: f64) -> f64 {
        let (c, o) = (self.cell * BLOCK as f64, self.origin);
        let cx = o[0] + c * bi as f64;
        let cy = o[1] + c * bj as f64;
        let dx = (cx - x).max(x - (cx + c)).max(0.0);
        let dy = (cy - y).max(y - (cy + c)).max(0.0);
        dx * dx + dy * dy
    }

    /// Cell (i, j)'s extent as offsets from the origin, as
    /// [`index`](Self::index) places points: an offset d along X (a
    /// point's coordinate less the origin's) is in it when `lx <= d < hx`
    /// (unbounded at the grid's edges), and so along Y.
    #[inline]
    pub(super) fn extent(&self, i: usize, j: usize) -> [f64; 4] {
        let side = |k: usize, i: usize| {
            let lo = if i == 0 {
                f64::NEG_INFINITY
            } else {
                self.from[k][i]
            };
            let hi = if i + 1 == self.dims[k] {
                f64::INFINITY
            } else {
                self.from[k][i + 1]
            };
            (lo, hi)
        };
        let ((lx, hx), (ly, hy)) = (side(0, i), side(1, j));
        [lx, hx, ly, hy]
    }
}

/// The least `d` whose quotient by `cell`, as rounded, is at least `i`
/// (the rounded quotient never falls as `d` grows, so every `d` from it
/// on gives at least `i`, and none below it does).
fn least_offset(i: usize, cell: f64) -> f64 {
    let at_least = |d: f64| d / cell >= i as f64;
    let mut d = i as f64 * cell;
    while at_least(d) {
        d = d.next_down();
    }
    while !at_least(d) {
        d = d.next_up();
    }
    d
}

/// A triangle made ready for the contact tests (none when degenerate).
fn prepare(p: [[f64; 3]; 3]) -> Option<Tri> {
    normal(p).map(|n| ready(p, n))
}

/// The unit normal of a triangle, pointing up (none when degenerate).
fn normal(p: [[f64; 3]; 3]) -> Option<[f64; 3]> {
    let e1 = sub(p[1], p[0]);
    let e2 = sub(p[2], p[0]);
    let n = cross(e1, e2);
    let len = norm(n);
    if len.is_nan() || len <= 0.0 {
        return None;
    }
    let n = [n[0] / len, n[1] / len, n[2] / len];
    Some(if n[2] < 0.0 { [-n[0], -n[1], -n[2]] } else { n })
}

/// A triangle of unit normal `n` made ready for the contact tests.
fn ready(p: [[f64; 3]; 3], n: [f64; 3]) -> Tri {
    let zmax = p[0][2].max(p[1][2]).max(p[2][2]);
    let bb = [
        p[0][0].min(p[1][0]).min(p[2][0]),
        p[0][1].min(p[1][1]).min(p[2][1]),
        p[0][0].max(p[1][0]).max(p[2][0]),
        p[0][1].max(p[1][1]).max(p[2][1]),
    ];
    let edge = |k: usize| {
        let u = sub(p[(k + 1) % 3], p[k]);
        let len = norm(u);
        if len.is_nan() || len <= 0.0 {
            return ([0.0; 3], 0.0, 0.0);
        }
        let u = [u[0] / len, u[1] / len, u[2] / len];
        (u, len, 1.0 - u[2] * u[2])
    };
    let edges = [edge(0), edge(1), edge(2)];
    Tri {
        bb,
        p,
        edges,
        n,
        zmax,
    }
}
