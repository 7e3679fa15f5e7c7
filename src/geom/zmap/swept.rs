//! A move's swept tool asked for its lowest point over a cell: one cell at
//! a time, or a row of a block's cells at once (a sloped ball's capsule and
//! a flat end, in vector registers).

use crate::geom::contact::{cylinder_crossing, cylinder_quadratic, cylinder_root};
use crate::model::machine::{Cutter, ToolKind};

/// A move's swept tool, ready to be asked for its lowest point over (x, y).
pub(super) struct SweptShape {
    a: [f64; 3],
    d: [f64; 3],
    /// |d_xy|².
    dxy2: f64,
    cutter: Cutter,
    /// Unit direction of the move in 3D, for the ball's capsule.
    u: [f64; 3],
    len: f64,
}

impl SweptShape {
    /// `cutter` moved straight from tip `from` to tip `to`.
    pub(super) fn new(from: [f64; 3], to: [f64; 3], cutter: Cutter) -> SweptShape {
        let a = from;
        let d = [to[0] - a[0], to[1] - a[1], to[2] - a[2]];
        let len = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt();
        let u = if len > 0.0 {
            [d[0] / len, d[1] / len, d[2] / len]
        } else {
            [0.0; 3]
        };
        SweptShape {
            a,
            d,
            dxy2: d[0] * d[0] + d[1] * d[1],
            cutter,
            u,
            len,
        }
    }

    /// Whether the move changes height.
    pub(super) fn sloped(&self) -> bool {
        self.d[2] != 0.0
    }

    /// Lowest point of the swept tool over (x, y), if the tool passes over it.
    pub(super) fn lowest(&self, x: f64, y: f64) -> Option<f64> {
        let r = self.cutter.radius;
        let (px, py) = (x - self.a[0], y - self.a[1]);
        if self.cutter.kind == ToolKind::Ball && self.d[2] != 0.0 {
            // The capsule needs no parameter interval: reject by the plan
            // distance to the move, then take its lower side.
            let t = if self.dxy2 > 0.0 {
                ((px * self.d[0] + py * self.d[1]) / self.dxy2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let (ex, ey) = (px - t * self.d[0], py - t * self.d[1]);
            if ex * ex + ey * ey > r * r {
                return None;
            }
            return Some(self.ball_lowest(x, y));
        }
        // Parameter interval over which the axis is within r of (x, y).
        let (t0, t1) = if self.dxy2 > 0.0 {
            let b = -(px * self.d[0] + py * self.d[1]);
            let c = px * px + py * py - r * r;
            let disc = b * b - self.dxy2 * c;
            if disc < 0.0 {
                return None;
            }
            let s = disc.sqrt();
            let t0 = ((-b - s) / self.dxy2).max(0.0);
            let t1 = ((-b + s) / self.dxy2).min(1.0);
            if t0 > t1 {
                return None;
            }
            (t0, t1)
        } else {
            if px * px + py * py > r * r {
                return None;
            }
            (0.0, 1.0)
        };
        let z_at = |t: f64| self.a[2] + t * self.d[2];
        if self.d[2] == 0.0 {
            // Level move: the lowest point is over the nearest axis position.
            let t = if self.dxy2 > 0.0 {
                ((px * self.d[0] + py * self.d[1]) / self.dxy2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let dist = ((px - t * self.d[0]).powi(2) + (py - t * self.d[1]).powi(2)).sqrt();
            return self.cutter.height_at(dist.min(r)).map(|h| self.a[2] + h);
        }
        match self.cutter.kind {
            ToolKind::Flat => Some(z_at(t0).min(z_at(t1))),
            ToolKind::Ball => Some(self.ball_lowest(x, y)),
            ToolKind::Bull => {
                let f = |t: f64| {
                    let dist = ((px - t * self.d[0]).powi(2) + (py - t * self.d[1]).powi(2)).sqrt();
                    z_at(t) + self.cutter.height_at(dist.min(r)).unwrap_or(0.0)
                };
                // Golden-section search: f is convex on [t0, t1] (a convex,
                // increasing profile of a convex distance, plus a linear term).
                let g = 0.5 * (5f64.sqrt() - 1.0);
                let (mut lo, mut hi) = (t0, t1);
                let mut c = hi - g * (hi - lo);
                let mut e = lo + g * (hi - lo);
                let (mut fc, mut fe) = (f(c), f(e));
                for _ in 0..48 {
                    if fc < fe {
                        hi = e;
                        e = c;
                        fe = fc;
                        c = hi - g * (hi - lo);
                        fc = f(c);
                    } else {
                        lo = c;
                        c = e;
                        fc = fe;
                        e = lo + g * (hi - lo);
                        fe = f(e);
                    }
                }
                Some(f(t0).min(f(t1)).min(fc).min(fe))
            }
        }
    }

    /// [`lowest`](Self::lowest) of a sloped ball's move over the cells
    /// `first..first + N` of the row at `y` (cell `i` centred
    /// at `x0 + (i + 0.5) · step`), +∞ where the ball does not pass over
    /// a cell: the same arithmetic in the same order, with no branches, so
    /// the compiler computes the cells side by side in vector registers.
    pub(super) fn capsule_lows<const N: usize>(
        &self,
        first: usize,
        y: f64,
        (x0, step): (f64, f64),
    ) -> [f64; N] {
        let r = self.cutter.radius;
        let r2 = r * r;
        let py = y - self.a[1];
        let c0 = [self.a[0], self.a[1], self.a[2] + r];
        let ends = [
            (c0[0], c0[1], c0[2]),
            (c0[0] + self.d[0], c0[1] + self.d[1], c0[2] + self.d[2]),
        ];
        let u = self.u;
        let a = 1.0 - u[2] * u[2];
        let beside = self.len > 0.0 && a > 1e-12;
        let mut lows = [f64::INFINITY; N];
        for (l, low) in lows.iter_mut().enumerate() {
            let x = x0 + ((first + l) as f64 + 0.5) * step;
            let px = x - self.a[0];
            let t = if self.dxy2 > 0.0 {
                ((px * self.d[0] + py * self.d[1]) / self.dxy2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let (ex, ey) = (px - t * self.d[0], py - t * self.d[1]);
            let mut best = f64::INFINITY;
            for (cx, cy, cz) in ends {
                let d2 = (x - cx).powi(2) + (y - cy).powi(2);
                best = best.min(if d2 <= r2 {
                    cz - (r2 - d2).sqrt()
                } else {
                    f64::INFINITY
                });
            }
            if beside {
                let q = cylinder_quadratic(x - c0[0], y - c0[1], u, a, r2);
                let (s, along) = cylinder_root(q, u, a, false);
                let crosses = q.2 >= 0.0 && (0.0..=self.len).contains(&along);
                best = best.min(if crosses { c0[2] + s } else { f64::INFINITY });
            }
            *low = if ex * ex + ey * ey > r * r {
                f64::INFINITY
            } else {
                best
            };
        }
        lows
    }

    /// [`lowest`](Self::lowest) of a flat end's move (no corner) over the
    /// cells `first..first + N` of the row at `y`, as
    /// [`capsule_lows`](Self::capsule_lows) does for a ball: the same
    /// arithmetic, with no branches. (Level, the end stands at the move's
    /// height over every cell it covers.)
    pub(super) fn flat_lows<const N: usize>(
        &self,
        first: usize,
        y: f64,
        (x0, step): (f64, f64),
    ) -> [f64; N] {
        let r = self.cutter.radius;
        let py = y - self.a[1];
        let level = self.d[2] == 0.0;
        let mut lows = [f64::INFINITY; N];
        for (l, low) in lows.iter_mut().enumerate() {
            let x = x0 + ((first + l) as f64 + 0.5) * step;
            let px = x - self.a[0];
            let (t0, t1, missed) = if self.dxy2 > 0.0 {
                let b = -(px * self.d[0] + py * self.d[1]);
                let c = px * px + py * py - r * r;
                let disc = b * b - self.dxy2 * c;
                let s = disc.sqrt();
                let t0 = ((-b - s) / self.dxy2).max(0.0);
                let t1 = ((-b + s) / self.dxy2).min(1.0);
                (t0, t1, disc < 0.0 || t0 > t1)
            } else {
                (0.0, 1.0, px * px + py * py > r * r)
            };
            let z = if level {
                self.a[2] + 0.0
            } else {
                (self.a[2] + t0 * self.d[2]).min(self.a[2] + t1 * self.d[2])
            };
            *low = if missed { f64::INFINITY } else { z };
        }
        lows
    }

    /// Lowest point of the capsule of radius r about the centre path: the
    /// swept ball's lower surface.
    fn ball_lowest(&self, x: f64, y: f64) -> f64 {
        let r = self.cutter.radius;
        let r2 = r * r;
        let c0 = [self.a[0], self.a[1], self.a[2] + r];
        let mut best = f64::INFINITY;
        for (cx, cy, cz) in [
            (c0[0], c0[1], c0[2]),
            (c0[0] + self.d[0], c0[1] + self.d[1], c0[2] + self.d[2]),
        ] {
            let d2 = (x - cx).powi(2) + (y - cy).powi(2);
            if d2 <= r2 {
                best = best.min(cz - (r2 - d2).sqrt());
            }
        }
        let u = self.u;
        let a = 1.0 - u[2] * u[2];
        if self.len > 0.0
            && a > 1e-12
            && let Some(s) = cylinder_crossing(x - c0[0], y - c0[1], u, self.len, a, r2, false)
        {
            best = best.min(c0[2] + s);
        }
        best
    }
}
