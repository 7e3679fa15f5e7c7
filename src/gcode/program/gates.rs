//! The safety gates: each finished program read back as text with the
//! project's reader, every move and setting held to the machine, the
//! stock and the job before the program is written.

use std::io::BufReader;

use super::{Program, zero_shift};
use crate::gcode::read::{self, Event, Motion, ReadOptions};
use crate::model::job::Job;
use crate::model::limits::{Bed, ROUNDING};
use crate::model::machine::Machine;
use crate::profiles::values::mm_text;
use crate::toolpath::setup::{Placement, Side};

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
