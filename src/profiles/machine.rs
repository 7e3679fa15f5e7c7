//! The machine profile: what the router can do, read from YAML with the
//! same located errors as board descriptions into the model's `Machine`;
//! every length is resolved to millimetres and every feed to millimetres
//! per minute here, at the edge. The job profile's reader shares `Reader`.

use std::path::Path;

use serde::Deserialize;
use serde_saphyr::Spanned;

use super::values::{FeedValue, feed, mm_text};
use crate::description::located::Reader;
use crate::description::read_text;
use crate::description::values::LengthValue;
use crate::description::{self, DescriptionError};
use crate::model::machine::{Controller, Cutter, Machine, Tool, ToolKind};
use crate::units::Unit;

/// The shipped generic gantry router profile.
pub const GENERIC_MACHINE: &str = include_str!("../../fixtures/machine-gantry-3000.yaml");
/// Name the shipped machine profile is reported under.
pub const GENERIC_MACHINE_NAME: &str = "fixtures/machine-gantry-3000.yaml";

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

/// Longest travel a profile may give (20 m): a typo guard, not a real limit.
const MAX_TRAVEL: f64 = 20_000.0;

fn resolve_machine(raw: MachineFile, text: &str, file: &str) -> Result<Machine, DescriptionError> {
    let r = Reader {
        text,
        file,
        unit: raw.units.value,
    };
    let controller = controller(&r, &raw)?;
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
    let max_feed_xy = feed(
        &r,
        &raw.max_feed.xy,
        "max_feed.xy",
        feed_cap,
        "the machine maker's rating",
    )?;
    let max_feed_z = feed(
        &r,
        &raw.max_feed.z,
        "max_feed.z",
        feed_cap,
        "the machine maker's rating",
    )?;
    let rapid_xy = feed(
        &r,
        &raw.rapid.xy,
        "rapid.xy",
        feed_cap,
        "the machine's G0 rate in X and Y",
    )?;
    let rapid_z = feed(
        &r,
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
    let accel = acceleration(&r, &raw)?;
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
        // A number listed before was in range there.
        if tools.iter().any(|o| o.id == t.id.value) {
            return r.fail(
                &t.id.referenced,
                &format!("tools[{i}].id"),
                format!("T{} is listed twice", t.id.value),
                "give each tool its own number",
            );
        }
        tools.push(tool(&r, i, t)?);
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

/// The controller the programs are written for; GRBL refused with a
/// tool changer.
fn controller(r: &Reader, raw: &MachineFile) -> Result<Controller, DescriptionError> {
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
    Ok(controller)
}

/// The axes' accelerations, mm/s² (the defaults where the profile gives
/// none).
fn acceleration(r: &Reader, raw: &MachineFile) -> Result<[f64; 3], DescriptionError> {
    let per = raw.units.value.mm();
    Ok(match &raw.acceleration {
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
    })
}

/// One tool of the list, its fields checked against each other.
fn tool(r: &Reader, i: usize, t: &ToolSpec) -> Result<Tool, DescriptionError> {
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
    Ok(Tool {
        id,
        cutter,
        flute_length,
        reach,
        max_stepdown,
        label: t.label.clone().unwrap_or_default(),
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shipped_machine_reads() {
        let m = generic_machine();
        assert_eq!(m.travel, [3000.0, 1300.0, 300.0]);
        assert!(m.tool(1).is_some() && m.tool(2).is_some());
    }
}
