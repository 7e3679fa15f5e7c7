//! The fins' boxes and the leash plug routed by the machine: each pocket
//! cleared level by level with a small flat end mill, from the inside out
//! (the wall last), every level following the surface so the floor stands
//! the pocket's depth under the bottom (or the deck) all along the box.
//! Fin boxes on the bottom setup, the plug on the deck setup.
//!
//! The walls are plumb in the setup (the router's Z, within the board's
//! few degrees of pitch of square to the bottom); a fin's cant is set by
//! the box or the fin when it is glassed in, as the order sheet says. A
//! flat end mill on the rocker's slope cuts the floor up to its radius
//! times the slope deeper at the low edge (0.4 mm with a 1/4 in tool on a
//! 7° tail rocker).

use crate::model::board::Board;
use crate::model::job::Block;
use crate::model::job::Pass;
use crate::model::machine::{Machine, Tool, ToolKind};
use crate::model::toolpath::{Step, Toolpath};
use crate::toolpath::setup::{Placement, Pose, Side, flip};

/// One pocket to route, in the board's coordinates.
#[derive(Debug, Clone, PartialEq)]
pub struct Recess {
    /// What it is ("side fin box", "leash plug").
    pub label: String,
    /// The setup it is cut in: the plug from the deck, boxes from the bottom.
    pub side: Side,
    /// Its plan outline offset inward by `inset` (board x, y), closed.
    shape: Shape,
    /// Depth into the foam.
    pub depth: f64,
}

#[derive(Debug, Clone, PartialEq)]
enum Shape {
    Slot(crate::model::fittings::PlacedBox),
    Round { centre: [f64; 2], diameter: f64 },
}

impl Recess {
    /// The plan outline moved `inset` inward, closed (first point not
    /// repeated); empty when nothing is left.
    pub fn outline(&self, inset: f64) -> Vec<[f64; 2]> {
        match &self.shape {
            Shape::Slot(b) => b.outline(inset, 6),
            Shape::Round { centre, diameter } => {
                let r = diameter / 2.0 - inset;
                if r <= 0.0 {
                    return vec![];
                }
                (0..72)
                    .map(|k| {
                        let a = std::f64::consts::TAU * k as f64 / 72.0;
                        [centre[0] + r * a.cos(), centre[1] + r * a.sin()]
                    })
                    .collect()
            }
        }
    }

    /// Plan area, mm².
    pub fn area(&self) -> f64 {
        match &self.shape {
            Shape::Slot(b) => b.area(),
            Shape::Round { diameter, .. } => std::f64::consts::PI * diameter * diameter / 4.0,
        }
    }

    /// The narrowest the pocket is, mm.
    pub fn narrowest(&self) -> f64 {
        match &self.shape {
            Shape::Slot(b) => b.pocket.width,
            Shape::Round { diameter, .. } => *diameter,
        }
    }
}

/// Every pocket of the board's fins and plug.
pub fn recesses(board: &Board) -> Vec<Recess> {
    let f = &board.fittings;
    let mut out: Vec<Recess> = board
        .fin_boxes()
        .into_iter()
        .map(|b| {
            let fin = &f.fins[b.fin];
            let which = match b.side {
                0 => String::new(),
                s if s < 0 => " (left)".into(),
                _ => " (right)".into(),
            };
            Recess {
                label: format!("{} fin box{which}", fin.role),
                side: Side::Bottom,
                depth: fin.pocket.depth,
                shape: Shape::Slot(b),
            }
        })
        .collect();
    if let (Some(c), Some(p)) = (board.plug_at(), f.plug) {
        out.push(Recess {
            label: "leash plug".into(),
            side: Side::Deck,
            depth: p.depth,
            shape: Shape::Round {
                centre: c,
                diameter: p.diameter,
            },
        });
    }
    out
}

/// The surface a recess is cut from at a plan point, board coordinates:
/// the bottom for a box, the deck for the plug.
fn surface(board: &Board, side: Side, x: f64, y: f64) -> f64 {
    let st = board.station(x);
    let y = y.abs().min(st.half_width);
    let rise = match side {
        Side::Bottom => st.bottom_rise(y),
        Side::Deck => st.deck_rise(y),
    };
    st.bottom + st.closing * rise
}

/// A board point in a setup's coordinates.
fn to_setup(pose: &Pose, block: &Block, side: Side, p: [f64; 3]) -> [f64; 3] {
    let q = pose.apply(p);
    match side {
        Side::Deck => q,
        Side::Bottom => flip(q, block),
    }
}

/// The pocket tool: the smallest flat end mill of the machine at most 80 %
/// of the narrowest pocket (common practice, no source: room to clear
/// chips), if there is one.
pub fn pocket_tool<'m>(machine: &'m Machine, recesses: &[Recess]) -> Option<&'m Tool> {
    let narrowest = recesses
        .iter()
        .map(Recess::narrowest)
        .fold(f64::INFINITY, f64::min);
    machine
        .tools
        .iter()
        .filter(|t| t.cutter.kind == ToolKind::Flat && 2.0 * t.cutter.radius <= 0.8 * narrowest)
        .min_by(|a, b| {
            a.cutter
                .radius
                .total_cmp(&b.cutter.radius)
                .then(a.id.cmp(&b.id))
        })
}

/// Feeds for a small end mill in foam (common practice, no source): 3 m/min
/// cutting, 0.6 m/min plunging, a tool's diameter a level, 40 % stepover,
/// 18,000 rpm (within the machine's range).
pub fn pocket_pass(tool: &Tool, machine: &Machine, climb: bool) -> Pass {
    let d = 2.0 * tool.cutter.radius;
    Pass {
        tool: tool.clone(),
        stepdown: d.min(tool.max_stepdown),
        stepover: 0.4 * d,
        leave: 0.0,
        feed: 3000.0,
        plunge_feed: 600.0,
        spindle: 18_000.0f64.clamp(machine.spindle_min, machine.spindle_max),
        climb,
        ramp_angle: crate::profiles::job::DEFAULT_RAMP_ANGLE,
    }
}

/// The toolpath routing every recess of `side`, or `None` when it has
/// none. Each pocket: the tool's wall ring and rings inward by the
/// stepover, innermost first, at levels that each follow the surface, down
/// to the floor; then up to `clearance`.
pub fn pocket_paths(
    board: &Board,
    recesses: &[Recess],
    place: &Placement,
    pass: &Pass,
    side: Side,
    clearance: f64,
) -> Option<Toolpath> {
    let mine: Vec<&Recess> = recesses.iter().filter(|r| r.side == side).collect();
    if mine.is_empty() {
        return None;
    }
    let r = pass.tool.cutter.radius;
    let inward = match side {
        Side::Bottom => 1.0,
        Side::Deck => -1.0,
    };
    let mut steps = vec![];
    for rec in mine {
        let mut rings = vec![];
        let mut inset = r;
        loop {
            let ring = rec.outline(inset);
            if ring.is_empty() {
                break;
            }
            rings.push(ring);
            inset += pass.stepover;
        }
        rings.reverse();
        // Each ring point's top (on the surface) and floor, setup coordinates.
        let rings: Vec<Vec<([f64; 3], [f64; 3])>> = rings
            .iter()
            .map(|ring| {
                let mut pts: Vec<([f64; 3], [f64; 3])> = ring
                    .iter()
                    .map(|&[x, y]| {
                        let z = surface(board, rec.side, x, y);
                        (
                            to_setup(&place.pose, &place.block, side, [x, y, z]),
                            to_setup(
                                &place.pose,
                                &place.block,
                                side,
                                [x, y, z + inward * rec.depth],
                            ),
                        )
                    })
                    .collect();
                if let Some(&first) = pts.first() {
                    pts.push(first);
                }
                pts
            })
            .collect();
        let Some(start) = rings.first().and_then(|r| r.first()).copied() else {
            continue;
        };
        let top = rings
            .iter()
            .flatten()
            .map(|p| p.0[2])
            .fold(f64::NEG_INFINITY, f64::max);
        steps.push(Step::Rapid([start.0[0], start.0[1], clearance]));
        steps.push(Step::Rapid([start.0[0], start.0[1], top + 3.0]));
        // Levels follow the surface under the ring; across the tool's
        // width the surface stands higher in a concave or on the rocker's
        // slope, so each level takes 80 % of the stepdown.
        let levels = (rec.depth / (0.8 * pass.stepdown)).ceil().max(1.0) as usize;
        for k in 1..=levels {
            let t = k as f64 / levels as f64;
            // Walls plumb in the setup (the router's Z): the ring stays
            // where it meets the surface, only its height goes down.
            let at = |(a, b): ([f64; 3], [f64; 3])| [a[0], a[1], a[2] + (b[2] - a[2]) * t];
            steps.push(Step::Plunge(at(start)));
            for ring in &rings {
                for &p in ring {
                    steps.push(Step::Cut(at(p)));
                }
            }
            // Back over the rings to the start for the next level.
            if k < levels {
                steps.push(Step::Cut(at(start)));
            }
        }
        if let Some(&Step::Cut(p)) = steps.last() {
            steps.push(Step::Rapid([p[0], p[1], clearance]));
        }
    }
    Some(Toolpath {
        label: match side {
            Side::Bottom => "fin boxes",
            Side::Deck => "leash plug",
        },
        pass: pass.clone(),
        steps,
    })
}

/// Every pocket of the board as the simulation measures it, in its
/// setup's coordinates for a board placed by `pose` in `block`.
pub fn zones(board: &Board, pose: &Pose, block: &Block) -> Vec<PocketZone> {
    recesses(board)
        .iter()
        .map(|r| PocketZone {
            label: r.label.clone(),
            side: r.side,
            outline: r
                .outline(0.0)
                .into_iter()
                .map(|[x, y]| {
                    let z = surface(board, r.side, x, y);
                    let p = to_setup(pose, block, r.side, [x, y, z]);
                    [p[0], p[1]]
                })
                .collect(),
            depth: r.depth,
            area: r.area(),
        })
        .collect()
}

/// A routed pocket as the simulation measures it: its plan outline in its
/// setup's coordinates, its depth and plan area.
#[derive(Debug, Clone, PartialEq)]
pub struct PocketZone {
    /// What it is.
    pub label: String,
    /// The setup it is cut in.
    pub side: Side,
    /// Plan outline, that setup's coordinates, closed.
    pub outline: Vec<[f64; 2]>,
    /// Depth, mm.
    pub depth: f64,
    /// Plan area, mm².
    pub area: f64,
}

impl PocketZone {
    /// Distance from a plan point to the outline's edge, mm.
    pub fn edge_distance(&self, p: [f64; 2]) -> f64 {
        let n = self.outline.len();
        (0..n)
            .map(|i| {
                let (a, b) = (self.outline[i], self.outline[(i + 1) % n]);
                let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
                let l2 = dx * dx + dy * dy;
                let t = if l2 > 0.0 {
                    (((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / l2).clamp(0.0, 1.0)
                } else {
                    0.0
                };
                ((a[0] + t * dx - p[0]).powi(2) + (a[1] + t * dy - p[1]).powi(2)).sqrt()
            })
            .fold(f64::INFINITY, f64::min)
    }

    /// Whether a plan point (that setup's coordinates) is inside.
    pub fn contains(&self, p: [f64; 2]) -> bool {
        let mut inside = false;
        let n = self.outline.len();
        for i in 0..n {
            let (a, b) = (self.outline[i], self.outline[(i + 1) % n]);
            if (a[1] > p[1]) != (b[1] > p[1])
                && p[0] < a[0] + (b[0] - a[0]) * (p[1] - a[1]) / (b[1] - a[1])
            {
                inside = !inside;
            }
        }
        inside
    }
}
