//! A job as resolved: the stock (a flat block or a pre-rockered blank),
//! where the board sits in it, and each strategy's tool, feeds and steps.

use crate::model::curve::Curve;
use crate::model::machine::{Cutter, Tool};

/// The stock: a flat foam block, or a pre-rockered blank.
#[derive(Debug, Clone, PartialEq)]
pub struct Block {
    /// Along X.
    pub length: f64,
    /// Along Y.
    pub width: f64,
    /// Along Z: for a rockered blank, from its lowest bottom point to its
    /// highest deck point (the box it fits in).
    pub thickness: f64,
    /// The curves of a pre-rockered blank; `None` for a flat block.
    pub rocker: Option<BlankRocker>,
    /// A stringer down the stock's middle line, if it has one.
    pub stringer: Option<Stringer>,
    /// The plan shape as bought: (X from the nose end, width) at stations
    /// from end to end, centred on the stock's middle line, straight
    /// between them; `None` for a rectangle of `width`.
    pub plan: Option<Vec<[f64; 2]>>,
}

/// A stringer: a strip of wood (or another material) glued down the
/// middle of the blank, its whole thickness.
#[derive(Debug, Clone, PartialEq)]
pub struct Stringer {
    /// Across, mm.
    pub width: f64,
    /// What it is made of, as the shop names it.
    pub material: String,
}

/// A pre-rockered blank's bottom and deck along its length, as heights
/// above the flat table it lies on bottom down (the lowest bottom point at
/// 0), through the measured stations (monotone cubic, as the board's own
/// curves; see [`crate::model::curve`]).
#[derive(Debug, Clone, PartialEq)]
pub struct BlankRocker {
    /// The stations as given: X from the blank's nose end, bottom, deck.
    pub stations: Vec<[f64; 3]>,
    bottom: Curve,
    deck: Curve,
    /// How far the real blank may stand proud of its curves; the programs
    /// treat the stock as that much bigger wherever a rapid could meet it.
    pub allowance: f64,
}

impl BlankRocker {
    /// A blank from its stations (X, bottom, deck) and the curves through
    /// them, which the reader has checked: the deck above the bottom, the
    /// stations along the whole blank.
    pub fn new(stations: Vec<[f64; 3]>, bottom: Curve, deck: Curve, allowance: f64) -> Self {
        BlankRocker {
            stations,
            bottom,
            deck,
            allowance,
        }
    }
}

impl Block {
    /// A flat block.
    pub fn flat(length: f64, width: f64, thickness: f64) -> Block {
        Block {
            length,
            width,
            thickness,
            rocker: None,
            stringer: None,
            plan: None,
        }
    }

    /// The band a tool of radius `r` touches the stringer from: tool
    /// centres with Y within it (the stringer's half width plus `r` of the
    /// middle line, W / 2, the same after the flip); `None` without one.
    pub fn stringer_band(&self, r: f64) -> Option<[f64; 2]> {
        self.stringer.as_ref().map(|s| {
            let c = self.width / 2.0;
            let h = s.width / 2.0 + r;
            [c - h, c + h]
        })
    }

    /// The stock's width at X: its plan shape's, or `width`.
    pub fn width_at(&self, x: f64) -> f64 {
        let Some(p) = self.plan.as_deref().filter(|p| !p.is_empty()) else {
            return self.width;
        };
        let k = p
            .partition_point(|q| q[0] <= x)
            .clamp(1, p.len().max(2) - 1);
        if p.len() < 2 {
            return p[0][1];
        }
        let (a, b) = (p[k - 1], p[k]);
        let t = ((x - a[0]) / (b[0] - a[0]).max(1e-12)).clamp(0.0, 1.0);
        a[1] + t * (b[1] - a[1])
    }

    /// The stock's volume, mm³: its width at X times its height there
    /// (deck over bottom for a rockered blank), integrated along X by the
    /// trapezoid rule on a 1 mm grid (exact for a rectangle block).
    pub fn volume(&self) -> f64 {
        let n = self.length.ceil().max(1.0) as usize;
        let h = self.length / n as f64;
        let f = |x: f64| {
            let (d, b) = self.deck_bottom_z(x);
            self.width_at(x) * (d - b)
        };
        let inner: f64 = (1..n).map(|k| f(k as f64 * h)).sum();
        h * (0.5 * (f(0.0) + f(self.length)) + inner)
    }

    /// Setup-1 height (Z 0 at the highest deck point) of the stock's top
    /// and underside at X: the top face and −thickness for a flat block.
    pub fn deck_bottom_z(&self, x: f64) -> (f64, f64) {
        match &self.rocker {
            None => (0.0, -self.thickness),
            Some(r) => {
                let x = x.clamp(0.0, self.length);
                (
                    r.deck.eval(x) - self.thickness,
                    r.bottom.eval(x) - self.thickness,
                )
            }
        }
    }

    /// The stock's top at X as a side's setup sees it, and its underside
    /// (the flip turns the bottom curve up).
    pub fn top_under(&self, deck_up: bool, x: f64) -> (f64, f64) {
        let (d, b) = self.deck_bottom_z(x);
        if deck_up {
            (d, b)
        } else {
            (-self.thickness - b, -self.thickness - d)
        }
    }

    /// Where a side's Z0 is touched off: the X of the stock's highest
    /// point in that setup (the deck's highest point, or after the flip
    /// the bottom's lowest), sampled every millimetre; 0 for a flat block.
    pub fn zero_x(&self, deck_up: bool) -> f64 {
        if self.rocker.is_none() {
            return 0.0;
        }
        let n = self.length.ceil() as usize;
        let mut best = (f64::NEG_INFINITY, 0.0);
        for k in 0..=n {
            let x = (k as f64).min(self.length);
            let top = self.top_under(deck_up, x).0;
            if top > best.0 + 1e-9 {
                best = (top, x);
            }
        }
        best.1
    }

    /// The highest top of the stock over X from `x0` to `x1` in a setup
    /// (0 for a flat block). A rockered blank's curves are monotone
    /// between its stations (they do not overshoot them), so the highest
    /// point is at an end of the span or at a station inside it.
    pub fn top_max(&self, deck_up: bool, x0: f64, x1: f64) -> f64 {
        let (x0, x1) = (
            x0.min(x1).clamp(0.0, self.length),
            x0.max(x1).clamp(0.0, self.length),
        );
        let top = |x: f64| self.top_under(deck_up, x).0;
        let stations = self.rocker.as_ref().map_or(&[][..], |r| &r.stations[..]);
        stations
            .iter()
            .map(|s| s[0])
            .filter(|&x| x > x0 && x < x1)
            .map(top)
            .fold(top(x0).max(top(x1)), f64::max)
    }

    /// How much bigger than its curves the stock is treated where rapids
    /// are planned (0 for a flat block, whose faces are cut flat).
    pub fn allowance(&self) -> f64 {
        self.rocker.as_ref().map_or(0.0, |r| r.allowance)
    }
}

/// How the board is tilted about Y inside the block.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Pitch {
    /// The tilt that needs the least thickness.
    Auto,
    /// A given tilt in degrees (nose up positive).
    Degrees(f64),
}

/// How one strategy cuts.
#[derive(Debug, Clone, PartialEq)]
pub struct Pass {
    /// The tool.
    pub tool: Tool,
    /// Depth per level (roughing, outline).
    pub stepdown: f64,
    /// Distance between neighbouring passes (roughing).
    pub stepover: f64,
    /// Stock left on the part for the next strategy.
    pub leave: f64,
    /// Cutting feed, mm/min.
    pub feed: f64,
    /// Plunge feed, mm/min.
    pub plunge_feed: f64,
    /// Spindle speed, rpm.
    pub spindle: f64,
    /// Climb milling (else conventional), with the spindle turning clockwise.
    pub climb: bool,
    /// Angle of the zig-zag ramp that enters a roughing level, degrees.
    pub ramp_angle: f64,
}

/// Finishing, beyond a [`Pass`].
#[derive(Debug, Clone, PartialEq)]
pub struct Finish {
    /// Feeds, speeds and tool.
    pub pass: Pass,
    /// Scallop (cusp) height target.
    pub scallop: f64,
    /// Slope above which the rail band is finished by Z levels, degrees.
    pub steep_angle: f64,
    /// Chord tolerance along a pass.
    pub tolerance: f64,
    /// A smaller ball for the steep rail band, when the machine has one:
    /// the finishing tool then keeps to the gentler deck and bottom.
    pub rails: Option<RailPass>,
}

/// The rail band's own pass: Z levels with a smaller ball.
#[derive(Debug, Clone, PartialEq)]
pub struct RailPass {
    /// Feeds, speeds and tool.
    pub pass: Pass,
    /// Scallop (cusp) height target.
    pub scallop: f64,
}

impl Finish {
    /// The ball that finishes the rail band, and the scallop it leaves.
    pub fn rail_tool(&self) -> (&Pass, f64) {
        match &self.rails {
            Some(r) => (&r.pass, r.scallop),
            None => (&self.pass, self.scallop),
        }
    }
}

/// How the board is held while it is cut.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Holding {
    /// A band is cut round the outline; beyond it the stock stays whole
    /// as a frame, which holds the board by tabs at nose and tail and
    /// rests on the table after the flip.
    Frame,
    /// The stock lies in a cradle (the table for a flat block) in setup 1
    /// and deck down in a cradle cut to the board's deck in setup 2; all
    /// the stock off the board is cut away, no tabs. Needs no more than
    /// a blank's usual margins.
    Cradle,
}

/// A job, resolved against its machine.
#[derive(Debug, Clone, PartialEq)]
pub struct Job {
    /// The block, or `None` to size one from the board.
    pub stock: Option<Block>,
    /// Machine X, Y of the block's front-left corner on the table.
    pub table_position: [f64; 2],
    /// Tilt rule.
    pub pitch: Pitch,
    /// How the board is held.
    pub holding: Holding,
    /// Width of the band cut around the outline; beyond it the block stays
    /// whole and holds the board by its tabs (with a frame; see
    /// [`Job::band`]).
    pub frame: f64,
    /// How far each side cuts past the parting surface.
    pub overlap: f64,
    /// Tab width (across) and height (up), at nose and tail.
    pub tabs: [f64; 2],
    /// Registration hole diameter.
    pub hole_diameter: f64,
    /// Gap from each board tip to the nearer edge of its hole.
    pub hole_gap: f64,
    /// How far the holes go into the spoilboard.
    pub pin_depth: f64,
    /// Least stock kept above and below the board.
    pub skin: f64,
    /// Share of each cutting feed used where the tool touches the stringer.
    pub stringer_feed: f64,
    /// Roughing.
    pub roughing: Pass,
    /// Outline (separation) pass.
    pub outline: Pass,
    /// Finishing.
    pub finishing: Finish,
}

impl Job {
    /// How far from the outline the stock is cut away: the frame's band,
    /// or everything (infinite) when a cradle holds the board.
    pub fn band(&self) -> f64 {
        match self.holding {
            Holding::Frame => self.frame,
            Holding::Cradle => f64::INFINITY,
        }
    }
}

impl Pass {
    /// The cutter's shape.
    pub fn cutter(&self) -> Cutter {
        self.tool.cutter
    }
}
