//! From a placed board to finished programs: toolpaths for both setups,
//! one program per setup and tool, the setup sheet, and the safety gates
//! that read each finished program back as text.

use std::io::BufReader;

use crate::gcode::read::{self, Event, Motion, ReadOptions};
use crate::gcode::timing;
use crate::gcode::write::{self, CAUTIONS, Header, StringerFeed};
use crate::model::board::Board;
use crate::model::job::{Block, Holding, Job};
use crate::model::limits::{Bed, ROUNDING};
use crate::model::machine::{Machine, Tool};
use crate::model::mesh::Mesh;
use crate::model::toolpath::{Step, Toolpath};
use crate::profiles::values::mm_text;
use crate::toolpath::paths::{self, SetupPaths};
use crate::toolpath::pockets;
use crate::toolpath::setup::{self, CamError, Placement, Pose, Side};
use crate::units::{self, Unit};

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
    let mut programs = Vec::new();
    for sp in &setups {
        // Group the paths by tool, in cutting order.
        let mut groups: Vec<Vec<&Toolpath>> = Vec::new();
        for p in &sp.paths {
            match groups.last_mut() {
                Some(g) if machine.tool_changer || g[0].pass.tool.id == p.pass.tool.id => g.push(p),
                _ => groups.push(vec![p]),
            }
        }
        for g in groups {
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
            programs.push(Program {
                file_name,
                side: sp.side,
                tool,
                tools: used,
                labels: g.iter().map(|p| p.label).collect(),
                text,
                time_s,
                path_mm,
            });
        }
    }
    for p in &programs {
        let problems = check_text(p, machine, &placement, job);
        if !problems.is_empty() {
            return Err(CamError::Refused(format!(
                "{}: {}",
                p.file_name,
                problems.join("; ")
            )));
        }
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
    let s = paths::scallop_stepover(fin.pass.tool.cutter.radius, fin.scallop)
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

/// The safety gates, on the program text as written: reads it back with
/// the project's reader and checks every move and setting.
pub fn check_text(p: &Program, m: &Machine, place: &Placement, job: &Job) -> Vec<String> {
    let b = &place.block;
    let mut problems: Vec<String> = Vec::new();
    let mut note = |s: String| {
        if problems.len() < 8 {
            problems.push(s);
        }
    };
    let mut first_move = true;
    let mut spindle_started = false;
    let dz = zero_shift(p.side, b);
    let bed = Bed {
        machine: m,
        zero_height: b.thickness - dz,
        table_position: job.table_position,
    };
    let result = read::read(
        BufReader::new(p.text.as_bytes()),
        &p.file_name,
        ReadOptions {
            controller: m.controller,
            ..Default::default()
        },
        |e| match e {
            Event::Move {
                line,
                motion,
                from,
                to,
                feed,
                spindle,
                spindle_on,
                ..
            } => {
                if first_move {
                    first_move = false;
                    if motion != Motion::Rapid
                        || to[0] != from[0]
                        || to[1] != from[1]
                        || to[2] < m.clearance + dz - ROUNDING
                    {
                        note(format!(
                            "line {line}: the first move must rise to clearance height"
                        ));
                    }
                }
                for q in [to] {
                    for why in bed.position(q) {
                        note(format!("line {line}: {why}"));
                    }
                    // Depth below the stock's top there (a rockered
                    // blank's top, with its allowance, is below Z 0 along
                    // its middle).
                    let top = b.top_under(p.side == Side::Deck, q[0]).0 + b.allowance() + dz;
                    if top - q[2] > p.tool.reach + ROUNDING {
                        note(format!(
                            "line {line}: Z {:.3} mm is {:.3} mm below the stock top there, deeper than T{} reaches below its holder ({})",
                            q[2],
                            top - q[2],
                            p.tool.id,
                            mm_text(p.tool.reach)
                        ));
                    }
                }
                if motion != Motion::Rapid {
                    if !spindle_on || spindle <= 0.0 {
                        note(format!("line {line}: a feed move with the spindle off"));
                    }
                    if !spindle_started {
                        note(format!(
                            "line {line}: a feed move before the spindle start and dwell"
                        ));
                    }
                    for why in bed.feed(from, to, feed) {
                        note(format!("line {line}: {why}"));
                    }
                }
                if let Some(why) = bed.spindle(spindle) {
                    note(format!("line {line}: {why}"));
                }
            }
            Event::Dwell { .. } => spindle_started = true,
            Event::Setting {
                line,
                spindle: Some(s),
                ..
            } => {
                if let Some(why) = bed.spindle(s) {
                    note(format!("line {line}: {why}"));
                }
            }
            _ => {}
        },
    );
    let lines: Vec<&str> = p.text.lines().collect();
    let mut problems: Vec<String> = problems
        .into_iter()
        .map(|s| {
            // Quote the line the problem is on.
            let n: Option<usize> = s
                .strip_prefix("line ")
                .and_then(|r| r.split(':').next())
                .and_then(|n| n.parse().ok());
            match n.and_then(|n| lines.get(n - 1)) {
                Some(text) => format!("{s} (`{text}`)"),
                None => s,
            }
        })
        .collect();
    match result {
        Err(e) => problems.push(format!("the program does not read back: {e}")),
        Ok(s) if s.missing_end => problems.push("the program has no M30 end".into()),
        Ok(_) => {}
    }
    problems
}

/// The setup sheet's numbered steps.
struct Steps {
    text: String,
    count: usize,
}

impl Steps {
    fn next(&mut self, step: String) {
        self.count += 1;
        self.text.push_str(&format!("{:>2}. {step}\n", self.count));
    }
}

/// The setup sheet: the steps in order, each program's tool, time and cautions.
pub fn setup_sheet(
    name: &str,
    litres: f64,
    place: &Placement,
    programs: &[Program],
    m: &Machine,
    job: &Job,
) -> String {
    let mut s = String::new();
    let both = |v: f64| units::Both(v).to_string();
    s.push_str(&format!(
        "SETUP SHEET: {name} ({litres:.2} L) on {}, a {} controller\n\n",
        m.name,
        m.controller.name()
    ));
    for c in CAUTIONS {
        s.push_str(c);
        s.push('\n');
    }
    s.push_str("\nFIT\n");
    for l in place.fit_lines() {
        s.push_str(&format!("  {l}\n"));
    }
    if let Some(st) = &place.block.stringer {
        s.push_str(&format!(
            "  stringer: {} {} down the middle (Y {:.1} mm); cutting feeds at {:.0} % where the tool touches it; holes{} beside it\n",
            both(st.width),
            st.material,
            place.block.width / 2.0,
            job.stringer_feed * 100.0,
            if job.holding == Holding::Frame { " and tabs" } else { "" }
        ));
    }
    let b = &place.block;
    let cradle = job.holding == Holding::Cradle;
    s.push_str("\nSTEPS\n");
    let mut st = Steps { text: s, count: 0 };
    fix_and_zero(&mut st, name, b, job);
    let mut flipped = false;
    for p in programs {
        if p.side == Side::Bottom && !flipped {
            flipped = true;
            flip(&mut st, name, place, job);
        }
        let load = if p.tools.len() > 1 {
            format!(
                "load {} in the changer and measure each one's length (the program calls them in that order with M6)",
                p.tools
                    .iter()
                    .map(|t| t.describe())
                    .collect::<Vec<_>>()
                    .join(", then ")
            )
        } else {
            format!("load {} and measure its length", p.tool.describe())
        };
        st.next(format!(
            "Setup {} ({} up): {load}; run {} ({}); about {}.",
            p.side.number(),
            p.side.name(),
            p.file_name,
            p.labels.join(", "),
            duration(p.time_s)
        ));
        if p.labels.contains(&"registration holes") {
            st.next("Leave the pins out until the flip; clean the chips out of the holes.".into());
        }
    }
    if !cradle {
        st.next(format!(
                "Remove the tabs: the board is held at nose and tail by tabs {} wide and {} high; cut them with a fine saw and sand them fair by hand.",
                both(job.tabs[0]),
                both(job.tabs[1])
            ));
    }
    st.next("Sand the scallops and the parting line at the rail apex by hand.".into());
    let mut s = st.text;
    s.push_str("\nPROGRAMS\n");
    for p in programs {
        s.push_str(&format!(
            "  {}: {}, {}, {}\n",
            p.file_name,
            p.tool.describe(),
            p.labels.join(" + "),
            duration(p.time_s)
        ));
    }
    s
}

/// The steps that fix the stock for setup 1 and set its zero.
fn fix_and_zero(st: &mut Steps, name: &str, b: &Block, job: &Job) {
    let both = |v: f64| units::Both(v).to_string();
    let rockered = b.rocker.is_some();
    let cradle = job.holding == Holding::Cradle;
    let (what, hold) = if rockered {
        (
            format!(
                "the {} x {} rockered blank ({} high overall) bottom down in a cradle cut to its bottom curve (the job's stations: {name}.cradle-1.svg, full size in {name}.cradles.pdf), its lowest point on the spoilboard, its nose end and front side",
                both(b.length),
                both(b.width),
                both(b.thickness)
            ),
            "lift, rock or slide (clamps outside the cut band: between cuts the tool crosses the blank's low middle at the clearance above the blank's own top there, not above Z0, so nothing may stand above the blank over the cut band)",
        )
    } else {
        (
            format!(
                "the {} x {} x {} block flat on the spoilboard, its front-left corner",
                both(b.length),
                both(b.width),
                both(b.thickness)
            ),
            "lift or slide (clamps outside the cut band, or vacuum)",
        )
    };
    let hold = if cradle {
        "lift, rock or slide, by vacuum through the cradle or spoilboard: the programs cut away all the stock round the board, out past its edges, so no clamp may stand on it or beside it"
    } else {
        hold
    };
    st.next(format!(
            "Fix the blank: {what} at machine X {:.1} mm, Y {:.1} mm, long side along X. Hold it so it cannot {hold}.",
            job.table_position[0], job.table_position[1]
        ));
    if rockered {
        st.next(format!(
                "Set zero: X0 at the blank's nose end, Y0 on its front side, Z0 on the deck's highest point, at X {}, with each tool's tip. Check the tool length after every tool change.",
                both(b.zero_x(true))
            ));
    } else {
        st.next("Set zero: X0 Y0 on the block's front-left corner, Z0 on its top face with each tool's tip. Check the tool length after every tool change.".into());
    }
}

/// The steps that turn the stock over onto its pins and set setup 2's Z0
/// on the spoilboard.
fn flip(st: &mut Steps, name: &str, place: &Placement, job: &Job) {
    let both = |v: f64| units::Both(v).to_string();
    let b = &place.block;
    let rockered = b.rocker.is_some();
    let cradle = job.holding == Holding::Cradle;
    let holes = place
        .holes
        .iter()
        .map(|h| format!("X {:.1} mm Y {:.1} mm", h[0], h[1]))
        .collect::<Vec<_>>()
        .join(", ");
    let n_holes = place.holes.len();
    if cradle {
        st.next(format!(
                "Flip: lift the {stock} off, turn it over about its long (X) axis, and set it deck down in the deck cradle (cut to the board's deck as designed, which setup 1 cut: {name}.cradle-2.svg, full size in {name}.cradles.pdf), on pins in the {n_holes} registration holes ({holes}), through the stock and {:.1} mm into {under}: the pins stand at the same machine X, Y. Pins must not stand above the stock. The pins register the stock until the roughing clears the margin round the board; from then the board lies free in the cradle: hold it down by vacuum through the cradle or by the shop's own hold-downs away from the cut, never by hand.",
                job.pin_depth,
                stock = if rockered { "blank" } else { "block" },
                under = if rockered {
                    "the first cradle"
                } else {
                    "the spoilboard"
                },
            ));
    } else if rockered {
        st.next(format!(
                "Flip: lift the blank off, turn it over about its long (X) axis, and set it deck down in a second cradle cut to its deck curve ({name}.cradle-2.svg), on pins in the {n_holes} registration holes ({holes}), drilled through the blank and {:.1} mm into the first cradle: the second cradle's pin holes stand at the same machine X, Y. Pins must not stand above the blank.",
                job.pin_depth
            ));
    } else {
        st.next(format!(
                "Flip: lift the block off, turn it over about its long (X) axis, and set it back on pins in the {n_holes} registration holes ({holes}), through the block and {:.1} mm into the spoilboard. The front-left corner is again at the same machine X, Y. Pins must not stand above the block's top face.",
                job.pin_depth
            ));
    }
    st.next(format!(
            "Set Z0 on the spoilboard top (touch the tool tip off on the spoilboard beside the stock), not on the stock; X0 Y0 are unchanged. Setup 2 cuts from the table the first setup's top now rests on{}, so the board's thickness does not follow the stock's: a stock thicker or thinner than declared only moves its top (declared: {} above the spoilboard{}).",
            if cradle || rockered {
                " or is held to by its cradle"
            } else {
                ""
            },
            both(b.thickness),
            if rockered {
                format!(", at its highest point, X {}", both(b.zero_x(false)))
            } else {
                String::new()
            }
        ));
}

/// The header line that records where the design sits in the block, read
/// back by [`read_pose`].
pub fn pose_line(p: &Pose) -> String {
    format!(
        "placement: the design turned {:.6} deg about Y round its point X{:.4} Y{:.4} Z{:.4}, which stands at X{:.4} Y{:.4} Z{:.4} in setup 1 (mm)",
        p.pitch,
        p.centre[0],
        p.centre[1],
        p.centre[2],
        p.centre_at[0],
        p.centre_at[1],
        p.centre_at[2]
    )
}

/// The header line that records the tabs' rectangles (setup 1, mm), read
/// back by [`read_kept`]; `[]` without tabs.
pub fn kept_line(rects: &[[[f64; 2]; 2]]) -> String {
    let list: Vec<String> = rects
        .iter()
        .map(|[lo, hi]| format!("X{:.4} Y{:.4} to X{:.4} Y{:.4}", lo[0], lo[1], hi[0], hi[1]))
        .collect();
    format!(
        "left standing on purpose (tabs and the ball's reach round them, setup 1, mm): [{}]",
        list.join("; ")
    )
}

/// The rectangles [`kept_line`] recorded, if the header has the line.
pub fn read_kept(header: &str) -> Option<Vec<[[f64; 2]; 2]>> {
    let (_, rest) = header.split_once("setup 1, mm-: [")?;
    let (list, _) = rest.split_once(']')?;
    if list.trim().is_empty() {
        return Some(vec![]);
    }
    list.split(';')
        .map(|r| {
            let (a, b) = r.split_once(" to ")?;
            let lo = axis_words::<2>(a)?;
            let hi = axis_words::<2>(b)?;
            Some([lo, hi])
        })
        .collect()
}

/// A program's leading comments as one text (wrapped comments, as GRBL
/// programs carry them, joined back at their spaces).
pub fn header_text(program: &str) -> String {
    let mut parts = vec![];
    for line in program.lines() {
        let t = line.trim();
        if t.is_empty() || t == "%" || (t.starts_with('O') && !t.contains('(')) {
            continue;
        }
        match t.strip_prefix('(').and_then(|c| c.strip_suffix(')')) {
            Some(c) if !c.contains(['(', ')']) => parts.push(c.trim()),
            _ => break,
        }
    }
    parts.join(" ")
}

/// The numbers after `X`, `Y` (and `Z`) in the words that open `text`.
fn axis_words<const N: usize>(text: &str) -> Option<[f64; N]> {
    let mut v = [0.0f64; N];
    let mut words = text.split_whitespace();
    for (k, axis) in ['X', 'Y', 'Z'].into_iter().take(N).enumerate() {
        let w = words.next()?.trim_end_matches([',', ')']);
        v[k] = w.strip_prefix(axis)?.parse().ok()?;
    }
    v.iter()
        .all(|c: &f64| c.is_finite() && c.abs() <= 100_000.0)
        .then_some(v)
}

/// The placement a program's header records ([`pose_line`]), if it has
/// one; `header` is [`header_text`]'s.
pub fn read_pose(header: &str) -> Option<Pose> {
    let (_, line) = header.split_once("placement: the design turned ")?;
    let (pitch, rest) = line.split_once(" deg about Y round its point ")?;
    let (from, to) = rest.split_once(", which stands at ")?;
    let pitch: f64 = pitch.trim().parse().ok()?;
    (pitch.is_finite() && pitch.abs() <= 90.0).then_some(())?;
    Some(Pose {
        pitch,
        centre: axis_words(from)?,
        centre_at: axis_words(to)?,
    })
}

/// The flat block a program's header records (`stock: L x W x T mm block
/// …, front-left corner at machine X… Y…`): the block and its table
/// position. A blank (rockered, or tapered in plan) is not rebuilt from a
/// header: `None` with what is missing.
pub fn read_stock(header: &str) -> Result<Option<(Block, [f64; 2])>, String> {
    let Some((_, line)) = header.split_once("stock: ") else {
        return Ok(None);
    };
    let bad = || "the stock in the programs' header is not readable".to_string();
    let (sizes, rest) = line.split_once(" mm ").ok_or_else(bad)?;
    if rest.starts_with("rockered blank") || rest.starts_with("flat blank tapered in plan") {
        return Err(
            "the programs were cut from a shaped blank, whose shape is not in their header".into(),
        );
    }
    if !rest.starts_with("block") {
        return Err(bad());
    }
    let v: Vec<f64> = sizes
        .split(" x ")
        .map(|t| t.trim().parse::<f64>())
        .collect::<Result<_, _>>()
        .map_err(|_| bad())?;
    let [l, w, t] = v[..] else { return Err(bad()) };
    if !(l > 0.0 && w > 0.0 && t > 0.0 && l.max(w).max(t) <= 20_000.0) {
        return Err(bad());
    }
    let (_, at) = rest
        .split_once("front-left corner at machine ")
        .ok_or_else(bad)?;
    let xy = axis_words::<2>(at).ok_or_else(bad)?;
    Ok(Some((Block::flat(l, w, t), xy)))
}
