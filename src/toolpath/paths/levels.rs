//! Z-level finishing of the steep rail band: contours of the ball's
//! height, spaced for the scallop on the gentlest face between levels,
//! each crossing found on its grid edge from the drop-cutter itself.

use super::*;
use crate::geom::dropcutter::DropCutter;
use crate::geom::field::{self, Field};
use rayon::prelude::*;

/// The Z levels take nodes whose slope is at least this share of the
/// steep angle's (the grid's slope estimate is a central difference).
const STEEP_SHARE: f64 = 0.9;

/// How far in from the outline the Z-level passes look for steep rail
/// (the rail band of a surfboard is well within it; common practice, no
/// source).
pub(super) const RAIL_BAND: f64 = 60.0;

/// Z-level passes where the surface is steeper than `theta`: contours of
/// the drop-cutter height, spaced in height for the scallop's stepover `s`
/// on the gentlest face between two levels, each crossing found on its grid
/// edge from the drop-cutter itself, each point then dropped exactly.
pub(super) fn waterlines(
    ctx: &Ctx,
    dc: &DropCutter,
    s: f64,
    theta: f64,
) -> (Vec<Vec<[f64; 3]>>, usize) {
    let band = Band::of(ctx, dc, theta);
    let count = band.count;
    if band.top.is_nan() || band.bottom.is_nan() || band.top <= band.bottom {
        return (vec![], count);
    }
    let levels = band.levels(s);
    let runs: Vec<Vec<Vec<[f64; 3]>>> = levels
        .par_iter()
        .map(|&level| band.runs_at(level))
        .collect();
    let tol = ctx.job.finishing.tolerance;
    let tip = Tip::new(ctx, dc);
    // Simplified, then refined again: a level's points all stand at its
    // height, so the simplification keeps only the plan's bends, and on a
    // steep wall a chord within `tol` of them in plan can still stand
    // several times `tol` into the wall in height.
    let runs = runs
        .into_iter()
        .flatten()
        .map(|r| {
            refine(
                &simplify(&refine(&r, &tip, tol / 2.0), tol),
                &tip,
                tol / 2.0,
            )
        })
        .collect();
    (runs, count)
}

/// The rail band on a 1 mm grid: the ball's height at each node within
/// it, which nodes are steep, and the heights the steep ones span.
struct Band<'a> {
    ctx: &'a Ctx<'a>,
    dc: &'a DropCutter,
    /// The ball's height at each node (NaN outside the band).
    h: Field,
    steep: Vec<bool>,
    /// Nodes in the band (cutter positions computed).
    count: usize,
    top: f64,
    bottom: f64,
    /// Tangent of the steep angle.
    tan: f64,
    /// The heights with the nodes outside the band below every level.
    filled: Field,
    ranges: field::Ranges,
}

impl<'a> Band<'a> {
    fn of(ctx: &'a Ctx<'a>, dc: &'a DropCutter, theta: f64) -> Band<'a> {
        let r = dc.cutter().radius;
        let p = ctx.place;
        let lo = [p.x_range[0] - r - 4.0, p.centre_y - p.half_width - r - 4.0];
        let hi = [p.x_range[1] + r + 4.0, p.centre_y + p.half_width + r + 4.0];
        let grid = Field::new(lo, hi, 1.0, 0.0);
        let nodes = grid.nodes();
        // Only near the rail: within RAIL_BAND inside the outline and r + 3
        // outside. The silhouette is known to the node (1 mm), and the ball
        // still touches the rail's foot with its centre r outside it, so the
        // band reaches two nodes further: the last node on the rail then has
        // a neighbour at the floor, and the levels down to the floor close.
        let inside_band: Vec<bool> = nodes
            .par_iter()
            .map(|q| ctx.outside.at(*q) <= r + 3.0 && ctx.inside.at(*q) <= RAIL_BAND)
            .collect();
        // Each node beside the last: the triangle it touched is tried first.
        let heights: Vec<f64> = nodes
            .par_iter()
            .zip(&inside_band)
            .map_init(
                || None,
                |hint, (q, &b)| {
                    if b {
                        ctx.tip_near(dc, q[0], q[1], hint)
                    } else {
                        f64::NAN
                    }
                },
            )
            .collect();
        let count = inside_band.iter().filter(|b| **b).count();
        // NaN nodes count as below every level so contours close round the band.
        let filled = grid.with_values(
            heights
                .iter()
                .map(|v| if v.is_finite() { *v } else { -1e9 })
                .collect(),
        );
        let ranges = field::Ranges::of(&filled);
        let mut band = Band {
            ctx,
            dc,
            steep: vec![false; heights.len()],
            h: grid.with_values(heights),
            count,
            top: f64::NEG_INFINITY,
            bottom: f64::INFINITY,
            tan: theta.tan(),
            filled,
            ranges,
        };
        let [nx, ny] = band.h.dims;
        for j in 0..ny {
            for i in 0..nx {
                let k = j * nx + i;
                if band.h.values[k].is_finite() && band.slope(i, j) >= band.tan * STEEP_SHARE {
                    band.steep[k] = true;
                    band.top = band.top.max(band.h.values[k]);
                    band.bottom = band.bottom.min(band.h.values[k]);
                }
            }
        }
        band
    }

    /// The height's slope at a node (a central difference; 0 at the
    /// grid's edge).
    fn slope(&self, i: usize, j: usize) -> f64 {
        let [nx, ny] = self.h.dims;
        let v = |i: usize, j: usize| self.h.values[j * nx + i];
        if i == 0 || j == 0 || i + 1 >= nx || j + 1 >= ny {
            return 0.0;
        }
        let gx = (v(i + 1, j) - v(i - 1, j)) / 2.0;
        let gy = (v(i, j + 1) - v(i, j - 1)) / 2.0;
        (gx * gx + gy * gy).sqrt()
    }

    /// The levels from the top of the band down. Levels dz apart stand
    /// dz / sin φ apart on a face at φ, so each next level is s · sin φ
    /// down for the gentlest face φ between this level and a full stepover
    /// below it (the steep nodes there, by their slope), and never less
    /// than for the gentlest face the levels take at all, 0.9 of the slope
    /// at the steep angle.
    fn levels(&self, s: f64) -> Vec<f64> {
        let nx = self.h.dims[0];
        let gentlest = (STEEP_SHARE * self.tan).atan();
        let least = s * gentlest.sin();
        let mut faces: Vec<(f64, f64)> = (0..self.h.values.len())
            .filter(|&k| self.steep[k])
            .map(|k| {
                let g = self.slope(k % nx, k / nx);
                (self.h.values[k], g / (1.0 + g * g).sqrt())
            })
            .collect();
        faces.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut levels = Vec::new();
        let mut z = self.top - least / 2.0;
        while z > self.bottom {
            levels.push(z);
            let from = faces.partition_point(|f| f.0 < z - s);
            let to = faces.partition_point(|f| f.0 <= z);
            let sin = faces[from..to].iter().map(|f| f.1).fold(1.0, f64::min);
            z -= (s * sin).max(least);
        }
        levels
    }

    /// Steep if any corner of its cell is: where the height flattens onto
    /// the floor the nearest node may not be.
    fn near_steep(&self, q: [f64; 2]) -> bool {
        let [nx, ny] = self.h.dims;
        let lo = self.h.origin;
        let i = ((q[0] - lo[0]) / 1.0).floor().max(0.0) as usize;
        let j = ((q[1] - lo[1]) / 1.0).floor().max(0.0) as usize;
        [(0, 0), (1, 0), (0, 1), (1, 1)]
            .iter()
            .any(|&(a, b)| i + a < nx && j + b < ny && self.steep[(j + b) * nx + i + a])
    }

    /// Where a level crosses the cell edge from `p` (height `vp`) to `q`
    /// (`vq`), `t` the linear estimate along it. Each crossing near the
    /// steep band is found on its edge, to 0.01 mm in height or 1/1024 mm
    /// along the edge: at the foot of the rail the height falls from the
    /// rail to the floor within one node, and a linear estimate there lands
    /// the pass millimetres away from where the ball touches. Regula falsi
    /// with the Illinois step (Dowell and Jarratt, BIT 11, 1971) from the
    /// two node heights: a few drops on the smooth rail, more where the
    /// height jumps.
    fn crossing(&self, level: f64, [p, q]: [[f64; 2]; 2], t: f64, vp: f64, vq: f64) -> [f64; 2] {
        let at = |t: f64| [p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])];
        if !self.near_steep(at(t)) {
            return at(t);
        }
        let (mut a, mut fa) = (0.0, vp - level);
        let (mut b, mut fb) = (1.0, vq.max(self.ctx.floor(q[0])) - level);
        if fb >= 0.0 {
            return at(t);
        }
        let mut kept = 0i32;
        let mut hint = None;
        for _ in 0..40 {
            let m = (a - fa * (b - a) / (fb - fa)).clamp(a, b);
            let fm = self.ctx.tip_near(self.dc, at(m)[0], at(m)[1], &mut hint) - level;
            // Within 0.01 mm of the level either way is the crossing
            // (taking the end above instead, up to a node's spacing away,
            // put a dent in the pass wherever it met a grid line at a
            // slant).
            if fm.abs() <= 0.01 {
                return at(m);
            }
            if b - a <= 1.0 / 1024.0 {
                return at(a);
            }
            if fm >= 0.0 {
                (a, fa) = (m, fm);
                kept = kept.min(0) - 1;
                if kept <= -2 {
                    fb /= 2.0;
                }
            } else {
                (b, fb) = (m, fm);
                kept = kept.max(0) + 1;
                if kept >= 2 {
                    fa /= 2.0;
                }
            }
        }
        at(a)
    }

    /// The runs of one level: its contours resampled every 1 mm (the
    /// ball's path bends no tighter than the ball, so a 1 mm chord of it
    /// sags at most L²/8R = 0.02 mm for the 1/2 in ball, and `refine`
    /// probes every chord after), broken where they leave the steep band,
    /// each point dropped exactly.
    fn runs_at(&self, level: f64) -> Vec<Vec<[f64; 3]>> {
        let mut out = Vec::new();
        let place = |p: [f64; 2], q: [f64; 2], t: f64, vp: f64, vq: f64| {
            self.crossing(level, [p, q], t, vp, vq)
        };
        for l in field::contours_placed(&self.filled, &self.ranges, level, &place) {
            let pts = resample(&l.points, 1.0, l.closed);
            let mut run: Vec<[f64; 3]> = Vec::new();
            let mut hint = None;
            for q in pts {
                if !self.near_steep(q) || self.h.at(q).is_nan() {
                    if run.len() > 1 {
                        out.push(std::mem::take(&mut run));
                    }
                    run.clear();
                    continue;
                }
                run.push([
                    q[0],
                    q[1],
                    self.ctx.tip_near(self.dc, q[0], q[1], &mut hint),
                ]);
            }
            if run.len() > 1 {
                out.push(run);
            }
        }
        out
    }
}
