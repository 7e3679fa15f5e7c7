//! The job profile: the stock, where the board sits in it, and how each
//! strategy cuts. Every field has a default a foam shop would recognise
//! (common practice, no source); a job file only says what differs.

use std::path::Path;

use serde::Deserialize;
use serde_saphyr::{Location, Spanned};

use crate::description::located::Reader;
use crate::description::read_text;
use crate::description::values::LengthValue;
use crate::description::{self, DescriptionError};
use crate::model::job::{Finish, Holding, Job, Pass, Pitch, RailPass};
use crate::model::machine::{Machine, ToolKind};
use crate::profiles::stock::{self, BlockSpec};
use crate::profiles::values::{FeedValue, StepoverValue, mm_text};
use crate::units::Unit;

mod passes;
use passes::Strategy;

/// Smallest stepdown accepted, mm: below it the levels only multiply the
/// run time (and a typo such as 0.001 would never finish).
pub const MIN_STEPDOWN: f64 = 0.5;

/// Default scallop: a few tenths of a millimetre, which the shaper sands
/// off with the rest of the finish (common practice, no source).
pub const DEFAULT_SCALLOP: f64 = 0.25;

/// The roughing's entry ramp, degrees: steep, as foam allows a
/// centre-cutting end mill (common practice, no source; 2–5° is the
/// usual figure in metal, from memory).
pub const DEFAULT_RAMP_ANGLE: f64 = 15.0;

/// Largest roughing stepover, as a share of the tool's diameter: every
/// ring overlaps the one before by a tenth of the tool (common practice,
/// no source).
pub const MAX_STEPOVER_SHARE: f64 = 0.9;

/// Smallest stepover accepted for a tool of diameter `d` mm: 2 % of it, and
/// 0.2 mm, for the same reason.
pub fn min_stepover(d: f64) -> f64 {
    (0.02 * d).max(0.2)
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct XySpec {
    x: Option<Spanned<LengthValue>>,
    y: Option<Spanned<LengthValue>>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct PlacementSpec {
    pitch: Option<Spanned<PitchSpec>>,
    skin: Option<Spanned<LengthValue>>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(untagged)]
enum PitchSpec {
    Degrees(f64),
    Word(String),
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct TabsSpec {
    width: Option<Spanned<LengthValue>>,
    height: Option<Spanned<LengthValue>>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct HolesSpec {
    diameter: Option<Spanned<LengthValue>>,
    gap: Option<Spanned<LengthValue>>,
    pin_depth: Option<Spanned<LengthValue>>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
enum Direction {
    Climb,
    Conventional,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct PassSpec {
    tool: Option<Spanned<u32>>,
    stepdown: Option<Spanned<LengthValue>>,
    stepover: Option<Spanned<StepoverValue>>,
    leave: Option<Spanned<LengthValue>>,
    feed: Option<Spanned<FeedValue>>,
    plunge_feed: Option<Spanned<FeedValue>>,
    spindle: Option<Spanned<f64>>,
    direction: Option<Direction>,
    ramp_angle: Option<Spanned<f64>>,
    scallop: Option<Spanned<LengthValue>>,
    steep_angle: Option<Spanned<f64>>,
    tolerance: Option<Spanned<LengthValue>>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
enum HoldingWord {
    Frame,
    Cradle,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct JobFile {
    units: Option<Spanned<Unit>>,
    stock: Option<BlockSpec>,
    table_position: Option<XySpec>,
    placement: Option<PlacementSpec>,
    holding: Option<Spanned<HoldingWord>>,
    stringer_feed: Option<Spanned<StepoverValue>>,
    frame: Option<Spanned<LengthValue>>,
    parting_overlap: Option<Spanned<LengthValue>>,
    tabs: Option<TabsSpec>,
    registration: Option<HolesSpec>,
    roughing: Option<PassSpec>,
    outline: Option<PassSpec>,
    finishing: Option<PassSpec>,
    rails: Option<PassSpec>,
}

struct JobReader<'a> {
    r: Reader<'a>,
    machine: &'a Machine,
    top: Location,
}

impl JobReader<'_> {
    fn length_or(
        &self,
        v: &Option<Spanned<LengthValue>>,
        default: f64,
        field: &str,
        lo: f64,
        hi: f64,
        hint: &str,
    ) -> Result<f64, DescriptionError> {
        match v {
            Some(v) => self.r.length_or_zero(v, field, lo, hi, hint),
            None => Ok(default),
        }
    }

    /// The frame's width: the band cut round the outline, wider than the
    /// roughing and outline tools.
    fn frame(
        &self,
        spec: &Option<Spanned<LengthValue>>,
        d_rough: f64,
        outline: &Pass,
    ) -> Result<f64, DescriptionError> {
        let frame = self.length_or(
            spec,
            (2.0 * d_rough).max(40.0),
            "frame",
            0.0,
            1000.0,
            "the width of the band cut around the outline",
        )?;
        let need_frame = d_rough.max(2.0 * outline.tool.cutter.radius) + 1.0;
        if frame < need_frame {
            return self.r.fail(
                &spec.as_ref().map_or(Location::UNKNOWN, |f| f.referenced),
                "frame",
                format!(
                    "is {}; it must be wider than the roughing tool ({})",
                    mm_text(frame),
                    mm_text(need_frame)
                ),
                "widen the band",
            );
        }
        Ok(frame)
    }

    /// The registration holes: diameter, gap from each tip, depth into the
    /// spoilboard.
    fn registration(
        &self,
        holes: HolesSpec,
        holding: Holding,
        frame: f64,
        d_rough: f64,
    ) -> Result<[f64; 3], DescriptionError> {
        let hole_diameter = self.length_or(
            &holes.diameter,
            25.4,
            "registration.diameter",
            d_rough,
            100.0,
            "at least the roughing tool's diameter; the holes are bored with it",
        )?;
        // With a frame the holes stand in the whole stock beyond the band;
        // in a cradle the whole margin is cut, and the gap only keeps the
        // hole off the board.
        let (gap, least, rule) = match holding {
            Holding::Frame => (
                frame + d_rough + 10.0,
                frame + d_rough,
                "from each tip to its hole; beyond the cut band",
            ),
            Holding::Cradle => (5.0, 2.0, "from the board's outline to each hole's edge"),
        };
        let hole_gap = self.length_or(&holes.gap, gap, "registration.gap", least, 1000.0, rule)?;
        let pin_depth = self.length_or(
            &holes.pin_depth,
            self.machine.spoilboard_allowance.min(4.0),
            "registration.pin_depth",
            0.0,
            self.machine.spoilboard_allowance,
            "how far the holes go into the spoilboard; at most the machine's spoilboard_allowance",
        )?;
        Ok([hole_diameter, hole_gap, pin_depth])
    }
}

fn resolve(
    raw: JobFile,
    text: &str,
    file: &str,
    machine: &Machine,
) -> Result<Job, DescriptionError> {
    let unit = raw.units.as_ref().map_or(Unit::Mm, |u| u.value);
    let jr = JobReader {
        r: Reader { text, file, unit },
        machine,
        top: Location::UNKNOWN,
    };
    let r = &jr.r;
    let stock = stock::read_block(&jr.r, raw.stock.as_ref(), "stock", Location::UNKNOWN)?;
    let tp = raw.table_position.unwrap_or_default();
    let table_position = [
        jr.length_or(
            &tp.x,
            0.0,
            "table_position.x",
            0.0,
            machine.travel[0],
            "machine X of the block's front-left corner",
        )?,
        jr.length_or(
            &tp.y,
            0.0,
            "table_position.y",
            0.0,
            machine.travel[1],
            "machine Y of the block's front-left corner",
        )?,
    ];
    let placement = raw.placement.unwrap_or_default();
    let pitch = match &placement.pitch {
        None => Pitch::Auto,
        Some(p) => match &p.value {
            PitchSpec::Word(w) if w == "auto" => Pitch::Auto,
            PitchSpec::Degrees(d) if d.is_finite() && d.abs() <= 15.0 => Pitch::Degrees(*d),
            _ => {
                return r.fail(
                    &p.referenced,
                    "placement.pitch",
                    "must be `auto` or a tilt in degrees within ±15",
                    "e.g. pitch: auto",
                );
            }
        },
    };
    let skin = jr.length_or(
        &placement.skin,
        3.0,
        "placement.skin",
        0.0,
        100.0,
        "least foam kept above the deck and below the bottom",
    )?;
    let roughing = jr.pass(&raw.roughing.unwrap_or_default(), Strategy::Roughing)?;
    let outline_spec = raw.outline.unwrap_or_default();
    let outline = jr.pass(&outline_spec, Strategy::Outline)?;
    let finishing = jr.finish(
        raw.finishing.unwrap_or_default(),
        raw.rails.unwrap_or_default(),
    )?;
    {
        let (name, spec) = ("outline", &outline_spec);
        jr.r.forbid(
            &spec.scallop,
            &format!("{name}.scallop"),
            "only finishing has a scallop target",
        )?;
    }
    let d_rough = 2.0 * roughing.tool.cutter.radius;
    let holding = match raw.holding.as_ref().map(|h| h.value) {
        Some(HoldingWord::Cradle) => Holding::Cradle,
        Some(HoldingWord::Frame) | None => Holding::Frame,
    };
    let frame = match holding {
        Holding::Frame => jr.frame(&raw.frame, d_rough, &outline)?,
        Holding::Cradle => {
            let why = "a cradle holds the board: all the stock off it is cut away";
            jr.r.forbid(&raw.frame, "frame", why)?;
            if let Some(t) = &raw.tabs {
                jr.r.forbid(&t.width, "tabs.width", why)?;
                jr.r.forbid(&t.height, "tabs.height", why)?;
            }
            0.0
        }
    };
    let overlap = jr.length_or(
        &raw.parting_overlap,
        1.0,
        "parting_overlap",
        0.0,
        10.0,
        "how far each side cuts past the parting surface",
    )?;
    let tabs = raw.tabs.unwrap_or_default();
    let tab_w = jr.length_or(
        &tabs.width,
        30.0,
        "tabs.width",
        5.0,
        200.0,
        "tab width across the board",
    )?;
    let tab_h = jr.length_or(
        &tabs.height,
        10.0,
        "tabs.height",
        2.0 * overlap + 1.0,
        100.0,
        "tab height; more than twice the parting overlap",
    )?;
    let stringer_feed = match &raw.stringer_feed {
        None => 0.5,
        Some(v) => match v.value {
            StepoverValue::Share(x) if (0.1..=1.0).contains(&x) => x,
            _ => {
                return r.fail(
                    &v.referenced,
                    "stringer_feed",
                    "must be a share of each feed from 10% to 100%",
                    "e.g. 50%: the feed where the tool touches the stringer",
                );
            }
        },
    };
    let [hole_diameter, hole_gap, pin_depth] = jr.registration(
        raw.registration.unwrap_or_default(),
        holding,
        frame,
        d_rough,
    )?;
    Ok(Job {
        stock,
        table_position,
        pitch,
        holding,
        frame,
        overlap,
        tabs: [tab_w, tab_h],
        hole_diameter,
        hole_gap,
        pin_depth,
        skin,
        stringer_feed,
        roughing,
        outline,
        finishing,
    })
}

/// Reads a job from its text against a machine.
pub fn job_from_str(text: &str, file: &str, machine: &Machine) -> Result<Job, DescriptionError> {
    let raw: JobFile = description::read_yaml(text, file)?;
    resolve(raw, text, file, machine)
}

/// Reads a job file against a machine.
pub fn load_job(path: &Path, machine: &Machine) -> Result<Job, DescriptionError> {
    let (text, file) = read_text(path)?;
    job_from_str(&text, &file, machine)
}

/// The default job for a machine: every field at its default.
pub fn default_job(machine: &Machine) -> Result<Job, DescriptionError> {
    resolve(JobFile::default(), "", "(default job)", machine)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::profiles::machine::generic_machine;

    #[test]
    fn default_job_uses_the_machine_tools() {
        let m = generic_machine();
        let j = default_job(&m).unwrap();
        assert_eq!(j.roughing.tool.id, 1);
        assert_eq!(j.finishing.pass.tool.id, 2);
        assert!(j.roughing.stepdown <= j.roughing.tool.max_stepdown);
    }

    #[test]
    fn job_errors_are_located() {
        let m = generic_machine();
        let e = job_from_str("roughing:\n  stepdown: 80\n", "j.yaml", &m).unwrap_err();
        assert_eq!(e.location(), Some((2, 13)));
        assert!(e.to_string().contains("roughing.stepdown"), "{e}");
        let e = job_from_str("finishing:\n  tool: 1\n", "j.yaml", &m).unwrap_err();
        assert!(e.to_string().contains("ball-end"), "{e}");
        let e = job_from_str("roughing:\n  feed: 30000mm/min\n", "j.yaml", &m).unwrap_err();
        assert!(e.to_string().contains("at most 15000"), "{e}");
    }

    #[test]
    fn the_ramp_angle_is_the_roughing_s_and_held_to_its_range() {
        let m = generic_machine();
        let j = job_from_str("roughing:\n  ramp_angle: 30\n", "j.yaml", &m).unwrap();
        assert_eq!(j.roughing.ramp_angle, 30.0);
        assert_eq!(
            job_from_str("{}", "j.yaml", &m)
                .unwrap()
                .roughing
                .ramp_angle,
            DEFAULT_RAMP_ANGLE
        );
        let e = job_from_str("roughing:\n  ramp_angle: 60\n", "j.yaml", &m).unwrap_err();
        assert_eq!(e.location(), Some((2, 15)));
        assert!(e.to_string().contains("between 1 and 45"), "{e}");
        let e = job_from_str("finishing:\n  ramp_angle: 10\n", "j.yaml", &m).unwrap_err();
        assert!(e.to_string().contains("does not apply"), "{e}");
    }
}
