//! Shape-preserving curves through given stations.
//!
//! A monotone piecewise cubic Hermite interpolant: between stations it never
//! overshoots the data (no bumps a shaper did not ask for), and where the
//! data rise then fall it turns exactly at the station. Slopes come from the
//! three-point parabola through neighbouring stations, limited to three times
//! the smaller neighbouring secant and set to zero at local extrema, which is
//! the monotonicity region of Fritsch and Carlson (1980, SIAM J. Numer. Anal.
//! 17(2), 238-246) and the filter of Hyman (1983, SIAM J. Sci. Stat. Comput.
//! 4(4), 645-654). Where the limiter does not act the curve reproduces any
//! quadratic exactly, so an ellipse quoted at stations (in squared form)
//! comes back as the ellipse.

/// A monotone cubic Hermite curve `y(x)` through stations.
#[derive(Debug, Clone, PartialEq)]
pub struct Curve {
    xs: Vec<f64>,
    ys: Vec<f64>,
    ds: Vec<f64>,
}

/// Why a curve could not be built from its stations.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CurveError {
    /// Fewer than two stations.
    #[error("a curve needs at least two stations")]
    TooFew,
    /// A station is NaN or infinite.
    #[error("station {index} is not a finite number")]
    NotFinite { index: usize },
    /// Stations must be strictly increasing along the board.
    #[error(
        "stations must increase along the board: station {index} at {x:.3} mm does not come after {prev:.3} mm"
    )]
    NotIncreasing { index: usize, x: f64, prev: f64 },
}

/// End condition for a curve: free (three-point estimate) or a set slope.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum End {
    /// Slope estimated from the data (one-sided three-point formula, limited).
    Free,
    /// Slope given, e.g. zero at a wide point.
    Slope(f64),
}

impl Curve {
    /// A curve through `points` (x strictly increasing) with free ends.
    pub fn new(points: &[(f64, f64)]) -> Result<Curve, CurveError> {
        Curve::with_ends(points, End::Free, End::Free)
    }

    /// A curve through `points` with the given end conditions.
    pub fn with_ends(points: &[(f64, f64)], start: End, end: End) -> Result<Curve, CurveError> {
        if points.len() < 2 {
            return Err(CurveError::TooFew);
        }
        for (index, &(x, y)) in points.iter().enumerate() {
            if !x.is_finite() || !y.is_finite() {
                return Err(CurveError::NotFinite { index });
            }
            if index > 0 && x <= points[index - 1].0 {
                return Err(CurveError::NotIncreasing {
                    index,
                    x,
                    prev: points[index - 1].0,
                });
            }
        }
        let xs: Vec<f64> = points.iter().map(|p| p.0).collect();
        let ys: Vec<f64> = points.iter().map(|p| p.1).collect();
        let n = xs.len();
        let h: Vec<f64> = xs.windows(2).map(|w| w[1] - w[0]).collect();
        let delta: Vec<f64> = (0..n - 1).map(|k| (ys[k + 1] - ys[k]) / h[k]).collect();
        let mut ds = vec![0.0; n];
        for k in 1..n - 1 {
            let (a, b) = (delta[k - 1], delta[k]);
            if a * b <= 0.0 {
                ds[k] = 0.0;
            } else {
                let parabola = (h[k] * a + h[k - 1] * b) / (h[k - 1] + h[k]);
                ds[k] = limit(parabola, a.abs().min(b.abs()));
            }
        }
        ds[0] = match start {
            End::Slope(s) => s,
            End::Free if n == 2 => delta[0],
            End::Free => {
                let d = ((2.0 * h[0] + h[1]) * delta[0] - h[0] * delta[1]) / (h[0] + h[1]);
                end_limit(d, delta[0])
            }
        };
        ds[n - 1] = match end {
            End::Slope(s) => s,
            End::Free if n == 2 => delta[0],
            End::Free => {
                let (hl, hp) = (h[n - 2], h[n - 3]);
                let (dl, dp) = (delta[n - 2], delta[n - 3]);
                let d = ((2.0 * hl + hp) * dl - hl * dp) / (hl + hp);
                end_limit(d, dl)
            }
        };
        Ok(Curve { xs, ys, ds })
    }

    /// The value at `x`; outside the stations the end value is held.
    pub fn eval(&self, x: f64) -> f64 {
        self.eval_with_slope(x).0
    }

    /// The slope dy/dx at `x` (zero outside the stations).
    pub fn slope(&self, x: f64) -> f64 {
        self.eval_with_slope(x).1
    }

    /// Value and slope at `x`.
    pub fn eval_with_slope(&self, x: f64) -> (f64, f64) {
        let n = self.xs.len();
        if x <= self.xs[0] {
            return (self.ys[0], if x == self.xs[0] { self.ds[0] } else { 0.0 });
        }
        if x >= self.xs[n - 1] {
            return (
                self.ys[n - 1],
                if x == self.xs[n - 1] {
                    self.ds[n - 1]
                } else {
                    0.0
                },
            );
        }
        let k = self.xs.partition_point(|&xi| xi <= x) - 1;
        let h = self.xs[k + 1] - self.xs[k];
        let t = (x - self.xs[k]) / h;
        let (y0, y1, d0, d1) = (
            self.ys[k],
            self.ys[k + 1],
            self.ds[k] * h,
            self.ds[k + 1] * h,
        );
        let t2 = t * t;
        let t3 = t2 * t;
        let value = (2.0 * t3 - 3.0 * t2 + 1.0) * y0
            + (t3 - 2.0 * t2 + t) * d0
            + (-2.0 * t3 + 3.0 * t2) * y1
            + (t3 - t2) * d1;
        let slope = ((6.0 * t2 - 6.0 * t) * y0
            + (3.0 * t2 - 4.0 * t + 1.0) * d0
            + (-6.0 * t2 + 6.0 * t) * y1
            + (3.0 * t2 - 2.0 * t) * d1)
            / h;
        (value, slope)
    }

    /// The stations the curve passes through.
    pub fn stations(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.xs.iter().copied().zip(self.ys.iter().copied())
    }

    /// First and last station.
    pub fn span(&self) -> (f64, f64) {
        (self.xs[0], self.xs[self.xs.len() - 1])
    }

    /// The same curve with every x multiplied by `kx` and every y by `ky`.
    pub fn scaled(&self, kx: f64, ky: f64) -> Curve {
        Curve {
            xs: self.xs.iter().map(|x| x * kx).collect(),
            ys: self.ys.iter().map(|y| y * ky).collect(),
            ds: self.ds.iter().map(|d| d * ky / kx).collect(),
        }
    }

    /// The largest y over the stations (the curve never exceeds it).
    pub fn max_station(&self) -> (f64, f64) {
        self.stations()
            .fold((f64::NAN, f64::NEG_INFINITY), |best, p| {
                if p.1 > best.1 { p } else { best }
            })
    }
}

/// Keeps an interior slope inside the monotone region: |d| <= 3 min|secant|.
fn limit(d: f64, min_secant: f64) -> f64 {
    d.clamp(-3.0 * min_secant, 3.0 * min_secant)
}

/// End slope: same sign as the end secant, at most three times it.
fn end_limit(d: f64, secant: f64) -> f64 {
    if d * secant <= 0.0 {
        0.0
    } else if d.abs() > 3.0 * secant.abs() {
        3.0 * secant
    } else {
        d
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn passes_through_its_stations() {
        let pts = [(0.0, 1.0), (1.0, 3.0), (2.5, 2.0), (4.0, 2.2)];
        let c = Curve::new(&pts).unwrap();
        for (x, y) in pts {
            assert!((c.eval(x) - y).abs() < 1e-12);
        }
    }

    #[test]
    fn reproduces_a_quadratic() {
        // A cubic Hermite with exact slopes reproduces polynomials of degree
        // <= 3 (de Boor, A Practical Guide to Splines, ch. IV); the three-point
        // parabola gives exact slopes for a quadratic.
        let f = |x: f64| 2.0 * x - 0.25 * x * x; // rising on [0, 4)
        let pts: Vec<(f64, f64)> = [0.0, 0.7, 1.5, 2.0, 3.1]
            .iter()
            .map(|&x| (x, f(x)))
            .collect();
        let c = Curve::new(&pts).unwrap();
        for i in 0..=310 {
            let x = i as f64 * 0.01;
            assert!((c.eval(x) - f(x)).abs() < 1e-12, "x = {x}");
        }
    }

    #[test]
    fn never_overshoots_monotone_data() {
        // Fritsch and Carlson (1980): a Hermite piece is monotone when
        // alpha, beta lie in [0, 3]; check on data that tempt an overshoot.
        let pts = [(0.0, 0.0), (1.0, 0.0), (1.1, 1.0), (3.0, 1.0), (3.2, 5.0)];
        let c = Curve::new(&pts).unwrap();
        let mut prev = c.eval(0.0);
        for i in 1..=3200 {
            let y = c.eval(i as f64 * 0.001);
            assert!(y >= prev - 1e-12, "falls at {}", i as f64 * 0.001);
            prev = y;
        }
        // Flat stretches stay flat.
        assert!((c.eval(0.5) - 0.0).abs() < 1e-12);
        assert!((c.eval(2.0) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn turns_at_a_peak_station() {
        let c = Curve::new(&[(0.0, 0.0), (1.0, 2.0), (3.0, 0.5)]).unwrap();
        assert_eq!(c.slope(1.0), 0.0);
        for i in 0..=300 {
            assert!(c.eval(i as f64 * 0.01) <= 2.0 + 1e-12);
        }
    }

    #[test]
    fn bad_stations_are_errors() {
        assert_eq!(Curve::new(&[(0.0, 1.0)]), Err(CurveError::TooFew));
        assert!(matches!(
            Curve::new(&[(0.0, 1.0), (0.0, 2.0)]),
            Err(CurveError::NotIncreasing { index: 1, .. })
        ));
        assert!(matches!(
            Curve::new(&[(0.0, 1.0), (f64::NAN, 2.0)]),
            Err(CurveError::NotFinite { index: 1 })
        ));
    }

    #[test]
    fn slope_matches_finite_difference() {
        let c = Curve::new(&[(0.0, 0.0), (1.0, 0.8), (2.0, 1.0), (4.0, 3.0)]).unwrap();
        for x in [0.3, 1.2, 2.7, 3.9] {
            let h = 1e-6;
            let fd = (c.eval(x + h) - c.eval(x - h)) / (2.0 * h);
            assert!((c.slope(x) - fd).abs() < 1e-6);
        }
    }
}
