//! A reader for the common 3-axis subset of RS-274/NGC (NIST IR 6556,
//! Kramer, Proctor and Messina, 2000): G0 G1 G2 G3 G4 G17 G20 G21 G90 G91
//! G94, F S T, M0 M1 M2 M3 M4 M5 M6 M30, line numbers, `( )` and `;`
//! comments, modal state carried between lines.
//!
//! It streams: each line becomes zero or more [`Event`]s handed to a
//! callback, arcs already cut into straight pieces within a chord
//! tolerance, so memory does not grow with the program.

use std::io::BufRead;

use crate::model::machine::Controller;

mod block;
use block::block;

/// How a straight piece of motion was commanded.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Motion {
    /// G0.
    Rapid,
    /// G1.
    Linear,
    /// A piece of a G2/G3 arc.
    Arc,
}

/// What a program does, one step at a time, in mm and absolute coordinates.
#[derive(Debug, Clone, PartialEq)]
pub enum Event {
    /// A straight move.
    Move {
        /// Source line (1-based).
        line: usize,
        /// How it was commanded.
        motion: Motion,
        /// Start.
        from: [f64; 3],
        /// End.
        to: [f64; 3],
        /// Feed in mm/min (0 for rapids).
        feed: f64,
        /// Spindle speed in rpm.
        spindle: f64,
        /// Whether the spindle turns (M3 or M4 in force).
        spindle_on: bool,
        /// Tool in the spindle.
        tool: Option<u32>,
    },
    /// G4 dwell.
    Dwell {
        /// Source line.
        line: usize,
        /// Seconds.
        seconds: f64,
    },
    /// M6 tool change (or a T word read without a changer).
    ToolChange {
        /// Source line.
        line: usize,
        /// The new tool.
        tool: u32,
    },
    /// F or S word changed (for limit checks).
    Setting {
        /// Source line.
        line: usize,
        /// Feed in mm/min.
        feed: Option<f64>,
        /// Spindle rpm.
        spindle: Option<f64>,
    },
    /// A word outside the subset, skipped because the reader is lenient.
    Skipped {
        /// Source line.
        line: usize,
        /// The word.
        word: String,
    },
    /// M2 or M30.
    End {
        /// Source line.
        line: usize,
    },
}

/// Why a program could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{file}:{line}:{column}: {message}\n  hint: {hint}")]
pub struct GcodeError {
    /// The file.
    pub file: String,
    /// Line (1-based).
    pub line: usize,
    /// Column (1-based).
    pub column: usize,
    /// What is wrong.
    pub message: String,
    /// How to fix it.
    pub hint: String,
}

/// Reader options.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReadOptions {
    /// List words outside the subset as skipped instead of refusing them.
    pub lenient: bool,
    /// Chord tolerance for cutting arcs into straight pieces, mm.
    pub tolerance: f64,
    /// Whose dialect the program is in (dwell units, program numbers).
    pub controller: Controller,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            lenient: false,
            tolerance: 0.005,
            controller: Controller::LinuxCnc,
        }
    }
}

/// Longest line read; a longer one is not a G-code line.
pub const MAX_LINE: usize = 4096;
/// Largest coordinate or value accepted (mm, or the same number of inches).
pub const MAX_VALUE: f64 = 100_000.0;

#[derive(Debug, Clone)]
struct State {
    pos: [f64; 3],
    mm_per_unit: Option<f64>,
    absolute: bool,
    motion: Option<u32>,
    feed: Option<f64>,
    spindle: f64,
    spindle_on: bool,
    tool: Option<u32>,
    next_tool: Option<u32>,
    ended: bool,
}

/// Reads a program, handing each event to `sink`. `file` names it in messages.
pub fn read<R: BufRead>(
    mut input: R,
    file: &str,
    options: ReadOptions,
    mut sink: impl FnMut(Event),
) -> Result<ReadSummary, GcodeError> {
    let mut state = State {
        pos: [0.0; 3],
        mm_per_unit: None,
        absolute: true,
        motion: None,
        feed: None,
        spindle: 0.0,
        spindle_on: false,
        tool: None,
        next_tool: None,
        ended: false,
    };
    let mut buf = Vec::new();
    let mut line_no = 0usize;
    let mut summary = ReadSummary::default();
    loop {
        buf.clear();
        line_no += 1;
        let n = read_capped(&mut input, &mut buf).map_err(|e| GcodeError {
            file: file.into(),
            line: line_no,
            column: 1,
            message: format!("cannot read: {e}"),
            hint: "check the file".into(),
        })?;
        if n == 0 {
            break;
        }
        if buf.len() > MAX_LINE {
            return Err(err(
                file,
                line_no,
                1,
                format!("the line is longer than {MAX_LINE} characters"),
                "this is not a G-code program, or it is damaged",
            ));
        }
        let text = std::str::from_utf8(&buf).map_err(|e| {
            err(
                file,
                line_no,
                e.valid_up_to() + 1,
                "the line is not text (binary data)",
                "this is not a G-code program, or it is damaged",
            )
        })?;
        let text = text.trim_end_matches(['\n', '\r']);
        if let Some(i) = text.find(|c: char| c.is_control() && c != '\t') {
            return Err(err(
                file,
                line_no,
                i + 1,
                "the line holds a control character (binary data)",
                "this is not a G-code program, or it is damaged",
            ));
        }
        if state.ended {
            if strip_comments(text, file, line_no)?.iter().any(|_| true) {
                return Err(err(
                    file,
                    line_no,
                    1,
                    "words after the program end (M2/M30)",
                    "remove them or move the program end",
                ));
            }
            continue;
        }
        let words = strip_comments(text, file, line_no)?;
        summary.lines = line_no;
        block(
            &words,
            &mut state,
            (file, line_no),
            options,
            &mut sink,
            &mut summary,
        )?;
    }
    if !state.ended {
        summary.missing_end = true;
    }
    Ok(summary)
}

/// What the whole program held.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ReadSummary {
    /// Lines read.
    pub lines: usize,
    /// No M2/M30 at the end.
    pub missing_end: bool,
    /// Units the program stated (mm per unit).
    pub units_mm: Option<f64>,
}

fn read_capped<R: BufRead>(input: &mut R, buf: &mut Vec<u8>) -> std::io::Result<usize> {
    // Read at most MAX_LINE + 1 bytes of a line, then skip to its end.
    let mut total = 0;
    loop {
        let available = input.fill_buf()?;
        if available.is_empty() {
            return Ok(total);
        }
        let (used, done) = match available.iter().position(|&b| b == b'\n') {
            Some(i) => (i + 1, true),
            None => (available.len(), false),
        };
        let room = (MAX_LINE + 1).saturating_sub(buf.len());
        buf.extend_from_slice(&available[..used.min(room)]);
        input.consume(used);
        total += used;
        if done {
            return Ok(total);
        }
    }
}

fn err(
    file: &str,
    line: usize,
    column: usize,
    message: impl Into<String>,
    hint: impl Into<String>,
) -> GcodeError {
    GcodeError {
        file: file.into(),
        line,
        column,
        message: message.into(),
        hint: hint.into(),
    }
}

/// A word: letter, value, and its column.
#[derive(Debug, Clone, Copy)]
struct Word {
    letter: char,
    value: f64,
    column: usize,
}

fn strip_comments(text: &str, file: &str, line: usize) -> Result<Vec<Word>, GcodeError> {
    let mut words = Vec::new();
    let chars: Vec<(usize, char)> = text.char_indices().collect();
    let mut i = 0;
    let col = |k: usize| {
        chars
            .get(k)
            .map_or(text.len() + 1, |c| text[..c.0].chars().count() + 1)
    };
    while i < chars.len() {
        let c = chars[i].1;
        match c {
            ' ' | '\t' => i += 1,
            ';' => break,
            '(' => {
                let start = i;
                while i < chars.len() && chars[i].1 != ')' {
                    i += 1;
                }
                if i == chars.len() {
                    return Err(err(
                        file,
                        line,
                        col(start),
                        "a comment opened with `(` is not closed",
                        "close it with `)` on the same line",
                    ));
                }
                i += 1;
            }
            '%' if words.is_empty() && text.trim() == "%" => break,
            c if c.is_ascii_alphabetic() => {
                let column = col(i);
                let letter = c.to_ascii_uppercase();
                i += 1;
                while i < chars.len() && (chars[i].1 == ' ' || chars[i].1 == '\t') {
                    i += 1;
                }
                let num_start = i;
                while i < chars.len()
                    && (chars[i].1.is_ascii_digit() || matches!(chars[i].1, '.' | '-' | '+'))
                {
                    i += 1;
                }
                let s: String = chars[num_start..i].iter().map(|c| c.1).collect();
                if i + 1 < chars.len()
                    && matches!(chars[i].1, 'e' | 'E')
                    && (chars[i + 1].1.is_ascii_digit() || matches!(chars[i + 1].1, '-' | '+'))
                    && !s.is_empty()
                {
                    return Err(err(
                        file,
                        line,
                        column,
                        format!(
                            "`{letter}{s}{}…`: G-code numbers have no exponent",
                            chars[i].1
                        ),
                        "write the number out in full, e.g. X1250.5",
                    ));
                }
                let value: f64 = match s.parse() {
                    Ok(v) => v,
                    Err(_) => {
                        return Err(err(
                            file,
                            line,
                            column,
                            format!(
                                "`{letter}` has no readable number{}",
                                if s.is_empty() {
                                    String::new()
                                } else {
                                    format!(" (`{s}`)")
                                }
                            ),
                            "write a letter followed by a number, e.g. X12.5",
                        ));
                    }
                };
                if !value.is_finite() || value.abs() > MAX_VALUE {
                    return Err(err(
                        file,
                        line,
                        column,
                        format!("`{letter}{s}` is out of range (more than {MAX_VALUE} in size)"),
                        "check the number",
                    ));
                }
                words.push(Word {
                    letter,
                    value,
                    column,
                });
            }
            other => {
                return Err(err(
                    file,
                    line,
                    col(i),
                    format!("`{other}` is not a G-code word"),
                    "a word is a letter and a number; comments go in ( ) or after ;",
                ));
            }
        }
    }
    Ok(words)
}

fn trim_num(v: f64) -> String {
    let s = format!("{v:.4}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn events(text: &str) -> Result<Vec<Event>, GcodeError> {
        let mut out = vec![];
        read(text.as_bytes(), "t.nc", ReadOptions::default(), |e| {
            out.push(e)
        })?;
        Ok(out)
    }

    fn moves(text: &str) -> Vec<([f64; 3], [f64; 3])> {
        events(text)
            .unwrap()
            .into_iter()
            .filter_map(|e| match e {
                Event::Move { from, to, .. } => Some((from, to)),
                _ => None,
            })
            .collect()
    }

    #[test]
    fn reads_units_modes_and_moves() {
        let m = moves("G20 G90 G17 G94\nG0 X1 Y2 Z0.5\nG1 Z-0.1 F10\nG91 X1\nM30\n");
        assert_eq!(m.len(), 3);
        // 1 in = 25.4 mm exactly (NIST SP 811).
        assert_eq!(m[0].1, [25.4, 50.8, 12.7]);
        assert!((m[2].1[0] - 50.8).abs() < 1e-12);
    }

    #[test]
    fn arc_by_centre_and_by_radius_agree() {
        // Semicircle from (10,0) to (-10,0) about the origin, counter-clockwise.
        let a = moves("G21 G90\nG0 X10 Y0\nG3 X-10 Y0 I-10 J0 F100\n");
        let b = moves("G21 G90\nG0 X10 Y0\nG3 X-10 Y0 R10 F100\n");
        let top = |m: &[([f64; 3], [f64; 3])]| m.iter().map(|p| p.1[1]).fold(f64::MIN, f64::max);
        assert!((top(&a) - 10.0).abs() < 1e-9);
        assert!((top(&b) - 10.0).abs() < 1e-9);
        for (_, p) in &a {
            assert!(((p[0] * p[0] + p[1] * p[1]).sqrt() - 10.0).abs() < 1e-9);
        }
    }

    #[test]
    fn bad_programs_are_refused_with_their_line() {
        let cases = [
            ("G21\nG1 X10\n", 2, "feed"),
            ("G0 X1\n", 1, "units"),
            ("G21\nG0 X0 Y0\nG2 X30 Y0 R10 F100\n", 3, "too small"),
            ("G21\nG0 X0 Y0\nG2 X10 Y0 I3 J0 F100\n", 3, "does not fit"),
            ("G21\nG54\n", 2, "outside the supported subset"),
            ("G21\nG1 X1.2.3 F1\n", 2, "readable number"),
            ("G21\nX 99999999\n", 2, "out of range"),
            ("G21\n\u{1}\u{2}\n", 2, "control character"),
            ("G21 (open\n", 1, "not closed"),
        ];
        for (text, line, what) in cases {
            let e = events(text).unwrap_err();
            assert_eq!(e.line, line, "{text:?}: {e}");
            assert!(e.to_string().contains(what), "{text:?}: {e}");
        }
        let bin = [0xffu8, 0xfe, 0x00, 0x41];
        let e = read(&bin[..], "b.nc", ReadOptions::default(), |_| {}).unwrap_err();
        assert!(e.message.contains("binary"), "{e}");
    }

    #[test]
    fn lenient_lists_skipped_words() {
        let mut skipped = vec![];
        let opts = ReadOptions {
            lenient: true,
            ..Default::default()
        };
        read("G21 G54\nM8\n".as_bytes(), "t.nc", opts, |e| {
            if let Event::Skipped { word, .. } = e {
                skipped.push(word)
            }
        })
        .unwrap();
        assert_eq!(skipped, ["G54", "M8"]);
    }
}
