//! The parallel finishing passes along X over the deck and bottom, their
//! stepover from the slope across them (constant scallop).

use super::*;
use crate::geom::dropcutter::DropCutter;
use crate::model::machine::{Cutter, ToolKind};
use rayon::prelude::*;

/// One pass of the raster: its Y at each sample along X and where the
/// ball stands there (none where it does not cut).
struct Row {
    y: Vec<f64>,
    at: Vec<Option<[f64; 3]>>,
}

/// The longest gap along a pass, mm, that may be left out and still
/// count as cutting there when the next pass is spaced (the gentle test
/// flickers for a sample or two where the contact sits on a triangle's
/// edge or the floor's estimate wavers; a longer gap is an edge).
const BRIDGE_MM: f64 = 5.0;

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
pub(super) fn parallel(
    ctx: &Ctx,
    dc: &DropCutter,
    gentle_only: bool,
) -> (Vec<Vec<Vec<[f64; 3]>>>, usize) {
    let fin = &ctx.job.finishing;
    let r = dc.cutter().radius;
    let spacing = Spacing::new(dc.cutter(), fin.scallop);
    let s = spacing.step(1.0);
    // Samples √(8·R·tol) apart, R the radius of the tool's rounded tip
    // (a ball's own, a bull-nose's corner): its height along a pass bends
    // no tighter than that (radius R over a sharp edge), so a chord L
    // long sags at most L²/8R below it (geometry: the sagitta), the
    // tolerance (2 mm for the 2 in ball at 0.02 mm; never under 1 mm, as
    // for a 1/2 in ball or a bull-nose's 1/4 in corner); and `refine`
    // probes every chord and splits it where the sag is more than half
    // the tolerance.
    let along = (8.0 * dc.cutter().corner * fin.tolerance)
        .sqrt()
        .max(1.0)
        .min(s / 2.0);
    let reach = r + 1.0;
    let p = ctx.place;
    let (y0, y1) = (
        p.centre_y - p.half_width - reach,
        p.centre_y + p.half_width + reach,
    );
    let (x0, x1) = (p.x_range[0] - reach, p.x_range[1] + reach);
    let n_along = ((x1 - x0) / along).ceil() as usize + 1;
    let mut raster = Raster {
        ctx,
        dc,
        gentle_only,
        cos: fin.steep_angle.to_radians().cos(),
        reach,
        least: spacing.step(MAX_SLOPE.to_radians().cos()),
        spacing,
        widen: (r / along).ceil() as usize,
        bridge: (BRIDGE_MM / along).ceil() as usize,
        xs: (0..n_along)
            .map(|k| (x0 + k as f64 * along).min(x1))
            .collect(),
        positions: n_along,
    };
    // From the stringer out, each way until a pass lies wholly off the part.
    let centre = raster.row_at(vec![p.centre_y; n_along]);
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
            let row = raster.next(prev, before, dir);
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
    (runs(ctx, dc, rows), raster.positions)
}

/// The rows as runs of the ball's positions, alternate rows reversed,
/// each refined against the drop-cutter and simplified.
fn runs(ctx: &Ctx, dc: &DropCutter, rows: Vec<Row>) -> Vec<Vec<Vec<[f64; 3]>>> {
    let tol = ctx.job.finishing.tolerance;
    rows.into_par_iter()
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
            let tip = Tip::new(ctx, dc);
            runs.into_iter()
                .map(|r| simplify(&refine(&r, &tip, tol / 2.0), tol))
                .collect()
        })
        .collect()
}

/// The passes being laid out: where the samples are along X, the
/// scallop's stepover and the least step, the positions computed so far.
struct Raster<'a> {
    ctx: &'a Ctx<'a>,
    dc: &'a DropCutter,
    gentle_only: bool,
    /// Cosine of the steep angle.
    cos: f64,
    /// How far outside the silhouette the ball is still sampled.
    reach: f64,
    /// The scallop's stepover at each slope.
    spacing: Spacing,
    /// The step at the steepest face spaced for ([`MAX_SLOPE`]).
    least: f64,
    /// Samples within a ball's radius along X.
    widen: usize,
    /// Samples within [`BRIDGE_MM`].
    bridge: usize,
    xs: Vec<f64>,
    positions: usize,
}

impl Raster<'_> {
    /// The ball at (x, y).
    /// The ball at (x, y), `hint` the triangle touched by the sample
    /// before ([`DropCutter::drop_above_near`]).
    fn sample(&self, x: f64, y: f64, hint: &mut Option<u32>) -> Option<[f64; 3]> {
        if self.ctx.outside.at([x, y]) > self.reach {
            return None;
        }
        if self.gentle_only {
            return gentle(self.ctx, self.dc, [x, y], self.cos, hint);
        }
        Some([x, y, self.ctx.tip_near(self.dc, x, y, hint)])
    }

    fn row_at(&self, y: Vec<f64>) -> Row {
        let at = self
            .xs
            .par_iter()
            .zip(&y)
            .map_init(|| None, |hint, (&x, &y)| self.sample(x, y, hint))
            .collect();
        Row { y, at }
    }

    /// The next pass from `prev` (and the one before it, `before`), `dir`
    /// +1 or -1 in Y. The slope is first taken as the chord's between the
    /// last two passes (flat from the stringer's pass); where it grew, the
    /// balls stand too far apart and the samples move in.
    fn next(&mut self, prev: &Row, before: Option<&Row>, dir: f64) -> Row {
        let s = self.spacing.step(1.0);
        let last = bridged(&prev.at, self.bridge);
        let earlier = before.map(|b| bridged(&b.at, self.bridge));
        let step: Vec<f64> = (0..self.xs.len())
            .map(|k| match (last[k], earlier.as_ref().and_then(|b| b[k])) {
                (Some(a), Some(b)) => {
                    let cos = (a[1] - b[1]).abs() / (a[1] - b[1]).hypot(a[2] - b[2]);
                    self.spacing.step(cos).max(self.least)
                }
                // From the stringer's pass, or where the last pass did
                // not cut (off the part, or a sample it left out): the
                // full stepover, narrowed by the neighbours' steps.
                _ => s,
            })
            .collect();
        let step = smoothed_min(&step, self.widen);
        let mut row = self.row_at(prev.y.iter().zip(&step).map(|(y, d)| y + dir * d).collect());
        self.positions += self.xs.len();
        self.close_up(prev, &last, &mut row, step, dir);
        row
    }

    /// Where the balls of `row` stand too far from those of `prev`
    /// (`last`, bridged), in by the ratio, twice at most; at the edge of
    /// what the ball takes, half the stepover.
    fn close_up(
        &mut self,
        prev: &Row,
        last: &[Option<[f64; 3]>],
        row: &mut Row,
        mut step: Vec<f64>,
        dir: f64,
    ) {
        let (edge, n_along) = (self.spacing.edge, self.xs.len());
        for _ in 0..2 {
            let mut redo = vec![false; n_along];
            let now = bridged(&row.at, self.bridge);
            for k in 0..n_along {
                match (last[k], now[k]) {
                    (Some(a), Some(b)) => {
                        if let Some((want, have)) = self.spacing.too_far(a, b) {
                            redo[k] = true;
                            step[k] = (step[k] * want / have).max(self.least);
                        }
                    }
                    // Where only one of the two cuts near the rail (the
                    // edge of what the ball takes: a steep face, or a hard
                    // edge the ball rides over; further in, a sample left
                    // out where the floor's estimate wavers over a
                    // concave, not an edge): half the stepover, so the
                    // last pass that cuts stands within s / 2 of the edge
                    // and the flat it leaves there holds the scallop,
                    // r − √(r² − s²/4) = h (r the corner's radius).
                    (None, Some(_)) | (Some(_), None)
                        if step[k] > edge + 1e-9
                            && self.ctx.inside.at([self.xs[k], row.y[k]]) <= RAIL_BAND =>
                    {
                        redo[k] = true;
                        step[k] = edge;
                    }
                    _ => {}
                }
            }
            if !redo.contains(&true) {
                break;
            }
            let narrowed = smoothed_min(&step, self.widen);
            let changed: Vec<usize> = (0..n_along)
                .filter(|&k| narrowed[k] < step[k] || redo[k])
                .collect();
            step = narrowed;
            let fresh: Vec<(usize, f64, Option<[f64; 3]>)> = changed
                .par_iter()
                .map_init(
                    || None,
                    |hint, &k| {
                        let y = prev.y[k] + dir * step[k];
                        (k, y, self.sample(self.xs[k], y, hint))
                    },
                )
                .collect();
            self.positions += fresh.len();
            for (k, y, at) in fresh {
                row.y[k] = y;
                row.at[k] = at;
            }
        }
    }
}

/// The stepover between passes on a face as steep as the chord between
/// two neighbouring cutter positions says: for a ball the scallop's
/// stepover along the face (the cusp between two balls depends only on
/// how far apart they stand: circle geometry); for a bull-nose or a flat
/// end, [`slope_stepover`] tabulated every quarter degree (a flat bottom
/// takes wide steps on the flat and its corner's on a slope).
struct Spacing {
    /// The stepover on the flat.
    flat: f64,
    /// For other tools than a ball, the stepover in plan at each quarter
    /// degree of slope from 0 to [`MAX_SLOPE`].
    table: Option<Vec<f64>>,
    /// Half the corner's chord: how near the last pass that cuts stands to
    /// the edge of what the tool takes.
    edge: f64,
}

/// Slope steps of [`Spacing`]'s table, per degree.
const TABLE_PER_DEGREE: f64 = 4.0;

impl Spacing {
    fn new(cutter: Cutter, h: f64) -> Spacing {
        let edge = 0.5 * scallop_stepover(cutter.corner, h);
        if cutter.kind == ToolKind::Ball {
            return Spacing {
                flat: scallop_stepover(cutter.radius, h),
                table: None,
                edge,
            };
        }
        let n = (MAX_SLOPE * TABLE_PER_DEGREE).ceil() as usize;
        let table: Vec<f64> = (0..=n)
            .map(|k| slope_stepover(&cutter, h, (k as f64 / TABLE_PER_DEGREE).to_radians().cos()))
            .collect();
        Spacing {
            flat: table[0],
            table: Some(table),
            edge,
        }
    }

    /// The stepover in plan on a face whose slope across the passes has
    /// cosine `cos`; from the table, the lesser of the two neighbouring
    /// entries.
    fn step(&self, cos: f64) -> f64 {
        match &self.table {
            None => self.flat * cos,
            Some(t) => {
                let at = cos.clamp(-1.0, 1.0).acos().to_degrees() * TABLE_PER_DEGREE;
                let k = (at.floor() as usize).min(t.len() - 1);
                t[k].min(t[(k + 1).min(t.len() - 1)])
            }
        }
    }

    /// Where the positions `a` (last pass) and `b` (this one) stand too
    /// far apart for the scallop, the spacing wanted and the one they
    /// have (for a ball along the face, else in plan): the step scales by
    /// their ratio.
    fn too_far(&self, a: [f64; 3], b: [f64; 3]) -> Option<(f64, f64)> {
        let d = (b[1] - a[1]).hypot(b[2] - a[2]);
        match &self.table {
            None => (d > self.flat * 1.001).then_some((self.flat, d)),
            Some(_) => {
                let dy = (b[1] - a[1]).abs();
                let want = self.step(dy / d);
                (dy > want * 1.001).then_some((want, dy))
            }
        }
    }
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
fn gentle(
    ctx: &Ctx,
    dc: &DropCutter,
    [x, y]: [f64; 2],
    cos: f64,
    hint: &mut Option<u32>,
) -> Option<[f64; 3]> {
    // The roughing's outermost ring runs 1.5 cells (3 mm) inside its band,
    // on a 2 mm grid: 5 mm kept from the wall.
    let band = ctx.job.band() - dc.cutter().radius - 5.0;
    if ctx.outside.at([x, y]) > band {
        return None;
    }
    let (z, n) = dc.drop_contact_near(x, y, hint)?;
    (z > ctx.floor(x) + 0.05 && n[2] >= cos).then_some([x, y, z])
}
