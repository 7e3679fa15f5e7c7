//! Passes made true to the surface: resampled, refined where a chord
//! would dig in, simplified where it would not; the scallop stepover.

use super::*;
use crate::model::machine::Cutter;
use std::cell::Cell;

pub(super) fn resample(points: &[[f64; 2]], step: f64, closed: bool) -> Vec<[f64; 2]> {
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

/// Stepover in plan across parallel passes on a face tilted φ across them
/// (`cos` = cos φ) for any cutter to leave cusps `h` high, measured square
/// to the face. Across the passes the cutter is its profile
/// ([`Cutter::height_at`]); over the face z = y·tan φ it stands `g(y) =
/// height(|y|) − y·tan φ` above it at offset y, least at the contact, y* =
/// a + c·sin φ (flat radius a, corner c). The next pass, s farther, stands
/// g(y − s) there, and the cusp is where the two meet, above the least by
/// the cusp's height over the face (g rises beyond y*, so the meeting is
/// found by bisection, and so is the largest s whose cusp is h; a flat
/// end's rim is a step, where the cusp is the step). For a
/// ball this is the chord of [`scallop_stepover`] times cos φ; for a
/// bull-nose on the flat, the chord of its corner plus its flat's
/// diameter (both checked in the tests).
pub fn slope_stepover(cutter: &Cutter, h: f64, cos: f64) -> f64 {
    let (r, c) = (cutter.radius, cutter.corner);
    let a = r - c;
    let cos = cos.clamp(1e-6, 1.0);
    let sin = (1.0 - cos * cos).sqrt();
    let tan = sin / cos;
    let g = |y: f64| {
        cutter
            .height_at(y.abs())
            .map_or(f64::INFINITY, |z| z - y * tan)
    };
    let y0 = a + c * sin;
    let g0 = g(y0);
    // The cusp's height square to the face with the next pass s away.
    let cusp = |s: f64| {
        let (mut lo, mut hi) = (y0, y0 + s);
        for _ in 0..60 {
            let m = 0.5 * (lo + hi);
            if g(m) < g(m - s) {
                lo = m;
            } else {
                hi = m;
            }
        }
        // Both ends of the bracket: a flat end's rim is a step, where the
        // two do not meet but one gives way to the other.
        let top = g(lo).min(g(lo - s)).max(g(hi).min(g(hi - s)));
        (top - g0) * cos
    };
    let (mut lo, mut hi) = (0.0, 2.0 * r * 0.999);
    if cusp(hi) <= h {
        return hi;
    }
    for _ in 0..60 {
        let m = 0.5 * (lo + hi);
        if cusp(m) <= h {
            lo = m;
        } else {
            hi = m;
        }
    }
    lo
}

/// The surface a pass follows, as [`refine`] asks it: the tool's tip
/// height at a point, and whether that height is above a level (which a
/// drop-cutter answers sooner than the height itself).
pub(super) trait Heights {
    /// The tip height at (x, y).
    fn at(&self, x: f64, y: f64) -> f64;

    /// Whether [`at`](Self::at)`(x, y)` is above `level`.
    fn above(&self, x: f64, y: f64, level: f64) -> bool {
        self.at(x, y) > level
    }
}

/// The tool of `dc` resting on the part, never below the floor
/// ([`Ctx::tip_near`]).
pub(super) struct Tip<'a> {
    ctx: &'a Ctx<'a>,
    dc: &'a DropCutter,
    /// The triangle touched at the height asked last: refinement asks
    /// along a run, so the next point is near it ([`Ctx::tip_near`]).
    hint: Cell<Option<u32>>,
}

impl<'a> Tip<'a> {
    pub fn new(ctx: &'a Ctx<'a>, dc: &'a DropCutter) -> Tip<'a> {
        Tip {
            ctx,
            dc,
            hint: Cell::new(None),
        }
    }
}

impl Heights for Tip<'_> {
    fn at(&self, x: f64, y: f64) -> f64 {
        let mut hint = self.hint.get();
        let z = self.ctx.tip_near(self.dc, x, y, &mut hint);
        self.hint.set(hint);
        z
    }

    fn above(&self, x: f64, y: f64, level: f64) -> bool {
        self.ctx.floor(x) > level || self.dc.drop_reaches(x, y, level, |z| z > level)
    }
}

/// The tool of `dc` resting on the meshes, [`f64::MIN`] where it touches
/// none.
pub(super) struct Dropped<'a>(pub &'a DropCutter);

impl Heights for Dropped<'_> {
    fn at(&self, x: f64, y: f64) -> f64 {
        self.0.drop(x, y).unwrap_or(f64::MIN)
    }

    fn above(&self, x: f64, y: f64, level: f64) -> bool {
        self.0.drop_reaches(x, y, level, |z| z > level)
    }
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
pub(super) fn refine(run: &[[f64; 3]], surface: &impl Heights, tol: f64) -> Vec<[f64; 3]> {
    let height = |x: f64, y: f64| surface.at(x, y);
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
            // Only a probe more than `tol` above the line can be the
            // worst that splits the move: the others are asked only
            // whether they are (a nanometre short of it, clear of the
            // rounding of the sum), not how high they stand.
            let splits = run_xy > 0.005 && depth < 16;
            let worst = probes
                .iter()
                .filter_map(|&t| {
                    let p = at(t);
                    let line = a[2] + t * rise;
                    (splits && surface.above(p[0], p[1], line + tol - 1e-9))
                        .then(|| (height(p[0], p[1]) - line, t))
                })
                .fold(
                    (f64::NEG_INFINITY, 0.5),
                    |m, v| if v.0 > m.0 { v } else { m },
                );
            if worst.0 > tol && splits {
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
