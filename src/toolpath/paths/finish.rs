//! Ball-end finishing: parallel passes over the deck and bottom, Z levels
//! on the steep rail band (with a smaller ball when the machine has one),
//! and the links between passes.

use super::*;
use crate::geom::dropcutter::DropCutter;
use crate::geom::field::{self, Field};
use crate::model::toolpath::{Step, Toolpath};
use rayon::prelude::*;

/// The finishing paths of a setup: the parallel passes (and, with one
/// ball, the rail band's Z levels after them); with a smaller ball for the
/// rails, its Z levels as a path of their own. Also the cutter positions
/// computed.
pub(super) fn finishing(ctx: &Ctx) -> (Vec<Toolpath>, usize) {
    let fin = &ctx.job.finishing;
    let pass = fin.pass.clone();
    let cutter = pass.tool.cutter;
    let theta = fin.steep_angle.to_radians();
    let dc = DropCutter::new(&ctx.guard.iter().collect::<Vec<_>>(), cutter);
    // With a ball of its own for the rails, the finishing ball keeps to
    // where the surface under it is gentler than the steep angle and the
    // part (not the floor round it) holds it up.
    let gentle_only = fin.rails.is_some();
    let (passes, mut positions) = parallel(ctx, &dc, gentle_only);
    let stepover = scallop_stepover(cutter.radius, fin.scallop);
    let mut steps = vec![Step::Rapid([0.0, 0.0, ctx.clear])];
    let mut at: Option<[f64; 3]> = None;
    for runs in passes {
        for run in runs {
            link(&mut steps, ctx, &dc, &mut at, &run, stepover * 1.5);
        }
    }
    // Z levels over the steep rail band.
    let (rail_pass, rail_scallop) = fin.rail_tool();
    let rail_dc = DropCutter::new(&ctx.guard.iter().collect::<Vec<_>>(), rail_pass.tool.cutter);
    // With a ball of its own the rail band starts 10° below the steep
    // angle, overlapping the finishing ball's last passes.
    let start = if gentle_only {
        theta - 10f64.to_radians()
    } else {
        theta
    };
    let rail_s = scallop_stepover(rail_pass.tool.cutter.radius, rail_scallop);
    let (wl, n) = waterlines(ctx, &rail_dc, rail_s, start);
    positions += n;
    let mut paths = Vec::new();
    if gentle_only {
        steps.push(Step::Rapid(last_xy(&steps, ctx.clear)));
        let path = Toolpath {
            label: "finishing",
            pass,
            steps,
        };
        // The rail ball's links then see the stock as the large ball left it.
        ctx.cut(&path);
        paths.push(path);
        steps = vec![Step::Rapid([0.0, 0.0, ctx.clear])];
    }
    let from = at.unwrap_or([0.0, 0.0, ctx.clear]);
    at = None;
    for run in nearest_first(wl, from) {
        link(&mut steps, ctx, &rail_dc, &mut at, &run, 0.0);
    }
    steps.push(Step::Rapid(last_xy(&steps, ctx.clear)));
    paths.push(Toolpath {
        label: if gentle_only { "rails" } else { "finishing" },
        pass: rail_pass.clone(),
        steps,
    });
    (paths, positions)
}

/// One pass of the raster: its Y at each sample along X and where the
/// ball stands there (none where it does not cut).
struct Row {
    y: Vec<f64>,
    at: Vec<Option<[f64; 3]>>,
}

/// The longest run of samples a pass may leave out and still count as
/// cutting there when the next pass is spaced (the gentle test flickers
/// for a sample or two where the contact sits on a triangle's edge or the
/// floor's estimate wavers; a longer gap is an edge).
const BRIDGE: usize = 5;

/// The steepest face a pass's spacing is narrowed for, degrees: beyond
/// it the rail band's Z levels take over in any case.
const MAX_SLOPE: f64 = 75.0;

/// The parallel passes along X, each as its runs in cutting order
/// (alternate passes reversed), and the cutter positions computed. With
/// `gentle_only` a run breaks where the surface under the ball is steeper
/// than the steep angle or the ball would rest on the floor.
///
/// The stepover follows the slope (constant scallop): each pass is a line
/// along X whose distance from the one before is, at every sample, the
/// scallop's stepover times the cosine of the slope across the passes
/// there (on a face tilted φ across them, balls d apart in plan stand
/// d / cos φ apart, and the cusp depends on that: circle geometry). The
/// step is smoothed along X over a ball's radius ([`smoothed_min`], so a
/// pass bends gently and never rises above the step needed), and wherever
/// the balls then stand farther apart than the stepover (the slope grew
/// between them), those samples are moved in and computed again; at the
/// edge of what the ball takes near the rail, half the stepover. A flat
/// deck gets the full stepover, a rolled rail what its slope needs.
fn parallel(ctx: &Ctx, dc: &DropCutter, gentle_only: bool) -> (Vec<Vec<Vec<[f64; 3]>>>, usize) {
    let fin = &ctx.job.finishing;
    let r = dc.cutter().radius;
    let s = scallop_stepover(r, fin.scallop);
    let theta = fin.steep_angle.to_radians();
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
    let n_along = ((x1 - x0) / along).ceil() as usize + 1;
    let xs: Vec<f64> = (0..n_along)
        .map(|k| (x0 + k as f64 * along).min(x1))
        .collect();
    // The ball at (x, y).
    let sample = |x: f64, y: f64| -> Option<[f64; 3]> {
        if ctx.outside.at([x, y]) > reach {
            return None;
        }
        if gentle_only {
            return gentle(ctx, dc, x, y, theta.cos());
        }
        Some([x, y, ctx.tip(dc, x, y)])
    };
    let row_at = |y: Vec<f64>| -> Row {
        let at = xs.par_iter().zip(&y).map(|(&x, &y)| sample(x, y)).collect();
        Row { y, at }
    };
    let widen = (r / along).ceil() as usize;
    let least = s * MAX_SLOPE.to_radians().cos();
    // From the stringer out, each way until a pass lies wholly off the part.
    let centre = row_at(vec![p.centre_y; n_along]);
    let mut positions = n_along;
    // The next pass from `prev` (and the one before it, `before`), `dir`
    // +1 or -1 in Y. The slope is first taken as the chord's between the
    // last two passes (flat from the stringer's pass); where it grew, the
    // balls stand too far apart and the samples move in.
    let mut next = |prev: &Row, before: Option<&Row>, dir: f64| -> Row {
        let last = bridged(&prev.at, BRIDGE);
        let earlier = before.map(|b| bridged(&b.at, BRIDGE));
        let step: Vec<f64> = (0..n_along)
            .map(|k| match (last[k], earlier.as_ref().and_then(|b| b[k])) {
                (Some(a), Some(b)) => {
                    let cos = (a[1] - b[1]).abs() / (a[1] - b[1]).hypot(a[2] - b[2]);
                    (s * cos).max(least)
                }
                // From the stringer's pass, or where the last pass did
                // not cut (off the part, or a sample it left out): the
                // full stepover, narrowed by the neighbours' steps.
                _ => s,
            })
            .collect();
        let mut step = smoothed_min(&step, widen);
        let mut row = row_at(prev.y.iter().zip(&step).map(|(y, d)| y + dir * d).collect());
        positions += n_along;
        // Where the balls stand too far apart, in by the ratio, twice at most.
        for _ in 0..2 {
            let mut redo = vec![false; n_along];
            let now = bridged(&row.at, BRIDGE);
            for k in 0..n_along {
                match (last[k], now[k]) {
                    (Some(a), Some(b)) => {
                        let d = (b[1] - a[1]).hypot(b[2] - a[2]);
                        if d > s * 1.001 {
                            redo[k] = true;
                            step[k] = (step[k] * s / d).max(least);
                        }
                    }
                    // Where only one of the two cuts near the rail (the
                    // edge of what the ball takes: a steep face, or a hard
                    // edge the ball rides over; further in, a sample left
                    // out where the floor's estimate wavers over a
                    // concave, not an edge): half the stepover, so the
                    // last pass that cuts stands within s / 2 of the edge
                    // and the flat it leaves there holds the scallop,
                    // r − √(r² − s²/4) = h.
                    (None, Some(_)) | (Some(_), None)
                        if step[k] > 0.5 * s + 1e-9
                            && ctx.inside.at([xs[k], row.y[k]]) <= RAIL_BAND =>
                    {
                        redo[k] = true;
                        step[k] = 0.5 * s;
                    }
                    _ => {}
                }
            }
            if !redo.contains(&true) {
                break;
            }
            let narrowed = smoothed_min(&step, widen);
            let changed: Vec<usize> = (0..n_along)
                .filter(|&k| narrowed[k] < step[k] || redo[k])
                .collect();
            step = narrowed;
            let fresh: Vec<(usize, f64, Option<[f64; 3]>)> = changed
                .par_iter()
                .map(|&k| {
                    let y = prev.y[k] + dir * step[k];
                    (k, y, sample(xs[k], y))
                })
                .collect();
            positions += fresh.len();
            for (k, y, at) in fresh {
                row.y[k] = y;
                row.at[k] = at;
            }
        }
        row
    };
    let mut halves: [Vec<Row>; 2] = [Vec::new(), Vec::new()];
    for (half, dir) in halves.iter_mut().zip([-1.0, 1.0]) {
        loop {
            let n = half.len();
            let prev = half.last().unwrap_or(&centre);
            let before = match n {
                0 => None,
                1 => Some(&centre),
                _ => Some(&half[n - 2]),
            };
            let row = next(prev, before, dir);
            let beyond = row.y.iter().all(|&y| y < y0 || y > y1);
            if beyond || (row.at.iter().all(Option::is_none) && prev.at.iter().all(Option::is_none))
            {
                break;
            }
            half.push(row);
        }
    }
    let [low, high] = halves;
    // From the middle out, each half in zig-zag: the top of the deck (or
    // of the bottom) first, so the roughing's stairs there are gone before
    // the ball works down a rail beside them.
    let rows: Vec<Row> = std::iter::once(centre).chain(low).chain(high).collect();
    let tol = fin.tolerance;
    let passes = rows
        .into_par_iter()
        .enumerate()
        .map(|(nth, row)| {
            let mut runs: Vec<Vec<[f64; 3]>> = Vec::new();
            let mut run: Vec<[f64; 3]> = Vec::new();
            for q in row.at {
                match q {
                    Some(q) => run.push(q),
                    None => {
                        if run.len() > 1 {
                            runs.push(std::mem::take(&mut run));
                        }
                        run.clear();
                    }
                }
            }
            if run.len() > 1 {
                runs.push(run);
            }
            if nth % 2 == 1 {
                runs.reverse();
                for r in &mut runs {
                    r.reverse();
                }
            }
            let h = |x: f64, y: f64| ctx.tip(dc, x, y);
            runs.into_iter()
                .map(|r| simplify(&refine(&r, &h, tol / 2.0), tol))
                .collect()
        })
        .collect();
    (passes, positions)
}

/// `at` with every gap of at most `gap` samples between two that cut
/// filled along the chord between them (a sample the ball left out, not
/// an edge of what it takes).
fn bridged(at: &[Option<[f64; 3]>], gap: usize) -> Vec<Option<[f64; 3]>> {
    let mut out = at.to_vec();
    let mut last: Option<usize> = None;
    for k in 0..at.len() {
        if at[k].is_none() {
            continue;
        }
        if let Some(j) = last
            && k - j > 1
            && k - j <= gap + 1
            && let (Some(a), Some(b)) = (at[j], at[k])
        {
            for (m, o) in out.iter_mut().enumerate().take(k).skip(j + 1) {
                *o = Some(lerp3(a, b, (m - j) as f64 / (k - j) as f64));
            }
        }
        last = Some(k);
    }
    out
}

/// `v` made smooth without rising anywhere: the least within `w` places
/// either side of each place, then the mean of those within `w` places.
/// Each mean is of minima whose windows all hold the place itself, so it
/// is never above `v` there; and it changes by a ramp, not a step.
fn smoothed_min(v: &[f64], w: usize) -> Vec<f64> {
    let window = |k: usize| k.saturating_sub(w)..(k + w + 1).min(v.len());
    let least: Vec<f64> = (0..v.len())
        .map(|k| v[window(k)].iter().copied().fold(f64::INFINITY, f64::min))
        .collect();
    (0..v.len())
        .map(|k| {
            let span = &least[window(k)];
            span.iter().sum::<f64>() / span.len() as f64
        })
        .collect()
}

/// The ball's position at (x, y) if it rests on the part, clear of the
/// floor, on a face no steeper than the steep angle (`cos`, the cosine of
/// it: for a ball the normal at the contact is the face's own), and
/// wholly inside the band the roughing cleared round the outline.
fn gentle(ctx: &Ctx, dc: &DropCutter, x: f64, y: f64, cos: f64) -> Option<[f64; 3]> {
    // The roughing's outermost ring runs 1.5 cells (3 mm) inside its band,
    // on a 2 mm grid: 5 mm kept from the wall.
    let band = ctx.job.band() - dc.cutter().radius - 5.0;
    if ctx.outside.at([x, y]) > band {
        return None;
    }
    let (z, n) = dc.drop_contact(x, y)?;
    (z > ctx.floor(x) + 0.05 && n[2] >= cos).then_some([x, y, z])
}

/// The runs in the order a greedy tour takes them: from `from`, each
/// time the run with the nearest end (reversed if that end is its last
/// point), height differences counted three times over so a level is
/// worked round before the tool moves to another. Nearest neighbour, not
/// the shortest tour, but it keeps the tool from crossing the board
/// between every piece of a level.
fn nearest_first(mut runs: Vec<Vec<[f64; 3]>>, from: [f64; 3]) -> Vec<Vec<[f64; 3]>> {
    let cost =
        |a: [f64; 3], b: [f64; 3]| (a[0] - b[0]).hypot(a[1] - b[1]) + 3.0 * (a[2] - b[2]).abs();
    let mut out = Vec::with_capacity(runs.len());
    let mut at = from;
    while !runs.is_empty() {
        let mut best = (f64::INFINITY, 0, false);
        for (i, r) in runs.iter().enumerate() {
            let (c0, c1) = (cost(at, r[0]), cost(at, r[r.len() - 1]));
            if c0 < best.0 {
                best = (c0, i, false);
            }
            if c1 < best.0 {
                best = (c1, i, true);
            }
        }
        let mut r = runs.swap_remove(best.1);
        if best.2 {
            r.reverse();
        }
        at = r[r.len() - 1];
        out.push(r);
    }
    out
}

/// Joins the tool to the start of `run`: across the surface when the gap
/// is short (following the drop-cutter, so it cannot gouge), otherwise up
/// just clear of the stock under the way, across and down.
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
        // As low as the stock and the part under the way allow.
        let travel = ctx.link_z(from, s, r).max(from[2]);
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
            if heights[k].is_finite() && slope(i, j) >= tan * STEEP_SHARE {
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
    // Levels dz apart stand dz / sin φ apart on a face at φ, so each next
    // level is s · sin φ down for the gentlest face φ between this level
    // and a full stepover below it (the steep nodes there, by their
    // slope), and never less than for the gentlest face the levels take
    // at all, 0.9 of the slope at `theta`.
    let gentlest = (STEEP_SHARE * tan).atan();
    let least = s * gentlest.sin();
    let mut faces: Vec<(f64, f64)> = (0..heights.len())
        .filter(|&k| steep[k])
        .map(|k| {
            let g = slope(k % nx, k / nx);
            (heights[k], g / (1.0 + g * g).sqrt())
        })
        .collect();
    faces.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut levels = Vec::new();
    let mut z = top - least / 2.0;
    while z > bottom {
        levels.push(z);
        let from = faces.partition_point(|f| f.0 < z - s);
        let to = faces.partition_point(|f| f.0 <= z);
        let sin = faces[from..to].iter().map(|f| f.1).fold(1.0, f64::min);
        z -= (s * sin).max(least);
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
                    // Within 0.01 mm of the level either way is the
                    // crossing (taking the end above instead, up to a
                    // node's spacing away, put a dent in the pass wherever
                    // it met a grid line at a slant).
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
