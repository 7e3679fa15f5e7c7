//! The router as the programs see it: its travel, feeds, spindle and tool
//! list, resolved to millimetres and millimetres per minute; and the shape
//! of a cutter.

use serde::Deserialize;

use crate::units::{self, Unit};

/// The cutting end of a tool.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ToolKind {
    /// Flat end mill.
    Flat,
    /// Ball-end mill.
    Ball,
    /// Bull-nose (flat with a corner radius).
    Bull,
}

impl ToolKind {
    /// The word used in files and messages.
    pub fn name(self) -> &'static str {
        match self {
            ToolKind::Flat => "flat",
            ToolKind::Ball => "ball",
            ToolKind::Bull => "bull",
        }
    }
}

/// The shape of a cutter below its holder, in mm.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cutter {
    /// End shape.
    pub kind: ToolKind,
    /// Radius (half the diameter).
    pub radius: f64,
    /// Corner radius (radius for a ball, 0 for a flat).
    pub corner: f64,
}

impl Cutter {
    /// A flat end mill of diameter `d`.
    pub fn flat(d: f64) -> Cutter {
        Cutter {
            kind: ToolKind::Flat,
            radius: d / 2.0,
            corner: 0.0,
        }
    }
    /// A ball-end mill of diameter `d`.
    pub fn ball(d: f64) -> Cutter {
        Cutter {
            kind: ToolKind::Ball,
            radius: d / 2.0,
            corner: d / 2.0,
        }
    }
    /// A bull-nose of diameter `d` and corner radius `c`.
    pub fn bull(d: f64, c: f64) -> Cutter {
        Cutter {
            kind: ToolKind::Bull,
            radius: d / 2.0,
            corner: c,
        }
    }

    /// Height of the cutter's surface above its tip at horizontal distance
    /// `d` from the axis; `None` beyond the radius.
    pub fn height_at(&self, d: f64) -> Option<f64> {
        if d > self.radius {
            return None;
        }
        let flat = self.radius - self.corner;
        if d <= flat {
            return Some(0.0);
        }
        let u = d - flat;
        Some(self.corner - (self.corner * self.corner - u * u).max(0.0).sqrt())
    }

    /// `ball:12.7mm`, `flat:19.05mm`, `bull:20mm:3mm`.
    pub fn describe(&self) -> String {
        match self.kind {
            ToolKind::Bull => format!("bull:{}mm:{}mm", trim(2.0 * self.radius), trim(self.corner)),
            k => format!("{}:{}mm", k.name(), trim(2.0 * self.radius)),
        }
    }
}

fn trim(v: f64) -> String {
    let s = format!("{v:.3}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// Reads `flat:10mm`, `ball:12.7mm`, `bull:20mm:3mm` (bare numbers in mm).
pub fn parse_cutter(text: &str) -> Result<Cutter, String> {
    let parts: Vec<&str> = text.split(':').map(str::trim).collect();
    let length = |s: &str, what: &str| -> Result<f64, String> {
        let v = units::parse_length(s)
            .map_err(|e| format!("`{text}`: the {what} {e}"))?
            .to_mm(Unit::Mm);
        if v > 0.0 && v < 1000.0 {
            Ok(v)
        } else {
            Err(format!(
                "`{text}`: the {what} must be more than 0 and less than 1000 mm"
            ))
        }
    };
    let hint = "write KIND:DIAMETER[:CORNER], e.g. flat:10mm, ball:12.7mm or bull:20mm:3mm";
    match parts.as_slice() {
        ["flat", d] => Ok(Cutter::flat(length(d, "diameter")?)),
        ["ball", d] => Ok(Cutter::ball(length(d, "diameter")?)),
        ["bull", d, c] => {
            let d = length(d, "diameter")?;
            let c = length(c, "corner radius")?;
            if c > d / 2.0 {
                return Err(format!(
                    "`{text}`: the corner radius is more than half the diameter"
                ));
            }
            Ok(Cutter::bull(d, c))
        }
        _ => Err(format!("`{text}` is not a tool; {hint}")),
    }
}

/// A tool in the machine's list.
#[derive(Debug, Clone, PartialEq)]
pub struct Tool {
    /// Tool number (T word).
    pub id: u32,
    /// Shape.
    pub cutter: Cutter,
    /// Length of the cutting flutes.
    pub flute_length: f64,
    /// Length from the tip to the holder (collet nut).
    pub reach: f64,
    /// Deepest cut in one pass the tool allows.
    pub max_stepdown: f64,
    /// What the shop calls it.
    pub label: String,
}

impl Tool {
    /// `T2 ball 12.7 mm (1/2")`.
    pub fn describe(&self) -> String {
        format!(
            "T{} {} {:.2} mm ({}){}",
            self.id,
            self.cutter.kind.name(),
            2.0 * self.cutter.radius,
            units::inches(2.0 * self.cutter.radius),
            if self.label.is_empty() {
                String::new()
            } else {
                format!(", {}", self.label)
            }
        )
    }
}

/// The controller a router runs, and so the dialect of its programs. What
/// each changes is in the README (Controllers); the differences are from
/// each controller's documentation as remembered, not re-read here.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Controller {
    /// LinuxCNC (RS-274/NGC): G4 P in seconds, `T M6` with a changer.
    LinuxCnc,
    /// GRBL 1.1: no tool change (one program per tool, no T word), G4 P
    /// in seconds, short lines.
    Grbl,
    /// Mach3/Mach4-style: G4 P in seconds (the default setting), `T M6`.
    Mach,
    /// Fanuc-style: `%` and an O number round the program, G4 P in
    /// milliseconds, `T M6`.
    Fanuc,
}

impl Controller {
    /// The word in a machine profile.
    pub fn word(self) -> &'static str {
        match self {
            Controller::LinuxCnc => "linuxcnc",
            Controller::Grbl => "grbl",
            Controller::Mach => "mach",
            Controller::Fanuc => "fanuc",
        }
    }

    /// The name on the setup sheet and in headers.
    pub fn name(self) -> &'static str {
        match self {
            Controller::LinuxCnc => "LinuxCNC",
            Controller::Grbl => "GRBL 1.1",
            Controller::Mach => "Mach3/Mach4-style",
            Controller::Fanuc => "Fanuc-style",
        }
    }

    /// Seconds of a dwell's P word.
    pub fn dwell_seconds(self, p: f64) -> f64 {
        match self {
            Controller::Fanuc => p / 1000.0,
            _ => p,
        }
    }

    /// A dwell of `seconds` as this controller reads it.
    pub fn dwell(self, seconds: f64) -> String {
        match self {
            Controller::Fanuc => format!("G4 P{:.0}", (seconds * 1000.0).round()),
            _ => format!("G4 P{seconds:.1}"),
        }
    }

    /// Longest comment text on one line, characters, where the controller
    /// (or the way it is fed) limits lines; longer comments are wrapped.
    pub fn comment_width(self) -> Option<usize> {
        match self {
            // GRBL 1.1 streams through a 128-byte serial buffer and an
            // 80-character line buffer (from memory): keep every line short.
            Controller::Grbl => Some(70),
            _ => None,
        }
    }
}

/// A 3-axis router, resolved: lengths in mm, feeds in mm/min.
#[derive(Debug, Clone, PartialEq)]
pub struct Machine {
    /// Name for headers.
    pub name: String,
    /// Travel of the tool tip: X, Y from the machine zero, Z above the bed.
    pub travel: [f64; 3],
    /// Height of the table (spoilboard) top above the bed.
    pub table_top: f64,
    /// How far a cut may go into the spoilboard (through holes).
    pub spoilboard_allowance: f64,
    /// Fastest feed in X and Y.
    pub max_feed_xy: f64,
    /// Fastest feed in Z.
    pub max_feed_z: f64,
    /// Rapid rate in X and Y (for time estimates).
    pub rapid_xy: f64,
    /// Rapid rate in Z.
    pub rapid_z: f64,
    /// Acceleration of each axis (X, Y, Z), mm/s², for run-time estimates.
    pub accel: [f64; 3],
    /// Slowest spindle speed, rpm.
    pub spindle_min: f64,
    /// Fastest spindle speed, rpm.
    pub spindle_max: f64,
    /// Seconds the spindle needs to reach speed.
    pub spindle_ramp: f64,
    /// Units the programs are written in.
    pub output: Unit,
    /// Safe height above the top of the stock for rapid moves.
    pub clearance: f64,
    /// Whether tools change within a program (M6).
    pub tool_changer: bool,
    /// The controller, and so the programs' dialect.
    pub controller: Controller,
    /// Tool list.
    pub tools: Vec<Tool>,
}

impl Machine {
    /// The tool numbered `id`.
    pub fn tool(&self, id: u32) -> Option<&Tool> {
        self.tools.iter().find(|t| t.id == id)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cutter_profiles() {
        // Ball: R - sqrt(R^2 - d^2); bull: flat to r - c then the corner arc (geometry).
        let b = Cutter::ball(12.0);
        assert_eq!(b.height_at(0.0), Some(0.0));
        assert!((b.height_at(6.0).unwrap() - 6.0).abs() < 1e-12);
        assert!((b.height_at(3.0).unwrap() - (6.0 - 27f64.sqrt())).abs() < 1e-12);
        assert_eq!(b.height_at(6.1), None);
        let bull = parse_cutter("bull:20mm:3mm").unwrap();
        assert_eq!(bull.height_at(7.0), Some(0.0));
        assert!((bull.height_at(10.0).unwrap() - 3.0).abs() < 1e-12);
        assert!(parse_cutter("bull:20mm:11mm").is_err());
        assert!(parse_cutter("drill:5mm").is_err());
    }
}
