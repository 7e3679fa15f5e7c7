//! Cross-section geometry at one station, in a shaper's terms: a domed deck
//! that rolls down into the rail, the rail's outermost point (the apex) a
//! set height above the bottom edge, and below it the edge, tucked in under
//! the apex and soft or hard. The exact area of the section comes from the
//! same curves, independent of any mesh.
//!
//! Across the board `y` runs from the stringer (0) out to the apex
//! (`half_width`); heights are measured up from the rail line at the
//! stringer (the rocker) and scaled there by the profile closing near a
//! pointed tip. From the stringer out:
//!
//! - the **bottom** is the rail line moved by the contours (a concave is cut
//!   up into the board, a vee or belly lifts the rails), out to the bottom
//!   edge `tuck` in from the apex;
//! - the **edge and lower rail** rise from the bottom edge to the apex, `apex`
//!   higher, meeting it with a vertical tangent: a quarter ellipse for a soft
//!   edge (tangent to the bottom), a curve leaving the bottom at an angle
//!   for a hard one;
//! - the **deck** falls from the stringer by the dome (a parabola) to where it
//!   starts to roll, `roll` in from the apex, then rolls down to the apex
//!   along a superellipse quadrant (Lamé's curve) whose exponent is solved so
//!   that the rail is `thickness` thick `gauge` in from the apex.

use crate::geom::quadrature;
use crate::model::board::{RailAt, Station, superellipse};

/// Least and most exponent of the deck's roll: 1.1 is nearly a straight
/// bevel from the roll to the apex, 12 nearly a box.
const ROLL_EXPONENTS: (f64, f64) = (1.1, 12.0);

/// Height of the edge curve at fraction `v` of the way from the bottom edge
/// (0) out to the apex (1), per unit apex height: a quarter ellipse for a
/// soft edge (`edge` 0, tangent to the bottom) blended with `1 − √(1 − v)`,
/// which leaves the bottom at a slope of half the apex height over the tuck.
fn edge_rise(v: f64, edge: f64) -> f64 {
    let v = v.clamp(0.0, 1.0);
    let soft = 1.0 - ((1.0 - v) * (1.0 + v)).sqrt();
    let hard = 1.0 - (1.0 - v).sqrt();
    (1.0 - edge) * soft + edge * hard
}

impl RailAt {
    /// The deck's roll at fraction `v` from the roll line (0) to the apex
    /// (1), per unit drop: 1 at the roll line, 0 at the apex.
    fn roll_shape(&self, v: f64) -> f64 {
        superellipse(v, self.roll_exponent)
    }
}

impl Station {
    /// Fits the rail to this station: limits roll, tuck, gauge and apex so
    /// that they fit the half-width and thickness here, carries the dome's
    /// slope into the roll and solves the roll's exponent for the rail
    /// thickness. A board's own rules (`resolve`) see that these limits act
    /// only near the tips.
    pub fn fit_rail(&mut self) {
        let w = self.half_width.max(0.0);
        let t = self.thickness.max(0.0);
        let mut r = self.rail;
        // Near a tip the roll and the tuck may take the whole half-width:
        // the deck and the bottom then round over from the stringer, the
        // dome taken into the roll. The gauge narrows with the roll, so the
        // rail keeps its shape, narrower, instead of a crest on the stringer.
        r.roll = r.roll.max(0.0);
        if r.roll > w {
            r.gauge *= w / r.roll;
            r.roll = w;
            self.dome = 0.0;
        }
        r.tuck = r.tuck.clamp(0.0, w);
        r.gauge = r.gauge.clamp(0.0, 0.8 * r.roll);
        // The dome fades as the flat of the deck narrows to nothing.
        let flat = if r.roll > 0.0 {
            ((w - r.roll) / r.roll).clamp(0.0, 1.0)
        } else {
            1.0
        };
        self.dome = (self.dome * flat * flat * (3.0 - 2.0 * flat)).clamp(0.0, 0.5 * t);
        let edge_z = self.contour(self.u_at(w - r.tuck));
        let room = (self.stringer_rise() + t - self.dome - edge_z).max(0.0);
        r.apex = r.apex.clamp(0.0, 0.5 * room);
        let drop = room - r.apex;
        let shoulder = w - r.roll;
        r.tilt = if shoulder > 0.0 && r.roll > 0.0 {
            (-2.0 * self.dome / shoulder).max(-0.5 * drop / r.roll)
        } else {
            0.0
        };
        r.roll_exponent = 2.0;
        self.rail = r;
        if r.roll <= 0.0 || drop <= 0.0 || r.gauge <= 0.0 {
            return;
        }
        let v = 1.0 - r.gauge / r.roll;
        let bottom = self.bottom_rise(w - r.gauge);
        let want = r.thickness + bottom - edge_z - r.apex - r.tilt * r.roll * v * (1.0 - v);
        let s = (want / drop).clamp(
            superellipse(v, ROLL_EXPONENTS.0),
            superellipse(v, ROLL_EXPONENTS.1),
        );
        // superellipse(v, n) rises with n: regula falsi in log n with the
        // Illinois step (Dowell and Jarratt 1971), which keeps the bracket
        // and converges superlinearly.
        let g = |ln: f64| superellipse(v, ln.exp()) - s;
        let (mut a, mut b) = (ROLL_EXPONENTS.0.ln(), ROLL_EXPONENTS.1.ln());
        let (mut ga, mut gb) = (g(a), g(b));
        let mut side = 0;
        let mut x = a;
        for _ in 0..60 {
            if ga >= 0.0 {
                x = a;
                break;
            }
            if gb <= 0.0 {
                x = b;
                break;
            }
            x = (a * gb - b * ga) / (gb - ga);
            let gx = g(x);
            if gx.abs() < 1e-13 || (b - a) < 1e-13 {
                break;
            }
            if gx < 0.0 {
                a = x;
                ga = gx;
                if side == -1 {
                    gb *= 0.5;
                }
                side = -1;
            } else {
                b = x;
                gb = gx;
                if side == 1 {
                    ga *= 0.5;
                }
                side = 1;
            }
        }
        self.rail.roll_exponent = x.exp();
    }

    /// The thinnest and thickest the rail can be at its gauge here, with the
    /// roll as straight and as full as it goes.
    pub fn rail_thickness_range(&self) -> (f64, f64) {
        let at = |n: f64| {
            let mut s = self.clone();
            s.rail.roll_exponent = n;
            s.thickness_at(s.rail.gauge)
        };
        (at(ROLL_EXPONENTS.0), at(ROLL_EXPONENTS.1))
    }

    /// Fraction of the half-width at `y`.
    fn u_at(&self, y: f64) -> f64 {
        if self.half_width > 0.0 {
            (y / self.half_width).clamp(0.0, 1.0)
        } else {
            0.0
        }
    }

    /// Sum of the contours' offsets at `u`, positive up into the board.
    pub fn contour(&self, u: f64) -> f64 {
        self.contours.iter().map(|(d, c)| d * c.shape(u)).sum()
    }

    /// Height of the bottom at the stringer over the rail line: the depth of
    /// a single concave there, nothing for a vee or a belly. The thickness
    /// at the stringer is measured from here, as calipers measure it.
    pub fn stringer_rise(&self) -> f64 {
        self.contour(0.0)
    }

    /// Highest the contours lift the bottom anywhere across.
    pub fn contour_lift(&self) -> f64 {
        let steps = 256;
        (0..=steps)
            .map(|i| self.contour(i as f64 / steps as f64))
            .fold(0.0, f64::max)
    }

    /// Where the bottom edge is, out from the stringer.
    pub fn edge_y(&self) -> f64 {
        self.half_width - self.rail.tuck
    }

    /// Fraction of the half-width at the bottom edge.
    pub fn u_edge(&self) -> f64 {
        self.u_at(self.edge_y())
    }

    /// Height of the bottom edge over the rail line at the stringer.
    pub fn edge_rise(&self) -> f64 {
        self.contour(self.u_at(self.edge_y()))
    }

    /// Height of the apex over the rail line at the stringer.
    fn apex_rise(&self) -> f64 {
        if self.square {
            0.5 * (self.contour(1.0) + self.stringer_rise() + self.thickness - self.dome)
        } else {
            self.edge_rise() + self.rail.apex
        }
    }

    /// Bottom height over the rail line at `y` out from the stringer.
    pub fn bottom_rise(&self, y: f64) -> f64 {
        let r = &self.rail;
        let edge = self.edge_y();
        if self.square || y <= edge || r.tuck <= 0.0 {
            return self.contour(self.u_at(y));
        }
        self.edge_rise() + r.apex * edge_rise((y - edge) / r.tuck, r.edge)
    }

    /// Deck height over the rail line at `y` out from the stringer.
    pub fn deck_rise(&self, y: f64) -> f64 {
        let (w, dome) = (self.half_width, self.dome);
        let t = self.stringer_rise() + self.thickness;
        if self.square {
            let u = self.u_at(y);
            return t - dome * u * u;
        }
        let r = &self.rail;
        let shoulder = w - r.roll;
        if y <= shoulder || r.roll <= 0.0 {
            return if shoulder > 0.0 {
                t - dome * (y / shoulder).powi(2)
            } else {
                t
            };
        }
        let v = ((y - shoulder) / r.roll).clamp(0.0, 1.0);
        let apex = self.apex_rise();
        let drop = t - dome - apex;
        apex + drop * r.roll_shape(v) + r.tilt * r.roll * v * (1.0 - v)
    }

    /// Fraction of the half-width where the section starts (the notch edge).
    pub fn u_start(&self) -> f64 {
        if self.half_width > 0.0 {
            (self.inner / self.half_width).clamp(0.0, 1.0)
        } else {
            0.0
        }
    }

    /// Point (y, z) on the bottom at fraction `u` of the half-width.
    pub fn lower(&self, u: f64) -> [f64; 2] {
        let y = u * self.half_width;
        [y, self.bottom + self.closing * self.bottom_rise(y)]
    }

    /// Point (y, z) on the deck at fraction `u` of the half-width.
    pub fn upper(&self, u: f64) -> [f64; 2] {
        let y = u * self.half_width;
        [y, self.bottom + self.closing * self.deck_rise(y)]
    }

    /// The bottom and deck corners of a square rail.
    pub fn square_corners(&self) -> ([f64; 2], [f64; 2]) {
        let low = self.bottom + self.closing * self.contour(1.0);
        let up = self.bottom + self.closing * (self.stringer_rise() + self.thickness - self.dome);
        ([self.half_width, low], [self.half_width, up])
    }

    /// Height of the rail apex.
    pub fn apex_height(&self) -> f64 {
        self.bottom + self.closing * self.apex_rise()
    }

    /// The rail apex (y, z).
    pub fn apex_point(&self) -> [f64; 2] {
        [self.half_width, self.apex_height()]
    }

    /// Thickness of the section `inset` in from the apex (after closing).
    pub fn thickness_at(&self, inset: f64) -> f64 {
        let y = (self.half_width - inset).max(0.0);
        self.closing * (self.deck_rise(y) - self.bottom_rise(y))
    }

    /// Area of the cross-section (both halves), integrated piece by piece
    /// from the continuous curves, independent of any mesh.
    ///
    /// Deck and bottom are integrated apart. The dome is a parabola
    /// (integrated exactly); the roll is a superellipse quadrant, in closed
    /// form (Gamma functions) or, where a notch cuts into it, integrated
    /// after the substitution v = 1 − sⁿ for its exponent n, which removes
    /// its infinite slope at the apex; the edge curve after v = 1 − s², for
    /// the same reason. Gauss-Kronrod then converges in a few panels.
    pub fn area(&self) -> f64 {
        let (w, y0) = (self.half_width, self.inner.max(0.0));
        if w <= 0.0 || self.closing <= 0.0 || y0 >= w {
            return 0.0;
        }
        let scale = 2.0 * self.closing;
        let spans: Vec<f64> = self.contours.iter().map(|(_, c)| c.span * w).collect();
        let contour = |y0: f64, y1: f64| -> f64 {
            if y1 <= y0 {
                return 0.0;
            }
            let mut breaks: Vec<f64> = spans
                .iter()
                .copied()
                .filter(|s| *s > y0 && *s < y1)
                .collect();
            breaks.extend([y0, y1]);
            breaks.sort_by(f64::total_cmp);
            let tol = 1e-10 * (self.thickness.abs() + 1.0) * (y1 - y0);
            quadrature::integrate(|y| self.contour(self.u_at(y)), &breaks, tol, 500).value
        };
        if self.square {
            let t = self.stringer_rise() + self.thickness;
            let deck = t * (w - y0) - self.dome * (w.powi(3) - y0.powi(3)) / (3.0 * w * w);
            return scale * (deck - contour(y0, w));
        }
        let r = &self.rail;
        let t = self.stringer_rise() + self.thickness;
        // Deck: the dome out to the roll line, then the roll (in closed
        // form unless a swallow's notch cuts into it).
        let shoulder = w - r.roll;
        let mut deck = 0.0;
        if y0 < shoulder {
            deck += t * (shoulder - y0)
                - self.dome * (shoulder.powi(3) - y0.powi(3)) / (3.0 * shoulder * shoulder);
        }
        if r.roll > 0.0 {
            let v0 = ((y0 - shoulder) / r.roll).max(0.0);
            let apex = self.apex_rise();
            let drop = t - self.dome - apex;
            let n = r.roll_exponent;
            let s0 = (1.0 - v0).powf(1.0 / n);
            let shape = if v0 <= 0.0 {
                // The whole quadrant: Γ(1 + 1/n)² / Γ(1 + 2/n), the area of
                // the unit Lamé curve's quadrant (e.g. Weisstein, MathWorld
                // "Superellipse").
                libm::tgamma(1.0 + 1.0 / n).powi(2) / libm::tgamma(1.0 + 2.0 / n)
            } else {
                quadrature::integrate(
                    |s| {
                        let sn1 = s.powf(n - 1.0);
                        let w = sn1 * s;
                        // 1 − vⁿ for v = 1 − w, without cancellation when w is small.
                        let one_minus = -(n * (-w).ln_1p()).exp_m1();
                        one_minus.max(0.0).powf(1.0 / n) * n * sn1
                    },
                    &[0.0, s0],
                    1e-10,
                    500,
                )
                .value
            };
            let tilt = r.tilt * r.roll * (0.5 * (1.0 - v0 * v0) - (1.0 - v0.powi(3)) / 3.0);
            deck += r.roll * (apex * (1.0 - v0) + drop * shape + tilt);
        }
        // Bottom: the contours out to the edge, then the edge curve.
        let edge = self.edge_y();
        let mut bottom = contour(y0, edge.max(y0));
        if r.tuck > 0.0 {
            let v0 = ((y0 - edge) / r.tuck).max(0.0);
            let z = self.edge_rise();
            let s0 = (1.0 - v0).sqrt();
            let rise = quadrature::integrate(
                |s| edge_rise(1.0 - s * s, r.edge) * 2.0 * s,
                &[0.0, s0],
                1e-10,
                500,
            )
            .value;
            bottom += r.tuck * (z * (1.0 - v0) + r.apex * rise);
        }
        scale * (deck - bottom)
    }
}

#[cfg(test)]
mod tests {
    use crate::model::board::{RailAt, Station};

    fn station(apex: f64, tuck: f64, edge: f64, roll: f64, fraction: f64) -> Station {
        let mut s = Station {
            x: 0.0,
            half_width: 250.0,
            inner: 0.0,
            bottom: 10.0,
            thickness: 60.0,
            closing: 1.0,
            dome: 0.0,
            rail: RailAt {
                apex,
                tuck,
                edge,
                roll,
                thickness: fraction * 60.0,
                gauge: 25.4,
                roll_exponent: 2.0,
                tilt: 0.0,
            },
            square: false,
            contours: vec![],
        };
        s.fit_rail();
        s
    }

    /// The section as a polygon of `n` points a side, its area by the
    /// shoelace formula (an independent check of the integration).
    fn polygon_area(s: &Station, n: usize) -> f64 {
        let mut pts = vec![];
        for i in 0..=n {
            let u = 1.0 - (1.0 - i as f64 / n as f64).powi(2);
            pts.push(s.lower(u));
        }
        pts.push(s.apex_point());
        for i in (0..=n).rev() {
            let u = 1.0 - (1.0 - i as f64 / n as f64).powi(2);
            pts.push(s.upper(u));
        }
        let mut a = 0.0;
        for k in 0..pts.len() {
            let (p, q) = (pts[k], pts[(k + 1) % pts.len()]);
            a += p[0] * q[1] - q[0] * p[1];
        }
        a.abs()
    }

    #[test]
    fn elliptic_rail_has_the_quarter_ellipse_area() {
        // No dome, roll over the whole half-width and the apex at the bottom
        // edge with no tuck: the half-section is a quarter of a Lamé curve of
        // semi-axes 200 (the roll) and 60 plus a 50 x 60 rectangle; exponent 2
        // makes it a quarter ellipse, area π·a·b/4 (standard geometry).
        let mut s = station(0.0, 0.0, 0.0, 200.0, 0.0);
        s.rail.roll_exponent = 2.0;
        s.rail.tilt = 0.0;
        let want = 2.0 * (50.0 * 60.0 + 0.25 * std::f64::consts::PI * 200.0 * 60.0);
        assert!(
            (s.area() - want).abs() < 1e-8 * want,
            "{} vs {want}",
            s.area()
        );
    }

    #[test]
    fn superellipse_roll_has_the_lame_area() {
        // Area of the Lamé curve |y/a|^n + |z/b|^n = 1 is
        // 4ab·Γ(1+1/n)²/Γ(1+2/n) (e.g. Weisstein, MathWorld "Superellipse").
        // For n = 4: Γ(1.25)² / Γ(1.5) = 0.906402477055477² / 0.886226925452758.
        let g = 0.906_402_477_055_477_f64.powi(2) / 0.886_226_925_452_758;
        let mut s = station(0.0, 0.0, 0.0, 200.0, 0.0);
        s.rail.roll_exponent = 4.0;
        s.rail.tilt = 0.0;
        let want = 2.0 * (50.0 * 60.0 + 200.0 * 60.0 * g);
        assert!(
            (s.area() - want).abs() < 1e-8 * want,
            "{} vs {want}",
            s.area()
        );
    }

    #[test]
    fn area_matches_the_polygon_of_the_curves() {
        for (apex, tuck, edge, roll, fraction) in [
            (8.0, 12.0, 0.5, 90.0, 0.55),
            (0.0, 0.0, 1.0, 60.0, 0.6),
            (10.0, 15.0, 0.0, 120.0, 0.5),
            (6.0, 10.0, 1.0, 40.0, 0.7),
        ] {
            let mut s = station(apex, tuck, edge, roll, fraction);
            s.dome = 6.0;
            s.fit_rail();
            let (a, p) = (s.area(), polygon_area(&s, 20_000));
            assert!(
                (a - p).abs() < 1e-5 * a,
                "{apex} {tuck} {edge} {roll}: {a} vs {p}"
            );
        }
    }

    #[test]
    fn the_rail_has_the_thickness_asked_for() {
        for fraction in [0.45, 0.55, 0.65] {
            let mut s = station(8.0, 12.0, 0.5, 90.0, fraction);
            s.dome = 6.0;
            s.fit_rail();
            let got = s.thickness_at(25.4);
            assert!((got - fraction * 60.0).abs() < 1e-6, "{fraction}: {got}");
        }
    }

    #[test]
    fn square_section_is_a_rectangle() {
        let mut s = station(0.0, 0.0, 0.0, 0.0, 0.0);
        s.square = true;
        assert!((s.area() - 500.0 * 60.0).abs() < 1e-9);
    }
}
