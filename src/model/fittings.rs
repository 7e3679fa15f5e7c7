//! What is set into the shaped foam: the fins' boxes and the leash plug,
//! placed in the board's own coordinates (x from the nose, y across, the
//! board symmetric about y = 0).
//!
//! A fin is given as shops give it: how far its box's front end (where
//! the fin's leading edge sits) is from the tail, how far in from the rail,
//! its toe (the leading edge turned in toward the stringer) and its cant
//! (tilted out from square to the bottom). The box is a generic pocket
//! (length, width, depth, corner radius); the plug a round pocket on the
//! stringer, from the deck.

/// The trade's fin setups.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FinSetup {
    /// One centre fin in a long box.
    Single,
    /// Two side fins.
    Twin,
    /// Two side fins and a centre fin.
    Thruster,
    /// Two pairs of side fins.
    Quad,
    /// Two side fins and a centre fin in a long box.
    TwoPlusOne,
}

impl FinSetup {
    /// The name a description uses.
    pub fn name(self) -> &'static str {
        match self {
            FinSetup::Single => "single",
            FinSetup::Twin => "twin",
            FinSetup::Thruster => "thruster",
            FinSetup::Quad => "quad",
            FinSetup::TwoPlusOne => "two_plus_one",
        }
    }

    /// The name a shop reads.
    pub fn label(self) -> &'static str {
        match self {
            FinSetup::Single => "single fin",
            FinSetup::Twin => "twin fin",
            FinSetup::Thruster => "thruster (three fins)",
            FinSetup::Quad => "quad (four fins)",
            FinSetup::TwoPlusOne => "2+1 (two side fins and a centre fin)",
        }
    }
}

/// A fin box's pocket, mm.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pocket {
    /// Along the fin.
    pub length: f64,
    /// Across the fin.
    pub width: f64,
    /// Into the foam, square to the bottom.
    pub depth: f64,
    /// Radius of the pocket's corners in plan.
    pub corner_radius: f64,
}

/// One fin (a pair for side fins: one each side, mirrored).
#[derive(Debug, Clone, PartialEq)]
pub struct Fin {
    /// What the fin is, as the setup names it (e.g. "side", "centre",
    /// "rear").
    pub role: String,
    /// On the stringer (one fin) or a side pair.
    pub centre: bool,
    /// From the tail to the box's front end, mm.
    pub from_tail: f64,
    /// From the rail in to the box's front end, across the board, mm (0 on
    /// the stringer).
    pub from_rail: f64,
    /// Toe-in, degrees: the front turned in toward the stringer.
    pub toe: f64,
    /// Cant, degrees: tilted out toward the rail from square to the bottom.
    pub cant: f64,
    /// The box.
    pub pocket: Pocket,
}

/// The leash plug: a round pocket on the stringer, from the deck.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LeashPlug {
    /// From the tail to the plug's centre, mm.
    pub from_tail: f64,
    /// Pocket diameter, mm.
    pub diameter: f64,
    /// Pocket depth from the deck, mm.
    pub depth: f64,
}

/// The fins and the plug.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Fittings {
    /// The setup, when the description names one.
    pub setup: Option<FinSetup>,
    /// Each fin (side fins once for the pair).
    pub fins: Vec<Fin>,
    /// The leash plug.
    pub plug: Option<LeashPlug>,
}

/// One box on the board: a fin's pocket placed in plan.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlacedBox {
    /// Index in [`Fittings::fins`].
    pub fin: usize,
    /// -1 left (y < 0), 0 on the stringer, 1 right.
    pub side: i8,
    /// The box's front end on its centreline (x, y), mm.
    pub front: [f64; 2],
    /// Unit direction from the front end to the back, in plan.
    pub along: [f64; 2],
    /// The pocket.
    pub pocket: Pocket,
}

impl PlacedBox {
    /// The middle of the box in plan.
    pub fn middle(&self) -> [f64; 2] {
        let h = self.pocket.length / 2.0;
        [
            self.front[0] + self.along[0] * h,
            self.front[1] + self.along[1] * h,
        ]
    }

    /// The box's back end on its centreline.
    pub fn back(&self) -> [f64; 2] {
        let l = self.pocket.length;
        [
            self.front[0] + self.along[0] * l,
            self.front[1] + self.along[1] * l,
        ]
    }

    /// A point given in the box's own frame (u along from the front end,
    /// v across: toward +y for a box running straight aft) in plan.
    pub fn at(&self, u: f64, v: f64) -> [f64; 2] {
        let [ax, ay] = self.along;
        [
            self.front[0] + ax * u - ay * v,
            self.front[1] + ay * u + ax * v,
        ]
    }

    /// The pocket's outline in plan, offset `inset` inward (a rounded
    /// rectangle, its corners `per_corner` points each), closed: the first
    /// point is not repeated. Empty when the inset leaves nothing.
    pub fn outline(&self, inset: f64, per_corner: usize) -> Vec<[f64; 2]> {
        let p = &self.pocket;
        let (hl, hw) = (p.length / 2.0 - inset, p.width / 2.0 - inset);
        if hl <= 0.0 || hw <= 0.0 {
            return vec![];
        }
        let r = (p.corner_radius - inset).clamp(0.0, hw.min(hl));
        let n = per_corner.max(1);
        let mut pts = Vec::with_capacity(4 * (n + 1));
        // Corner centres in the box frame, counter-clockwise from aft-right.
        let corners = [
            (hl - r, hw - r, 0.0),
            (-(hl - r), hw - r, 90.0),
            (-(hl - r), -(hw - r), 180.0),
            (hl - r, -(hw - r), 270.0),
        ];
        for (cu, cv, a0) in corners {
            for k in 0..=n {
                let a = (a0 + 90.0 * k as f64 / n as f64).to_radians();
                let (u, v) = (cu + r * a.cos(), cv + r * a.sin());
                pts.push(self.at(u + p.length / 2.0, v));
                if r == 0.0 {
                    break;
                }
            }
        }
        pts
    }

    /// The pocket's area in plan, mm² (a rounded rectangle).
    pub fn area(&self) -> f64 {
        let p = &self.pocket;
        let r = p.corner_radius.min(p.width / 2.0).min(p.length / 2.0);
        p.length * p.width - (4.0 - std::f64::consts::PI) * r * r
    }
}

impl Fittings {
    /// Every box placed on a board `length` long whose outline's
    /// half-width at x is `half_width(x)`: a centre fin on the stringer, a
    /// side fin's pair mirrored, toe turning each side fin's front toward
    /// the stringer.
    pub fn boxes(&self, length: f64, half_width: impl Fn(f64) -> f64) -> Vec<PlacedBox> {
        let mut out = vec![];
        for (k, f) in self.fins.iter().enumerate() {
            let x = length - f.from_tail;
            if f.centre {
                out.push(PlacedBox {
                    fin: k,
                    side: 0,
                    front: [x, 0.0],
                    along: [1.0, 0.0],
                    pocket: f.pocket,
                });
                continue;
            }
            let y = half_width(x) - f.from_rail;
            let (s, c) = f.toe.to_radians().sin_cos();
            for side in [-1i8, 1] {
                let sd = side as f64;
                // Aft and outward: the front end sits nearer the stringer.
                out.push(PlacedBox {
                    fin: k,
                    side,
                    front: [x, sd * y],
                    along: [c, sd * s],
                    pocket: f.pocket,
                });
            }
        }
        out
    }

    /// The plug's centre in plan on a board `length` long.
    pub fn plug_at(&self, length: f64) -> Option<[f64; 2]> {
        self.plug.map(|p| [length - p.from_tail, 0.0])
    }
}
