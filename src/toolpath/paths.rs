//! Toolpaths for one setup: registration holes, Z-level roughing, the
//! outline (separation) pass with tabs, and ball-end finishing (parallel
//! passes plus Z levels on the steep rail band).

use rayon::prelude::*;

use crate::geom::dropcutter::DropCutter;
use crate::geom::field::{self, Field, Line};
use crate::geom::zmap::{Sweep, ZMap};
use crate::model::job::Job;
use crate::model::machine::Cutter;
use crate::model::mesh::Mesh;
use crate::model::toolpath::{Step, Toolpath};
use crate::toolpath::setup::{Placement, Side};

/// Everything a setup cuts, tool by tool.
#[derive(Debug, Clone)]
pub struct SetupPaths {
    /// Which side is up.
    pub side: Side,
    /// In cutting order.
    pub paths: Vec<Toolpath>,
    /// Finishing cutter positions computed (for speed reports).
    pub positions: usize,
}

struct Ctx<'a> {
    place: &'a Placement,
    job: &'a Job,
    side: Side,
    guard: Vec<Mesh>,
    clear: f64,
    /// Distance from the part's plan silhouette (0 inside), 1 mm grid.
    outside: Field,
    /// Distance inside the silhouette from its edge (0 outside), 1 mm grid.
    inside: Field,
    /// The stock as the paths so far have left it (1 mm cells).
    stock: std::sync::RwLock<ZMap>,
}

fn lerp3(a: [f64; 3], b: [f64; 3], t: f64) -> [f64; 3] {
    [
        a[0] + t * (b[0] - a[0]),
        a[1] + t * (b[1] - a[1]),
        a[2] + t * (b[2] - a[2]),
    ]
}

impl Ctx<'_> {
    fn floor(&self, x: f64) -> f64 {
        self.place.floor_at(self.side, x, self.job.overlap)
    }

    /// Takes a toolpath's cut out of the stock map.
    fn cut(&self, path: &Toolpath) {
        let cutter = path.pass.tool.cutter;
        let mut at = [0.0, 0.0, self.clear];
        let mut sweeps = Vec::with_capacity(path.steps.len());
        for s in &path.steps {
            let to = match *s {
                Step::Rapid(p) | Step::Plunge(p) | Step::Cut(p) => p,
                Step::Arc { to, .. } => to,
            };
            sweeps.push(Sweep {
                from: at,
                to,
                cutter,
            });
            at = to;
        }
        self.stock.write().expect("not poisoned").cut(&sweeps);
    }

    /// Highest stock left under a tool of radius `r` at (x, y).
    fn stock_top(&self, x: f64, y: f64, r: f64) -> f64 {
        let map = self.stock.read().expect("not poisoned");
        let (c, o, [nx, ny]) = (map.cell, map.origin, map.dims);
        let i0 = (((x - r - o[0]) / c[0]).floor().max(0.0) as usize).min(nx - 1);
        let i1 = (((x + r - o[0]) / c[0]).ceil().max(0.0) as usize).min(nx - 1);
        let j0 = (((y - r - o[1]) / c[1]).floor().max(0.0) as usize).min(ny - 1);
        let j1 = (((y + r - o[1]) / c[1]).ceil().max(0.0) as usize).min(ny - 1);
        let mut top = f64::NEG_INFINITY;
        for j in j0..=j1 {
            for i in i0..=i1 {
                let k = j * nx + i;
                if map.top[k] > map.bottom[k] {
                    top = top.max(map.top[k] as f64);
                }
            }
        }
        top
    }

    /// Top of the uncut stock at X in this setup, raised by the blank's
    /// allowance (0 all along for a flat block).
    fn stock_top_at(&self, x: f64) -> f64 {
        let b = &self.place.block;
        b.top_under(self.side == Side::Deck, x).0 + b.allowance()
    }

    /// The tip height of `dc`'s tool resting on the part at (x, y), never
    /// below the floor.
    fn tip(&self, dc: &DropCutter, x: f64, y: f64) -> f64 {
        let f = self.floor(x);
        dc.drop(x, y).map_or(f, |d| d.max(f))
    }

    /// Height for a rapid across between X `a` and X `b` with a tool of
    /// radius `r`: the clearance above the highest stock top under the
    /// tool on the way (a rockered blank's, with its allowance), never
    /// above the clearance over Z0. Over a flat block that is the
    /// clearance over Z0; over a rockered blank's low middle it saves
    /// lifting the tool to the height of its ends between every pass.
    fn travel_z(&self, a: f64, b: f64, r: f64) -> f64 {
        let block = &self.place.block;
        if block.rocker.is_none() {
            return self.clear;
        }
        let (x0, x1) = (a.min(b) - r - 1.0, a.max(b) + r + 1.0);
        let top = block.top_max(self.side == Side::Deck, x0, x1) + block.allowance();
        (top + self.clear).min(self.clear)
    }

    fn region(&self) -> ([f64; 2], [f64; 2]) {
        let b = &self.place.block;
        ([0.0, 0.0], [b.length, b.width])
    }
}

/// Builds the paths of one setup.
pub fn setup_paths(
    place: &Placement,
    job: &Job,
    side: Side,
    clearance: f64,
    progress: &(dyn Fn(&str) + Sync),
) -> SetupPaths {
    let guard = place.guard(side);
    let (lo, hi) = ([0.0, 0.0], [place.block.length, place.block.width]);
    let grid = Field::new(lo, hi, 1.0, 0.0);
    let ray = DropCutter::new(&guard[..1].iter().collect::<Vec<_>>(), Cutter::flat(0.0));
    let inside: Vec<bool> = grid
        .nodes()
        .par_iter()
        .map(|p| ray.drop(p[0], p[1]).is_some())
        .collect();
    let outside = field::distance_to(&grid, &inside);
    let beyond: Vec<bool> = inside.iter().map(|b| !b).collect();
    let inside = field::distance_to(&grid, &beyond);
    // Setup 1 never cuts through the block (it stops at the parting
    // surface), so each setup starts from a whole block.
    let b = &place.block;
    let stock = ZMap::of_stock(b, side == Side::Deck, 1.0, b.allowance())
        .expect("a block within the machine fits a 1 mm map");
    let ctx = Ctx {
        place,
        job,
        side,
        guard,
        clear: clearance,
        outside,
        inside,
        stock: std::sync::RwLock::new(stock),
    };
    let mut paths = Vec::new();
    if side == Side::Deck {
        progress("registration holes");
        paths.push(holes(&ctx));
    }
    progress("roughing");
    let rough = roughing(&ctx);
    ctx.cut(&rough);
    paths.push(rough);
    progress("outline");
    let out = outline(&ctx);
    ctx.cut(&out);
    paths.push(out);
    progress("finishing");
    let (fin, positions) = finishing(&ctx);
    paths.push(fin);
    SetupPaths {
        side,
        paths,
        positions,
    }
}

/// Bores each registration hole through the block and `pin_depth` into
/// the spoilboard with a helix of the roughing tool.
fn holes(ctx: &Ctx) -> Toolpath {
    let job = ctx.job;
    let pass = job.roughing.clone();
    let r = pass.tool.cutter.radius;
    let helix = (job.hole_diameter / 2.0 - r).max(0.0);
    let pitch = (pass.stepdown / 4.0).clamp(1.0, 5.0);
    let mut steps = Vec::new();
    for h in ctx.place.holes {
        // From the stock's top there (a rockered blank's, with its
        // allowance) through its underside and into what it rests on.
        let top = ctx.stock_top_at(h[0]);
        let bottom = ctx.place.block.top_under(true, h[0]).1 - job.pin_depth;
        steps.push(Step::Rapid([h[0], h[1], ctx.clear]));
        steps.push(Step::Rapid([h[0], h[1], top + 2.0]));
        if helix < 0.05 {
            // The hole is the tool's size: peck straight down.
            let mut z = top;
            while z > bottom {
                z = (z - pitch).max(bottom);
                steps.push(Step::Plunge([h[0], h[1], z]));
                steps.push(Step::Rapid([h[0], h[1], top + 2.0]));
                steps.push(Step::Rapid([h[0], h[1], z + 0.5]));
            }
            steps.push(Step::Rapid([h[0], h[1], ctx.clear]));
            continue;
        }
        let start = [h[0] + helix, h[1], top];
        steps.push(Step::Plunge([h[0], h[1], top]));
        steps.push(Step::Cut(start));
        let mut z = top;
        while z > bottom {
            z = (z - pitch).max(bottom);
            steps.push(Step::Arc {
                to: [start[0], start[1], z],
                centre: h,
                cw: false,
            });
        }
        // A last full turn at the bottom, then back to the centre.
        steps.push(Step::Arc {
            to: [start[0], start[1], bottom],
            centre: h,
            cw: false,
        });
        steps.push(Step::Cut([h[0], h[1], bottom]));
        steps.push(Step::Rapid([h[0], h[1], ctx.clear]));
    }
    Toolpath {
        label: "registration holes",
        pass,
        steps,
    }
}

/// Orients a closed line clockwise (climb milling round material on its
/// right with the spindle turning clockwise; common practice, from memory)
/// or counter-clockwise.
fn orient(mut l: Line, clockwise: bool) -> Line {
    if l.closed && (field::signed_area(&l.points) < 0.0) != clockwise {
        l.points.reverse();
    }
    l
}

fn roughing(ctx: &Ctx) -> Toolpath {
    let job = ctx.job;
    let pass = job.roughing.clone();
    let r = pass.tool.cutter.radius;
    let (lo, hi) = ctx.region();
    let cell = 2.0;
    let grid = Field::new(lo, hi, cell, 0.0);
    // The tool as the grid must see it: grown by the stock to leave and by
    // the farthest a path point can be from a grid node, so every point of
    // every path is at least the stock to leave away from the part.
    let grow = pass.leave + std::f64::consts::FRAC_1_SQRT_2 * cell;
    let dc = DropCutter::new(
        &ctx.guard.iter().collect::<Vec<_>>(),
        Cutter::flat(2.0 * (r + grow)),
    );
    let nodes = grid.nodes();
    let floor: Vec<f64> = nodes.iter().map(|p| ctx.floor(p[0])).collect();
    let high: Vec<f64> = dc
        .drop_many(&nodes)
        .into_iter()
        .zip(&floor)
        .map(|(d, &f)| d.map_or(f, |d| (d + pass.leave).max(f)))
        .collect();
    // The band the roughing may clear: tool centres within frame - r of the outline.
    let band_limit = job.frame - r;
    let in_band: Vec<bool> = nodes
        .iter()
        .map(|p| ctx.outside.at(*p) <= band_limit)
        .collect();
    let lowest = high
        .iter()
        .zip(&in_band)
        .filter(|(_, b)| **b)
        .map(|(h, _)| *h)
        .fold(f64::INFINITY, f64::min);
    let mut levels = Vec::new();
    let mut z = 0.0;
    while z - pass.stepdown > lowest + 1e-6 {
        z -= pass.stepdown;
        levels.push(z);
    }
    if lowest < z - 1e-6 {
        levels.push(lowest);
    }
    let mut steps = vec![Step::Rapid([0.0, 0.0, ctx.clear])];
    let mut prev_z: f64 = 0.0;
    for &level in &levels {
        let blocked: Vec<bool> = high
            .iter()
            .zip(&in_band)
            .map(|(h, b)| *h > level + 1e-9 || !b)
            .collect();
        let dist = field::distance_to(&grid, &blocked);
        let first = 1.5 * cell;
        let mut rings = Vec::new();
        let max_d = dist
            .values
            .iter()
            .copied()
            .filter(|v| v.is_finite())
            .fold(0.0, f64::max);
        let mut d = first;
        let mut ds = Vec::new();
        while d <= max_d {
            ds.push(d);
            d += pass.stepover;
        }
        // Outermost first: from the band's wall in towards the part.
        for &d in ds.iter().rev() {
            for l in field::contours(&dist, d) {
                rings.push(orient(l, pass.climb));
            }
        }
        for ring in rings {
            if ring.points.len() < 2 {
                continue;
            }
            let pts: Vec<[f64; 3]> = ring.points.iter().map(|p| [p[0], p[1], level]).collect();
            for (piece, closed) in with_stock_above(ctx, pts, ring.closed, level, r) {
                // Enter from the level above, or from above the stock
                // where a rockered blank's top is lower than that.
                let x = piece[0][0];
                let above = prev_z.min(ctx.stock_top_at(x).max(level));
                entry(&mut steps, ctx, &piece, closed, above, level);
            }
        }
        prev_z = level;
    }
    steps.push(Step::Rapid(last_xy(&steps, ctx.clear)));
    Toolpath {
        label: "roughing",
        pass,
        steps,
    }
}

/// The parts of a ring at `level` that have stock above them within the
/// tool's reach (the whole ring, as given, in a flat block; a rockered
/// blank's top dips below the upper levels along its middle). A closed ring
/// that is broken comes out as open pieces, each starting where the stock begins.
fn with_stock_above(
    ctx: &Ctx,
    pts: Vec<[f64; 3]>,
    closed: bool,
    level: f64,
    r: f64,
) -> Vec<(Vec<[f64; 3]>, bool)> {
    if ctx.place.block.rocker.is_none() {
        return vec![(pts, closed)];
    }
    // Foam under any part of the tool. The blank's top depends on X alone
    // and is monotone between stations, so across the tool it is highest
    // at one of its ends or at a station in between; the ends and the
    // middle are checked, and the allowance covers a crest between them.
    let cuts = |p: &[f64; 3]| {
        [p[0] - r, p[0], p[0] + r]
            .iter()
            .any(|&x| ctx.stock_top_at(x) > level)
    };
    let keep: Vec<bool> = pts.iter().map(cuts).collect();
    if keep.iter().all(|k| *k) {
        return vec![(pts, closed)];
    }
    // Start a closed ring just after a gap so no piece wraps round.
    let n = pts.len();
    let start = if closed {
        (0..n).find(|&k| !keep[k]).map_or(0, |k| k + 1) % n
    } else {
        0
    };
    let mut pieces = Vec::new();
    let mut run: Vec<[f64; 3]> = Vec::new();
    // A closed ring starts right after a gap, so one lap ends in the gap.
    for s in 0..n {
        let k = (start + s) % n;
        if keep[k] {
            if run.is_empty() && (s > 0 || closed) {
                // Start one point before the stock's edge.
                run.push(pts[(k + n - 1) % n]);
            }
            run.push(pts[k]);
        } else if !run.is_empty() {
            // And carry the cut one point past it.
            run.push(pts[k]);
            pieces.push((std::mem::take(&mut run), false));
        }
    }
    if run.len() > 1 {
        pieces.push((run, false));
    }
    pieces
}

/// Where the steps so far leave the tool (the origin before any).
fn last_at(steps: &[Step]) -> [f64; 3] {
    steps
        .iter()
        .rev()
        .map(|s| match s {
            Step::Rapid(p) | Step::Plunge(p) | Step::Cut(p) => *p,
            Step::Arc { to, .. } => *to,
        })
        .next()
        .unwrap_or([0.0; 3])
}

fn last_xy(steps: &[Step], z: f64) -> [f64; 3] {
    let p = last_at(steps);
    [p[0], p[1], z]
}

/// Goes to the start of a ring and cuts it: rapid at clearance, rapid down
/// to 2 mm above the level cleared before, then a zig-zag ramp at 3° down
/// to this level along the ring's first stretch (common practice for
/// foam, no source), then the ring.
fn entry(steps: &mut Vec<Step>, ctx: &Ctx, pts: &[[f64; 3]], closed: bool, above: f64, level: f64) {
    let start = pts[0];
    let r = ctx.job.roughing.tool.cutter.radius;
    let from = last_at(steps);
    let travel = ctx.travel_z(from[0], start[0], r).max(from[2]);
    steps.push(Step::Rapid([from[0], from[1], travel]));
    steps.push(Step::Rapid([start[0], start[1], travel]));
    steps.push(Step::Rapid([start[0], start[1], above + 2.0]));
    steps.push(Step::Plunge([start[0], start[1], above]));
    let drop = above - level;
    let ramp_len = drop / 3f64.to_radians().tan();
    // The stretch to ramp along: up to half the ramp length forward.
    let mut stretch = vec![start];
    let mut run = 0.0;
    for w in pts.windows(2) {
        let l = ((w[1][0] - w[0][0]).powi(2) + (w[1][1] - w[0][1]).powi(2)).sqrt();
        stretch.push(w[1]);
        run += l;
        if run >= ramp_len / 2.0 {
            break;
        }
    }
    if run > 1e-6 && drop > 1e-9 {
        let laps = (ramp_len / (2.0 * run)).ceil().max(1.0) as usize;
        let total = 2.0 * run * laps as f64;
        let mut done = 0.0;
        let mut at = start;
        for _ in 0..laps {
            for dir in [true, false] {
                let seq: Vec<[f64; 3]> = if dir {
                    stretch[1..].to_vec()
                } else {
                    stretch.iter().rev().skip(1).copied().collect()
                };
                for p in seq {
                    done += ((p[0] - at[0]).powi(2) + (p[1] - at[1]).powi(2)).sqrt();
                    let z = above - drop * (done / total).min(1.0);
                    steps.push(Step::Cut([p[0], p[1], z]));
                    at = p;
                }
            }
        }
    } else {
        steps.push(Step::Plunge(start));
    }
    steps.push(Step::Cut(start));
    for p in &pts[1..] {
        steps.push(Step::Cut(*p));
    }
    if closed {
        steps.push(Step::Cut(start));
    }
    let end = if closed { start } else { pts[pts.len() - 1] };
    steps.push(Step::Rapid([
        end[0],
        end[1],
        ctx.travel_z(end[0], end[0], r),
    ]));
}

/// The separation pass: round the outline at the parting surface, in a
/// spiral that descends one outline stepdown a lap from above the deepest
/// roughing stair, lifted over the tabs by the drop-cutter.
fn outline(ctx: &Ctx) -> Toolpath {
    let job = ctx.job;
    let pass = job.outline.clone();
    let r = pass.tool.cutter.radius;
    // The distance field measures to the nearest grid node inside the
    // outline; the outline itself may lie up to a node spacing beyond it.
    let loops = field::contours(&ctx.outside, r + 0.6 + ctx.outside.cell);
    let dc = DropCutter::new(&ctx.guard.iter().collect::<Vec<_>>(), pass.tool.cutter);
    let mut steps = vec![Step::Rapid([0.0, 0.0, ctx.clear])];
    for l in loops.into_iter().filter(|l| l.closed && l.points.len() > 8) {
        let l = orient(l, pass.climb);
        // Resample to 2 mm along the loop.
        let pts = resample(&l.points, 2.0, true);
        // Start 1 mm above the highest stock the roughing left on the loop.
        let rise = pts
            .iter()
            .map(|p| ctx.stock_top(p[0], p[1], r + 1.0) - ctx.floor(p[0]))
            .fold(0.0, f64::max)
            + 1.0;
        let laps = (rise / pass.stepdown).ceil().max(1.0) as usize;
        let n = pts.len();
        let lap_len = n as f64;
        let z_of = |k: usize, lap: usize| {
            let p = pts[k];
            let floor = ctx.floor(p[0]);
            let descent = rise * (1.0 - ((lap * n + k) as f64 / (laps as f64 * lap_len)).min(1.0));
            let z = floor + descent;
            dc.drop(p[0], p[1]).map_or(z, |d| z.max(d))
        };
        let s = pts[0];
        steps.push(Step::Rapid([s[0], s[1], ctx.clear]));
        let z0 = z_of(0, 0);
        steps.push(Step::Rapid([s[0], s[1], z0 + 2.0]));
        steps.push(Step::Plunge([s[0], s[1], z0]));
        let mut spiral = vec![[s[0], s[1], z0]];
        for lap in 0..=laps {
            for (k, p) in pts.iter().enumerate() {
                let z = if lap == laps {
                    ctx.floor(p[0]).max(dc.drop(p[0], p[1]).unwrap_or(f64::MIN))
                } else {
                    z_of(k, lap)
                };
                spiral.push([p[0], p[1], z]);
            }
        }
        let z = ctx.floor(s[0]).max(dc.drop(s[0], s[1]).unwrap_or(f64::MIN));
        spiral.push([s[0], s[1], z]);
        // Where the path climbs over a tab, keep the straight moves clear of it.
        let h = |x: f64, y: f64| dc.drop(x, y).unwrap_or(f64::MIN);
        for p in refine(&spiral, &h, 0.01).into_iter().skip(1) {
            steps.push(Step::Cut(p));
        }
        steps.push(Step::Rapid([s[0], s[1], ctx.clear]));
    }
    Toolpath {
        label: "outline",
        pass,
        steps,
    }
}

fn resample(points: &[[f64; 2]], step: f64, closed: bool) -> Vec<[f64; 2]> {
    let mut out = vec![points[0]];
    let mut pts = points.to_vec();
    if closed {
        pts.push(points[0]);
    }
    let mut carry = 0.0;
    for w in pts.windows(2) {
        let l = ((w[1][0] - w[0][0]).powi(2) + (w[1][1] - w[0][1]).powi(2)).sqrt();
        let mut t = step - carry;
        while t < l {
            let f = t / l;
            out.push([
                w[0][0] + f * (w[1][0] - w[0][0]),
                w[0][1] + f * (w[1][1] - w[0][1]),
            ]);
            t += step;
        }
        carry = l - (t - step);
    }
    if !closed {
        out.push(points[points.len() - 1]);
    }
    out
}

/// Scallop stepover on a flat for a ball of radius `r` and cusp height
/// `h`: s = 2·√(2rh − h²) (standard machining geometry: the chord of a
/// circle of radius r at depth h).
pub fn scallop_stepover(r: f64, h: f64) -> f64 {
    2.0 * (2.0 * r * h - h * h).max(0.0).sqrt()
}

/// Refines a run of dropped points so no straight move between neighbours
/// digs in. A ball running off an edge otherwise cuts the corner between
/// two exact positions: the drop height jumps at the edge, and a straight
/// move across the jump passes through the edge.
///
/// A steep move (rising or falling more than four times its run) becomes
/// a dog-leg: straight up, across at the highest drop height found every
/// 0.05 mm along the way, straight down; moving straight up from a contact
/// or straight down to one cannot dig in. Other moves are split at the
/// quarter points where the drop-cutter stands more than `tol` above the
/// straight line, down to steps of 0.005 mm.
pub fn refine(run: &[[f64; 3]], height: &dyn Fn(f64, f64) -> f64, tol: f64) -> Vec<[f64; 3]> {
    let mut out = Vec::with_capacity(run.len());
    if run.is_empty() {
        return out;
    }
    out.push(run[0]);
    for w in run.windows(2) {
        let mut stack = vec![(w[0], w[1], 0u32)];
        while let Some((a, b, depth)) = stack.pop() {
            let run_xy = ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt();
            let rise = b[2] - a[2];
            let at = |t: f64| [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
            if rise.abs() > 4.0 * run_xy && run_xy > 1e-9 {
                let n = (run_xy / 0.05).ceil().max(1.0) as usize;
                let top = (0..=n)
                    .map(|k| {
                        let p = at(k as f64 / n as f64);
                        height(p[0], p[1])
                    })
                    .fold(a[2].max(b[2]), f64::max);
                if top > a[2] {
                    out.push([a[0], a[1], top]);
                }
                out.push([b[0], b[1], top]);
                if top > b[2] {
                    out.push(b);
                }
                continue;
            }
            // A gentle move is checked at its middle; a steeper one, where
            // a small edge could hide, at its quarter points.
            let probes: &[f64] = if rise.abs() <= run_xy {
                &[0.5]
            } else {
                &[0.25, 0.5, 0.75]
            };
            let worst = probes
                .iter()
                .map(|&t| {
                    let p = at(t);
                    (height(p[0], p[1]) - (a[2] + t * rise), t)
                })
                .fold(
                    (f64::NEG_INFINITY, 0.5),
                    |m, v| if v.0 > m.0 { v } else { m },
                );
            if worst.0 > tol && run_xy > 0.005 && depth < 16 {
                let p = at(worst.1);
                let m = [p[0], p[1], height(p[0], p[1])];
                // Second half first: the stack pops the first half next.
                stack.push((m, b, depth + 1));
                stack.push((a, m, depth + 1));
            } else {
                out.push(b);
            }
        }
    }
    out
}

/// Simplifies a pass: drops points within `tol` of the line through their
/// neighbours (Douglas–Peucker, Cartographica 10, 1973), in 3D.
pub fn simplify(points: &[[f64; 3]], tol: f64) -> Vec<[f64; 3]> {
    if points.len() < 3 {
        return points.to_vec();
    }
    let mut keep = vec![false; points.len()];
    keep[0] = true;
    keep[points.len() - 1] = true;
    let mut stack = vec![(0usize, points.len() - 1)];
    while let Some((a, b)) = stack.pop() {
        let (pa, pb) = (points[a], points[b]);
        let d = [pb[0] - pa[0], pb[1] - pa[1], pb[2] - pa[2]];
        let dd = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        let mut worst = (0.0, a);
        for (k, p) in points.iter().enumerate().take(b).skip(a + 1) {
            let w = [p[0] - pa[0], p[1] - pa[1], p[2] - pa[2]];
            let t = if dd > 0.0 {
                ((w[0] * d[0] + w[1] * d[1] + w[2] * d[2]) / dd).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let q = lerp3(pa, pb, t);
            // On a steep chord a small distance off the line is a larger
            // height error; measure the error as a height.
            let cos = if dd > 0.0 {
                ((d[0] * d[0] + d[1] * d[1]) / dd).sqrt().max(0.05)
            } else {
                1.0
            };
            let e = ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)).sqrt()
                / cos;
            if e > worst.0 {
                worst = (e, k);
            }
        }
        if worst.0 > tol {
            keep[worst.1] = true;
            stack.push((a, worst.1));
            stack.push((worst.1, b));
        }
    }
    points
        .iter()
        .zip(keep)
        .filter(|(_, k)| *k)
        .map(|(p, _)| *p)
        .collect()
}

fn finishing(ctx: &Ctx) -> (Toolpath, usize) {
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
fn link(
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
const RAIL_BAND: f64 = 60.0;

/// Z-level passes where the surface is steeper than `theta`: contours of
/// the drop-cutter height every `dz`, each crossing found on its grid
/// edge from the drop-cutter itself, each point then dropped exactly.
fn waterlines(ctx: &Ctx, dc: &DropCutter, dz: f64, theta: f64) -> (Vec<Vec<[f64; 3]>>, usize) {
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scallop_stepover_is_the_chord_at_cusp_depth() {
        // s = 2·√(2Rh − h²) (standard machining geometry). For R = 6.35 mm,
        // h = 0.1 mm: s = 2·√(1.27 − 0.01) = 2.2450 mm.
        assert!((scallop_stepover(6.35, 0.1) - 2.0 * 1.26f64.sqrt()).abs() < 1e-12);
        // Hand check against the circle: the cusp between two balls s apart
        // sits h above their lowest points.
        let (r, h) = (6.35, 0.1);
        let s = scallop_stepover(r, h);
        let cusp = r - (r * r - (s / 2.0).powi(2)).sqrt();
        assert!((cusp - h).abs() < 1e-12);
    }

    #[test]
    fn simplify_keeps_corners_and_drops_collinear_points() {
        let pts: Vec<[f64; 3]> = (0..=10)
            .map(|k| [k as f64, 0.0, if k <= 5 { 0.0 } else { k as f64 - 5.0 }])
            .collect();
        let s = simplify(&pts, 0.01);
        assert_eq!(s, vec![[0.0, 0.0, 0.0], [5.0, 0.0, 0.0], [10.0, 0.0, 5.0]]);
    }
}
