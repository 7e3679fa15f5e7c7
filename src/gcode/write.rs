//! Writes toolpaths as a conservative RS-274/NGC program (NIST IR 6556):
//! units, absolute mode, plane and feed mode stated before any motion;
//! clearance height before the first rapid; spindle on and a dwell before
//! the first cut; a feed before the first G1; spindle off and program end
//! last. Numbers have a fixed format per unit, so the same paths give the
//! same bytes.

use std::fmt::Write as _;

use crate::model::machine::{Controller, Machine};
use crate::model::toolpath::{Step, Toolpath};
use crate::units::Unit;

/// What a program's header says.
#[derive(Debug, Clone, PartialEq)]
pub struct Header {
    /// Title lines (board, volume, setup, tool, zero, stock, time).
    pub lines: Vec<String>,
    /// Cautions, one per line.
    pub cautions: Vec<String>,
}

/// The cautions written into every program and the setup sheet.
pub const CAUTIONS: &[&str] = &[
    "CAUTION: the machine maker's manual, your shop rules and local codes come first; this program does not replace them",
    "CAUTION: check work zero and tool length before starting; run an air cut first (zero raised above the stock)",
    "CAUTION: keep the emergency stop within reach; keep hands and loose clothing clear of the gantry and cutter",
    "CAUTION: secure the blank, and the board once it is cut free, so nothing can lift; never hold foam by hand near the cutter",
    "CAUTION: run dust extraction and wear a respirator suited to foam dust; wear eye and ear protection",
];

/// The value in the program's unit and its number of decimals.
fn in_unit(mm: f64, unit: Unit) -> (f64, usize) {
    match unit {
        Unit::Mm => (mm, 3),
        Unit::In => (mm / 25.4, 4),
    }
}

/// `v` rounded to `digits` decimals as an integer count of the last
/// decimal, when the rounding is not a near tie (so it agrees with the
/// exact decimal rounding `{:.N}` does); `None` for the formatter to settle.
fn scaled(v: f64, digits: usize) -> Option<(i64, u64)> {
    let unit = 10u64.pow(digits as u32);
    let s = v * unit as f64;
    let frac = (s - s.trunc()).abs();
    (s.abs() < 1e15 && (frac - 0.5).abs() > 1e-6).then(|| (s.round() as i64, unit))
}

/// How numbers are written: 3 decimals in mm, 4 in inches.
fn num(out: &mut String, mm: f64, unit: Unit) {
    let (v, digits) = in_unit(mm, unit);
    if let Some((n, unit)) = scaled(v, digits) {
        // Integer arithmetic: fast, and no "-0.000".
        if n < 0 {
            out.push('-');
        }
        let a = n.unsigned_abs();
        let _ = write!(out, "{}.{:0digits$}", a / unit, a % unit);
        return;
    }
    let mut s = format!("{v:.digits$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s.remove(0);
    }
    out.push_str(&s);
}

/// Keeps only characters a comment may hold (no parentheses, ASCII).
fn comment(out: &mut String, text: &str) {
    let clean: String = text
        .chars()
        .map(|c| match c {
            '(' | ')' => '-',
            c if c.is_ascii() && !c.is_control() => c,
            '°' => 'd',
            _ => '?',
        })
        .collect();
    let _ = writeln!(out, "({clean})");
}

/// A comment wrapped at word boundaries into lines of at most `width`
/// characters of text (a word longer than that stands alone).
fn comment_wrapped(out: &mut String, text: &str, width: Option<usize>) {
    let Some(width) = width else {
        comment(out, text);
        return;
    };
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.len() + 1 + word.len() > width {
            comment(out, &line);
            line.clear();
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        comment(out, &line);
    }
}

/// Modal state of the program being written, so each line carries only
/// the words that change.
struct Writer {
    out: String,
    unit: Unit,
    pos: [Option<String>; 3],
    feed: Option<String>,
    mode: Option<&'static str>,
    /// Last position in mm, for capping the feed of steep moves.
    at: [f64; 3],
    /// Fastest Z feed the machine allows, mm/min.
    max_feed_z: f64,
}

impl Writer {
    fn fmt(&self, mm: f64) -> String {
        let mut s = String::new();
        num(&mut s, mm, self.unit);
        s
    }

    /// A position as a reader of the text will see it: rounded as written,
    /// back in mm.
    fn as_read(&self, p: [f64; 3]) -> [f64; 3] {
        let k = match self.unit {
            Unit::Mm => 1.0,
            Unit::In => 25.4,
        };
        p.map(|v| {
            let (u, digits) = in_unit(v, self.unit);
            match scaled(u, digits) {
                // The nearest double to the decimal, as parsing it gives.
                Some((n, unit)) => n as f64 / unit as f64 * k,
                None => self.fmt(v).parse::<f64>().unwrap_or(v / k) * k,
            }
        })
    }

    fn motion(
        &mut self,
        word: &'static str,
        to: [f64; 3],
        feed: Option<f64>,
        centre: Option<[f64; 2]>,
    ) {
        let mut words: Vec<String> = Vec::new();
        let from = self.pos.clone();
        for (a, letter) in ["X", "Y", "Z"].iter().enumerate() {
            let v = self.fmt(to[a]);
            let arc_xy = centre.is_some() && a < 2;
            if self.pos[a].as_deref() != Some(v.as_str()) || arc_xy {
                words.push(format!("{letter}{v}"));
            }
            self.pos[a] = Some(v);
        }
        if let Some(c) = centre {
            // I and J are offsets from the start point (NIST IR 6556, 3.5.3).
            let fx: f64 = from[0]
                .as_deref()
                .and_then(|s| s.parse().ok())
                .unwrap_or(0.0);
            let fy: f64 = from[1]
                .as_deref()
                .and_then(|s| s.parse().ok())
                .unwrap_or(0.0);
            let k = match self.unit {
                Unit::Mm => 1.0,
                Unit::In => 25.4,
            };
            words.push(format!("I{}", self.fmt(c[0] - fx * k)));
            words.push(format!("J{}", self.fmt(c[1] - fy * k)));
        }
        if words.is_empty() {
            self.at = to;
            return;
        }
        let mut line = String::new();
        if self.mode != Some(word) || centre.is_some() {
            line.push_str(word);
            line.push(' ');
            self.mode = Some(word);
        }
        line.push_str(&words.join(" "));
        if let Some(f) = feed {
            // A steep move is slowed so its Z component stays within the
            // machine's Z rate, measured on the rounded positions written.
            let (a, b) = (self.as_read(self.at), self.as_read(to));
            let d = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
            let len = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt();
            let f = if centre.is_none() && d[2].abs() > 0.0 {
                f.min(0.99 * self.max_feed_z * len / d[2].abs())
            } else {
                f
            };
            let f = match self.unit {
                Unit::Mm => format!("{:.0}", f.floor()),
                Unit::In => format!("{:.1}", (f / 25.4 * 10.0).floor() / 10.0),
            };
            if self.feed.as_deref() != Some(f.as_str()) {
                line.push_str(" F");
                line.push_str(&f);
                self.feed = Some(f);
            }
        }
        self.at = to;
        let _ = writeln!(self.out, "{line}");
    }

    fn raw(&mut self, text: &str) {
        let _ = writeln!(self.out, "{text}");
    }
}

/// Where cutting feeds are reduced: a stringer down the stock's middle.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StringerFeed {
    /// Its middle line, Y (setup coordinates; the same after the flip).
    pub centre: f64,
    /// Half its width.
    pub half_width: f64,
    /// Share of each cutting feed used where the tool touches it.
    pub share: f64,
}

impl StringerFeed {
    /// The tool-centre band, in Y, where a tool of radius `r` touches it.
    pub fn band(&self, r: f64) -> [f64; 2] {
        let h = self.half_width + r;
        [self.centre - h, self.centre + h]
    }
}

/// A straight move from `a` to `b` cut where it enters and leaves the band
/// `[y0, y1]`: the end of each piece, and whether the piece lies in it.
pub fn split_at_band(a: [f64; 3], b: [f64; 3], band: [f64; 2]) -> Vec<([f64; 3], bool)> {
    let dy = b[1] - a[1];
    let mut ts: Vec<f64> = band
        .iter()
        .filter(|_| dy.abs() > 1e-12)
        .map(|&y| (y - a[1]) / dy)
        .filter(|&t| t > 1e-6 && t < 1.0 - 1e-6)
        .collect();
    ts.sort_by(f64::total_cmp);
    ts.push(1.0);
    let at = |t: f64| [0, 1, 2].map(|k| a[k] + t * (b[k] - a[k]));
    let mut prev = 0.0;
    ts.into_iter()
        .map(|t| {
            let mid = at(0.5 * (prev + t))[1];
            prev = t;
            (
                if t == 1.0 { b } else { at(t) },
                mid >= band[0] && mid <= band[1],
            )
        })
        .collect()
}

/// One program: the header, then each toolpath (all with one tool unless
/// `tool_changer`), then the end; cutting moves slowed over the stringer.
/// Written in `machine`'s units and its controller's dialect (start and
/// end markers, dwell units, tool changes, comment width), with rapids at
/// `clearance`.
pub fn program(
    header: &Header,
    paths: &[&Toolpath],
    machine: &Machine,
    clearance: f64,
    stringer: Option<StringerFeed>,
) -> String {
    let (unit, dwell, tool_changer) = (machine.output, machine.spindle_ramp, machine.tool_changer);
    let controller = machine.controller;
    let width = controller.comment_width();
    let mut w = Writer {
        out: String::new(),
        unit,
        pos: [None, None, None],
        feed: None,
        mode: None,
        at: [0.0, 0.0, clearance],
        max_feed_z: machine.max_feed_z,
    };
    if controller == Controller::Fanuc {
        // Tape start and the program number (common practice on these
        // controls, from memory).
        w.raw("%");
        w.raw("O1000");
    }
    for l in &header.lines {
        comment_wrapped(&mut w.out, l, width);
    }
    for c in &header.cautions {
        comment_wrapped(&mut w.out, c, width);
    }
    w.raw(match unit {
        Unit::Mm => "G21 G90 G17 G94",
        Unit::In => "G20 G90 G17 G94",
    });
    let z = w.fmt(clearance);
    // Clearance height before the first rapid.
    w.raw(&format!("G0 Z{z}"));
    w.mode = Some("G0");
    w.pos[2] = Some(z.clone());
    let mut tool: Option<u32> = None;
    let mut rpm: Option<f64> = None;
    for p in paths {
        comment_wrapped(
            &mut w.out,
            &format!("{}: {}", p.label, p.pass.tool.describe()),
            width,
        );
        if tool != Some(p.pass.tool.id) {
            if tool.is_some() {
                w.raw(&format!("G0 Z{z}"));
                w.mode = Some("G0");
                w.pos[2] = Some(z.clone());
                w.raw("M5");
                rpm = None;
            }
            if tool_changer {
                w.raw(&format!("T{} M6", p.pass.tool.id));
            } else if controller != Controller::Grbl {
                // GRBL 1.1 takes no tool change: the operator loads the
                // tool this program is for, as the setup sheet says.
                w.raw(&format!("T{}", p.pass.tool.id));
            }
            tool = Some(p.pass.tool.id);
        }
        if rpm != Some(p.pass.spindle) {
            w.raw(&format!("S{:.0} M3", p.pass.spindle));
            w.raw(&controller.dwell(dwell));
            rpm = Some(p.pass.spindle);
        }
        for s in &p.steps {
            match *s {
                Step::Rapid(to) => w.motion("G0", to, None, None),
                Step::Plunge(to) => w.motion("G1", to, Some(p.pass.plunge_feed), None),
                Step::Cut(to) => match stringer {
                    None => w.motion("G1", to, Some(p.pass.feed), None),
                    Some(sf) => {
                        let band = sf.band(p.pass.tool.cutter.radius);
                        for (q, slow) in split_at_band(w.at, to, band) {
                            let f = if slow {
                                p.pass.feed * sf.share
                            } else {
                                p.pass.feed
                            };
                            w.motion("G1", q, Some(f), None);
                        }
                    }
                },
                Step::Arc { to, centre, cw } => w.motion(
                    if cw { "G2" } else { "G3" },
                    to,
                    Some(p.pass.feed),
                    Some(centre),
                ),
            }
        }
    }
    w.raw(&format!("G0 Z{z}"));
    w.raw("M5");
    w.raw("M30");
    if controller == Controller::Fanuc {
        w.raw("%");
    }
    w.out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A move across the band is cut where it enters and leaves it, by
    /// plain interpolation: from Y 0 to Y 100 across [40, 60], pieces end
    /// at 40, 60 and 100, only the middle one in the band.
    #[test]
    fn a_move_across_the_stringer_is_cut_at_its_edges() {
        let p = split_at_band([0.0, 0.0, -1.0], [10.0, 100.0, -3.0], [40.0, 60.0]);
        assert_eq!(p.len(), 3);
        assert_eq!(p[0], ([4.0, 40.0, -1.8], false));
        assert_eq!(p[1], ([6.0, 60.0, -2.2], true));
        assert_eq!(p[2], ([10.0, 100.0, -3.0], false));
        // Along the band: one piece, in it; beside it: one piece, out.
        assert_eq!(
            split_at_band([0.0, 50.0, 0.0], [9.0, 50.0, 0.0], [40.0, 60.0]),
            vec![([9.0, 50.0, 0.0], true)]
        );
        assert_eq!(
            split_at_band([0.0, 10.0, 0.0], [9.0, 20.0, 0.0], [40.0, 60.0]),
            vec![([9.0, 20.0, 0.0], false)]
        );
    }
    use crate::gcode::read::{self, Event, Motion, ReadOptions};
    use crate::model::job::Pass;
    use crate::model::machine::{Cutter, Tool};

    /// The integer formatting writes what the standard library's exact
    /// decimal rounding (`{:.3}`, `{:.4}`) writes, near ties included.
    #[test]
    fn numbers_match_exact_decimal_rounding() {
        let mut seed = 7u64;
        let mut rnd = || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        let mut values = vec![
            0.0,
            -0.0,
            -0.0004,
            0.0005,
            0.0015,
            2.0625,
            -1.00049999,
            99999.9995,
        ];
        for _ in 0..200_000 {
            let v = (rnd() - 0.5) * 2.0 * 10f64.powf(rnd() * 5.0);
            values.push(v);
            // Values on and next to a tie at 3 decimals.
            let t = (v * 1000.0).trunc() / 1000.0 + 0.0005;
            values.extend([t, t.next_up(), t.next_down()]);
        }
        for v in values {
            for unit in [Unit::Mm, Unit::In] {
                let mut got = String::new();
                num(&mut got, v, unit);
                let (u, d) = in_unit(v, unit);
                let mut want = format!("{u:.d$}");
                if want.starts_with('-') && want[1..].chars().all(|c| c == '0' || c == '.') {
                    want.remove(0);
                }
                assert_eq!(got, want, "{v:e}");
            }
        }
    }

    /// Tiny steep moves (as refinement makes near an edge) keep their Z feed
    /// within the machine's rate as the program is read back: the cap is
    /// taken on the positions as rounded in the text.
    #[test]
    fn steep_tiny_moves_stay_within_the_z_rate_as_written() {
        let tool = Tool {
            id: 2,
            cutter: Cutter::ball(12.7),
            flute_length: 60.0,
            reach: 160.0,
            max_stepdown: 60.0,
            label: String::new(),
        };
        let pass = Pass {
            tool,
            stepdown: 10.0,
            stepover: 2.0,
            leave: 0.0,
            feed: 10_000.0,
            plunge_feed: 2000.0,
            spindle: 18_000.0,
            climb: true,
            ramp_angle: crate::profiles::job::DEFAULT_RAMP_ANGLE,
        };
        let mut steps = vec![
            Step::Rapid([10.0, 10.0, 25.0]),
            Step::Plunge([10.0, 10.0, 0.0]),
        ];
        let mut p = [10.0, 10.0, 0.0];
        for k in 0..400 {
            // Steps of 0.0013 to 0.0041 mm across, 0.0007 to 0.03 mm down.
            p = [
                p[0] + 0.0013 + 0.0028 * ((k * 7) % 11) as f64 / 10.0,
                p[1],
                p[2] - 0.0007 - 0.03 * ((k * 3) % 5) as f64 / 4.0,
            ];
            steps.push(Step::Cut(p));
        }
        let path = Toolpath {
            label: "finishing",
            pass,
            steps,
        };
        for unit in [Unit::Mm, Unit::In] {
            let machine = Machine {
                output: unit,
                max_feed_z: 5000.0,
                spindle_ramp: 5.0,
                tool_changer: false,
                ..crate::profiles::machine::generic_machine()
            };
            let text = program(
                &Header {
                    lines: vec![],
                    cautions: vec![],
                },
                &[&path],
                &machine,
                25.0,
                None,
            );
            let mut worst: f64 = 0.0;
            read::read(text.as_bytes(), "t.nc", ReadOptions::default(), |e| {
                if let Event::Move {
                    motion: Motion::Linear,
                    from,
                    to,
                    feed,
                    ..
                } = e
                {
                    let d = [to[0] - from[0], to[1] - from[1], to[2] - from[2]];
                    let len = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt();
                    if len > 0.0 {
                        worst = worst.max(feed * d[2].abs() / len);
                    }
                }
            })
            .unwrap();
            assert!(worst <= 5000.0, "{unit:?}: Z feed {worst}");
        }
    }
}
