//! The board as a continuous shape: every measurement resolved to curves in
//! millimetres, and the cross-section at any distance from the nose.
//!
//! Axes: x along the stringer from the nose tip (0) to the tail (length),
//! y across (the board is symmetric about y = 0), z up. The bottom at the
//! stringer is the rocker curve; its lowest point sits at z = 0.

use crate::model::contour::{Contour, ContourKind};
use crate::model::curve::Curve;
use crate::model::fittings::Fittings;
use crate::model::laminate::Laminate;
use crate::model::order::Order;
use crate::units::Unit;

/// A board resolved from its description: all lengths in mm.
#[derive(Debug, Clone, PartialEq)]
pub struct Board {
    /// Name from the description (used for file names).
    pub name: String,
    /// Flat (projected) length, nose tip to tail.
    pub length: f64,
    /// Plan shape.
    pub outline: Outline,
    /// Height of the bottom at the stringer above the flat it rests on.
    pub rocker: Curve,
    /// Thickness at the stringer before the tips are closed.
    pub foil: Curve,
    /// How the profile closes at a tip that is a point in plan.
    pub closing: Closing,
    /// Deck dome (crown) at the thickest point: how far the stringer rises
    /// above the line where deck meets rail. Scales with thickness along the board.
    pub dome: f64,
    /// Rail shape along the board.
    pub rails: Rails,
    /// Bottom contours, summed where zones overlap.
    pub bottom: Vec<Contour>,
    /// Distance from each tip at which nose and tail widths and thicknesses
    /// are quoted: 12 in (304.8 mm) unless the description says otherwise.
    pub tip_station: f64,
    /// The unit the board was described in (for writing it back and labels).
    pub unit: Unit,
    /// Fins and leash plug.
    pub fittings: Fittings,
    /// Glassing schedule and materials.
    pub laminate: Laminate,
    /// The customer's order.
    pub order: Order,
}

/// A curve of half-width that is interpolated in `half_width ^ power`:
/// power 2 gives a round end where the half-width reaches zero, 1 a point.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanCurve {
    /// Curve of `half_width ^ power` against x.
    pub curve: Curve,
    /// The power the curve is interpolated in.
    pub power: f64,
}

impl PlanCurve {
    /// Half-width at x.
    pub fn eval(&self, x: f64) -> f64 {
        let g = self.curve.eval(x).max(0.0);
        if self.power == 1.0 {
            g
        } else if self.power == 2.0 {
            g.sqrt()
        } else {
            g.powf(1.0 / self.power)
        }
    }

    fn scaled(&self, kx: f64, ky: f64) -> PlanCurve {
        PlanCurve {
            curve: self.curve.scaled(kx, ky.powf(self.power)),
            power: self.power,
        }
    }
}

/// The plan shape: a nose side and a tail side meeting at the wide point,
/// and the tail's end.
#[derive(Debug, Clone, PartialEq)]
pub struct Outline {
    /// Distance of the wide point from the nose.
    pub wide_point: f64,
    /// Half-width from the nose tip to the wide point.
    pub nose: PlanCurve,
    /// Half-width from the wide point to where the tail's end begins.
    pub tail: PlanCurve,
    /// How the tail ends.
    pub tail_end: TailEnd,
    /// Tail shape name, for reports.
    pub tail_shape: TailShape,
}

/// Tail shapes of the trade.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Deserialize, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TailShape {
    /// Closes round to a point on the stringer.
    Round,
    /// Narrow, pointed.
    Pin,
    /// Between the two.
    RoundedPin,
    /// A straight end with rounded corners.
    Squash,
    /// A straight end with sharp corners.
    Square,
    /// Two points with a notch between them.
    Swallow,
    /// A straight end whose corners run in to a blunt point on the stringer.
    Diamond,
}

impl TailShape {
    /// Whether the tail ends with some width (and needs `tail_end_width`).
    pub fn has_end_width(self) -> bool {
        matches!(
            self,
            TailShape::Squash | TailShape::Square | TailShape::Swallow | TailShape::Diamond
        )
    }

    /// The trade's name.
    pub fn name(self) -> &'static str {
        match self {
            TailShape::Round => "round",
            TailShape::Pin => "pin",
            TailShape::RoundedPin => "rounded pin",
            TailShape::Squash => "squash",
            TailShape::Square => "square",
            TailShape::Swallow => "swallow",
            TailShape::Diamond => "diamond",
        }
    }
}

/// How the outline ends at the tail.
#[derive(Debug, Clone, PartialEq)]
pub enum TailEnd {
    /// The half-width reaches zero at the tail (round, pin, rounded pin).
    Point,
    /// A flat end of half-width `half_end - corner.1`; corners rounded by a
    /// quarter ellipse `corner` = (along x, across y) (zero for square).
    Block { half_end: f64, corner: (f64, f64) },
    /// Straight edges from the corners of the end (half-width `half_end`,
    /// `point_length` ahead of the tail) in to a blunt tip of half-width `half_tip`.
    Diamond {
        half_end: f64,
        point_length: f64,
        half_tip: f64,
    },
    /// Points of outer half-width `half_end` with a straight notch from
    /// the stringer `notch_depth` ahead of the tail out to `half_end - tip`
    /// at the tail, leaving each point `tip` wide.
    Swallow {
        half_end: f64,
        notch_depth: f64,
        tip: f64,
    },
}

/// Profile closing at a tip that is a point in plan: the section is scaled
/// in height about the rail apex by a quarter ellipse over `nose` (or `tail`)
/// millimetres, so the tip rounds over in side view instead of ending in a
/// knife edge. Zero where the tip has width or no thickness.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Closing {
    /// Length over which the nose closes (0: none).
    pub nose: f64,
    /// Length over which the tail closes (0: none).
    pub tail: f64,
}

/// Rail shape along the board, in the measurements a shaper takes on a rail.
/// Lengths in mm; each curve runs from the nose-width station through the
/// wide point to the tail-width station and holds its end values out to the tips.
#[derive(Debug, Clone, PartialEq)]
pub struct Rails {
    /// Rounded (a rolled deck, an apex and an edge) or square (the check box).
    pub profile: RailProfile,
    /// Rail thickness `gauge` in from the edge, as a fraction of the
    /// thickness at the stringer.
    pub thickness: Curve,
    /// Height of the rail's outermost point (the apex) above the bottom edge,
    /// as a fraction of the thickness at the stringer.
    pub apex: Curve,
    /// How far in from the apex the bottom edge sits (the tuck under the rail).
    pub tuck: Curve,
    /// The edge where bottom meets rail: 0 soft (the bottom rolls into the
    /// rail), 1 hard (a crisp edge).
    pub edge: Curve,
    /// How far in from the apex the deck starts to roll down into the rail.
    pub roll: Curve,
    /// Distance in from the apex at which the rail thickness is measured.
    pub gauge: f64,
}

/// The family the rail cross-section belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RailProfile {
    /// Superellipse quadrants above and below the apex.
    Rounded,
    /// Vertical side walls with sharp edges (a box section).
    Square,
}

/// The cross-section at one distance from the nose: everything the section
/// geometry needs, evaluated once.
#[derive(Debug, Clone, PartialEq)]
pub struct Station {
    /// Distance from the nose.
    pub x: f64,
    /// Outer half-width (out to the rail's apex).
    pub half_width: f64,
    /// Half-width of the swallow notch (0 elsewhere).
    pub inner: f64,
    /// Height of the rail line (the bottom before contours) at the stringer:
    /// the rocker.
    pub bottom: f64,
    /// Thickness at the stringer over the rail line, before closing.
    pub thickness: f64,
    /// Height scale about the rail line from profile closing (1 away from
    /// the tips).
    pub closing: f64,
    /// Dome here: how far the stringer stands above the deck where it starts
    /// to roll into the rail.
    pub dome: f64,
    /// The rail here, fitted to this station's width and thickness.
    pub rail: RailAt,
    /// A box section with vertical walls (the check box).
    pub square: bool,
    /// Active contours: (depth here, contour).
    pub contours: Vec<(f64, Contour)>,
}

/// The rail at one station, in mm. [`Station::fit_rail`] limits every length
/// so that the rail fits the station's half-width and thickness, and solves
/// the deck's roll for the rail thickness.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RailAt {
    /// Height of the apex above the bottom edge.
    pub apex: f64,
    /// Distance from the apex in to the bottom edge.
    pub tuck: f64,
    /// 0 soft to 1 hard.
    pub edge: f64,
    /// Distance from the apex in to where the deck starts to roll.
    pub roll: f64,
    /// Rail thickness wanted `gauge` in from the apex.
    pub thickness: f64,
    /// Where the rail thickness is measured, in from the apex.
    pub gauge: f64,
    /// Superellipse exponent of the deck's roll into the rail (solved).
    pub roll_exponent: f64,
    /// Slope the domed deck carries into the roll (negative: falling).
    pub tilt: f64,
}

/// Superellipse height `(1 - u^n)^(1/n)` for `u` in [0, 1].
pub fn superellipse(u: f64, n: f64) -> f64 {
    if n.is_infinite() {
        return if u < 1.0 { 1.0 } else { 0.0 };
    }
    if u <= 0.0 {
        return 1.0;
    }
    if u >= 1.0 {
        return 0.0;
    }
    (1.0 - u.powf(n)).max(0.0).powf(1.0 / n)
}

impl Board {
    /// Half-width of the outline at x (outer edge).
    pub fn half_width(&self, x: f64) -> f64 {
        self.outline.half_width(x, self.length)
    }

    /// The fins' boxes placed on this board's outline.
    pub fn fin_boxes(&self) -> Vec<crate::model::fittings::PlacedBox> {
        self.fittings.boxes(self.length, |x| self.half_width(x))
    }

    /// The leash plug's centre in plan, if there is one.
    pub fn plug_at(&self) -> Option<[f64; 2]> {
        self.fittings.plug_at(self.length)
    }

    /// Thickness at the stringer at x, closing included.
    pub fn thickness(&self, x: f64) -> f64 {
        self.foil.eval(x) * self.closing_factor(x)
    }

    fn closing_factor(&self, x: f64) -> f64 {
        let quarter = |d: f64, r: f64| {
            if r <= 0.0 || d >= r {
                1.0
            } else {
                let s = 1.0 - (d / r).max(0.0);
                (1.0 - s * s).max(0.0).sqrt()
            }
        };
        quarter(x, self.closing.nose) * quarter(self.length - x, self.closing.tail)
    }

    /// The cross-section parameters at x (clamped to the board).
    pub fn station(&self, x: f64) -> Station {
        let x = x.clamp(0.0, self.length);
        let thickness = self.foil.eval(x);
        let (_, max_t) = self.foil.max_station();
        let contours = self
            .bottom
            .iter()
            .filter_map(|c| {
                let d = c.depth_at(x);
                (d > 0.0 && c.kind != ContourKind::Flat).then(|| (d, c.clone()))
            })
            .collect();
        let r = &self.rails;
        let mut st = Station {
            x,
            half_width: self.half_width(x),
            inner: self.outline.inner(x, self.length),
            bottom: self.rocker.eval(x),
            thickness,
            closing: self.closing_factor(x),
            dome: if max_t > 0.0 {
                self.dome * thickness / max_t
            } else {
                0.0
            },
            rail: RailAt {
                apex: r.apex.eval(x) * thickness,
                tuck: r.tuck.eval(x),
                edge: r.edge.eval(x).clamp(0.0, 1.0),
                roll: r.roll.eval(x),
                thickness: r.thickness.eval(x) * thickness,
                gauge: r.gauge,
                roll_exponent: 2.0,
                tilt: 0.0,
            },
            square: r.profile == RailProfile::Square,
            contours,
        };
        st.fit_rail();
        st
    }

    /// Distances from the nose where the shape has a kink or a change of
    /// formula: stations must fall there for the mesh to follow exactly.
    pub fn breaks(&self) -> Vec<f64> {
        let l = self.length;
        let mut b = vec![0.0, self.outline.wide_point, l];
        for (x, _) in self
            .foil
            .stations()
            .chain(self.rocker.stations())
            .chain(self.outline.nose.curve.stations())
            .chain(self.outline.tail.curve.stations())
        {
            b.push(x);
        }
        match self.outline.tail_end {
            TailEnd::Point => {}
            TailEnd::Block { corner, .. } => b.push(l - corner.0),
            TailEnd::Diamond { point_length, .. } => b.push(l - point_length),
            TailEnd::Swallow { notch_depth, .. } => b.push(l - notch_depth),
        }
        b.push(self.closing.nose);
        b.push(l - self.closing.tail);
        for c in &self.bottom {
            b.extend([c.from, c.to, c.from + c.blend, c.to - c.blend]);
        }
        b.retain(|x| x.is_finite() && *x >= 0.0 && *x <= l);
        b.sort_by(f64::total_cmp);
        b.dedup_by(|a, b| (*a - *b).abs() < 1e-9);
        // A station a rounding step from a tip stands for the tip: the
        // ends must be the tips exactly, or the last section is a sliver
        // that has not quite closed (degenerate triangles at the point).
        if let Some(first) = b.first_mut()
            && first.abs() < 1e-9
        {
            *first = 0.0;
        }
        if let Some(last) = b.last_mut()
            && (l - *last).abs() < 1e-9
        {
            *last = l;
        }
        b
    }

    /// Where the swallow notch starts (its apex on the stringer), if any.
    pub fn notch_apex(&self) -> Option<f64> {
        match self.outline.tail_end {
            TailEnd::Swallow { notch_depth, .. } => Some(self.length - notch_depth),
            _ => None,
        }
    }

    /// The same board stretched by `kx` along the length, `ky` across and
    /// `kz` in height: an affine map, so the volume scales by kx·ky·kz.
    pub fn scaled(&self, kx: f64, ky: f64, kz: f64) -> Board {
        let o = &self.outline;
        let tail_end = match o.tail_end {
            TailEnd::Point => TailEnd::Point,
            TailEnd::Block { half_end, corner } => TailEnd::Block {
                half_end: half_end * ky,
                corner: (corner.0 * kx, corner.1 * ky),
            },
            TailEnd::Diamond {
                half_end,
                point_length,
                half_tip,
            } => TailEnd::Diamond {
                half_end: half_end * ky,
                point_length: point_length * kx,
                half_tip: half_tip * ky,
            },
            TailEnd::Swallow {
                half_end,
                notch_depth,
                tip,
            } => TailEnd::Swallow {
                half_end: half_end * ky,
                notch_depth: notch_depth * kx,
                tip: tip * ky,
            },
        };
        Board {
            name: self.name.clone(),
            length: self.length * kx,
            outline: Outline {
                wide_point: o.wide_point * kx,
                nose: o.nose.scaled(kx, ky),
                tail: o.tail.scaled(kx, ky),
                tail_end,
                tail_shape: o.tail_shape,
            },
            rocker: self.rocker.scaled(kx, kz),
            foil: self.foil.scaled(kx, kz),
            closing: Closing {
                nose: self.closing.nose * kx,
                tail: self.closing.tail * kx,
            },
            dome: self.dome * kz,
            rails: Rails {
                profile: self.rails.profile,
                thickness: self.rails.thickness.scaled(kx, 1.0),
                apex: self.rails.apex.scaled(kx, 1.0),
                tuck: self.rails.tuck.scaled(kx, ky),
                edge: self.rails.edge.scaled(kx, 1.0),
                roll: self.rails.roll.scaled(kx, ky),
                gauge: self.rails.gauge * ky,
            },
            bottom: self
                .bottom
                .iter()
                .map(|c| Contour {
                    from: c.from * kx,
                    to: c.to * kx,
                    blend: c.blend * kx,
                    depth: c.depth * kz,
                    ..c.clone()
                })
                .collect(),
            tip_station: self.tip_station * kx,
            unit: self.unit,
            // Fins and the plug stay where the shop's rules put them,
            // measured from the tail and the rail.
            fittings: self.fittings.clone(),
            laminate: self.laminate.clone(),
            order: self.order.clone(),
        }
    }
}

impl Outline {
    /// Outer half-width at x for a board of `length`.
    pub fn half_width(&self, x: f64, length: f64) -> f64 {
        if x <= self.wide_point {
            return self.nose.eval(x);
        }
        match self.tail_end {
            TailEnd::Point => self.tail.eval(x),
            TailEnd::Block { corner, .. } => {
                let w = self.tail.eval(x);
                let start = length - corner.0;
                if corner.0 > 0.0 && x > start {
                    let s = ((x - start) / corner.0).min(1.0);
                    w - corner.1 * (1.0 - (1.0 - s * s).max(0.0).sqrt())
                } else {
                    w
                }
            }
            TailEnd::Diamond {
                half_end,
                point_length,
                half_tip,
            } => {
                let corner = length - point_length;
                if x <= corner {
                    self.tail.eval(x)
                } else {
                    let s = (x - corner) / point_length;
                    half_end + (half_tip - half_end) * s.min(1.0)
                }
            }
            TailEnd::Swallow { .. } => self.tail.eval(x),
        }
    }

    /// Half-width of the notch at x (0 outside a swallow's notch).
    pub fn inner(&self, x: f64, length: f64) -> f64 {
        match self.tail_end {
            TailEnd::Swallow {
                half_end,
                notch_depth,
                tip,
            } => {
                let start = length - notch_depth;
                if x <= start {
                    0.0
                } else {
                    (half_end - tip) * ((x - start) / notch_depth).min(1.0)
                }
            }
            _ => 0.0,
        }
    }
}
