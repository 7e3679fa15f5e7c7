//! The machine profile: what the router can do, read from YAML with the
//! same located errors as board descriptions into the model's `Machine`;
//! every length is resolved to millimetres and every feed to millimetres
//! per minute here, at the edge. The job profile's reader shares `Reader`.

use std::fmt;
use std::path::Path;

use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use serde_saphyr::{Location, Spanned};

use crate::description::values::LengthValue;
use crate::description::{self, DescriptionError};
use crate::model::machine::{Controller, Cutter, Machine, Tool, ToolKind};
use crate::units::{self, Unit};

/// The shipped generic gantry router profile.
pub const GENERIC_MACHINE: &str = include_str!("../../fixtures/machine-gantry-3000.yaml");
/// Name the shipped machine profile is reported under.
pub const GENERIC_MACHINE_NAME: &str = "fixtures/machine-gantry-3000.yaml";

/// A feed rate as written: a bare number (per minute in the file's unit) or
/// `6000mm/min`, `240in/min`, `100mm/s`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FeedValue {
    /// A number in the file's unit per minute.
    Bare(f64),
    /// Already in mm/min.
    MmPerMin(f64),
}

impl FeedValue {
    /// Millimetres per minute, reading a bare number in `unit` per minute.
    pub fn mm_per_min(self, unit: Unit) -> f64 {
        match self {
            FeedValue::Bare(v) => v * unit.mm(),
            FeedValue::MmPerMin(v) => v,
        }
    }
}

/// Reads `6000mm/min`, `240 in/min`, `100mm/s`, `6m/min`, `240ipm`.
pub fn parse_feed(text: &str) -> Result<FeedValue, String> {
    let t = text.trim().to_ascii_lowercase().replace(' ', "");
    let table: [(&str, f64); 7] = [
        ("mm/min", 1.0),
        ("mm/s", 60.0),
        ("m/min", 1000.0),
        ("in/min", units::MM_PER_INCH),
        ("ipm", units::MM_PER_INCH),
        ("in/s", 60.0 * units::MM_PER_INCH),
        ("ft/min", units::MM_PER_FOOT),
    ];
    for (suffix, k) in table {
        if let Some(n) = t.strip_suffix(suffix) {
            return match n.parse::<f64>() {
                Ok(v) if v.is_finite() => Ok(FeedValue::MmPerMin(v * k)),
                _ => Err(format!("`{text}`: `{n}` is not a number")),
            };
        }
    }
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(FeedValue::Bare(v)),
        _ => Err(format!(
            "`{text}` is not a feed; write e.g. 6000mm/min, 240in/min or 100mm/s"
        )),
    }
}

struct FeedVisitor;

impl<'de> Visitor<'de> for FeedVisitor {
    type Value = FeedValue;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a feed such as 6000mm/min, 240in/min or 100mm/s")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<FeedValue, E> {
        if v.is_finite() {
            Ok(FeedValue::Bare(v))
        } else {
            Err(E::custom("a feed must be a finite number"))
        }
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<FeedValue, E> {
        Ok(FeedValue::Bare(v as f64))
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<FeedValue, E> {
        Ok(FeedValue::Bare(v as f64))
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<FeedValue, E> {
        parse_feed(v).map_err(E::custom)
    }
}

impl<'de> Deserialize<'de> for FeedValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(FeedVisitor)
    }
}

/// A stepover: a length, or a share of the tool diameter (`40%`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StepoverValue {
    /// A length.
    Length(LengthValue),
    /// A fraction of the tool diameter.
    Share(f64),
}

struct StepoverVisitor;

impl<'de> Visitor<'de> for StepoverVisitor {
    type Value = StepoverValue;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a length such as 8mm or 5/16, or a share of the tool diameter such as 40%")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<StepoverValue, E> {
        if v.is_finite() {
            Ok(StepoverValue::Length(LengthValue(units::Length::Bare(v))))
        } else {
            Err(E::custom("a stepover must be a finite number"))
        }
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<StepoverValue, E> {
        self.visit_f64(v as f64)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<StepoverValue, E> {
        self.visit_f64(v as f64)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<StepoverValue, E> {
        if let Some(p) = v.trim().strip_suffix('%') {
            return match p.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(StepoverValue::Share(x / 100.0)),
                _ => Err(E::custom(format!("`{v}` is not a percentage"))),
            };
        }
        units::parse_length(v)
            .map(|l| StepoverValue::Length(LengthValue(l)))
            .map_err(E::custom)
    }
}

impl<'de> Deserialize<'de> for StepoverValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(StepoverVisitor)
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Xyz {
    x: Spanned<LengthValue>,
    y: Spanned<LengthValue>,
    z: Spanned<LengthValue>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct FeedPair {
    xy: Spanned<FeedValue>,
    z: Spanned<FeedValue>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct SpindleRange {
    min: Spanned<f64>,
    max: Spanned<f64>,
    #[serde(default)]
    ramp_seconds: Option<Spanned<f64>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ToolSpec {
    id: Spanned<u32>,
    kind: Spanned<ToolKind>,
    diameter: Spanned<LengthValue>,
    #[serde(default)]
    corner_radius: Option<Spanned<LengthValue>>,
    flute_length: Spanned<LengthValue>,
    length_below_holder: Spanned<LengthValue>,
    #[serde(default)]
    max_stepdown: Option<Spanned<LengthValue>>,
    #[serde(default)]
    label: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct MachineFile {
    name: Spanned<String>,
    units: Spanned<Unit>,
    #[serde(default)]
    output_units: Option<Spanned<Unit>>,
    travel: Xyz,
    table_top: Spanned<LengthValue>,
    #[serde(default)]
    spoilboard_allowance: Option<Spanned<LengthValue>>,
    max_feed: FeedPair,
    rapid: FeedPair,
    #[serde(default)]
    acceleration: Option<Spanned<Accel>>,
    spindle: SpindleRange,
    clearance: Spanned<LengthValue>,
    #[serde(default)]
    tool_changer: bool,
    #[serde(default)]
    controller: Option<Spanned<ControllerWord>>,
    tools: Spanned<Vec<ToolSpec>>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
enum ControllerWord {
    Linuxcnc,
    Grbl,
    Mach,
    Fanuc,
}

/// `acceleration: {x: .., y: .., z: ..}`, in the file's units per second
/// squared.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Accel {
    x: Spanned<f64>,
    y: Spanned<f64>,
    z: Spanned<f64>,
}

/// Axis accelerations when a profile gives none, mm/s²: a light gantry
/// router's (common practice, from memory; check your machine's manual or
/// its controller's settings).
pub const DEFAULT_ACCEL: [f64; 3] = [1000.0, 1000.0, 500.0];

/// Reads values with the file's text at hand for located errors.
pub(crate) struct Reader<'a> {
    pub text: &'a str,
    pub file: &'a str,
    pub unit: Unit,
}

impl Reader<'_> {
    pub fn fail<T>(
        &self,
        at: &Location,
        field: &str,
        rule: impl Into<String>,
        hint: impl Into<String>,
    ) -> Result<T, DescriptionError> {
        Err(description::rule_error(
            self.text, self.file, at, field, rule, hint,
        ))
    }

    /// A length in (lo, hi], in mm.
    pub fn length(
        &self,
        v: &Spanned<LengthValue>,
        field: &str,
        lo: f64,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        let x = v.value.0.to_mm(self.unit);
        if x > lo && x <= hi {
            return Ok(x);
        }
        self.fail(
            &v.referenced,
            field,
            format!(
                "is {}; it must be more than {} and at most {}",
                mm_text(x),
                mm_text(lo),
                mm_text(hi)
            ),
            hint,
        )
    }

    /// A length in [lo, hi], in mm.
    pub fn length_or_zero(
        &self,
        v: &Spanned<LengthValue>,
        field: &str,
        lo: f64,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        let x = v.value.0.to_mm(self.unit);
        if x >= lo && x <= hi {
            return Ok(x);
        }
        self.fail(
            &v.referenced,
            field,
            format!(
                "is {}; it must be at least {} and at most {}",
                units::exact(x),
                units::exact(lo),
                units::exact(hi)
            ),
            hint,
        )
    }

    /// A feed in (0, hi] mm/min.
    pub fn feed(
        &self,
        v: &Spanned<FeedValue>,
        field: &str,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        let x = v.value.mm_per_min(self.unit);
        if x > 0.0 && x <= hi {
            return Ok(x);
        }
        self.fail(
            &v.referenced,
            field,
            format!(
                "is {x:.0} mm/min ({:.1} in/min); it must be more than 0 and at most {hi:.0} mm/min",
                x / units::MM_PER_INCH
            ),
            hint,
        )
    }

    /// A plain number in [lo, hi].
    pub fn number(
        &self,
        v: &Spanned<f64>,
        field: &str,
        lo: f64,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        if v.value.is_finite() && v.value >= lo && v.value <= hi {
            return Ok(v.value);
        }
        self.fail(
            &v.referenced,
            field,
            format!("is {}; it must be between {lo} and {hi}", v.value),
            hint,
        )
    }
}

/// `12.70 mm (1/2")`.
pub fn mm_text(mm: f64) -> String {
    units::exact(mm)
}

/// Longest travel a profile may give (20 m): a typo guard, not a real limit.
const MAX_TRAVEL: f64 = 20_000.0;

fn resolve_machine(raw: MachineFile, text: &str, file: &str) -> Result<Machine, DescriptionError> {
    let r = Reader {
        text,
        file,
        unit: raw.units.value,
    };
    let controller = match raw.controller.as_ref().map(|c| c.value) {
        None | Some(ControllerWord::Linuxcnc) => Controller::LinuxCnc,
        Some(ControllerWord::Grbl) => Controller::Grbl,
        Some(ControllerWord::Mach) => Controller::Mach,
        Some(ControllerWord::Fanuc) => Controller::Fanuc,
    };
    if controller == Controller::Grbl
        && raw.tool_changer
        && let Some(c) = &raw.controller
    {
        return r.fail(
            &c.referenced,
            "controller",
            "is grbl, which has no tool change (GRBL 1.1 does not take M6), but tool_changer is true",
            "set tool_changer: false (one program per tool), or name the controller that changes tools",
        );
    }
    let travel = [
        r.length(
            &raw.travel.x,
            "travel.x",
            0.0,
            MAX_TRAVEL,
            "the X travel of the tool tip",
        )?,
        r.length(
            &raw.travel.y,
            "travel.y",
            0.0,
            MAX_TRAVEL,
            "the Y travel of the tool tip",
        )?,
        r.length(
            &raw.travel.z,
            "travel.z",
            0.0,
            2000.0,
            "the Z travel above the bed",
        )?,
    ];
    let table_top = r.length_or_zero(
        &raw.table_top,
        "table_top",
        0.0,
        travel[2],
        "the height of the spoilboard top above the bed, within the Z travel",
    )?;
    let spoilboard_allowance = match &raw.spoilboard_allowance {
        Some(v) => r.length_or_zero(
            v,
            "spoilboard_allowance",
            0.0,
            table_top.min(25.0),
            "how deep a through cut may go into the spoilboard (at most its height, at most 25 mm)",
        )?,
        None => 0.0,
    };
    let feed_cap = 100_000.0;
    let max_feed_xy = r.feed(
        &raw.max_feed.xy,
        "max_feed.xy",
        feed_cap,
        "the machine maker's rating",
    )?;
    let max_feed_z = r.feed(
        &raw.max_feed.z,
        "max_feed.z",
        feed_cap,
        "the machine maker's rating",
    )?;
    let rapid_xy = r.feed(
        &raw.rapid.xy,
        "rapid.xy",
        feed_cap,
        "the machine's G0 rate in X and Y",
    )?;
    let rapid_z = r.feed(
        &raw.rapid.z,
        "rapid.z",
        feed_cap,
        "the machine's G0 rate in Z",
    )?;
    let spindle_max = r.number(&raw.spindle.max, "spindle.max", 1.0, 100_000.0, "rpm")?;
    let spindle_min = r.number(
        &raw.spindle.min,
        "spindle.min",
        0.0,
        spindle_max,
        "rpm, at most spindle.max",
    )?;
    let spindle_ramp = match &raw.spindle.ramp_seconds {
        Some(v) => r.number(
            v,
            "spindle.ramp_seconds",
            0.0,
            120.0,
            "seconds to reach speed",
        )?,
        None => 5.0,
    };
    let per = raw.units.value.mm();
    let accel = match &raw.acceleration {
        Some(a) => {
            let mut out = [0.0; 3];
            for (k, (v, field)) in [
                (&a.value.x, "acceleration.x"),
                (&a.value.y, "acceleration.y"),
                (&a.value.z, "acceleration.z"),
            ]
            .into_iter()
            .enumerate()
            {
                out[k] = per
                    * r.number(
                        v,
                        field,
                        10.0 / per,
                        50_000.0 / per,
                        "the axis's acceleration in the file's units per second squared, from the machine's manual or its controller (e.g. LinuxCNC's MAX_ACCELERATION)",
                    )?;
            }
            out
        }
        None => DEFAULT_ACCEL,
    };
    let clearance = r.length(
        &raw.clearance,
        "clearance",
        1.0,
        travel[2],
        "the height above the stock top for rapid moves, e.g. 25 mm",
    )?;
    let mut tools: Vec<Tool> = Vec::new();
    if raw.tools.value.is_empty() {
        return r.fail(
            &raw.tools.referenced,
            "tools",
            "is empty",
            "list at least one tool",
        );
    }
    for (i, t) in raw.tools.value.iter().enumerate() {
        let f = |name: &str| format!("tools[{i}].{name}");
        let id = t.id.value;
        if id == 0 || id > 99 {
            return r.fail(
                &t.id.referenced,
                &f("id"),
                format!("is {id}; tool numbers run 1 to 99"),
                "use the number on the tool rack",
            );
        }
        if tools.iter().any(|o| o.id == id) {
            return r.fail(
                &t.id.referenced,
                &f("id"),
                format!("T{id} is listed twice"),
                "give each tool its own number",
            );
        }
        let d = r.length(
            &t.diameter,
            &f("diameter"),
            0.0,
            100.0,
            "the cutting diameter",
        )?;
        let cutter = match t.kind.value {
            ToolKind::Flat => {
                if let Some(c) = &t.corner_radius {
                    return r.fail(
                        &c.referenced,
                        &f("corner_radius"),
                        "does not apply to a flat end mill",
                        "use kind: bull for a corner radius",
                    );
                }
                Cutter::flat(d)
            }
            ToolKind::Ball => {
                if let Some(c) = &t.corner_radius {
                    return r.fail(
                        &c.referenced,
                        &f("corner_radius"),
                        "does not apply to a ball-end mill (its corner is half the diameter)",
                        "remove the field",
                    );
                }
                Cutter::ball(d)
            }
            ToolKind::Bull => {
                let Some(c) = &t.corner_radius else {
                    return r.fail(
                        &t.kind.referenced,
                        &f("corner_radius"),
                        "is missing",
                        "a bull-nose needs its corner radius",
                    );
                };
                Cutter::bull(
                    d,
                    r.length(
                        c,
                        &f("corner_radius"),
                        0.0,
                        d / 2.0,
                        "more than 0, at most half the diameter",
                    )?,
                )
            }
        };
        let flute_length = r.length(
            &t.flute_length,
            &f("flute_length"),
            0.0,
            500.0,
            "the length of the cutting flutes",
        )?;
        let reach = r.length(
            &t.length_below_holder,
            &f("length_below_holder"),
            0.0,
            600.0,
            "from the tip to the collet nut",
        )?;
        if reach < flute_length {
            return r.fail(
                &t.length_below_holder.referenced,
                &f("length_below_holder"),
                format!(
                    "is {} and shorter than the flutes ({})",
                    mm_text(reach),
                    mm_text(flute_length)
                ),
                "measure from the tip to the collet nut",
            );
        }
        let max_stepdown = match &t.max_stepdown {
            Some(v) => r.length(
                v,
                &f("max_stepdown"),
                0.0,
                flute_length,
                "at most the flute length",
            )?,
            None => flute_length,
        };
        tools.push(Tool {
            id,
            cutter,
            flute_length,
            reach,
            max_stepdown,
            label: t.label.clone().unwrap_or_default(),
        });
    }
    tools.sort_by_key(|t| t.id);
    Ok(Machine {
        name: raw.name.value.clone(),
        travel,
        table_top,
        spoilboard_allowance,
        max_feed_xy,
        max_feed_z,
        rapid_xy,
        rapid_z,
        accel,
        spindle_min,
        spindle_max,
        spindle_ramp,
        output: raw
            .output_units
            .as_ref()
            .map_or(raw.units.value, |u| u.value),
        clearance,
        tool_changer: raw.tool_changer,
        controller,
        tools,
    })
}

/// Reads a machine profile from its text (`file` names it in messages).
pub fn machine_from_str(text: &str, file: &str) -> Result<Machine, DescriptionError> {
    let raw: MachineFile = description::read_yaml(text, file)?;
    resolve_machine(raw, text, file)
}

/// Reads a machine profile file.
pub fn load_machine(path: &Path) -> Result<Machine, DescriptionError> {
    let (text, file) = read_text(path)?;
    machine_from_str(&text, &file)
}

/// The shipped generic gantry router.
pub fn generic_machine() -> Machine {
    machine_from_str(GENERIC_MACHINE, GENERIC_MACHINE_NAME)
        .expect("the shipped machine profile reads")
}

pub(crate) fn read_text(path: &Path) -> Result<(String, String), DescriptionError> {
    let file = path.display().to_string();
    let text = crate::input::read_text(path, crate::input::TEXT_LIMIT).map_err(|message| {
        DescriptionError::Io {
            file: file.clone(),
            message,
        }
    })?;
    Ok((text, file))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shipped_machine_reads() {
        let m = generic_machine();
        assert_eq!(m.travel, [3000.0, 1300.0, 300.0]);
        assert!(m.tool(1).is_some() && m.tool(2).is_some());
    }

    #[test]
    fn feeds_read_in_their_units() {
        // 1 in = 25.4 mm exactly (NIST SP 811, appendix B).
        assert_eq!(
            parse_feed("240in/min").unwrap().mm_per_min(Unit::Mm),
            240.0 * 25.4
        );
        assert_eq!(parse_feed("100 mm/s").unwrap().mm_per_min(Unit::In), 6000.0);
        assert_eq!(parse_feed("6000").unwrap().mm_per_min(Unit::Mm), 6000.0);
        assert!(parse_feed("fast").is_err());
    }
}
