//! Drop-cutter: lower a tool along a vertical line until it touches the
//! mesh, exactly, against each candidate triangle's face, edges and
//! vertices. The tool's highest touching position is where it may go.
//!
//! Method: the classic drop-cutter decomposition (the contact is with the
//! face interior, an edge, or a vertex; the answer is the highest of the
//! three), as in Chuang, Chen and Chang, "Automated tool-path generation for
//! 3-axis machining" and Hwang, "Interference-free tool-path generation in
//! the NC machining of parametric compound surfaces" (CAD 24, 1992).
//! Candidates come from a grid over the plan view ([`Prepared`]), each
//! cell's triangles sorted by their highest corner: a cell is read only if
//! its highest corner, less the tool's rise at the cell's nearest point,
//! can still lift the tool, and its run only as far as that holds of each
//! triangle. (A k-d tree over triangle centroids cannot bound long
//! triangles, and a board mesh is made of long strips along the stringer;
//! the grid bounds them exactly.)

mod prepared;
mod rays;
#[cfg(test)]
mod tests;

use std::sync::Arc;

use rayon::prelude::*;

use crate::geom::contact::{ball_touch, bull_touch, flat_touch_above};
use crate::model::machine::{Cutter, ToolKind};
use crate::model::mesh::Mesh;
use prepared::BLOCK;
pub use prepared::Prepared;
pub use rays::{Hits, Lattice};

/// One cutter dropped on prepared meshes.
#[derive(Debug, Clone)]
pub struct DropCutter {
    cutter: Cutter,
    prep: Arc<Prepared>,
    /// The tool's rise at the start of each of `RISES` equal steps of the
    /// squared distance out to its radius: the least rise over the step,
    /// so a bound read from it is never below the true one.
    rises: Box<[f64; RISES]>,
    /// `RISES` / r² (0 for a point).
    per_d2: f64,
    /// Triangles past this index (the later meshes') are not looked at.
    limit: usize,
}

/// Steps of the rise table.
const RISES: usize = 256;

/// The last step's index, as a float.
const LAST_RISE: f64 = (RISES - 1) as f64;

/// How far `cutter`'s surface rises at squared plan distance `d2` from
/// its axis (`None` beyond its radius).
fn rise(cutter: &Cutter, d2: f64) -> Option<f64> {
    let r = cutter.radius;
    if d2 > r * r {
        return None;
    }
    Some(match cutter.kind {
        ToolKind::Ball => r - (r * r - d2).max(0.0).sqrt(),
        ToolKind::Bull => cutter.height_at(d2.sqrt()).unwrap_or(0.0),
        ToolKind::Flat => 0.0,
    })
}

/// Touches within this of the highest count as equal, mm: the contact of
/// a ball on an edge two faces share, found from either face, differs in
/// its last bits, and a sharp edge's touch can come out a few nanometres
/// above the bound its triangle was pruned by.
const EQUAL: f64 = 1e-6;

/// How many equal touches are held while the search runs (the first by
/// rank are kept).
const HELD: usize = 8;

/// The touches found so far: the highest, and those within [`EQUAL`] of
/// it as (height, rank, triangle).
#[derive(Debug, Clone, Copy)]
struct Best {
    top: f64,
    held: [(f64, u32, u32); HELD],
    count: usize,
}

impl Best {
    /// Nothing found yet; only touches above `level` will count.
    fn above(level: f64) -> Best {
        Best {
            top: level,
            held: [(f64::NEG_INFINITY, u32::MAX, 0); HELD],
            count: 0,
        }
    }

    /// The least a touch must reach to count.
    #[inline]
    fn floor(&self) -> f64 {
        self.top - EQUAL
    }

    /// Takes a touch of triangle `tri` (rank `rank`) at `z`.
    #[inline]
    fn offer(&mut self, z: f64, rank: u32, tri: u32) {
        if z == f64::NEG_INFINITY || z < self.floor() {
            return;
        }
        if z > self.top {
            self.top = z;
            let floor = self.floor();
            let mut kept = 0;
            for k in 0..self.count {
                if self.held[k].0 >= floor {
                    self.held[kept] = self.held[k];
                    kept += 1;
                }
            }
            self.count = kept;
        }
        // A triangle offered again (the hint, met again in its cell) is
        // held once.
        if self.held[..self.count].iter().any(|h| h.2 == tri) {
            return;
        }
        if self.count < HELD {
            self.held[self.count] = (z, rank, tri);
            self.count += 1;
        } else if let Some(worst) = (0..HELD).max_by_key(|&k| self.held[k].1)
            && rank < self.held[worst].1
        {
            self.held[worst] = (z, rank, tri);
        }
    }

    /// The touch reported: of those within [`EQUAL`] of the highest, the
    /// triangle first by highest corner (then in the meshes' order), and
    /// its own height.
    fn chosen(&self) -> Option<(f64, usize)> {
        self.held[..self.count]
            .iter()
            .min_by_key(|h| h.1)
            .map(|h| (h.0, h.2 as usize))
    }
}

impl DropCutter {
    /// Prepares `meshes` (all together) for `cutter`.
    pub fn new(meshes: &[&Mesh], cutter: Cutter) -> DropCutter {
        DropCutter::on(Arc::new(Prepared::new(meshes)), cutter)
    }

    /// `cutter` dropped on meshes already prepared.
    pub fn on(prep: Arc<Prepared>, cutter: Cutter) -> DropCutter {
        let meshes = prep.ends.len();
        DropCutter::on_first(prep, cutter, meshes)
    }

    /// `cutter` dropped on the first `meshes` of meshes already prepared
    /// (the others are not touched, as if never prepared).
    pub fn on_first(prep: Arc<Prepared>, cutter: Cutter, meshes: usize) -> DropCutter {
        let limit = meshes
            .checked_sub(1)
            .and_then(|k| prep.ends.get(k).copied())
            .unwrap_or(if meshes == 0 { 0 } else { prep.tris.len() });
        let r2 = cutter.radius * cutter.radius;
        let rises = Box::new(std::array::from_fn(|k| {
            rise(&cutter, r2 * k as f64 / RISES as f64).unwrap_or(0.0)
        }));
        let per_d2 = if r2 > 0.0 { RISES as f64 / r2 } else { 0.0 };
        DropCutter {
            cutter,
            prep,
            rises,
            per_d2,
            limit,
        }
    }

    /// A lower bound of the tool's rise at squared plan distance `d2` from
    /// its axis, from the table (`None` beyond its radius).
    #[inline]
    fn rise_below(&self, d2: f64) -> Option<f64> {
        let r = self.cutter.radius;
        if d2 > r * r {
            return None;
        }
        Some(self.rises[((d2 * self.per_d2) as usize).min(RISES - 1)])
    }

    /// The prepared meshes, for another cutter's drop-cutter on them.
    pub fn prepared(&self) -> Arc<Prepared> {
        Arc::clone(&self.prep)
    }

    /// The cutter being dropped.
    pub fn cutter(&self) -> Cutter {
        self.cutter
    }

    /// Tip height where the cutter at (x, y) first touches the mesh from
    /// above; `None` where no triangle is within reach. (Of touches within
    /// a nanometre of the highest, the height of the one reported by
    /// [`drop_contact`](Self::drop_contact).)
    pub fn drop(&self, x: f64, y: f64) -> Option<f64> {
        self.touch(x, y).map(|(z, _)| z)
    }

    /// Whether `pass` holds of the tip height [`drop`](Self::drop) gives
    /// at (x, y), for a `pass` that holds of every height above `level`
    /// and of none below it, give or take rounding (none where the tool
    /// touches nothing): the search stops as soon as a touch clearly
    /// above `level` is found and never looks at triangles clearly below
    /// it; only near `level` does it ask `pass` of the reported height.
    pub fn drop_reaches(&self, x: f64, y: f64, level: f64, pass: impl Fn(f64) -> bool) -> bool {
        if level == f64::NEG_INFINITY {
            return self.above(x, y, level);
        }
        // Clear of rounding and of the nanometre within which touches
        // count as equal.
        let margin = 2.0 * EQUAL + 1e-9 * level.abs();
        let mut best = Best::above(level - margin);
        if self.search(x, y, &mut best, level + margin) {
            return true;
        }
        best.chosen().is_some_and(|(z, _)| pass(z))
    }

    /// The higher of `floor` and [`drop`](Self::drop) at (x, y), sooner:
    /// triangles that cannot lift the tool to `floor` are never tested.
    pub fn drop_above(&self, x: f64, y: f64, floor: f64) -> f64 {
        self.drop_above_near(x, y, floor, &mut None)
    }

    /// [`drop_above`](Self::drop_above), sooner where `hint` holds a
    /// triangle the tool touches nearby (the one this gave at a
    /// neighbouring point): its touch here is tried first, and no touch
    /// below it is looked for. The answer does not depend on the hint;
    /// `hint` is left holding the triangle touched here.
    pub fn drop_above_near(&self, x: f64, y: f64, floor: f64, hint: &mut Option<u32>) -> f64 {
        let mut best = Best::above(floor);
        self.search_from(*hint, x, y, &mut best, f64::INFINITY);
        let chosen = best.chosen();
        *hint = chosen.map(|(_, t)| t as u32).or(*hint);
        chosen.map_or(floor, |(z, _)| z.max(floor))
    }

    /// Like [`drop`](Self::drop), with the unit normal (up) of the
    /// triangle touched: of touches within a nanometre of the highest
    /// (a ball on an edge touches both faces), the triangle first by
    /// highest corner, then in the meshes' order.
    pub fn drop_contact(&self, x: f64, y: f64) -> Option<(f64, [f64; 3])> {
        self.drop_contact_near(x, y, &mut None)
    }

    /// [`drop_contact`](Self::drop_contact), sooner with a `hint` as for
    /// [`drop_above_near`](Self::drop_above_near).
    pub fn drop_contact_near(
        &self,
        x: f64,
        y: f64,
        hint: &mut Option<u32>,
    ) -> Option<(f64, [f64; 3])> {
        let mut best = Best::above(f64::NEG_INFINITY);
        self.search_from(*hint, x, y, &mut best, f64::INFINITY);
        let (z, t) = best.chosen()?;
        *hint = Some(t as u32);
        Some((z, self.prep.tris[t].n))
    }

    /// Whether the cutter lowered at (x, y) touches the mesh higher than
    /// `level` (what [`drop`](Self::drop) would tell, sooner: it looks
    /// only at triangles that could lift the tool above `level`, and stops
    /// at the first that does).
    pub fn above(&self, x: f64, y: f64, level: f64) -> bool {
        self.search(x, y, &mut Best::above(level), level)
    }

    /// The highest touch at (x, y) and the triangle touched.
    fn touch(&self, x: f64, y: f64) -> Option<(f64, usize)> {
        let mut best = Best::above(f64::NEG_INFINITY);
        self.search(x, y, &mut best, f64::INFINITY);
        best.chosen()
    }

    /// Offers `best` every touch at (x, y) that reaches its floor, until
    /// one above `stop` is found (then true).
    ///
    /// Every cell within the tool's radius is a candidate, the one under
    /// the axis first; a cell is read only if its highest corner, less the
    /// tool's rise at the cell's nearest point, reaches the floor so far.
    /// Within a cell's run (highest first) the search stops at the first
    /// triangle that cannot reach it. A triangle in several cells is tested
    /// in the one holding its plan box's point nearest the axis. Which
    /// touch is reported does not depend on the order of the search.
    fn search(&self, x: f64, y: f64, best: &mut Best, stop: f64) -> bool {
        self.search_from(None, x, y, best, stop)
    }

    /// [`search`](Self::search), triangle `hint` tested first: a touch
    /// found lifts the floor before the grid is read.
    fn search_from(&self, hint: Option<u32>, x: f64, y: f64, best: &mut Best, stop: f64) -> bool {
        let prep = &*self.prep;
        let r = self.cutter.radius;
        if !(x.is_finite() && y.is_finite()) {
            return false;
        }
        if let Some(t) = hint.filter(|&t| (t as usize) < self.limit) {
            let z = self.touch_of(t as usize, x, y, best.floor().next_down());
            if z > stop {
                return true;
            }
            best.offer(z, prep.rank[t as usize], t);
        }
        let (c, o) = (prep.cell, prep.origin);
        let span = |v: f64, k: usize| {
            ((v + r - o[k]) / c >= 0.0).then(|| (prep.index(v - r, k), prep.index(v + r, k)))
        };
        let (Some((i0, i1)), Some((j0, j1))) = (span(x, 0), span(y, 1)) else {
            return false;
        };
        // Cell (i, j)'s top and the rise at its nearest point, where its
        // top less that can reach the floor so far.
        let reaching = |i: usize, j: usize, floor: f64| -> Option<f64> {
            let top = prep.tops[j * prep.dims[0] + i];
            if top == f32::NEG_INFINITY {
                return None;
            }
            self.rise_below(prep.distance2(i, j, x, y))
                .filter(|h| top as f64 - h >= floor)
        };
        let (fi, fj) = prep.cell_of(x, y);
        let rise = self.rise_below(prep.distance2(fi, fj, x, y));
        if rise.is_some_and(|h| self.search_cell(fi, fj, h, (x, y), best, stop)) {
            return true;
        }
        // Block by block; a block is read only if its highest corner,
        // less the rise at its nearest point, reaches the floor so far.
        for bj in j0 / BLOCK..=j1 / BLOCK {
            for bi in i0 / BLOCK..=i1 / BLOCK {
                let top = prep.block_tops[bj * prep.block_dims[0] + bi];
                let reaches = top != f32::NEG_INFINITY
                    && self
                        .rise_below(prep.block_distance2(bi, bj, x, y))
                        .is_some_and(|h| top as f64 - h >= best.floor());
                if !reaches {
                    continue;
                }
                for j in (bj * BLOCK).max(j0)..=(bj * BLOCK + BLOCK - 1).min(j1) {
                    for i in (bi * BLOCK).max(i0)..=(bi * BLOCK + BLOCK - 1).min(i1) {
                        if (i, j) != (fi, fj)
                            && reaching(i, j, best.floor())
                                .is_some_and(|h| self.search_cell(i, j, h, (x, y), best, stop))
                        {
                            return true;
                        }
                    }
                }
            }
        }
        false
    }

    /// Tests the triangles of cell (i, j) that can reach `best` at (x, y),
    /// the tool's rise at the cell's nearest point `cell_rise`; true at
    /// the first touch above `stop`.
    #[inline]
    fn search_cell(
        &self,
        i: usize,
        j: usize,
        cell_rise: f64,
        (x, y): (f64, f64),
        best: &mut Best,
        stop: f64,
    ) -> bool {
        let prep = &*self.prep;
        let b = j * prep.dims[0] + i;
        // The cell's extent as `index` places points, so each triangle is
        // tested in the one cell holding its box's point nearest the axis.
        let [lx, hx, ly, hy] = prep.extent(i, j);
        let r2 = self.cutter.radius * self.cutter.radius;
        for e in &prep.entries[prep.starts[b] as usize..prep.starts[b + 1] as usize] {
            let floor = best.floor();
            let zmax = e.zmax as f64;
            if zmax - cell_rise < floor {
                break;
            }
            let bb = e.bb.map(f64::from);
            // (A box's least corner is never past its greatest.)
            let qx = x.max(bb[0]).min(bb[2]);
            let qy = y.max(bb[1]).min(bb[3]);
            let (ddx, ddy) = (qx - x, qy - y);
            let d2 = ddx * ddx + ddy * ddy;
            // The table's rise (its last step beyond the radius, which
            // the first test turns away); every test taken, then one
            // branch.
            let h = self.rises[(d2 * self.per_d2).min(LAST_RISE) as usize];
            let (ox, oy) = (qx - prep.origin[0], qy - prep.origin[1]);
            // (A floor that is not a number turns none away.)
            let candidate = (d2 <= r2)
                & ((zmax - h).partial_cmp(&floor) != Some(std::cmp::Ordering::Less))
                & ((e.tri as usize) < self.limit)
                & (ox >= lx)
                & (ox < hx)
                & (oy >= ly)
                & (oy < hy);
            if !candidate {
                continue;
            }
            // Below the floor by the least step, so a touch at it is told
            // from none.
            let z = self.touch_of(e.tri as usize, x, y, floor.next_down());
            if z > stop {
                return true;
            }
            best.offer(z, prep.rank[e.tri as usize], e.tri);
        }
        false
    }

    /// The tool's touch on triangle `t` at (x, y) where it reaches
    /// `floor` (at most `floor`, or −∞, where it does not).
    #[inline]
    fn touch_of(&self, t: usize, x: f64, y: f64, floor: f64) -> f64 {
        let t = &self.prep.tris[t];
        let r = self.cutter.radius;
        match self.cutter.kind {
            ToolKind::Ball => ball_touch(t, x, y, r, floor),
            ToolKind::Bull => bull_touch(t, x, y, r, self.cutter.corner, floor),
            ToolKind::Flat => flat_touch_above(t, x, y, r, floor),
        }
    }

    /// [`drop`](Self::drop) at many points, in parallel; the order is kept.
    pub fn drop_many(&self, points: &[[f64; 2]]) -> Vec<Option<f64>> {
        points
            .par_chunks(4096)
            .flat_map_iter(|c| c.iter().map(|p| self.drop(p[0], p[1])))
            .collect()
    }
}
