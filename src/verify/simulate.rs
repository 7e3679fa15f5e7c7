//! Verification of programs before they run: each program streamed through
//! the reader into the height map of the stock, both setups with the flip
//! between, and what that shows: rapids into stock, moves outside the
//! machine, cutting with the spindle off, feeds and speeds beyond the
//! machine, cuts deeper than the tool allows, and, against a design, the
//! deepest gouge and the leftover stock.

use std::io::BufRead;

use crate::gcode::read::{self, Event, GcodeError, Motion, ReadOptions};
use crate::gcode::timing;
use crate::geom::dropcutter::DropCutter;
use crate::model::job::Block;
use crate::model::limits::Bed;
use crate::model::machine::{Cutter, Machine, ToolKind};
use crate::model::mesh::Mesh;
use crate::toolpath::pockets::PocketZone;
use crate::toolpath::setup::{Placement, Side, flip_mesh};

use crate::geom::zmap::{Sweep, ZMap};

/// A program to verify.
pub struct ProgramSource<'a> {
    /// Name in messages (the file).
    pub name: String,
    /// Which setup it runs in.
    pub side: Side,
    /// Its text, streamed.
    pub reader: Box<dyn BufRead + 'a>,
    /// The tool in the spindle when it starts (from the machine's list),
    /// for a controller whose programs name none (GRBL: one program per
    /// tool, loaded by hand as the setup sheet says).
    pub loaded: Option<u32>,
}

/// Where and with what the programs run.
pub struct Setting<'a> {
    /// The machine.
    pub machine: &'a Machine,
    /// The stock block, X 0..L, Y 0..W, Z -T..0 in program coordinates.
    pub block: Block,
    /// Machine X, Y of the block's front-left corner.
    pub table_position: [f64; 2],
    /// Tool for programs that do not name one in the machine's list.
    pub default_tool: Option<Cutter>,
    /// The design in setup-1 program coordinates, to measure against.
    pub design: Option<&'a Mesh>,
    /// Plan rectangles (min, max corners, setup-1 coordinates) left on
    /// purpose, e.g. the tabs: not counted as leftover.
    pub keep: Vec<[[f64; 2]; 2]>,
    /// Setup 2's program zero is on the spoilboard top (the table), not on
    /// the turned stock's new top: its Z are heights above the table, and
    /// the turned stock's top stands at its real thickness.
    pub table_zero_after_flip: bool,
    /// For programs planned here: the placement and the parting overlap,
    /// whose floor (the parting surface less the overlap) no tool tip goes
    /// below, so the rail just above the parting line is out of the ball's
    /// reach.
    pub floor: Option<(&'a Placement, f64)>,
    /// Pockets cut into the design on purpose (fin boxes, the plug): not
    /// counted as gouges; each measured instead.
    pub pockets: Vec<PocketZone>,
}

/// Verification options.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct VerifyOptions {
    /// Height-map cell, mm.
    pub cell: f64,
    /// Skip words outside the subset instead of refusing them.
    pub lenient: bool,
    /// Deepest gouge accepted, mm (normal to the surface).
    pub gouge_tolerance: f64,
}

impl Default for VerifyOptions {
    fn default() -> Self {
        VerifyOptions {
            cell: 0.5,
            lenient: false,
            gouge_tolerance: 0.05,
        }
    }
}

/// One finding, at a line.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Finding {
    /// The program.
    pub program: String,
    /// Line (1-based).
    pub line: usize,
    /// What happened.
    pub what: String,
    /// Where (X, Y) in program coordinates, mm.
    pub at: [f64; 2],
}

/// A pocket as the simulation cut it.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PocketReport {
    /// What it is.
    pub label: String,
    /// Setup 1 or 2.
    pub setup: u8,
    /// Designed depth, mm.
    pub depth_mm: f64,
    /// The median depth below the design over the cells inside, mm.
    pub depth_median_mm: f64,
    /// The deepest, mm.
    pub depth_max_mm: f64,
    /// Plan area cut to at least half the depth (cells x cell area), mm².
    pub area_mm2: f64,
    /// Designed plan area, mm².
    pub design_area_mm2: f64,
    /// Foam removed below the design surface, ml.
    pub volume_ml: f64,
}

/// What each program does.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ProgramReport {
    /// The program.
    pub name: String,
    /// Setup 1 or 2.
    pub setup: u32,
    /// Lines read.
    pub lines: usize,
    /// Estimated run time, s.
    pub time_estimate_s: f64,
    /// Tool travel, mm.
    pub path_length_mm: f64,
    /// Stock removed, L.
    pub removed_volume_litres: f64,
    /// Words skipped (lenient reading).
    pub skipped: Vec<String>,
}

/// The verification, in numbers.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Verification {
    /// Rapid moves that touched uncut stock.
    pub collisions: Vec<Finding>,
    /// Moves outside the machine's travel or below the table top.
    pub out_of_envelope: Vec<Finding>,
    /// Cutting moves with the spindle stopped.
    pub spindle_off_cuts: Vec<Finding>,
    /// Feeds or speeds beyond the machine, cuts deeper than the tool allows.
    pub limits: Vec<Finding>,
    /// Deepest gouge into the design, mm (normal to the surface), when a design is given.
    pub gouge_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub gouge_at: Option<[f64; 3]>,
    /// Most stock left on the design, mm (normal).
    pub leftover_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub leftover_at: Option<[f64; 3]>,
    /// 95th percentile of the leftover, mm.
    pub leftover_p95_mm: Option<f64>,
    /// Most stock left where the side's finishing ball can touch the
    /// design, mm: what the scallop target is about.
    pub leftover_reachable_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub leftover_reachable_at: Option<[f64; 3]>,
    /// Plan area the finishing ball cannot reach (a notch, a corner
    /// tighter than the ball) with stock left on it, mm².
    pub unreachable_mm2: f64,
    /// The most stock left there, mm, and where (X, Y, setup).
    pub unreachable_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub unreachable_at: Option<[f64; 3]>,
    /// Gouge tolerance used, mm.
    pub gouge_tolerance_mm: f64,
    /// All stock removed, L.
    pub removed_volume_litres: f64,
    /// Whole run time estimate, s.
    pub time_estimate_s: f64,
    /// Whole tool travel, mm.
    pub path_length_mm: f64,
    /// Height-map cell, mm.
    pub cell_mm: f64,
    /// Where the block and the design's placement came from, when the
    /// caller says (`verify` from anywhere); none for a `make` or `cut` run.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub basis: Option<String>,
    /// Per program.
    pub programs: Vec<ProgramReport>,
    /// Each pocket cut into the design on purpose, as simulated.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub pockets: Vec<PocketReport>,
    /// Deviation maps (setup 1, setup 2) for pictures; not in the JSON.
    #[serde(skip)]
    pub maps: Vec<DeviationMap>,
}

/// Signed deviation from the design per cell, in a setup's coordinates:
/// positive is stock left, negative a gouge; NaN off the design; the
/// stock's presence where there is no design.
#[derive(Debug, Clone, PartialEq)]
pub struct DeviationMap {
    /// Setup.
    pub side: Side,
    /// Grid origin, cell and size.
    pub origin: [f64; 2],
    /// Cell size.
    pub cell: [f64; 2],
    /// Cells in X and Y.
    pub dims: [usize; 2],
    /// Deviation, mm, or NaN where the design is absent.
    pub deviation: Vec<f32>,
    /// Whether stock remains (for cells off the design).
    pub stock: Vec<bool>,
    /// Cells with more than [`REACH_CHECKED_MM`] left that the side's
    /// finishing ball cannot touch (empty when the side had no ball).
    pub unreachable: Vec<bool>,
}

/// Leftover above which a cell is checked for reach by the ball.
pub const REACH_CHECKED_MM: f64 = 0.05;

impl Verification {
    /// Whether anything must stop the job.
    pub fn has_findings(&self) -> bool {
        !self.collisions.is_empty()
            || !self.out_of_envelope.is_empty()
            || !self.spindle_off_cuts.is_empty()
            || !self.limits.is_empty()
            || self
                .gouge_max_mm
                .is_some_and(|g| g > self.gouge_tolerance_mm)
    }

    /// The text report: the verdict, then what to look at.
    pub fn text(&self) -> String {
        use std::fmt::Write as _;
        let mut s = String::new();
        let verdict = if self.has_findings() {
            "FINDINGS: do not run these programs as they are"
        } else if self.gouge_max_mm.is_some() {
            "clean: no collision, no move outside the machine, no cut with the spindle off, no gouge beyond tolerance"
        } else {
            "clean: no collision, no move outside the machine, no cut with the spindle off; gouges not checked (no design given: give --design or --job)"
        };
        let _ = writeln!(s, "verification ({} mm cells): {verdict}", self.cell_mm);
        if let Some(b) = &self.basis {
            let _ = writeln!(s, "  {b}");
        }
        for (name, list) in [
            ("rapid into stock", &self.collisions),
            ("outside the machine", &self.out_of_envelope),
            ("cutting with the spindle off", &self.spindle_off_cuts),
            ("beyond a limit", &self.limits),
        ] {
            if list.is_empty() {
                continue;
            }
            let _ = writeln!(
                s,
                "{} {name}{}:",
                list.len(),
                if list.len() >= MAX_FINDINGS {
                    " or more"
                } else {
                    ""
                }
            );
            for f in list.iter().take(10) {
                let _ = writeln!(
                    s,
                    "  {}:{}: {} at X {:.1} Y {:.1} mm",
                    f.program, f.line, f.what, f.at[0], f.at[1]
                );
            }
        }
        if let (Some(g), Some(at)) = (self.gouge_max_mm, self.gouge_at) {
            let _ = writeln!(
                s,
                "deepest gouge {g:.3} mm (tolerance {:.3} mm) at X {:.1} Y {:.1} mm in setup {}",
                self.gouge_tolerance_mm, at[0], at[1], at[2]
            );
        }
        if let (Some(l), Some(p95), Some(at)) =
            (self.leftover_max_mm, self.leftover_p95_mm, self.leftover_at)
        {
            let _ = writeln!(
                s,
                "stock left on the board: 95 % of it under {p95:.3} mm, at most {l:.3} mm at X {:.1} Y {:.1} mm in setup {}: look there when sanding",
                at[0], at[1], at[2]
            );
        }
        if let (Some(l), Some(at)) = (self.leftover_reachable_max_mm, self.leftover_reachable_at)
            && self.unreachable_mm2 > 0.0
        {
            let _ = writeln!(
                s,
                "where the finishing ball reaches: at most {l:.3} mm left, at X {:.1} Y {:.1} mm in setup {}",
                at[0], at[1], at[2]
            );
        }
        if let (Some(l), Some(at)) = (self.unreachable_max_mm, self.unreachable_at) {
            let _ = writeln!(
                s,
                "the finishing ball cannot reach {:.1} cm² (a notch, a corner tighter than the ball, the rail just above the parting line): up to {l:.3} mm left there, the most at X {:.1} Y {:.1} mm in setup {}: finish it by hand or with a smaller tool",
                self.unreachable_mm2 / 100.0,
                at[0],
                at[1],
                at[2]
            );
        }
        for p in &self.pockets {
            let _ = writeln!(
                s,
                "pocket {} (setup {}): {:.2} mm deep at the median, {:.2} mm at most (designed {:.2} mm), {:.0} mm² cut (designed {:.0} mm²), {:.1} ml",
                p.label,
                p.setup,
                p.depth_median_mm,
                p.depth_max_mm,
                p.depth_mm,
                p.area_mm2,
                p.design_area_mm2,
                p.volume_ml
            );
        }
        let _ = writeln!(
            s,
            "removed {:.2} L of foam; tool travel {:.1} m; estimated run time {}",
            self.removed_volume_litres,
            self.path_length_mm / 1000.0,
            crate::gcode::program::duration(self.time_estimate_s)
        );
        for p in &self.programs {
            let _ = writeln!(
                s,
                "  setup {} {}: {} lines, {}, removes {:.2} L{}",
                p.setup,
                p.name,
                p.lines,
                crate::gcode::program::duration(p.time_estimate_s),
                p.removed_volume_litres,
                if p.skipped.is_empty() {
                    String::new()
                } else {
                    format!(", {} words skipped", p.skipped.len())
                }
            );
        }
        s
    }

    /// The JSON report.
    pub fn to_json(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).expect("a report serialises");
        s.push('\n');
        s
    }
}

/// Most findings of one kind kept (the count is still right in the text).
const MAX_FINDINGS: usize = 200;

/// Moves applied to the map at a time: memory stays bounded however long
/// the program is.
const CHUNK: usize = 16_384;

struct Meta {
    line: usize,
    motion: Motion,
    spindle_on: bool,
    max_stepdown: Option<f64>,
}

/// Simulates the programs in order (setup 1, the flip, setup 2).
pub fn verify(
    programs: Vec<ProgramSource<'_>>,
    setting: &Setting,
    options: VerifyOptions,
    progress: &dyn Fn(&str),
) -> Result<Verification, GcodeError> {
    let b = &setting.block;
    let m = setting.machine;
    let mut bed = Bed {
        machine: m,
        zero_height: b.thickness,
        table_position: setting.table_position,
    };
    let mut map = ZMap::of_stock(b, true, options.cell, 0.0).map_err(|e| GcodeError {
        file: "(stock)".into(),
        line: 0,
        column: 0,
        message: e,
        hint: "use a coarser --cell".into(),
    })?;
    let start_volume = map.volume();
    let mut v = Verification {
        collisions: vec![],
        out_of_envelope: vec![],
        spindle_off_cuts: vec![],
        limits: vec![],
        gouge_max_mm: None,
        gouge_at: None,
        leftover_max_mm: None,
        leftover_at: None,
        leftover_p95_mm: None,
        leftover_reachable_max_mm: None,
        leftover_reachable_at: None,
        unreachable_mm2: 0.0,
        unreachable_max_mm: None,
        unreachable_at: None,
        gouge_tolerance_mm: options.gouge_tolerance,
        removed_volume_litres: 0.0,
        time_estimate_s: 0.0,
        path_length_mm: 0.0,
        cell_mm: options.cell,
        basis: None,
        programs: vec![],
        pockets: vec![],
        maps: vec![],
    };
    let mut side = Side::Deck;
    let mut top1: Option<Vec<f32>> = None;
    // The smallest ball that cut on each side: what finished it.
    let mut balls: [Option<f64>; 2] = [None, None];
    for src in programs {
        if src.side == Side::Bottom && side == Side::Deck {
            side = Side::Bottom;
            top1 = Some(map.top.clone());
            map = flipped(&map, b.thickness);
            if setting.table_zero_after_flip {
                bed.zero_height = 0.0;
            }
        }
        // Program Z less this is the simulation's own (zero on the turned
        // stock's top, the table at minus its thickness).
        let shift = if side == Side::Bottom && setting.table_zero_after_flip {
            b.thickness
        } else {
            0.0
        };
        progress(&format!("simulating {}", src.name));
        let before = map.volume();
        let name = src.name.clone();
        let mut report = ProgramReport {
            name: name.clone(),
            setup: side.number(),
            lines: 0,
            time_estimate_s: 0.0,
            path_length_mm: 0.0,
            removed_volume_litres: 0.0,
            skipped: vec![],
        };
        let mut sweeps: Vec<Sweep> = Vec::with_capacity(CHUNK);
        let mut metas: Vec<Meta> = Vec::with_capacity(CHUNK);
        let loaded = src.loaded.and_then(|id| m.tool(id));
        let mut cutter: Option<Cutter> = loaded.map(|t| t.cutter).or(setting.default_tool);
        let mut stepdown: Option<f64> = loaded.map(|t| t.max_stepdown);
        let mut missing_tool: Option<usize> = None;
        let mut findings = Findings {
            v: &mut v,
            program: &name,
        };
        let flush =
            |map: &mut ZMap, sweeps: &mut Vec<Sweep>, metas: &mut Vec<Meta>, f: &mut Findings| {
                let touches = map.cut(sweeps);
                for (t, meta) in touches.iter().zip(metas.iter()) {
                    if t.depth <= 0.01 {
                        continue;
                    }
                    if meta.motion == Motion::Rapid {
                        f.push(
                            Kind::Collision,
                            meta.line,
                            format!("rapid (G0) through stock, {:.2} mm deep", t.depth),
                            t.at,
                        );
                    } else if !meta.spindle_on {
                        f.push(
                            Kind::SpindleOff,
                            meta.line,
                            format!("cut {:.2} mm deep with the spindle stopped", t.depth),
                            t.at,
                        );
                    }
                    if let Some(sd) = meta.max_stepdown
                        && t.depth > sd + 0.5
                    {
                        f.push(
                            Kind::Limit,
                            meta.line,
                            format!(
                                "cut {:.2} mm deep in one move; the tool allows {:.2} mm",
                                t.depth, sd
                            ),
                            t.at,
                        );
                    }
                }
                sweeps.clear();
                metas.clear();
            };
        let mut at = [0.0, 0.0, m.clearance];
        // The reader starts at program zero, which is not where the tool
        // is: a first move straight up (to clearance, as the gates ask of
        // our programs) is not swept from there.
        let mut first = true;
        let mut moves: Vec<timing::Move> = Vec::new();
        let rd = read::read(
            src.reader,
            &name,
            ReadOptions {
                lenient: options.lenient,
                controller: m.controller,
                ..Default::default()
            },
            |e| match e {
                Event::ToolChange { tool, line } => match m.tool(tool) {
                    Some(t) => {
                        cutter = Some(t.cutter);
                        stepdown = Some(t.max_stepdown);
                    }
                    None if setting.default_tool.is_some() => {}
                    None => {
                        findings.push(
                            Kind::Limit,
                            line,
                            format!("T{tool} is not in the machine's tool list"),
                            [at[0], at[1]],
                        );
                    }
                },
                Event::Dwell { seconds, .. } => report.time_estimate_s += seconds,
                Event::Skipped { word, line } => {
                    report.skipped.push(format!("line {line}: {word}"))
                }
                // Feeds are checked on each move, with their Z part.
                Event::Setting { line, spindle, .. } => {
                    if let Some(why) = spindle.and_then(|s| bed.spindle(s)) {
                        findings.push(Kind::Limit, line, why, [at[0], at[1]]);
                    }
                }
                Event::Move {
                    line,
                    motion,
                    from,
                    to,
                    feed,
                    spindle_on,
                    spindle,
                    ..
                } => {
                    // A spindle started with no speed (M3 with no S) turns
                    // at 0, as LinuxCNC runs it: no better than stopped.
                    let spindle_on = spindle_on && spindle > 0.0;
                    let d = [to[0] - from[0], to[1] - from[1], to[2] - from[2]];
                    let dxy = (d[0] * d[0] + d[1] * d[1]).sqrt();
                    let len = (dxy * dxy + d[2] * d[2]).sqrt();
                    report.path_length_mm += len;
                    if len > 0.0 {
                        moves.push(timing::Move {
                            dir: [d[0] / len, d[1] / len, d[2] / len],
                            length: len,
                            speed: match motion {
                                Motion::Rapid => f64::INFINITY,
                                _ => feed.min(m.max_feed_xy).max(1e-9) / 60.0,
                            },
                            radius: None,
                        });
                    }
                    if motion != Motion::Rapid {
                        for why in bed.feed(from, to, feed) {
                            findings.push(Kind::Limit, line, why, [to[0], to[1]]);
                        }
                    }
                    for why in bed.position(to) {
                        findings.push(Kind::Envelope, line, why, [to[0], to[1]]);
                    }
                    at = to;
                    let rise = first && from[0] == to[0] && from[1] == to[1] && to[2] >= from[2];
                    first = false;
                    if rise {
                        return;
                    }
                    let (from, to) = (
                        [from[0], from[1], from[2] - shift],
                        [to[0], to[1], to[2] - shift],
                    );
                    let Some(c) = cutter else {
                        // Above the stock a move needs no tool; below it, it
                        // does (a move can only start below the stock's top
                        // after one that ended there; the reader's start,
                        // Z0, may be the table).
                        if to[2] < 0.0 {
                            missing_tool.get_or_insert(line);
                        }
                        return;
                    };
                    if motion != Motion::Rapid && c.kind == ToolKind::Ball {
                        let b = &mut balls[side.number() as usize - 1];
                        *b = Some(b.map_or(c.radius, |r: f64| r.min(c.radius)));
                    }
                    sweeps.push(Sweep {
                        from,
                        to,
                        cutter: c,
                    });
                    metas.push(Meta {
                        line,
                        motion,
                        spindle_on,
                        max_stepdown: stepdown,
                    });
                    if sweeps.len() == CHUNK {
                        flush(&mut map, &mut sweeps, &mut metas, &mut findings);
                    }
                }
                Event::End { .. } => {}
            },
        );
        let summary = rd?;
        flush(&mut map, &mut sweeps, &mut metas, &mut findings);
        if report.path_length_mm == 0.0 {
            findings.push(
                Kind::Limit,
                summary.lines.max(1),
                "the program makes no move: nothing to run".into(),
                [0.0, 0.0],
            );
        } else if summary.missing_end {
            findings.push(
                Kind::Limit,
                summary.lines.max(1),
                "the program has no M2/M30 end: it may be cut short (a file that did not arrive whole)".into(),
                [at[0], at[1]],
            );
        }
        if let Some(line) = missing_tool {
            return Err(GcodeError {
                file: name,
                line,
                column: 1,
                message: "moves with no known tool: the program names no tool in the machine's list".into(),
                hint: "give --tool KIND:DIAMETER (e.g. ball:12.7mm), or a T word listed in the machine profile".into(),
            });
        }
        // The moves' run time with the machine's accelerations.
        report.time_estimate_s += timing::run_time(&moves, &timing::Limits::of(m));
        report.lines = summary.lines;
        report.removed_volume_litres = (before - map.volume()) / 1e6;
        v.time_estimate_s += report.time_estimate_s;
        v.path_length_mm += report.path_length_mm;
        v.programs.push(report);
    }
    let (top1, top2) = match top1 {
        Some(t1) => (t1, Some(map.clone())),
        None => (map.top.clone(), None),
    };
    let final_volume = match &top2 {
        Some(m2) => m2.volume(),
        None => map.volume(),
    };
    v.removed_volume_litres = (start_volume - final_volume) / 1e6;
    if let Some(design) = setting.design {
        progress("measuring against the design");
        let base = ZMap::of_stock(b, true, options.cell, 0.0).expect("sized above");
        let mut m1 = base.clone();
        m1.top = top1;
        let reach = |side: Side| {
            let floor = setting
                .floor
                .map(|(p, overlap)| move |x: f64| p.floor_at(side, x, overlap));
            balls[side.number() as usize - 1].map(|r| Reach { r, floor })
        };
        let mut maps = vec![deviation(&m1, design, Side::Deck, reach(Side::Deck))];
        if let Some(m2) = &top2 {
            maps.push(deviation(
                m2,
                &flip_mesh(design, b),
                Side::Bottom,
                reach(Side::Bottom),
            ));
        }
        let mut all: Vec<f32> = Vec::new();
        let (mut gouge, mut left) = ((f64::NEG_INFINITY, [0.0; 3]), (f64::NEG_INFINITY, [0.0; 3]));
        let (mut reach_left, mut out_of_reach) =
            ((f64::NEG_INFINITY, [0.0; 3]), (f64::NEG_INFINITY, [0.0; 3]));
        let mut out_of_reach_cells = 0usize;
        let mut pocket_cells: Vec<Vec<f64>> = vec![vec![]; setting.pockets.len()];
        for dm in &maps {
            for j in 0..dm.dims[1] {
                for i in 0..dm.dims[0] {
                    let d = dm.deviation[j * dm.dims[0] + i];
                    if d.is_nan() {
                        continue;
                    }
                    let p = [
                        dm.origin[0] + (i as f64 + 0.5) * dm.cell[0],
                        dm.origin[1] + (j as f64 + 0.5) * dm.cell[1],
                        dm.side.number() as f64,
                    ];
                    let d = d as f64;
                    let y1 = if dm.side == Side::Bottom {
                        b.width - p[1]
                    } else {
                        p[1]
                    };
                    if d > 0.0
                        && setting.keep.iter().any(|r| {
                            p[0] >= r[0][0] && p[0] <= r[1][0] && y1 >= r[0][1] && y1 <= r[1][1]
                        })
                    {
                        continue;
                    }
                    if let Some(k) = setting
                        .pockets
                        .iter()
                        .position(|z| z.side == dm.side && z.contains([p[0], p[1]]))
                    {
                        pocket_cells[k].push(-d);
                        continue;
                    }
                    // A cell at a pocket's wall stands beside a cliff as
                    // deep as the pocket: it is judged neither way.
                    if setting.pockets.iter().any(|z| {
                        z.side == dm.side && z.edge_distance([p[0], p[1]]) <= 1.5 * options.cell
                    }) {
                        continue;
                    }
                    if -d > gouge.0 {
                        gouge = (-d, p);
                    }
                    if d > left.0 {
                        left = (d, p);
                    }
                    if dm.unreachable.get(j * dm.dims[0] + i) == Some(&true) {
                        out_of_reach_cells += 1;
                        if d > out_of_reach.0 {
                            out_of_reach = (d, p);
                        }
                    } else if d > reach_left.0 {
                        reach_left = (d, p);
                    }
                    all.push(d.max(0.0) as f32);
                }
            }
        }
        let cell_area = options.cell * options.cell;
        for (z, mut cells) in setting.pockets.iter().zip(pocket_cells) {
            cells.sort_by(f64::total_cmp);
            let deep: Vec<f64> = cells
                .iter()
                .copied()
                .filter(|&d| d >= z.depth / 2.0)
                .collect();
            v.pockets.push(PocketReport {
                label: z.label.clone(),
                setup: z.side.number() as u8,
                depth_mm: z.depth,
                depth_median_mm: deep.get(deep.len() / 2).copied().unwrap_or(0.0),
                depth_max_mm: cells.last().copied().unwrap_or(0.0).max(0.0),
                area_mm2: deep.len() as f64 * cell_area,
                design_area_mm2: z.area,
                volume_ml: cells.iter().map(|d| d.max(0.0)).sum::<f64>() * cell_area / 1000.0,
            });
        }
        if !all.is_empty() {
            let k = ((all.len() as f64 * 0.95) as usize).min(all.len() - 1);
            let (_, p95, _) = all.select_nth_unstable_by(k, f32::total_cmp);
            v.leftover_p95_mm = Some(*p95 as f64);
            v.gouge_max_mm = Some(gouge.0.max(0.0));
            v.gouge_at = Some(gouge.1);
            v.leftover_max_mm = Some(left.0.max(0.0));
            v.leftover_at = Some(left.1);
            if reach_left.0 > f64::NEG_INFINITY {
                v.leftover_reachable_max_mm = Some(reach_left.0.max(0.0));
                v.leftover_reachable_at = Some(reach_left.1);
            }
            if out_of_reach_cells > 0 {
                v.unreachable_mm2 = out_of_reach_cells as f64 * options.cell * options.cell;
                v.unreachable_max_mm = Some(out_of_reach.0);
                v.unreachable_at = Some(out_of_reach.1);
            }
        }
        v.maps = maps;
    }
    Ok(v)
}

enum Kind {
    Collision,
    Envelope,
    SpindleOff,
    Limit,
}

struct Findings<'a, 'b> {
    v: &'a mut Verification,
    program: &'b str,
}

impl Findings<'_, '_> {
    fn push(&mut self, kind: Kind, line: usize, what: String, at: [f64; 2]) {
        let list = match kind {
            Kind::Collision => &mut self.v.collisions,
            Kind::Envelope => &mut self.v.out_of_envelope,
            Kind::SpindleOff => &mut self.v.spindle_off_cuts,
            Kind::Limit => &mut self.v.limits,
        };
        if list.len() < MAX_FINDINGS {
            list.push(Finding {
                program: self.program.to_string(),
                line,
                what,
                at,
            });
        }
    }
}

/// The block after setup 1, turned over about X through its middle
/// ((x, y, z) → (x, W − y, −T − z)): each column's material [b, t] becomes
/// [−T − t, −T − b]; a column cut away stays empty.
fn flipped(map: &ZMap, thickness: f64) -> ZMap {
    let [nx, ny] = map.dims;
    let mut out = map.clone();
    for j in 0..ny {
        for i in 0..nx {
            let src = (ny - 1 - j) * nx + i;
            let k = j * nx + i;
            let (t, b) = (map.top[src] as f64, map.bottom[src] as f64);
            if t > b {
                out.bottom[k] = (-thickness - t) as f32;
                out.top[k] = (-thickness - b) as f32;
            } else {
                out.bottom[k] = 0.0;
                out.top[k] = 0.0;
            }
        }
    }
    out
}

/// Deviation of a side's simulated surface from the design seen from above,
/// measured along the surface normal (the vertical difference times the
/// normal's Z component).
/// The ball that finished a side, and the floor its tip stayed above.
struct Reach<F: Fn(f64) -> f64 + Sync> {
    r: f64,
    floor: Option<F>,
}

fn deviation<F: Fn(f64) -> f64 + Sync>(
    map: &ZMap,
    design: &Mesh,
    side: Side,
    ball: Option<Reach<F>>,
) -> DeviationMap {
    use rayon::prelude::*;
    let ray = DropCutter::new(&[design], Cutter::flat(0.0));
    let [nx, ny] = map.dims;
    let rows: Vec<(Vec<f32>, Vec<bool>)> = (0..ny)
        .into_par_iter()
        .map(|j| {
            let mut dev = Vec::with_capacity(nx);
            let mut stock = Vec::with_capacity(nx);
            for i in 0..nx {
                let c = map.centre(i, j);
                let k = j * nx + i;
                let present = map.top[k] > map.bottom[k];
                stock.push(present);
                // A column cut away where the design has foam is a gouge
                // down to the column's bottom.
                let surface = if present { map.top[k] } else { map.bottom[k] } as f64;
                dev.push(match ray.drop_contact(c[0], c[1]) {
                    Some((z, n)) => ((surface - z) * n[2]) as f32,
                    None => f32::NAN,
                });
            }
            (dev, stock)
        })
        .collect();
    let mut deviation = Vec::with_capacity(nx * ny);
    let mut stock = Vec::with_capacity(nx * ny);
    for (d, s) in rows {
        deviation.extend(d);
        stock.extend(s);
    }
    let unreachable = match ball {
        Some(reach) if deviation.iter().any(|&d| d as f64 > REACH_CHECKED_MM) => {
            out_of_reach(map, design, &ray, &deviation, &reach)
        }
        _ => vec![],
    };
    DeviationMap {
        side,
        origin: map.origin,
        cell: map.cell,
        dims: map.dims,
        deviation,
        stock,
        unreachable,
    }
}

/// How far above its touch on a face a ball may be held by the rest of
/// the design and still count as touching (the mesh's facets and the
/// rounding of the drop).
const REACH_SLACK_MM: f64 = 0.02;

/// Which cells with more than [`REACH_CHECKED_MM`] left a ball of radius
/// `r` cannot touch: the ball resting on the design at the cell's point,
/// its centre `r` out along the face's normal, is held higher by the rest
/// of the design (a drop-cutter at that centre), or would need its tip
/// below the floor. A convex surface is reachable everywhere above the
/// floor; a notch or a corner tighter than the ball is not.
fn out_of_reach<F: Fn(f64) -> f64 + Sync>(
    map: &ZMap,
    design: &Mesh,
    ray: &DropCutter,
    dev: &[f32],
    reach: &Reach<F>,
) -> Vec<bool> {
    use rayon::prelude::*;
    let r = reach.r;
    let nx = map.dims[0];
    // Only the triangles within 2R of a cell to test can hold the ball up
    // there: mark squares of side 2R round those cells, keep the triangles
    // whose plan box meets a marked square.
    let g = 2.0 * r;
    let (ox, oy) = (map.origin[0] - g, map.origin[1] - g);
    let gw = ((map.dims[0] as f64 * map.cell[0] + 2.0 * g) / g).ceil() as usize + 1;
    let gh = ((map.dims[1] as f64 * map.cell[1] + 2.0 * g) / g).ceil() as usize + 1;
    let mut marked = vec![false; gw * gh];
    for (k, &d) in dev.iter().enumerate() {
        if (d as f64) <= REACH_CHECKED_MM {
            continue;
        }
        let c = map.centre(k % nx, k / nx);
        let (i, j) = (((c[0] - ox) / g) as usize, ((c[1] - oy) / g) as usize);
        for b in j.saturating_sub(1)..(j + 2).min(gh) {
            for a in i.saturating_sub(1)..(i + 2).min(gw) {
                marked[b * gw + a] = true;
            }
        }
    }
    let near = Mesh {
        vertices: design.vertices.clone(),
        triangles: design
            .triangles
            .iter()
            .filter(|t| {
                let p = t.map(|v| design.vertices[v as usize]);
                let cell = |x: f64, y: f64| {
                    (
                        (((x - ox) / g).max(0.0) as usize).min(gw - 1),
                        (((y - oy) / g).max(0.0) as usize).min(gh - 1),
                    )
                };
                let lo = cell(
                    p[0][0].min(p[1][0]).min(p[2][0]),
                    p[0][1].min(p[1][1]).min(p[2][1]),
                );
                let hi = cell(
                    p[0][0].max(p[1][0]).max(p[2][0]),
                    p[0][1].max(p[1][1]).max(p[2][1]),
                );
                (lo.1..=hi.1).any(|b| (lo.0..=hi.0).any(|a| marked[b * gw + a]))
            })
            .copied()
            .collect(),
    };
    let ball = DropCutter::new(&[&near], Cutter::ball(2.0 * r));
    (0..dev.len())
        .into_par_iter()
        .map(|k| {
            if (dev[k] as f64) <= REACH_CHECKED_MM {
                return false;
            }
            let c = map.centre(k % nx, k / nx);
            let Some((z, n)) = ray.drop_contact(c[0], c[1]) else {
                return false;
            };
            let centre = [c[0] + r * n[0], c[1] + r * n[1], z + r * n[2]];
            let tip = centre[2] - r;
            reach
                .floor
                .as_ref()
                .is_some_and(|f| tip < f(centre[0]) - REACH_SLACK_MM)
                || ball
                    .drop(centre[0], centre[1])
                    .is_some_and(|t| t > tip + REACH_SLACK_MM)
        })
        .collect()
}
