//! The flat-level strategies: registration holes, Z-level roughing and
//! the outline (separation) pass with tabs.

use super::*;
use crate::geom::dropcutter::DropCutter;
use crate::geom::field::{self, Field, Line};
use crate::model::job::Holding;
use crate::model::machine::Cutter;
use crate::model::toolpath::{Step, Toolpath};

/// Bores each registration hole through the block and `pin_depth` into
/// the spoilboard with a helix of the roughing tool.
pub(super) fn holes(ctx: &Ctx) -> Toolpath {
    let job = ctx.job;
    let pass = job.roughing.clone();
    let r = pass.tool.cutter.radius;
    let helix = (job.hole_diameter / 2.0 - r).max(0.0);
    let pitch = (pass.stepdown / 4.0).clamp(1.0, 5.0);
    let mut steps = Vec::new();
    for &h in &ctx.place.holes {
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
pub(super) fn orient(mut l: Line, clockwise: bool) -> Line {
    if l.closed && (field::signed_area(&l.points) < 0.0) != clockwise {
        l.points.reverse();
    }
    l
}

/// Which `nodes` the roughing leaves to the finishing ball (`ball`, its
/// drop-cutter on the part; `floor` under each node; only those `asked`
/// are looked at, the others are not): where the stock's
/// top over where the ball's tip will run is within the ball's radius and
/// its deepest cut, the ball takes the foam itself in one pass (common
/// practice, no source: a ball cuts with its round part only). On a flat
/// block that is nowhere much; on a blank already close to the board's
/// shape it is most of the deck and the bottom.
fn left_to_ball(
    ctx: &Ctx,
    ball: &DropCutter,
    nodes: &[[f64; 2]],
    floor: &[f64],
    asked: &[bool],
) -> Vec<bool> {
    let tool = &ctx.job.finishing.pass.tool;
    let reach = tool.cutter.radius.min(tool.max_stepdown);
    nodes
        .par_iter()
        .zip(floor)
        .zip(asked)
        .map(|((p, &f), &asked)| {
            if !asked {
                return false;
            }
            let top = ctx.stock_top_at(p[0]);
            let takes = |z: f64| top - z.max(f) <= reach;
            // Where the floor is within reach, any touch will do.
            let level = if takes(f) {
                f64::NEG_INFINITY
            } else {
                top - reach
            };
            ball.drop_reaches(p[0], p[1], level, takes)
        })
        .collect()
}

/// Z-level roughing of a setup; `ball` is the finishing ball's
/// drop-cutter on the part.
pub(super) fn roughing(ctx: &Ctx, ball: &DropCutter) -> Toolpath {
    let job = ctx.job;
    let pass = job.roughing.clone();
    let r = pass.tool.cutter.radius;
    let cell = 2.0;
    let (lo, hi) = ctx.region(r + 2.0 * cell);
    let grid = Field::new(lo, hi, cell, 0.0);
    // The tool as the grid must see it: grown by the stock to leave and by
    // the farthest a path point can be from a grid node, so every point of
    // every path is at least the stock to leave away from the part.
    let grow = pass.leave + std::f64::consts::FRAC_1_SQRT_2 * cell;
    let dc = ctx.drop_cutter(Cutter::flat(2.0 * (r + grow)));
    let nodes = grid.nodes();
    let floor: Vec<f64> = nodes.iter().map(|p| ctx.floor(p[0])).collect();
    // The band the roughing may clear: tool centres within frame - r of the outline.
    // With a cradle the band is the whole stock, and the grown region's
    // edge is its wall (so a level the part does not reach still has
    // rings).
    let band_limit = job.band() - r;
    let edge = |p: &[f64; 2]| {
        job.holding == Holding::Cradle
            && (p[0] <= lo[0] + 1e-9
                || p[1] <= lo[1] + 1e-9
                || p[0] >= hi[0] - 1e-9
                || p[1] >= hi[1] - 1e-9)
    };
    let in_reach: Vec<bool> = nodes
        .iter()
        .map(|p| ctx.outside.at(*p) <= band_limit && !edge(p))
        .collect();
    let finished_by_ball = left_to_ball(ctx, ball, &nodes, &floor, &in_reach);
    let in_band: Vec<bool> = in_reach
        .iter()
        .zip(&finished_by_ball)
        .map(|(&reach, by_ball)| reach && !by_ball)
        .collect();
    let high = heights(&dc, &nodes, (&floor, &in_band), pass.leave);
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
        if pass.stepover > r {
            rings.extend(ridges(&grid, &dist, &rings, &ds, r, pass.stepover));
        }
        // Every piece to cut at this level, smoothed.
        let mut pieces: Vec<(Vec<[f64; 3]>, bool)> = Vec::new();
        for ring in rings {
            if ring.points.len() < 2 {
                continue;
            }
            let pts: Vec<[f64; 3]> = ring.points.iter().map(|p| [p[0], p[1], level]).collect();
            for (piece, closed) in with_stock_above(ctx, pts, ring.closed, level, r) {
                // The contour's grid steps smoothed away: a point moves at
                // most a quarter of the stock left, so the finishing tool
                // still meets foam everywhere, and the machine need not
                // slow for each 2 mm jag.
                let mut piece = piece;
                if closed {
                    piece.push(piece[0]);
                }
                let mut piece = simplify(&piece, (pass.leave / 4.0).min(0.1));
                if closed && piece.len() > 2 {
                    piece.pop();
                }
                pieces.push((piece, closed));
            }
        }
        // Nearest first; a piece that starts (a ring: anywhere) within two
        // stepovers of where the last one ended, across foam the tool may
        // cross, is reached by a cut along the level, so only the first
        // piece of a region ramps in from above.
        let mut here: Option<[f64; 3]> = None;
        while !pieces.is_empty() {
            let (k, start) = match here {
                Some(e) => nearest_piece(&pieces, e),
                None => (0, 0),
            };
            let (mut piece, closed) = pieces.swap_remove(k);
            if closed {
                piece.rotate_left(start);
            }
            let slide = here.is_some_and(|e| {
                let s = piece[0];
                let len = (s[0] - e[0]).hypot(s[1] - e[1]);
                let n = (len / 0.5).ceil().max(1.0) as usize;
                len <= 2.0 * pass.stepover
                    && (0..=n).all(|i| {
                        let t = i as f64 / n as f64;
                        let q = [e[0] + t * (s[0] - e[0]), e[1] + t * (s[1] - e[1])];
                        // Clear of the part, and not over air above a
                        // rockered blank.
                        dist.at(q) >= 0.5 * first && ctx.stock_top_at(q[0]) + 1.0 >= level
                    })
            });
            if slide {
                for p in &piece {
                    steps.push(Step::Cut(*p));
                }
                if closed {
                    steps.push(Step::Cut(piece[0]));
                }
            } else {
                // Enter from the level above, or from above the stock
                // where a rockered blank's top is lower than that.
                let x = piece[0][0];
                let above = prev_z.min(ctx.stock_top_at(x).max(level));
                entry(&mut steps, ctx, &piece, closed, above, level);
            }
            here = Some(if closed {
                piece[0]
            } else {
                piece[piece.len() - 1]
            });
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

/// The part's height under the grown tool `dc` at each node, raised by
/// the stock to leave and never below the node's floor, where the band
/// needs it (elsewhere a node is blocked at every level whatever its
/// height: its floor). A touch that with the stock to leave stays under
/// the floor counts for nothing, so none is looked for (the search starts
/// a micrometre below that, so every touch that counts is found, to the
/// bit), and each node starts from the triangle its neighbour touched.
fn heights(
    dc: &DropCutter,
    nodes: &[[f64; 2]],
    (floor, in_band): (&[f64], &[bool]),
    leave: f64,
) -> Vec<f64> {
    nodes
        .par_iter()
        .zip(floor)
        .zip(in_band)
        .map_init(
            || None,
            |hint, ((p, &f), &b)| match b {
                true => {
                    let under = f - leave - 1e-3;
                    let d = dc.drop_above_near(p[0], p[1], under, hint);
                    (d + leave).max(f)
                }
                false => f,
            },
        )
        .collect()
}

/// The piece nearest `e`, and for a ring the index of its nearest point
/// (an open piece is taken from its start, keeping its direction).
fn nearest_piece(pieces: &[(Vec<[f64; 3]>, bool)], e: [f64; 3]) -> (usize, usize) {
    let d = |p: &[f64; 3]| (p[0] - e[0]).hypot(p[1] - e[1]);
    let mut best = (f64::INFINITY, 0, 0);
    for (k, (piece, closed)) in pieces.iter().enumerate() {
        let (i, di) = if *closed {
            piece
                .iter()
                .enumerate()
                .map(|(i, p)| (i, d(p)))
                .fold((0, f64::INFINITY), |a, b| if b.1 < a.1 { b } else { a })
        } else {
            (0, d(&piece[0]))
        };
        if di < best.0 {
            best = (di, k, i);
        }
    }
    (best.1, best.2)
}

/// Rings more than a tool radius apart leave a ridge of foam where the
/// distance to the wall peaks between two rings (the middle of a band
/// narrower than the next ring): the pieces of the contours halfway
/// between rings that pass within a tool radius of a node no ring
/// reaches. Halfway lies within a radius of both rings' levels, so these
/// pieces reach every such node.
fn ridges(
    grid: &Field,
    dist: &Field,
    rings: &[Line],
    ds: &[f64],
    r: f64,
    stepover: f64,
) -> Vec<Line> {
    let [nx, ny] = grid.dims;
    let node = |p: [f64; 2]| {
        let i = ((p[0] - grid.origin[0]) / grid.cell).round();
        let j = ((p[1] - grid.origin[1]) / grid.cell).round();
        (i >= 0.0 && j >= 0.0 && (i as usize) < nx && (j as usize) < ny)
            .then(|| j as usize * nx + i as usize)
    };
    let mut on_ring = vec![false; nx * ny];
    for q in rings.iter().flat_map(|l| &l.points) {
        if let Some(k) = node(*q) {
            on_ring[k] = true;
        }
    }
    let near_ring = field::distance_to(grid, &on_ring);
    // Contour points lie on grid edges, so the node marked for each is
    // within half a cell of it: a node counts as reached with that to spare.
    let reach = r - 0.5 * grid.cell;
    let first = ds.first().copied().unwrap_or(f64::INFINITY);
    let missed: Vec<bool> = (0..nx * ny)
        .map(|k| {
            dist.values[k].is_finite() && dist.values[k] >= first && near_ring.values[k] > reach
        })
        .collect();
    if !missed.iter().any(|m| *m) {
        return vec![];
    }
    let to_missed = field::distance_to(grid, &missed);
    let mut out = Vec::new();
    for &d in ds.iter().rev() {
        for l in field::contours(dist, d + stepover / 2.0) {
            let mut piece: Vec<[f64; 2]> = Vec::new();
            for q in &l.points {
                if to_missed.at(*q) <= r {
                    piece.push(*q);
                } else if !piece.is_empty() {
                    if piece.len() > 1 {
                        out.push(Line {
                            points: std::mem::take(&mut piece),
                            closed: false,
                        });
                    }
                    piece.clear();
                }
            }
            if piece.len() > 1 {
                out.push(Line {
                    points: piece,
                    closed: false,
                });
            }
        }
    }
    out
}

/// The parts of a ring at `level` that have stock above them within the
/// tool's reach (the whole ring, as given, in a flat block; a rockered
/// blank's top dips below the upper levels along its middle). A closed ring
/// that is broken comes out as open pieces, each starting where the stock begins.
pub(super) fn with_stock_above(
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

/// How near the outline pass brings the tool's side to the design, mm.
const SIDE_GAP: f64 = 0.1;

/// The outline loop's points (`pts`, the tool's centre about a millimetre
/// and a half out from the outline, where the distance field can vouch
/// for it) each moved in towards the part, square to the loop, as far as
/// the tool at the floor stays [`SIDE_GAP`] clear of the design and the
/// tabs (bisection on the drop-cutter `dc`, to 0.02 mm): the tool's side
/// then passes the rail's widest line 0.1 mm off, where it left a fin of
/// up to 1.6 mm before.
fn close_in(ctx: &Ctx, dc: &DropCutter, pts: &[[f64; 2]]) -> Vec<[f64; 2]> {
    let n = pts.len();
    let clear = |q: [f64; 2]| {
        let floor = ctx.floor(q[0]);
        [
            [0.0, 0.0],
            [SIDE_GAP, 0.0],
            [-SIDE_GAP, 0.0],
            [0.0, SIDE_GAP],
            [0.0, -SIDE_GAP],
        ]
        .iter()
        .all(|d| {
            // Not above the floor: the search stops at the first triangle
            // that lifts the tool past it and skips those that cannot.
            let level = floor + 1e-6;
            !dc.drop_reaches(q[0] + d[0], q[1] + d[1], level, |z| z > level)
        })
    };
    (0..n)
        .map(|k| {
            let p = pts[k];
            let (a, b) = (pts[(k + n - 1) % n], pts[(k + 1) % n]);
            let (tx, ty) = (b[0] - a[0], b[1] - a[1]);
            let len = tx.hypot(ty);
            if len < 1e-9 {
                return p;
            }
            // Of the two normals, the one towards the part.
            let mut normal = [-ty / len, tx / len];
            let ahead = [p[0] + normal[0], p[1] + normal[1]];
            if ctx.outside.at(ahead) > ctx.outside.at(p) {
                normal = [-normal[0], -normal[1]];
            }
            let at = |t: f64| [p[0] + t * normal[0], p[1] + t * normal[1]];
            if !clear(p) {
                return p;
            }
            let (mut lo, mut hi) = (0.0, 2.0 + ctx.outside.cell);
            while hi - lo > 0.02 {
                let mid = 0.5 * (lo + hi);
                if clear(at(mid)) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            at(lo)
        })
        .collect()
}

/// The separation pass: round the outline at the parting surface, in a
/// spiral that descends one outline stepdown a lap from above the deepest
/// roughing stair, lifted over the tabs by the drop-cutter.
pub(super) fn outline(ctx: &Ctx) -> Toolpath {
    let job = ctx.job;
    let pass = job.outline.clone();
    let r = pass.tool.cutter.radius;
    // The distance field measures to the nearest grid node inside the
    // outline; the outline itself may lie up to a node spacing beyond it.
    let loops = field::contours(&ctx.outside, r + 0.6 + ctx.outside.cell);
    let dc = ctx.drop_cutter(pass.tool.cutter);
    let mut steps = vec![Step::Rapid([0.0, 0.0, ctx.clear])];
    for l in loops.into_iter().filter(|l| l.closed && l.points.len() > 8) {
        let l = orient(l, pass.climb);
        // Resample to 2 mm along the loop, then bring the tool's side in
        // to the rail's widest line: no fin of foam along the parting line.
        let pts = close_in(ctx, &dc, &resample(&l.points, 2.0, true));
        // Start 1 mm above the highest stock the roughing left on the loop.
        let rise = pts
            .iter()
            .map(|p| ctx.stock_top(p[0], p[1], r + 1.0) - ctx.floor(p[0]))
            .fold(0.0, f64::max)
            + 1.0;
        let laps = (rise / pass.stepdown).ceil().max(1.0) as usize;
        let n = pts.len();
        let lap_len = n as f64;
        // Each point descends from no higher than 1 mm over the stock left
        // there: where the floor rises along the loop (the rocker, a
        // concave), the spiral does not cut air above the block.
        let z_of = |k: usize, lap: usize| {
            let p = pts[k];
            let floor = ctx.floor(p[0]);
            let descent = rise * (1.0 - ((lap * n + k) as f64 / (laps as f64 * lap_len)).min(1.0));
            let top = ctx.stock_top(p[0], p[1], r + 1.0) + 1.0;
            let z = (floor + descent).min(top.max(floor));
            dc.drop_above(p[0], p[1], z)
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
                    dc.drop_above(p[0], p[1], ctx.floor(p[0]))
                } else {
                    z_of(k, lap)
                };
                spiral.push([p[0], p[1], z]);
            }
        }
        let z = dc.drop_above(s[0], s[1], ctx.floor(s[0]));
        spiral.push([s[0], s[1], z]);
        // Where the path climbs over a tab, keep the straight moves clear of it.
        for p in refine(&spiral, &Dropped(&dc), 0.01).into_iter().skip(1) {
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
