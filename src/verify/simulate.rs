//! Verification of programs before they run: each program streamed through
//! the reader into the height map of the stock, both setups with the flip
//! between, and what that shows: rapids into stock, moves outside the
//! machine, cutting with the spindle off, feeds and speeds beyond the
//! machine, cuts deeper than the tool allows, and, against a design, the
//! deepest gouge and the leftover stock.

use super::measure;
use super::report::{Finding, MAX_FINDINGS, ProgramReport, Verification};
use super::setting::{ProgramSource, Setting, VerifyOptions};
use crate::gcode::read::{self, Event, GcodeError, Motion, ReadOptions, ReadSummary};
use crate::gcode::timing;
use crate::geom::nearest::Nearest;
use crate::geom::zmap::{Sweep, ZMap};
use crate::model::limits::Bed;
use crate::model::machine::{Cutter, ToolKind};
use crate::toolpath::setup::Side;

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
    let mut bed = Bed {
        machine: setting.machine,
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
    let mut v = Verification::empty(options.cell, options.gouge_tolerance);
    let mut side = Side::Deck;
    let mut top1: Option<Vec<f32>> = None;
    // The smallest ball that cut on each side: what finished it.
    let mut balls: [Option<f64>; 2] = [None, None];
    // The design's closest-point tree, for the measure after, is built
    // while the programs run.
    let mut near = None;
    let simulated = rayon::in_place_scope(|scope| {
        scope.spawn(|_| near = setting.design.map(Nearest::new));
        (|| -> Result<(), GcodeError> {
            for src in programs {
                if src.side == Side::Bottom && side == Side::Deck {
                    side = Side::Bottom;
                    let turned = flipped(&map, b.thickness);
                    top1 = Some(std::mem::replace(&mut map, turned).top);
                    if setting.table_zero_after_flip {
                        bed.zero_height = 0.0;
                    }
                }
                progress(&format!("simulating {}", src.name));
                let stage = Stage {
                    setting,
                    bed: &bed,
                    lenient: options.lenient,
                    side,
                    // Program Z less this is the simulation's own (zero on
                    // the turned stock's top, the table at minus its
                    // thickness).
                    shift: if side == Side::Bottom && setting.table_zero_after_flip {
                        b.thickness
                    } else {
                        0.0
                    },
                };
                let report = run(src, &stage, &mut map, &mut balls, &mut v)?;
                v.time_estimate_s += report.time_estimate_s;
                v.path_length_mm += report.path_length_mm;
                v.programs.push(report);
            }
            Ok(())
        })()
    });
    simulated?;
    let final_volume = map.volume();
    let (top1, top2) = match top1 {
        Some(t1) => (t1, Some(map)),
        None => (map.top, None),
    };
    v.removed_volume_litres = (start_volume - final_volume) / 1e6;
    if let (Some(design), Some(near)) = (setting.design, &near) {
        progress("measuring against the design");
        measure::against(
            &mut v,
            (design, near),
            setting,
            options,
            (top1, top2.as_ref()),
            balls,
        );
    }
    Ok(v)
}

/// What a program runs on: the setting, the machine's limits for this
/// setup, which side is up and the shift from program Z to the map's.
struct Stage<'a> {
    setting: &'a Setting<'a>,
    bed: &'a Bed<'a>,
    lenient: bool,
    side: Side,
    shift: f64,
}

/// One program streamed into the map: its figures and findings added to
/// `v`, the smallest finishing ball on its side noted in `balls`.
fn run(
    src: ProgramSource<'_>,
    stage: &Stage,
    map: &mut ZMap,
    balls: &mut [Option<f64>; 2],
    v: &mut Verification,
) -> Result<ProgramReport, GcodeError> {
    let m = stage.setting.machine;
    let name = src.name.clone();
    let before = map.volume();
    let loaded = src.loaded.and_then(|id| m.tool(id));
    let mut p = Program {
        stage,
        map,
        ball: &mut balls[stage.side.number() as usize - 1],
        findings: Findings { v, program: &name },
        report: ProgramReport {
            name: name.clone(),
            setup: stage.side.number(),
            lines: 0,
            time_estimate_s: 0.0,
            path_length_mm: 0.0,
            removed_volume_litres: 0.0,
            skipped: vec![],
        },
        sweeps: Vec::with_capacity(CHUNK),
        metas: Vec::with_capacity(CHUNK),
        cutter: loaded.map(|t| t.cutter).or(stage.setting.default_tool),
        stepdown: loaded.map(|t| t.max_stepdown),
        missing_tool: None,
        at: [0.0, 0.0, m.clearance],
        first: true,
        moves: Vec::new(),
    };
    let options = ReadOptions {
        lenient: stage.lenient,
        controller: m.controller,
        ..Default::default()
    };
    let summary = read::read(src.reader, &name, options, |e| p.event(e))?;
    p.flush();
    p.finish(&summary)?;
    let mut report = p.report;
    // The moves' run time with the machine's accelerations.
    report.time_estimate_s += timing::run_time(&p.moves, &timing::Limits::of(m));
    report.lines = summary.lines;
    report.removed_volume_litres = (before - p.map.volume()) / 1e6;
    Ok(report)
}

/// A program being run: the sweeps waiting to be cut, the tool, where the
/// tool is, the moves for the run time.
struct Program<'a, 'b> {
    stage: &'a Stage<'a>,
    map: &'a mut ZMap,
    /// The smallest ball that cut on this side so far.
    ball: &'a mut Option<f64>,
    findings: Findings<'a, 'b>,
    report: ProgramReport,
    sweeps: Vec<Sweep>,
    metas: Vec<Meta>,
    cutter: Option<Cutter>,
    stepdown: Option<f64>,
    /// The first line that moved below the stock's top with no tool known.
    missing_tool: Option<usize>,
    at: [f64; 3],
    /// The reader starts at program zero, which is not where the tool is:
    /// a first move straight up (to clearance, as the gates ask of our
    /// programs) is not swept from there.
    first: bool,
    moves: Vec<timing::Move>,
}

impl Program<'_, '_> {
    fn event(&mut self, e: Event) {
        let m = self.stage.setting.machine;
        let at = [self.at[0], self.at[1]];
        match e {
            Event::ToolChange { tool, line } => match m.tool(tool) {
                Some(t) => {
                    self.cutter = Some(t.cutter);
                    self.stepdown = Some(t.max_stepdown);
                }
                None if self.stage.setting.default_tool.is_some() => {}
                None => {
                    self.findings.push(
                        Kind::Limit,
                        line,
                        format!("T{tool} is not in the machine's tool list"),
                        at,
                    );
                }
            },
            Event::Dwell { seconds, .. } => self.report.time_estimate_s += seconds,
            Event::Skipped { word, line } => {
                self.report.skipped.push(format!("line {line}: {word}"));
            }
            // Feeds are checked on each move, with their Z part.
            Event::Setting { line, spindle, .. } => {
                if let Some(why) = spindle.and_then(|s| self.stage.bed.spindle(s)) {
                    self.findings.push(Kind::Limit, line, why, at);
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
                // A spindle started with no speed (M3 with no S) turns at
                // 0, as LinuxCNC runs it: no better than stopped.
                let spindle_on = spindle_on && spindle > 0.0;
                self.travel(line, motion, [from, to], feed);
                let rise = self.first && from[0] == to[0] && from[1] == to[1] && to[2] >= from[2];
                self.first = false;
                if !rise {
                    self.sweep(line, motion, [from, to], spindle_on);
                }
            }
            Event::End { .. } => {}
        }
    }

    /// A move's length and run time, and the machine's limits on it.
    fn travel(&mut self, line: usize, motion: Motion, [from, to]: [[f64; 3]; 2], feed: f64) {
        let m = self.stage.setting.machine;
        let d = [to[0] - from[0], to[1] - from[1], to[2] - from[2]];
        let dxy = (d[0] * d[0] + d[1] * d[1]).sqrt();
        let len = (dxy * dxy + d[2] * d[2]).sqrt();
        self.report.path_length_mm += len;
        if len > 0.0 {
            self.moves.push(timing::Move {
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
            for why in self.stage.bed.feed(from, to, feed) {
                self.findings.push(Kind::Limit, line, why, [to[0], to[1]]);
            }
        }
        for why in self.stage.bed.position(to) {
            self.findings
                .push(Kind::Envelope, line, why, [to[0], to[1]]);
        }
        self.at = to;
    }

    /// The move swept through the stock by the tool in the spindle.
    fn sweep(&mut self, line: usize, motion: Motion, [from, to]: [[f64; 3]; 2], spindle_on: bool) {
        let shift = self.stage.shift;
        let (from, to) = (
            [from[0], from[1], from[2] - shift],
            [to[0], to[1], to[2] - shift],
        );
        let Some(c) = self.cutter else {
            // Above the stock a move needs no tool; below it, it does (a
            // move can only start below the stock's top after one that
            // ended there; the reader's start, Z0, may be the table).
            if to[2] < 0.0 {
                self.missing_tool.get_or_insert(line);
            }
            return;
        };
        if motion != Motion::Rapid && c.kind == ToolKind::Ball {
            *self.ball = Some(self.ball.map_or(c.radius, |r: f64| r.min(c.radius)));
        }
        self.sweeps.push(Sweep {
            from,
            to,
            cutter: c,
        });
        self.metas.push(Meta {
            line,
            motion,
            spindle_on,
            max_stepdown: self.stepdown,
        });
        if self.sweeps.len() == CHUNK {
            self.flush();
        }
    }

    /// The waiting sweeps cut from the map; what each touched judged.
    fn flush(&mut self) {
        let touches = self.map.cut(&self.sweeps);
        for (t, meta) in touches.iter().zip(&self.metas) {
            if t.depth <= 0.01 {
                continue;
            }
            if meta.motion == Motion::Rapid {
                self.findings.push(
                    Kind::Collision,
                    meta.line,
                    format!("rapid (G0) through stock, {:.2} mm deep", t.depth),
                    t.at,
                );
            } else if !meta.spindle_on {
                self.findings.push(
                    Kind::SpindleOff,
                    meta.line,
                    format!("cut {:.2} mm deep with the spindle stopped", t.depth),
                    t.at,
                );
            }
            if let Some(sd) = meta.max_stepdown
                && t.depth > sd + 0.5
            {
                self.findings.push(
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
        self.sweeps.clear();
        self.metas.clear();
    }

    /// The program as a whole: a move at all, an end, a tool for every cut.
    fn finish(&mut self, summary: &ReadSummary) -> Result<(), GcodeError> {
        if self.report.path_length_mm == 0.0 {
            self.findings.push(
                Kind::Limit,
                summary.lines.max(1),
                "the program makes no move: nothing to run".into(),
                [0.0, 0.0],
            );
        } else if summary.missing_end {
            self.findings.push(
                Kind::Limit,
                summary.lines.max(1),
                "the program has no M2/M30 end: it may be cut short (a file that did not arrive whole)".into(),
                [self.at[0], self.at[1]],
            );
        }
        if let Some(line) = self.missing_tool {
            return Err(GcodeError {
                file: self.report.name.clone(),
                line,
                column: 1,
                message: "moves with no known tool: the program names no tool in the machine's list".into(),
                hint: "give --tool KIND:DIAMETER (e.g. ball:12.7mm), or a T word listed in the machine profile".into(),
            });
        }
        Ok(())
    }
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
    use rayon::prelude::*;
    let [nx, ny] = map.dims;
    let mut top = vec![0.0f32; nx * ny];
    let mut bottom = vec![0.0f32; nx * ny];
    if nx > 0 {
        top.par_chunks_mut(nx)
            .zip(bottom.par_chunks_mut(nx))
            .enumerate()
            .for_each(|(j, (top, bottom))| {
                let src = (ny - 1 - j) * nx;
                let (t1, b1) = (&map.top[src..src + nx], &map.bottom[src..src + nx]);
                for (((top, bottom), &t), &b) in top.iter_mut().zip(bottom).zip(t1).zip(b1) {
                    let (t, b) = (t as f64, b as f64);
                    if t > b {
                        *bottom = (-thickness - t) as f32;
                        *top = (-thickness - b) as f32;
                    }
                }
            });
    }
    ZMap {
        origin: map.origin,
        cell: map.cell,
        dims: map.dims,
        top,
        bottom,
    }
}
