//! From a placed board to finished programs: toolpaths for both setups,
//! one program per setup and tool, the setup sheet, and the safety gates
//! that read each finished program back as text.

use crate::gcode::timing;
use crate::gcode::write::{self, CAUTIONS, Header, StringerFeed};
use crate::model::board::Board;
use crate::model::job::Job;
use crate::model::machine::{Machine, Tool};
use crate::model::mesh::Mesh;
use crate::model::toolpath::{Step, Toolpath};
use crate::toolpath::paths::{self, SetupPaths};
use crate::toolpath::pockets;
use crate::toolpath::setup::{self, CamError, Placement, Side};
use crate::units::{self, Unit};
use rayon::prelude::*;

mod gates;
mod header;
mod sheet;

pub use gates::check_text;
pub use header::{header_text, kept_line, pose_line, read_kept, read_pose, read_stock};
pub use sheet::setup_sheet;

/// The rail apex line of a resolved board, every 2 mm, for [`plan`].
pub fn apex_line(board: &crate::model::board::Board) -> Vec<[f64; 3]> {
    let n = (board.length / 2.0).ceil().max(1.0) as usize;
    (0..=n)
        .map(|k| {
            let x = board.length * k as f64 / n as f64;
            [x, 0.0, board.station(x).apex_height()]
        })
        .collect()
}

/// One finished program.
#[derive(Debug, Clone, PartialEq)]
pub struct Program {
    /// File name, e.g. `shortboard-1-deck-T1.nc`.
    pub file_name: String,
    /// Setup.
    pub side: Side,
    /// Tool (the first, with a changer).
    pub tool: Tool,
    /// Every tool it uses, in the order it calls them.
    pub tools: Vec<Tool>,
    /// What it cuts, in order.
    pub labels: Vec<&'static str>,
    /// The program text.
    pub text: String,
    /// Estimated run time, seconds.
    pub time_s: f64,
    /// Length of tool travel, mm.
    pub path_mm: f64,
}

/// Everything the cutting stage makes.
#[derive(Debug, Clone)]
pub struct CutPlan {
    /// Where the board sits.
    pub placement: Placement,
    /// Toolpaths per setup.
    pub setups: Vec<SetupPaths>,
    /// Programs in running order.
    pub programs: Vec<Program>,
    /// The setup sheet text.
    pub sheet: String,
    /// The fins' boxes and the plug routed, for the simulation to measure.
    pub pockets: Vec<pockets::PocketZone>,
}

/// Builds and checks the programs for a board mesh (nose at low X);
/// with the board's description (`design`), its fin boxes and leash plug
/// are routed too, when the machine has a flat end mill small enough.
#[allow(clippy::too_many_arguments)]
pub fn plan(
    name: &str,
    litres: f64,
    board: &Mesh,
    apex: Option<&[[f64; 3]]>,
    design: Option<&Board>,
    machine: &Machine,
    job: &Job,
    progress: &(dyn Fn(&str) + Sync),
) -> Result<CutPlan, CamError> {
    progress("placing the board");
    let placement = setup::place(board, apex, job)?;
    setup::fits_machine(&placement, machine, job)?;
    within_limits(&placement, job)?;
    // The two setups are independent: plan them side by side.
    let one = |side: Side| {
        paths::setup_paths(&placement, job, side, machine.clearance, &|s| {
            progress(&format!(
                "setup {} ({} up): {s}",
                side.number(),
                side.name()
            ))
        })
    };
    let (deck, bottom) = rayon::join(|| one(Side::Deck), || one(Side::Bottom));
    let mut setups = vec![deck, bottom];
    // The fins' boxes and the plug, last on their side.
    let recesses = design.map(pockets::recesses).unwrap_or_default();
    let mut pocket_zones = vec![];
    let mut pocket_note = None;
    if let (Some(b), false) = (design, recesses.is_empty()) {
        match pockets::pocket_tool(machine, &recesses) {
            Some(tool) => {
                let pass = pockets::pocket_pass(tool, machine, job.roughing.climb);
                for sp in &mut setups {
                    if let Some(p) = pockets::pocket_paths(
                        b,
                        &recesses,
                        &placement,
                        &pass,
                        sp.side,
                        machine.clearance,
                    ) {
                        sp.paths.push(p);
                    }
                }
                pocket_zones = pockets::zones(b, &placement.pose, &placement.block);
            }
            None => {
                pocket_note = Some(format!(
                    "fin boxes and leash plug: not routed, the machine has no flat end mill of at most {} (80 % of the narrowest pocket); rout them by hand or jig from the templates' marks, or add such a tool to the machine profile",
                    units::Both(
                        0.8 * recesses
                            .iter()
                            .map(pockets::Recess::narrowest)
                            .fold(f64::INFINITY, f64::min)
                    )
                ));
            }
        }
    }
    // One program for each setup's paths of a tool, written side by side.
    let programs: Vec<Program> = tool_groups(&setups, machine)
        .into_par_iter()
        .map(|(sp, g)| {
            let tool = g[0].pass.tool.clone();
            let (time_s, path_mm) = estimate(&g, machine, stringer_feed(&placement.block, job));
            let tools: Vec<String> = {
                let mut t: Vec<String> = g.iter().map(|p| p.pass.tool.describe()).collect();
                t.dedup();
                t
            };
            let file_name = if machine.tool_changer {
                format!("{name}-{}-{}.nc", sp.side.number(), sp.side.name())
            } else {
                format!(
                    "{name}-{}-{}-T{}.nc",
                    sp.side.number(),
                    sp.side.name(),
                    tool.id
                )
            };
            let b = &placement.block;
            let header = Header {
                lines: vec![
                    format!("blanksmith program {file_name}"),
                    format!("board {name}, {litres:.2} L"),
                    format!("setup {} of 2: {} up{}", sp.side.number(), sp.side.name(), if sp.side == Side::Bottom { ", after the flip about X onto the registration pins" } else { "" }),
                    format!("cuts: {}", g.iter().map(|p| p.label).collect::<Vec<_>>().join(", ")),
                    format!("tool: {}", tools.join("; ")),
                    match (b.rocker.is_some(), sp.side) {
                        (false, Side::Deck) => "zero: X0 Y0 at the front-left corner of the block's top face, Z0 on the top face (touch off the tool tip)".to_string(),
                        (true, Side::Deck) => format!("zero: X0 at the blank's nose end, Y0 on its front side, Z0 on its highest point in this setup, at X{:.1} (touch off the tool tip)", b.zero_x(true)),
                        (false, Side::Bottom) => format!("zero: X0 Y0 at the front-left corner of the block as in setup 1, Z0 on the spoilboard top, not on the block (its top should stand at Z{} if it is as thick as declared)", f1(b.thickness)),
                        (true, Side::Bottom) => format!("zero: X0 at the blank's nose end, Y0 on its front side, as in setup 1; Z0 on the spoilboard top, not on the blank (its highest point, at X{:.1}, should stand at Z{})", b.zero_x(false), f1(b.thickness)),
                    },
                    match b.rocker {
                        None if b.plan.is_some() => format!("stock: {} x {} x {} mm flat blank tapered in plan (L x W x T; its widths are in the job), front-left corner at machine X{:.1} Y{:.1}", f1(b.length), f1(b.width), f1(b.thickness), job.table_position[0], job.table_position[1]),
                        None => format!("stock: {} x {} x {} mm block (L x W x T), front-left corner at machine X{:.1} Y{:.1}", f1(b.length), f1(b.width), f1(b.thickness), job.table_position[0], job.table_position[1]),
                        Some(_) => format!("stock: {} x {} mm rockered blank, {} mm high overall, in a cradle cut to its {} curve, front-left corner at machine X{:.1} Y{:.1}", f1(b.length), f1(b.width), f1(b.thickness), if sp.side == Side::Deck { "bottom" } else { "deck" }, job.table_position[0], job.table_position[1]),
                    },
                    pose_line(&placement.pose),
                    kept_line(&setup::tab_rectangles(&placement, job)),
                    format!("units: {}; controller: {}; estimated run time {}", unit_name(machine.output), machine.controller.name(), duration(time_s)),
                ],
                cautions: CAUTIONS.iter().map(|s| s.to_string()).collect(),
            };
            // Setup 2 is written with Z0 on the table: every height raised
            // by the declared thickness.
            let dz = zero_shift(sp.side, b);
            let raised: Vec<Toolpath> = g.iter().map(|p| raise(p, dz)).collect();
            let raised: Vec<&Toolpath> = raised.iter().collect();
            let text = write::program(
                &header,
                &raised,
                machine,
                machine.clearance + dz,
                stringer_feed(b, job),
            );
            let mut used: Vec<Tool> = Vec::new();
            for p in &g {
                if used.last().is_none_or(|t| t.id != p.pass.tool.id) {
                    used.push(p.pass.tool.clone());
                }
            }
            Program {
                file_name,
                side: sp.side,
                tool,
                tools: used,
                labels: g.iter().map(|p| p.label).collect(),
                text,
                time_s,
                path_mm,
            }
        })
        .collect();
    let problems: Vec<Vec<String>> = programs
        .par_iter()
        .map(|p| check_text(p, machine, &placement, job))
        .collect();
    if let Some((p, problems)) = programs.iter().zip(problems).find(|(_, e)| !e.is_empty()) {
        return Err(CamError::Refused(format!(
            "{}: {}",
            p.file_name,
            problems.join("; ")
        )));
    }
    let mut sheet = setup_sheet(name, litres, &placement, &programs, machine, job);
    if let Some(note) = pocket_note {
        sheet.push_str(&format!("\nNOTE: {note}\n"));
    }
    Ok(CutPlan {
        placement,
        setups,
        programs,
        sheet,
        pockets: pocket_zones,
    })
}

/// Each setup's paths grouped by tool in cutting order (one group a setup
/// with a tool changer), with their setup: a program each.
fn tool_groups<'a>(
    setups: &'a [SetupPaths],
    machine: &Machine,
) -> Vec<(&'a SetupPaths, Vec<&'a Toolpath>)> {
    let mut groups = Vec::new();
    for sp in setups {
        let mut own: Vec<Vec<&Toolpath>> = Vec::new();
        for p in &sp.paths {
            match own.last_mut() {
                Some(g) if machine.tool_changer || g[0].pass.tool.id == p.pass.tool.id => g.push(p),
                _ => own.push(vec![p]),
            }
        }
        groups.extend(own.into_iter().map(|g| (sp, g)));
    }
    groups
}

/// How far a setup's program Z stand above the planner's own: 0 in setup
/// 1 (Z0 on the stock's top), the declared thickness in setup 2 (Z0 on the
/// spoilboard top, which the stock's original top rests on or is held to
/// by its cradle): so the bottom is cut from the table the deck side was
/// referenced to, and the board's thickness does not follow the block's.
pub fn zero_shift(side: Side, block: &crate::model::job::Block) -> f64 {
    match side {
        Side::Deck => 0.0,
        Side::Bottom => block.thickness,
    }
}

/// The stringer's feed reduction for a stock, if it has one.
fn stringer_feed(b: &crate::model::job::Block, job: &Job) -> Option<StringerFeed> {
    b.stringer.as_ref().map(|st| StringerFeed {
        centre: b.width / 2.0,
        half_width: st.width / 2.0,
        share: job.stringer_feed,
    })
}

/// A toolpath with every height raised by `dz`.
fn raise(p: &Toolpath, dz: f64) -> Toolpath {
    let up = |q: [f64; 3]| [q[0], q[1], q[2] + dz];
    Toolpath {
        label: p.label,
        pass: p.pass.clone(),
        steps: p
            .steps
            .iter()
            .map(|s| match *s {
                Step::Rapid(q) => Step::Rapid(up(q)),
                Step::Plunge(q) => Step::Plunge(up(q)),
                Step::Cut(q) => Step::Cut(up(q)),
                Step::Arc { to, centre, cw } => Step::Arc {
                    to: up(to),
                    centre,
                    cw,
                },
            })
            .collect(),
    }
}

fn f1(v: f64) -> String {
    format!("{v:.1}")
}

fn unit_name(u: Unit) -> &'static str {
    match u {
        Unit::Mm => "mm (G21)",
        Unit::In => "inch (G20)",
    }
}

/// `1 h 02 min 05 s`.
pub fn duration(s: f64) -> String {
    let t = s.round() as u64;
    let (h, m, sec) = (t / 3600, (t / 60) % 60, t % 60);
    if h > 0 {
        format!("{h} h {m:02} min {sec:02} s")
    } else {
        format!("{m} min {sec:02} s")
    }
}

/// Most finishing cutter positions a side, and most square millimetres of
/// block (the planner keeps a 1 mm height map of it): beyond these the run
/// would take minutes and gigabytes.
pub const MAX_POSITIONS: f64 = 40.0e6;
/// See [`MAX_POSITIONS`].
pub const MAX_BLOCK_AREA: f64 = 40.0e6;
/// Most Z levels the rail band may take through the block's thickness
/// (about a 0.03 mm scallop with a 1/2 in ball; see [`MAX_POSITIONS`]).
pub const MAX_RAIL_LEVELS: f64 = 300.0;

fn within_limits(p: &Placement, job: &Job) -> Result<(), CamError> {
    let b = &p.block;
    let area = b.length * b.width;
    if area > MAX_BLOCK_AREA {
        return Err(CamError::Limit(format!(
            "the block is {:.1} m² in plan; the planner's limit is {:.0} m²",
            area / 1e6,
            MAX_BLOCK_AREA / 1e6
        )));
    }
    let fin = &job.finishing;
    let s = paths::scallop_stepover(fin.pass.tool.cutter.corner, fin.scallop)
        * fin.steep_angle.to_radians().cos();
    let along = 0.5f64.min(s / 2.0);
    let r = fin.pass.tool.cutter.radius + 1.0;
    let positions =
        ((p.x_range[1] - p.x_range[0] + 2.0 * r) / along) * ((2.0 * (p.half_width + r)) / s);
    if positions > MAX_POSITIONS {
        return Err(CamError::Limit(format!(
            "finishing at a {:.3} mm scallop needs about {:.0} million cutter positions a side; the limit is {:.0} million: raise finishing.scallop",
            fin.scallop,
            positions / 1e6,
            MAX_POSITIONS / 1e6
        )));
    }
    let (rail, rail_scallop) = fin.rail_tool();
    let rail_dz = paths::scallop_stepover(rail.tool.cutter.radius, rail_scallop)
        * fin.steep_angle.to_radians().sin();
    let levels = b.thickness / rail_dz;
    if levels > MAX_RAIL_LEVELS {
        return Err(CamError::Limit(format!(
            "the rail band at a {:.3} mm scallop needs about {:.0} Z levels a side through the {:.0} mm block; the limit is {:.0}: raise {}.scallop",
            rail_scallop,
            levels,
            b.thickness,
            MAX_RAIL_LEVELS,
            if fin.rails.is_some() {
                "rails"
            } else {
                "finishing"
            }
        )));
    }
    Ok(())
}

/// Run time: a velocity plan over every move with the machine's axis
/// speeds and accelerations ([`timing`]): feed moves at most at their feed
/// (and the machine's Z feed on steep moves), rapids as fast as the axes go
/// together; plus the spindle's ramp.
fn estimate(paths: &[&Toolpath], m: &Machine, stringer: Option<StringerFeed>) -> (f64, f64) {
    let mut at = [0.0, 0.0, m.clearance];
    let mut len = 0.0;
    let mut moves = Vec::new();
    for p in paths {
        for &step in &p.steps {
            // Cuts split where they cross the stringer's band, as written.
            let pieces = match (step, stringer) {
                (Step::Cut(to), Some(sf)) => {
                    let band = sf.band(p.pass.tool.cutter.radius);
                    write::split_at_band(at, to, band)
                        .into_iter()
                        .map(|(q, slow)| (Step::Cut(q), if slow { sf.share } else { 1.0 }))
                        .collect::<Vec<_>>()
                }
                (s, _) => vec![(s, 1.0)],
            };
            for (s, share) in pieces {
                let (to, feed, arc) = match s {
                    Step::Rapid(to) => (to, None, None),
                    Step::Plunge(to) => (to, Some(p.pass.plunge_feed), None),
                    Step::Cut(to) => (to, Some(p.pass.feed * share), None),
                    Step::Arc { to, centre, .. } => (to, Some(p.pass.feed), Some(centre)),
                };
                let radius = arc.map(|c| ((at[0] - c[0]).powi(2) + (at[1] - c[1]).powi(2)).sqrt());
                let dxy = match radius {
                    // Full turns: the helix length is 2πr a turn.
                    Some(r) => 2.0 * std::f64::consts::PI * r,
                    None => ((to[0] - at[0]).powi(2) + (to[1] - at[1]).powi(2)).sqrt(),
                };
                let dz = to[2] - at[2];
                let d = (dxy * dxy + dz * dz).sqrt();
                len += d;
                if d > 0.0 {
                    let dir = match radius {
                        Some(_) => [dxy / d, 0.0, dz / d],
                        None => [(to[0] - at[0]) / d, (to[1] - at[1]) / d, dz / d],
                    };
                    let speed = match feed {
                        None => f64::INFINITY,
                        Some(f) => f.min(m.max_feed_z * d / dz.abs().max(1e-12)) / 60.0,
                    };
                    moves.push(timing::Move {
                        dir,
                        length: d,
                        speed,
                        radius,
                    });
                }
                at = to;
            }
        }
    }
    (
        m.spindle_ramp + timing::run_time(&moves, &timing::Limits::of(m)),
        len,
    )
}
