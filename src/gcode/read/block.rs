//! One line (block) of a program: its words sorted by what they do, then
//! carried out in RS-274/NGC's order of execution (NIST IR 6556, 3.8):
//! feed and speed, the tool change, the spindle, the dwell, the motion, the
//! program end.

use std::f64::consts::PI;

use super::{Event, GcodeError, Motion, ReadOptions, ReadSummary, State, Word, err, trim_num};
use crate::model::machine::Controller;

/// Largest arc radius accepted, mm.
const MAX_ARC_RADIUS: f64 = 50_000.0;

/// The line being read: where it is, how to read it, and its words.
struct At<'a> {
    file: &'a str,
    line: usize,
    options: ReadOptions,
    words: &'a [Word],
}

impl At<'_> {
    fn err(&self, column: usize, message: impl Into<String>, hint: &str) -> GcodeError {
        err(self.file, self.line, column, message, hint)
    }

    /// The column of the first word with this letter.
    fn column(&self, letter: char) -> Option<usize> {
        self.words
            .iter()
            .find(|w| w.letter == letter)
            .map(|w| w.column)
    }

    /// A word outside the subset: skipped when lenient, else refused.
    fn outside(&self, w: &Word, sink: &mut impl FnMut(Event)) -> Result<(), GcodeError> {
        let word = format!("{}{}", w.letter, trim_num(w.value));
        if self.options.lenient {
            sink(Event::Skipped {
                line: self.line,
                word,
            });
            Ok(())
        } else {
            Err(self.err(
                w.column,
                format!("`{word}` is outside the supported subset of RS-274/NGC"),
                "the reader takes G0 G1 G2 G3 G4 G17 G20 G21 G90 G91 G94 F S T M0 M1 M2 M3 M4 M5 M6 M30; give --lenient to skip other words",
            ))
        }
    }
}

/// A line's words by what they do.
#[derive(Default)]
struct Words {
    target: [Option<f64>; 3],
    ij: [Option<f64>; 2],
    r: Option<f64>,
    p: Option<f64>,
    /// The motion word (G0 to G3) and its column.
    motion: Option<(u32, usize)>,
    dwell: bool,
    feed: Option<f64>,
    speed: Option<f64>,
    tool_change: bool,
    spindle: Option<bool>,
    end: bool,
}

fn code(w: &Word) -> Option<u32> {
    let r = w.value.round();
    ((w.value - r).abs() < 1e-9 && r >= 0.0).then_some(r as u32)
}

/// Reads one line's words into the state, handing its events to `sink`.
pub(super) fn block(
    words: &[Word],
    st: &mut State,
    (file, line): (&str, usize),
    options: ReadOptions,
    sink: &mut impl FnMut(Event),
    summary: &mut ReadSummary,
) -> Result<(), GcodeError> {
    let at = At {
        file,
        line,
        options,
        words,
    };
    let Some(w) = sort(&at, st, sink)? else {
        return Ok(());
    };
    if st.mm_per_unit.is_some() {
        summary.units_mm = st.mm_per_unit;
    }
    settings(&at, &w, st, sink)?;
    if w.dwell {
        dwell(&at, w.p, sink)?;
    }
    if let Some((c, _)) = w.motion {
        st.motion = Some(c);
    }
    refuse_unsupported(&at, &w, st)?;
    if w.target.iter().any(Option::is_some) {
        motion(&at, &w, st, sink)?;
    } else if w.motion.is_some_and(|(c, _)| c >= 2) {
        return Err(at.err(1, "an arc word with no end point", "give X and/or Y"));
    }
    if w.end {
        st.ended = true;
        st.spindle_on = false;
        sink(Event::End { line });
    }
    Ok(())
}

/// The words sorted by what they do; modal G words (units, distance mode)
/// and the next tool set in the state as they come. `None`: the line is
/// skipped.
fn sort(
    at: &At,
    st: &mut State,
    sink: &mut impl FnMut(Event),
) -> Result<Option<Words>, GcodeError> {
    let mut w = Words::default();
    let mut seen = [false; 26];
    for word in at.words {
        let slot = (word.letter as u8 - b'A') as usize;
        if !matches!(word.letter, 'G' | 'M') {
            if seen[slot] {
                return Err(at.err(
                    word.column,
                    format!("`{}` appears twice on the line", word.letter),
                    "give each axis or value once per line",
                ));
            }
            seen[slot] = true;
        }
        match word.letter {
            'N' => {}
            // A Fanuc-style program number, on a line of its own.
            'O' if at.options.controller == Controller::Fanuc && at.words.len() == 1 => {}
            'X' | 'Y' | 'Z' => w.target[(word.letter as u8 - b'X') as usize] = Some(word.value),
            'I' => w.ij[0] = Some(word.value),
            'J' => w.ij[1] = Some(word.value),
            // Outside the subset; when lenient, the rest of the line is
            // skipped with it.
            'K' => return at.outside(word, sink).map(|()| None),
            'R' => w.r = Some(word.value),
            'P' => w.p = Some(word.value),
            'F' => w.feed = Some(word.value),
            'S' => w.speed = Some(word.value),
            'T' => match code(word) {
                Some(t) => st.next_tool = Some(t),
                None => {
                    return Err(at.err(
                        word.column,
                        "a tool number must be a whole number",
                        "e.g. T2",
                    ));
                }
            },
            'G' => g_word(at, word, &mut w, st, sink)?,
            'M' => match code(word) {
                Some(0 | 1) => {}
                Some(2 | 30) => w.end = true,
                Some(3 | 4) => w.spindle = Some(true),
                Some(5) => w.spindle = Some(false),
                Some(6) => w.tool_change = true,
                _ => at.outside(word, sink)?,
            },
            _ => at.outside(word, sink)?,
        }
    }
    Ok(Some(w))
}

/// A G word: the line's motion, a dwell, or a modal setting.
fn g_word(
    at: &At,
    word: &Word,
    w: &mut Words,
    st: &mut State,
    sink: &mut impl FnMut(Event),
) -> Result<(), GcodeError> {
    match code(word) {
        Some(c @ (0..=3)) => {
            if w.motion.is_some() {
                return Err(at.err(
                    word.column,
                    "two motion words on one line",
                    "give one of G0 G1 G2 G3 per line",
                ));
            }
            w.motion = Some((c, word.column));
        }
        Some(4) => w.dwell = true,
        Some(17 | 94) => {}
        Some(18 | 19) => {
            return Err(at.err(
                word.column,
                "only the XY plane (G17) is supported",
                "arcs in XZ or YZ are outside the subset",
            ));
        }
        Some(20) => st.mm_per_unit = Some(25.4),
        Some(21) => st.mm_per_unit = Some(1.0),
        Some(90) => st.absolute = true,
        Some(91) => st.absolute = false,
        Some(93) => {
            return Err(at.err(
                word.column,
                "inverse-time feed (G93) is outside the subset",
                "use G94 (units per minute)",
            ));
        }
        _ => at.outside(word, sink)?,
    }
    Ok(())
}

/// Feed and spindle speed, the tool change and the spindle words.
fn settings(
    at: &At,
    w: &Words,
    st: &mut State,
    sink: &mut impl FnMut(Event),
) -> Result<(), GcodeError> {
    let k = st.mm_per_unit.unwrap_or(1.0);
    if let Some(f) = w.feed {
        if f <= 0.0 {
            return Err(at.err(
                at.column('F').unwrap_or(1),
                format!("feed F{} is not positive", trim_num(f)),
                "give a feed in units per minute",
            ));
        }
        st.feed = Some(f * k);
    }
    if let Some(s) = w.speed {
        if s < 0.0 {
            return Err(at.err(
                at.column('S').unwrap_or(1),
                "spindle speed is negative",
                "give S in rpm",
            ));
        }
        st.spindle = s;
    }
    if w.feed.is_some() || w.speed.is_some() {
        sink(Event::Setting {
            line: at.line,
            feed: w.feed.map(|f| f * k),
            spindle: w.speed,
        });
    }
    // RS-274/NGC's order of execution (NIST IR 6556, 3.8): the tool
    // change, then the spindle words. LinuxCNC stops the spindle for M6
    // (`rs274` prints STOP_SPINDLE_TURNING before CHANGE_TOOL), so after a
    // change it turns only once M3/M4 is given again.
    if w.tool_change {
        st.spindle_on = false;
    }
    if let Some(on) = w.spindle {
        st.spindle_on = on;
    }
    if (w.tool_change || (st.next_tool.is_some() && st.tool.is_none()))
        && let Some(t) = st.next_tool
        && st.tool != Some(t)
    {
        st.tool = Some(t);
        sink(Event::ToolChange {
            line: at.line,
            tool: t,
        });
    }
    Ok(())
}

/// G4: a dwell of P seconds (in the controller's units).
fn dwell(at: &At, p: Option<f64>, sink: &mut impl FnMut(Event)) -> Result<(), GcodeError> {
    let Some(p) = p else {
        return Err(at.err(1, "G4 without P (seconds)", "e.g. G4 P5"));
    };
    let p = at.options.controller.dwell_seconds(p);
    if !(0.0..=3600.0).contains(&p) {
        return Err(at.err(
            1,
            format!("dwell P{} is outside 0..3600 s", trim_num(p)),
            "give P in seconds",
        ));
    }
    sink(Event::Dwell {
        line: at.line,
        seconds: p,
    });
    Ok(())
}

/// Words a controller would read as something this reader does not do
/// (arc turns, an arc's centre on a straight move): refused, never dropped.
fn refuse_unsupported(at: &At, w: &Words, st: &State) -> Result<(), GcodeError> {
    let arc = matches!(st.motion, Some(2 | 3));
    if !w.dwell
        && let Some(c) = at.column('P')
    {
        return Err(at.err(
            c,
            if arc {
                "P on G2/G3 (full turns of a helix) is not supported"
            } else {
                "P outside G4 is not supported (it is a dwell's time or an arc's turns)"
            },
            "write each turn as its own G2/G3, or give the dwell as G4 P",
        ));
    }
    if !arc
        && let Some(c) = at
            .column('I')
            .or_else(|| at.column('J'))
            .or_else(|| at.column('R'))
    {
        return Err(at.err(
            c,
            "I, J or R without G2/G3 in force is not supported",
            "they give an arc's centre or radius: state G2 or G3",
        ));
    }
    Ok(())
}

/// The line's move, in the motion mode in force: straight, or an arc cut
/// into straight pieces.
fn motion(
    at: &At,
    w: &Words,
    st: &mut State,
    sink: &mut impl FnMut(Event),
) -> Result<(), GcodeError> {
    let Some(kind) = st.motion else {
        let c = at
            .words
            .iter()
            .find(|w| matches!(w.letter, 'X' | 'Y' | 'Z'))
            .map_or(1, |w| w.column);
        return Err(at.err(
            c,
            "an axis word with no motion mode (G0/G1/G2/G3) in force",
            "state G0 or G1 first",
        ));
    };
    let Some(unit) = st.mm_per_unit else {
        return Err(at.err(
            1,
            "a move before the units are stated",
            "put G21 (mm) or G20 (inch) before the first move",
        ));
    };
    let mut to = st.pos;
    for (t, v) in to.iter_mut().zip(w.target) {
        if let Some(v) = v {
            *t = if st.absolute { v * unit } else { *t + v * unit };
        }
    }
    let from = st.pos;
    if kind != 0 && st.feed.is_none() {
        return Err(at.err(
            at.column('G').unwrap_or(1).max(1),
            "a feed move before any feed (F) is set",
            "give F on or before the first G1/G2/G3",
        ));
    }
    let feed = if kind == 0 {
        0.0
    } else {
        st.feed.unwrap_or(0.0)
    };
    let mk = |motion, a: [f64; 3], b: [f64; 3]| Event::Move {
        line: at.line,
        motion,
        from: a,
        to: b,
        feed,
        spindle: st.spindle,
        spindle_on: st.spindle_on,
        tool: st.tool,
    };
    match kind {
        0 => sink(mk(Motion::Rapid, from, to)),
        1 => sink(mk(Motion::Linear, from, to)),
        _ => {
            let cw = kind == 2;
            let centre = arc_centre(at, w, [from, to], unit, cw)?;
            let r0 = ((from[0] - centre[0]).powi(2) + (from[1] - centre[1]).powi(2)).sqrt();
            check_arc(at, centre, r0, to)?;
            let a0 = (from[1] - centre[1]).atan2(from[0] - centre[0]);
            let a1 = (to[1] - centre[1]).atan2(to[0] - centre[0]);
            let mut sweep = if cw { a0 - a1 } else { a1 - a0 };
            while sweep <= 1e-12 {
                sweep += 2.0 * PI;
            }
            if sweep > 2.0 * PI + 1e-12 {
                sweep -= 2.0 * PI;
            }
            // Pieces whose sagitta r(1 - cos(θ/2)) stays within the tolerance.
            let step = 2.0 * (1.0 - (at.options.tolerance / r0).min(1.0)).acos();
            let n = ((sweep / step.max(1e-6)).ceil() as usize).clamp(1, 100_000);
            let mut prev = from;
            for s in 1..=n {
                let t = s as f64 / n as f64;
                let a = if cw { a0 - sweep * t } else { a0 + sweep * t };
                let p = if s == n {
                    to
                } else {
                    [
                        centre[0] + r0 * a.cos(),
                        centre[1] + r0 * a.sin(),
                        from[2] + (to[2] - from[2]) * t,
                    ]
                };
                sink(mk(Motion::Arc, prev, p));
                prev = p;
            }
        }
    }
    st.pos = to;
    Ok(())
}

/// An arc's centre in plan, from I/J or from R (mm).
fn arc_centre(
    at: &At,
    w: &Words,
    [from, to]: [[f64; 3]; 2],
    unit: f64,
    cw: bool,
) -> Result<[f64; 2], GcodeError> {
    let col_of = |l: char| at.column(l).unwrap_or(1);
    match (w.ij, w.r) {
        (_, Some(_)) if w.ij.iter().any(Option::is_some) => Err(at.err(
            col_of('R'),
            "an arc with both R and I/J",
            "give the centre by I/J or the radius by R, not both",
        )),
        ([None, None], None) => Err(at.err(
            col_of('G'),
            "an arc with neither I/J nor R",
            "give the centre offset I J or the radius R",
        )),
        (_, Some(r)) => {
            let r = r * unit;
            let (dx, dy) = (to[0] - from[0], to[1] - from[1]);
            let chord = (dx * dx + dy * dy).sqrt();
            if chord < 1e-9 {
                return Err(at.err(
                    col_of('R'),
                    "an R arc whose start and end are the same point",
                    "a full circle needs I/J",
                ));
            }
            if r.abs() > MAX_ARC_RADIUS {
                return Err(at.err(col_of('R'), "the arc radius is absurdly large", "check R"));
            }
            let half = chord / 2.0;
            if half > r.abs() + 1e-4 * r.abs().max(1.0) {
                return Err(at.err(
                    col_of('R'),
                    format!(
                        "radius {:.4} mm is too small for a chord of {:.4} mm",
                        r.abs(),
                        chord
                    ),
                    "the radius must be at least half the distance between the end points",
                ));
            }
            let h = (r * r - half * half).max(0.0).sqrt();
            // Left of the chord for a CCW arc under π (or CW over π).
            let (mx, my) = (from[0] + dx / 2.0, from[1] + dy / 2.0);
            let (nx, ny) = (-dy / chord, dx / chord);
            let left = (r > 0.0) != cw;
            let s = if left { h } else { -h };
            Ok([mx + s * nx, my + s * ny])
        }
        ([i, j], None) => Ok([
            from[0] + i.unwrap_or(0.0) * unit,
            from[1] + j.unwrap_or(0.0) * unit,
        ]),
    }
}

/// The arc's radius fits its end points and is neither nil nor absurd.
fn check_arc(at: &At, centre: [f64; 2], r0: f64, to: [f64; 3]) -> Result<(), GcodeError> {
    let col_of = |l: char| at.column(l).unwrap_or(1);
    let r1 = ((to[0] - centre[0]).powi(2) + (to[1] - centre[1]).powi(2)).sqrt();
    if r0 < 1e-6 {
        return Err(at.err(
            col_of('I'),
            "the arc centre is on its start point",
            "check I and J",
        ));
    }
    if (r0 - r1).abs() > 0.002f64.max(1e-4 * r0) {
        return Err(at.err(
            col_of('G'),
            format!(
                "the arc's end is {:.4} mm from its centre but its start is {:.4} mm: the radius does not fit the end points",
                r1, r0
            ),
            "check I, J and the end point",
        ));
    }
    if r0 > MAX_ARC_RADIUS {
        return Err(at.err(
            col_of('I'),
            "the arc radius is absurdly large",
            "check I and J",
        ));
    }
    Ok(())
}
