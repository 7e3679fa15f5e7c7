//! Ball-end finishing: parallel passes over the flats, Z levels on the
//! steep rail band, and the links between passes.

use super::*;
use crate::geom::dropcutter::DropCutter;
use crate::geom::field::{self, Field};
use crate::model::toolpath::{Step, Toolpath};
use rayon::prelude::*;

pub(super) fn finishing(ctx: &Ctx) -> (Toolpath, usize) {
    let job = ctx.job;
    let fin = &job.finishing;
    let pass = fin.pass.clone();
    let cutter = pass.tool.cutter;
    let r = cutter.radius;
    let s = scallop_stepover(r, fin.scallop);
    let theta = fin.steep_angle.to_radians();
    let stepover = s * theta.cos();
    let dz = s * theta.sin();
    let dc = DropCutter::new(&ctx.guard.iter().collect::<Vec<_>>(), cutter);
    // Samples 1 mm apart: the ball's height along a pass bends no tighter
    // than the ball (radius R over a sharp edge), so a chord sags at most
    // L²/8R = 0.02 mm below it there for R = 6.35 mm (geometry: the
    // sagitta), and `refine` probes every chord and splits it where the
    // sag is more than half the tolerance.
    let along = (1.0f64).min(s / 2.0);
    let reach = r + 1.0;
    let p = ctx.place;
    let (y0, y1) = (
        p.centre_y - p.half_width - reach,
        p.centre_y + p.half_width + reach,
    );
    let (x0, x1) = (p.x_range[0] - reach, p.x_range[1] + reach);
    let n_pass = ((y1 - y0) / stepover).ceil() as usize + 1;
    let n_along = ((x1 - x0) / along).ceil() as usize + 1;
    let tol = fin.tolerance;
    // Every cutter position of every pass, in parallel, in pass order.
    let passes: Vec<Vec<Vec<[f64; 3]>>> = (0..n_pass)
        .into_par_iter()
        .map(|j| {
            let y = (y0 + j as f64 * stepover).min(y1);
            let mut runs: Vec<Vec<[f64; 3]>> = Vec::new();
            let mut run: Vec<[f64; 3]> = Vec::new();
            for k in 0..n_along {
                let x = (x0 + k as f64 * along).min(x1);
                if ctx.outside.at([x, y]) > reach {
                    if run.len() > 1 {
                        runs.push(std::mem::take(&mut run));
                    }
                    run.clear();
                    continue;
                }
                let z = ctx.tip(&dc, x, y);
                run.push([x, y, z]);
            }
            if run.len() > 1 {
                runs.push(run);
            }
            if j % 2 == 1 {
                runs.reverse();
                for r in &mut runs {
                    r.reverse();
                }
            }
            let h = |x: f64, y: f64| ctx.tip(&dc, x, y);
            runs.into_iter()
                .map(|r| simplify(&refine(&r, &h, tol / 2.0), tol))
                .collect()
        })
        .collect();
    let mut positions = n_pass * n_along;
    let mut steps = vec![Step::Rapid([0.0, 0.0, ctx.clear])];
    let mut at: Option<[f64; 3]> = None;
    for runs in passes {
        for run in runs {
            link(&mut steps, ctx, &dc, &mut at, &run, stepover * 1.5);
        }
    }
    // Z levels over the steep rail band.
    let (wl, n) = waterlines(ctx, &dc, dz, theta);
    positions += n;
    for run in wl {
        link(&mut steps, ctx, &dc, &mut at, &run, 0.0);
    }
    steps.push(Step::Rapid(last_xy(&steps, ctx.clear)));
    (
        Toolpath {
            label: "finishing",
            pass,
            steps,
        },
        positions,
    )
}

/// Joins the tool to the start of `run`: across the surface when the gap
/// is short (following the drop-cutter, so it cannot gouge), otherwise up
/// to clearance and across.
pub(super) fn link(
    steps: &mut Vec<Step>,
    ctx: &Ctx,
    dc: &DropCutter,
    at: &mut Option<[f64; 3]>,
    run: &[[f64; 3]],
    short: f64,
) {
    let s = run[0];
    let near = at.is_some_and(|a| ((a[0] - s[0]).powi(2) + (a[1] - s[1]).powi(2)).sqrt() <= short);
    if let (true, Some(a)) = (near, *at) {
        let n = (((a[0] - s[0]).powi(2) + (a[1] - s[1]).powi(2)).sqrt() / 0.5)
            .ceil()
            .max(1.0) as usize;
        let h = |x: f64, y: f64| ctx.tip(dc, x, y);
        let mut across = vec![a];
        for k in 1..n {
            let t = k as f64 / n as f64;
            let (x, y) = (a[0] + t * (s[0] - a[0]), a[1] + t * (s[1] - a[1]));
            across.push([x, y, h(x, y).max(a[2] + t * (s[2] - a[2]))]);
        }
        across.push(s);
        // Each step across refined like a pass, so none digs in between.
        let tol = ctx.job.finishing.tolerance;
        for p in refine(&across, &h, tol / 2.0).into_iter().skip(1) {
            steps.push(Step::Cut(p));
        }
    } else {
        let r = dc.cutter().radius;
        let from = last_at(steps);
        let travel = ctx.travel_z(from[0], s[0], r).max(from[2]);
        steps.push(Step::Rapid([from[0], from[1], travel]));
        steps.push(Step::Rapid([s[0], s[1], travel]));
        // Stop 2 mm above the stock the roughing left under the tool.
        let top = ctx.stock_top(s[0], s[1], r + 1.0);
        steps.push(Step::Rapid([s[0], s[1], top.max(s[2]) + 2.0]));
        steps.push(Step::Plunge(s));
    }
    for p in &run[1..] {
        steps.push(Step::Cut(*p));
    }
    *at = Some(run[run.len() - 1]);
}

/// How far in from the outline the Z-level passes look for steep rail
/// (the rail band of a surfboard is well within it; common practice, no
/// source).
pub(super) const RAIL_BAND: f64 = 60.0;

/// Z-level passes where the surface is steeper than `theta`: contours of
/// the drop-cutter height every `dz`, each crossing found on its grid
/// edge from the drop-cutter itself, each point then dropped exactly.
pub(super) fn waterlines(
    ctx: &Ctx,
    dc: &DropCutter,
    dz: f64,
    theta: f64,
) -> (Vec<Vec<[f64; 3]>>, usize) {
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
    let heights: Vec<f64> = nodes
        .par_iter()
        .zip(&inside_band)
        .map(|(q, &b)| if b { ctx.tip(dc, q[0], q[1]) } else { f64::NAN })
        .collect();
    let count = inside_band.iter().filter(|b| **b).count();
    let h = grid.with_values(heights.clone());
    let [nx, ny] = grid.dims;
    let tan = theta.tan();
    let slope = |i: usize, j: usize| {
        let v = |i: usize, j: usize| heights[j * nx + i];
        if i == 0 || j == 0 || i + 1 >= nx || j + 1 >= ny {
            return 0.0;
        }
        let gx = (v(i + 1, j) - v(i - 1, j)) / 2.0;
        let gy = (v(i, j + 1) - v(i, j - 1)) / 2.0;
        (gx * gx + gy * gy).sqrt()
    };
    let mut steep = vec![false; heights.len()];
    let mut top = f64::NEG_INFINITY;
    let mut bottom = f64::INFINITY;
    for j in 0..ny {
        for i in 0..nx {
            let k = j * nx + i;
            if heights[k].is_finite() && slope(i, j) >= tan * 0.9 {
                steep[k] = true;
                top = top.max(heights[k]);
                bottom = bottom.min(heights[k]);
            }
        }
    }
    if top.is_nan() || bottom.is_nan() || top <= bottom {
        return (vec![], count);
    }
    // NaN nodes count as below every level so contours close round the band.
    let filled = grid.with_values(
        heights
            .iter()
            .map(|v| if v.is_finite() { *v } else { -1e9 })
            .collect(),
    );
    let mut levels = Vec::new();
    let mut z = top - dz / 2.0;
    while z > bottom {
        levels.push(z);
        z -= dz;
    }
    let ranges = field::Ranges::of(&filled);
    // Steep if any corner of its cell is: where the height flattens onto
    // the floor the nearest node may not be.
    let near_steep = |q: [f64; 2]| {
        let i = ((q[0] - lo[0]) / 1.0).floor().max(0.0) as usize;
        let j = ((q[1] - lo[1]) / 1.0).floor().max(0.0) as usize;
        [(0, 0), (1, 0), (0, 1), (1, 1)]
            .iter()
            .any(|&(a, b)| i + a < nx && j + b < ny && steep[(j + b) * nx + i + a])
    };
    let tip = |x: f64, y: f64| ctx.tip(dc, x, y);
    let runs: Vec<Vec<Vec<[f64; 3]>>> = levels
        .par_iter()
        .map(|&level| {
            let mut out = Vec::new();
            // Each crossing found on its cell edge, to 0.01 mm in height
            // or 1/1024 mm along the edge: at the foot of the rail the
            // height falls from the rail to the floor within one node, and
            // a linear estimate there lands the pass millimetres away from
            // where the ball touches. Regula falsi with the Illinois step
            // (Dowell and Jarratt, BIT 11, 1971) from the two node heights:
            // a few drops on the smooth rail, more where the height jumps.
            let place = |p: [f64; 2], q: [f64; 2], t: f64, vp: f64, vq: f64| {
                let at = |t: f64| [p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])];
                if !near_steep(at(t)) {
                    return at(t);
                }
                let (mut a, mut fa) = (0.0, vp - level);
                let (mut b, mut fb) = (1.0, vq.max(ctx.floor(q[0])) - level);
                if fb >= 0.0 {
                    return at(t);
                }
                let mut kept = 0i32;
                for _ in 0..40 {
                    let m = (a - fa * (b - a) / (fb - fa)).clamp(a, b);
                    let fm = tip(at(m)[0], at(m)[1]) - level;
                    if fm.abs() <= 0.01 || b - a <= 1.0 / 1024.0 {
                        return if fm >= 0.0 { at(m) } else { at(a) };
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
            };
            for l in field::contours_placed(&filled, &ranges, level, &place) {
                let pts = resample(&l.points, 0.5, l.closed);
                let mut run: Vec<[f64; 3]> = Vec::new();
                for q in pts {
                    if !near_steep(q) || h.at(q).is_nan() {
                        if run.len() > 1 {
                            out.push(std::mem::take(&mut run));
                        }
                        run.clear();
                        continue;
                    }
                    let zq = tip(q[0], q[1]);
                    run.push([q[0], q[1], zq]);
                }
                if run.len() > 1 {
                    out.push(run);
                }
            }
            out
        })
        .collect();
    let tol = ctx.job.finishing.tolerance;
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
