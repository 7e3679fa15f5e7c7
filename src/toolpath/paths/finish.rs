//! Finishing: the parallel passes (`raster`) over the deck and bottom
//! with a ball or a bull-nose, the Z levels (`levels`) on the steep rail
//! band (with a smaller ball when the machine has one), their order and
//! the links between passes.

use super::*;
use crate::geom::dropcutter::DropCutter;
use crate::model::toolpath::{Step, Toolpath};

/// Passes whose ends are at most this far apart in plan are joined along
/// the surface, mm; a longer way lifts. A lift (up clear of the stock,
/// across, down, and the plunge) costs about half a second on the shipped
/// machine with its accelerations, about what 100 mm at a finishing feed
/// takes. On the demo's pre-rockered blank, joining passes up to 80 mm
/// apart (where 1.5 stepovers of the large ball and 3 of the rail ball
/// did, about 11 mm) leaves 32 lifts of 302 and saves 3 min 14 s over both
/// setups (our estimate). The way along the surface never goes below the
/// design nor below the straight line between the two ends, and the
/// simulation checks it as every other cut.
const STAY_DOWN: f64 = 80.0;

/// The finishing paths of a setup: the parallel passes (and, with one
/// ball, the rail band's Z levels after them); with a smaller ball for the
/// rails, its Z levels as a path of their own. Also the cutter positions
/// computed.
pub(super) fn finishing(ctx: &Ctx, dc: &DropCutter) -> (Vec<Toolpath>, usize) {
    let fin = &ctx.job.finishing;
    let pass = fin.pass.clone();
    let theta = fin.steep_angle.to_radians();
    // With a ball of its own for the rails, the finishing ball keeps to
    // where the surface under it is gentler than the steep angle and the
    // part (not the floor round it) holds it up.
    let gentle_only = fin.rails.is_some();
    let (passes, mut positions) = parallel(ctx, dc, gentle_only);
    let mut steps = vec![Step::Rapid([0.0, 0.0, ctx.clear])];
    let mut at: Option<[f64; 3]> = None;
    for runs in passes {
        for run in runs {
            link(&mut steps, ctx, dc, &mut at, &run, STAY_DOWN);
        }
    }
    // Z levels over the steep rail band.
    let (rail_pass, rail_scallop) = fin.rail_tool();
    let rail_dc = ctx.drop_cutter(rail_pass.tool.cutter);
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
    // A piece that starts near where the last ended (most often the next
    // level down the rail) is reached along the surface, as the parallel
    // passes are; only a longer way lifts.
    for run in nearest_first(wl, from) {
        link(&mut steps, ctx, &rail_dc, &mut at, &run, STAY_DOWN);
    }
    steps.push(Step::Rapid(last_xy(&steps, ctx.clear)));
    paths.push(Toolpath {
        label: if gentle_only { "rails" } else { "finishing" },
        pass: rail_pass.clone(),
        steps,
    });
    (paths, positions)
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
        let mut across = vec![a];
        let mut hint = None;
        for k in 1..n {
            let t = k as f64 / n as f64;
            let (x, y) = (a[0] + t * (s[0] - a[0]), a[1] + t * (s[1] - a[1]));
            let h = ctx.tip_near(dc, x, y, &mut hint);
            across.push([x, y, h.max(a[2] + t * (s[2] - a[2]))]);
        }
        across.push(s);
        // Each step across refined like a pass, so none digs in between.
        let tol = ctx.job.finishing.tolerance;
        for p in refine(&across, &Tip::new(ctx, dc), tol / 2.0)
            .into_iter()
            .skip(1)
        {
            steps.push(Step::Cut(p));
        }
    } else {
        let r = dc.cutter().radius;
        let from = last_at(steps);
        // As low as the stock and the part under the way allow.
        let travel = ctx.link_z(from, s, r).max(from[2]);
        steps.push(Step::Rapid([from[0], from[1], travel]));
        steps.push(Step::Rapid([s[0], s[1], travel]));
        // Down at rapid to 2 mm above where the tool would first meet the
        // stock left under it (its own shape: a ball beside a wall meets
        // the wall with its rim, high up), then into the foam at the
        // plunge feed.
        let top = ctx.first_touch(s[0], s[1], &dc.cutter());
        steps.push(Step::Rapid([s[0], s[1], top.max(s[2]) + 2.0]));
        steps.push(Step::Plunge(s));
    }
    for p in &run[1..] {
        steps.push(Step::Cut(*p));
    }
    *at = Some(run[run.len() - 1]);
}
