//! Cross-section geometry at one station: the bottom and deck curves, the
//! rail apex, and the exact area of the section.
//!
//! Across the board, `u` is the fraction of the half-width from the stringer
//! (0) to the rail apex (1). Above the apex the deck follows a superellipse
//! quadrant `(1 - u^n)^(1/n)` (Lamé's curve) of exponent `n_up`, lowered by
//! the dome towards the rail; below it the bottom follows one of exponent
//! `n_low`, moved by the bottom contours. Exponent 2 is an ellipse (a soft,
//! round rail), large exponents are boxy above or hard and tucked below.

use crate::model::board::{Station, superellipse};

use crate::geom::quadrature;

impl Station {
    /// Thickness of the rail band: from the bottom edge to the deck edge.
    pub fn rail_band(&self) -> f64 {
        self.thickness - self.dome
    }

    /// Height of the rail apex.
    pub fn apex_height(&self) -> f64 {
        self.bottom + self.closing * self.h_low()
    }

    /// Depth of the bottom below the apex at the stringer, before contours
    /// and closing.
    fn h_low(&self) -> f64 {
        self.apex * self.rail_band()
    }

    /// Height of the deck above the apex at the stringer, before closing.
    fn h_up(&self) -> f64 {
        self.thickness - self.apex * self.rail_band()
    }

    /// Sum of the contours' offsets at `u`, positive up.
    pub fn contour(&self, u: f64) -> f64 {
        self.contours.iter().map(|(d, c)| d * c.shape(u)).sum()
    }

    /// Highest the contours lift the bottom anywhere across (vee, double).
    pub fn contour_lift(&self) -> f64 {
        self.contours
            .iter()
            .map(|(d, c)| {
                let steps = 64;
                let lift = (0..=steps)
                    .map(|i| c.shape(i as f64 / steps as f64))
                    .fold(0.0, f64::max);
                d * lift
            })
            .sum()
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
    ///
    /// Heights are measured up from the stringer's bottom and scaled there
    /// by the profile closing, so the rocker curve holds right to the tips.
    pub fn lower(&self, u: f64) -> [f64; 2] {
        let s = superellipse(u, self.n_low);
        let rise = self.h_low() - (self.h_low() - self.contour(u)) * s;
        [u * self.half_width, self.bottom + self.closing * rise]
    }

    /// Point (y, z) on the deck at fraction `u` of the half-width.
    pub fn upper(&self, u: f64) -> [f64; 2] {
        let s = superellipse(u, self.n_up);
        let rise = self.h_low() + (self.h_up() - self.dome * u * u) * s;
        [u * self.half_width, self.bottom + self.closing * rise]
    }

    /// The bottom and deck corners of a square rail at the apex line.
    pub fn square_corners(&self) -> ([f64; 2], [f64; 2]) {
        let low = self.bottom + self.closing * self.contour(1.0);
        let up = self.bottom + self.closing * (self.thickness - self.dome);
        ([self.half_width, low], [self.half_width, up])
    }

    /// The rail apex (y, z).
    pub fn apex_point(&self) -> [f64; 2] {
        [self.half_width, self.apex_height()]
    }

    /// Area of the cross-section (both halves), integrated from the
    /// continuous curves, independent of any mesh.
    ///
    /// The deck and bottom terms are integrated apart, each after the
    /// substitution u = 1 − sⁿ for its own exponent n: the superellipse
    /// (1 − uⁿ)^(1/n) then runs linearly in s at the apex instead of with an
    /// infinite slope, and Gauss-Kronrod converges in a few panels.
    pub fn area(&self) -> f64 {
        let u0 = self.u_start();
        if self.half_width <= 0.0 || self.closing <= 0.0 || u0 >= 1.0 {
            return 0.0;
        }
        let scale = 2.0 * self.half_width * self.closing;
        let spans: Vec<f64> = self.contours.iter().map(|(_, c)| c.span).collect();
        let up = |u: f64| self.h_up() - self.dome * u * u;
        let low = |u: f64| self.h_low() - self.contour(u);
        scale * (term(up, self.n_up, u0, &[]) + term(low, self.n_low, u0, &spans))
    }
}

/// ∫ from u0 to 1 of g(u)·(1 − uⁿ)^(1/n) du, with kinks of g at `kinks`.
fn term(g: impl Fn(f64) -> f64, n: f64, u0: f64, kinks: &[f64]) -> f64 {
    // The integral is of the order of the thickness; 1e-9 of g(u0) is far
    // below anything a volume in litres can show.
    let tolerance = 1e-9 * (g(u0).abs() + 1e-6);
    let inside = |k: &&f64| **k > u0 && **k < 1.0;
    if n.is_infinite() {
        let mut breaks: Vec<f64> = kinks.iter().filter(inside).copied().collect();
        breaks.push(u0);
        breaks.push(1.0);
        breaks.sort_by(f64::total_cmp);
        return quadrature::integrate(g, &breaks, tolerance, 500).value;
    }
    let s_of = |u: f64| (1.0 - u).powf(1.0 / n);
    let mut breaks: Vec<f64> = kinks.iter().filter(inside).map(|&k| s_of(k)).collect();
    breaks.push(0.0);
    breaks.push(s_of(u0));
    breaks.sort_by(f64::total_cmp);
    quadrature::integrate(
        |s| {
            let sn1 = s.powf(n - 1.0);
            let w = sn1 * s;
            // 1 − uⁿ for u = 1 − w, without cancellation when w is small.
            let one_minus = -(n * (-w).ln_1p()).exp_m1();
            g(1.0 - w) * one_minus.max(0.0).powf(1.0 / n) * n * sn1
        },
        &breaks,
        tolerance,
        500,
    )
    .value
}

#[cfg(test)]
mod tests {
    use crate::model::board::Station;

    fn station(n_up: f64, n_low: f64, apex: f64) -> Station {
        Station {
            x: 0.0,
            half_width: 250.0,
            inner: 0.0,
            bottom: 10.0,
            thickness: 60.0,
            closing: 1.0,
            dome: 0.0,
            apex,
            n_up,
            n_low,
            contours: vec![],
        }
    }

    #[test]
    fn elliptic_section_has_the_ellipse_area() {
        // Exponent 2 above and below with the apex at mid-thickness is an
        // ellipse of semi-axes 250 and 30: area π·a·b (standard geometry).
        let s = station(2.0, 2.0, 0.5);
        let want = std::f64::consts::PI * 250.0 * 30.0;
        assert!(
            (s.area() - want).abs() < 1e-8 * want,
            "{} vs {want}",
            s.area()
        );
    }

    #[test]
    fn superellipse_section_has_the_lame_area() {
        // Area of the Lamé curve |y/a|^n + |z/b|^n = 1 is
        // 4ab·Γ(1+1/n)²/Γ(1+2/n) (e.g. Weisstein, MathWorld "Superellipse").
        // For n = 4: Γ(1.25)² / Γ(1.5) = 0.906402477055477² / 0.886226925452758.
        let g = 0.906_402_477_055_477_f64.powi(2) / 0.886_226_925_452_758;
        let s = station(4.0, 4.0, 0.5);
        let want = 4.0 * 250.0 * 30.0 * g;
        assert!(
            (s.area() - want).abs() < 1e-8 * want,
            "{} vs {want}",
            s.area()
        );
    }

    #[test]
    fn square_section_is_a_rectangle() {
        let s = station(f64::INFINITY, f64::INFINITY, 0.5);
        assert!((s.area() - 500.0 * 60.0).abs() < 1e-9);
    }
}
