//! Bottom contours: vee, belly, single and double concave over a zone of
//! the length, faded in and out at its ends, each measured from the rail
//! line.

/// Kinds of bottom contour. Each is measured from the rail line (the bottom
/// as rocker and outline make it): a concave is cut up into the board and
/// leaves the rail line where it is; a vee or a belly lifts the rails.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Deserialize, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ContourKind {
    /// Nothing (documents a flat zone).
    Flat,
    /// A ridge on the stringer: the bottom rises in straight lines by
    /// `depth` out to the rails.
    Vee,
    /// A rolled bottom: the bottom rises in a curve by `depth` out to the
    /// rails, flat across the stringer.
    Belly,
    /// One channel: the stringer sits `depth` above the rail line.
    SingleConcave,
    /// Two channels either side of the stringer, each `depth` deep.
    DoubleConcave,
}

/// A bottom contour over a zone of the length.
#[derive(Debug, Clone, PartialEq)]
pub struct Contour {
    /// What kind.
    pub kind: ContourKind,
    /// Start of the zone, from the nose.
    pub from: f64,
    /// End of the zone, from the nose.
    pub to: f64,
    /// Full depth inside the zone.
    pub depth: f64,
    /// Length over which the depth fades in and out at each end.
    pub blend: f64,
    /// Fraction of the half-width the contour spans (from the stringer).
    pub span: f64,
}

impl Contour {
    /// Depth at x, faded in and out with a smoothstep over `blend`.
    pub fn depth_at(&self, x: f64) -> f64 {
        if x <= self.from || x >= self.to {
            return 0.0;
        }
        let ramp = |d: f64| {
            if self.blend <= 0.0 {
                1.0
            } else {
                let t = (d / self.blend).clamp(0.0, 1.0);
                t * t * (3.0 - 2.0 * t)
            }
        };
        self.depth * ramp(x - self.from).min(ramp(self.to - x))
    }

    /// Offset of the bottom over the rail line at fraction `u` of the
    /// half-width, positive up into the board, per unit depth.
    pub fn shape(&self, u: f64) -> f64 {
        let s = (u / self.span).clamp(0.0, 1.0);
        match self.kind {
            ContourKind::Flat => 0.0,
            ContourKind::Vee => s,
            ContourKind::Belly => s * s,
            ContourKind::SingleConcave => 1.0 - s * s,
            ContourKind::DoubleConcave => {
                let v = (std::f64::consts::PI * s).sin();
                v * v
            }
        }
    }
}
