//! A job's passes read: each strategy's tool from the machine's list,
//! its feeds, stepover, stepdown and ramp held to the tool and the
//! machine; the finishing pass and the rail pass read together.

use super::*;

/// Which strategy a pass spec is for.
#[derive(Clone, Copy, PartialEq)]
pub(super) enum Strategy {
    Roughing,
    Outline,
    Finishing,
    Rails,
}

impl Strategy {
    fn field(self) -> &'static str {
        match self {
            Strategy::Roughing => "roughing",
            Strategy::Outline => "outline",
            Strategy::Finishing => "finishing",
            Strategy::Rails => "rails",
        }
    }

    fn ball(self) -> bool {
        matches!(self, Strategy::Finishing | Strategy::Rails)
    }
}

impl JobReader<'_> {
    /// The pass's tool: the one named, or the machine's default for the
    /// strategy, of the kind it needs.
    pub(super) fn tool(
        &self,
        spec: &PassSpec,
        which: Strategy,
    ) -> Result<crate::model::machine::Tool, DescriptionError> {
        let name = which.field();
        let f = |s: &str| format!("{name}.{s}");
        let m = self.machine;
        let wanted = if which.ball() {
            ToolKind::Ball
        } else {
            ToolKind::Flat
        };
        // Finishing takes the largest ball (fewer passes on the flats),
        // the rail band the smallest (it reaches down the rail); the first
        // listed of a size.
        let by_size = |t: &&crate::model::machine::Tool| match which {
            Strategy::Finishing => -t.cutter.radius,
            Strategy::Rails => t.cutter.radius,
            _ => 0.0,
        };
        let default_tool = m
            .tools
            .iter()
            .filter(|t| t.cutter.kind == wanted)
            .min_by(|a, b| by_size(a).total_cmp(&by_size(b)));
        let tool = match &spec.tool {
            Some(id) => match m.tool(id.value) {
                Some(t) => t.clone(),
                None => {
                    let listed: Vec<String> =
                        m.tools.iter().map(|t| format!("T{}", t.id)).collect();
                    return self.r.fail(
                        &id.referenced,
                        &f("tool"),
                        format!("T{} is not in the machine's tool list", id.value),
                        format!("the machine has {}", listed.join(", ")),
                    );
                }
            },
            None => match default_tool {
                Some(t) => t.clone(),
                None => {
                    return self.r.fail(
                        &self.top,
                        &f("tool"),
                        format!(
                            "is not given and the machine lists no {} tool",
                            wanted.name()
                        ),
                        "add the tool to the machine profile or name one here",
                    );
                }
            },
        };
        let at = |s: &Option<Spanned<u32>>| s.as_ref().map_or(self.top, |s| s.referenced);
        // Finishing may name a bull-nose (wide steps on a flat bottom);
        // the rails always take a ball, which reaches down the rail.
        let fits = match which {
            Strategy::Finishing => tool.cutter.kind != ToolKind::Flat,
            Strategy::Rails => tool.cutter.kind == ToolKind::Ball,
            _ => true,
        };
        if !fits {
            let (needs, hint) = match which {
                Strategy::Finishing => (
                    "a ball-end or bull-nose tool",
                    "name a ball-end or bull-nose tool",
                ),
                _ => ("a ball-end tool", "name a ball-end tool"),
            };
            return self.r.fail(
                &at(&spec.tool),
                &f("tool"),
                format!(
                    "T{} is a {} tool; {name} needs {needs}",
                    tool.id,
                    tool.cutter.kind.name()
                ),
                hint,
            );
        }
        if !which.ball() && tool.cutter.kind == ToolKind::Ball {
            return self.r.fail(
                &at(&spec.tool),
                &f("tool"),
                format!("T{} is a ball-end tool; {name} cuts flat levels and needs a flat or bull-nose end mill", tool.id),
                "name a flat or bull-nose tool",
            );
        }
        Ok(tool)
    }

    pub(super) fn pass(&self, spec: &PassSpec, which: Strategy) -> Result<Pass, DescriptionError> {
        let name = which.field();
        let f = |s: &str| format!("{name}.{s}");
        let m = self.machine;
        let tool = self.tool(spec, which)?;
        let d = 2.0 * tool.cutter.radius;
        // Foam cuts as deep as the tool allows: each level and each lap of
        // the outline's spiral takes the tool's max_stepdown (by default
        // its flute length; common practice, no source).
        let default_stepdown = tool.max_stepdown;
        let stepdown = match &spec.stepdown {
            Some(v) => {
                let x = v.value.0.to_mm(self.r.unit);
                if !(x >= MIN_STEPDOWN && x <= tool.max_stepdown) {
                    return self.r.fail(
                        &v.referenced,
                        &f("stepdown"),
                        format!("is {}; it must be at least {} (finer levels only multiply the run time) and T{} allows at most {} a pass", mm_text(x), mm_text(MIN_STEPDOWN), tool.id, mm_text(tool.max_stepdown)),
                        "e.g. 10 mm for roughing foam; check the tool's max_stepdown in the machine profile",
                    );
                }
                x
            }
            None => default_stepdown,
        };
        let stepover = match &spec.stepover {
            Some(v) => {
                let x = match v.value {
                    StepoverValue::Length(l) => l.0.to_mm(self.r.unit),
                    StepoverValue::Share(s) => s * d,
                };
                let least = min_stepover(d);
                if !(x >= least && x <= MAX_STEPOVER_SHARE * d) {
                    return self.r.fail(
                        &v.referenced,
                        &f("stepover"),
                        format!("is {}; it must be at least {} (2 % of the tool diameter, and 0.2 mm: finer passes only multiply the run time) and at most {:.0} % of the tool diameter ({}), so every ring overlaps the last", mm_text(x), mm_text(least), MAX_STEPOVER_SHARE * 100.0, mm_text(MAX_STEPOVER_SHARE * d)),
                        "e.g. 75% in foam",
                    );
                }
                x
            }
            // Three quarters of the tool a ring in foam (common practice,
            // no source); the rings' ridges are cut after them.
            None if which == Strategy::Roughing => 0.75 * d,
            None => 0.5 * d,
        };
        let default_leave = if which == Strategy::Roughing {
            1.5
        } else {
            0.0
        };
        let leave = self.length_or(
            &spec.leave,
            default_leave,
            &f("leave"),
            0.0,
            20.0,
            "stock left for the next strategy",
        )?;
        let feed_default = match which {
            // Feeds for EPS foam (common practice, no source), within the
            // machine's limit. The rail ball takes a few tenths of a
            // millimetre of foam at the finishing feed, long reach or not;
            // slow it in the job for a denser foam or a slender tool.
            Strategy::Roughing => 12000.0_f64,
            Strategy::Outline => 8000.0,
            Strategy::Finishing | Strategy::Rails => 15000.0,
        }
        .min(m.max_feed_xy);
        let feed = match &spec.feed {
            Some(v) => crate::profiles::values::feed(
                &self.r,
                v,
                &f("feed"),
                m.max_feed_xy,
                &format!(
                    "the machine allows at most {:.0} mm/min in X and Y",
                    m.max_feed_xy
                ),
            )?,
            None => feed_default,
        };
        let plunge_feed = match &spec.plunge_feed {
            Some(v) => crate::profiles::values::feed(
                &self.r,
                v,
                &f("plunge_feed"),
                m.max_feed_z,
                &format!("the machine allows at most {:.0} mm/min in Z", m.max_feed_z),
            )?,
            None => 2000f64.min(m.max_feed_z),
        };
        let spindle = match &spec.spindle {
            Some(v) => self.r.number(
                v,
                &f("spindle"),
                m.spindle_min.max(1.0),
                m.spindle_max,
                "rpm within the machine's spindle range",
            )?,
            None => 18000f64.clamp(m.spindle_min.max(1.0), m.spindle_max),
        };
        if which != Strategy::Roughing {
            self.r.forbid(
                &spec.ramp_angle,
                &f("ramp_angle"),
                "only the roughing enters its levels by a ramp",
            )?;
        }
        let ramp_angle = match &spec.ramp_angle {
            Some(v) => self.r.number(
                v,
                &f("ramp_angle"),
                1.0,
                45.0,
                "degrees from level; the roughing end mill enters each level along a zig-zag ramp this steep",
            )?,
            None => DEFAULT_RAMP_ANGLE,
        };
        Ok(Pass {
            tool,
            stepdown,
            stepover,
            leave,
            feed,
            plunge_feed,
            spindle,
            climb: spec.direction != Some(Direction::Conventional),
            ramp_angle,
        })
    }

    /// Finishing and the rail band's pass, with their rules.
    pub(super) fn finish(
        &self,
        fin_spec: PassSpec,
        rails_spec: PassSpec,
    ) -> Result<Finish, DescriptionError> {
        self.r.forbid(
            &fin_spec.stepdown,
            "finishing.stepdown",
            "finishing follows the surface; its stepover comes from `scallop`",
        )?;
        self.r.forbid(
            &fin_spec.stepover,
            "finishing.stepover",
            "the stepover follows from `scallop`",
        )?;
        let pass = self.pass(&fin_spec, Strategy::Finishing)?;
        let radius = pass.tool.cutter.radius;
        let scallop = self.length_or(
            &fin_spec.scallop,
            DEFAULT_SCALLOP,
            "finishing.scallop",
            0.001,
            radius,
            "the cusp height left between passes, e.g. 0.3 mm for a board sanded afterwards, 0.1 mm for a fine finish",
        )?;
        if scallop <= 0.0 {
            return self.r.fail(
                &fin_spec.scallop.as_ref().unwrap().referenced,
                "finishing.scallop",
                "must be more than 0",
                "e.g. 0.1 mm",
            );
        }
        let steep_angle = match &fin_spec.steep_angle {
            Some(v) => self.r.number(
                v,
                "finishing.steep_angle",
                20.0,
                70.0,
                "degrees; the rail band above this slope is finished by Z levels",
            )?,
            None => 45.0,
        };
        let tolerance = self.length_or(
            &fin_spec.tolerance,
            0.02,
            "finishing.tolerance",
            0.001,
            1.0,
            "the chord tolerance along a pass",
        )?;
        for (v, field) in [
            (rails_spec.stepdown.is_some(), "rails.stepdown"),
            (rails_spec.stepover.is_some(), "rails.stepover"),
            (rails_spec.steep_angle.is_some(), "rails.steep_angle"),
            (rails_spec.tolerance.is_some(), "rails.tolerance"),
            (rails_spec.leave.is_some(), "rails.leave"),
        ] {
            if v {
                return self.r.fail(
                    &self.top,
                    field,
                    "is not taken: the rail band is cut in Z levels from `rails.scallop`, starting at finishing.steep_angle, to finishing.tolerance",
                    "set it under finishing, or leave it out",
                );
            }
        }
        let rail_pass = self.pass(&rails_spec, Strategy::Rails)?;
        let rail_scallop = self.length_or(
            &rails_spec.scallop,
            scallop,
            "rails.scallop",
            0.001,
            rail_pass.tool.cutter.radius,
            "the cusp height left between Z levels on the rail, e.g. 0.3 mm",
        )?;
        if rail_scallop <= 0.0 {
            return self.r.fail(
                &rails_spec
                    .scallop
                    .as_ref()
                    .map_or(self.top, |v| v.referenced),
                "rails.scallop",
                "must be more than 0",
                "e.g. 0.3 mm",
            );
        }
        // One ball on the machine (or the same named twice): it cuts the rail
        // band too, in the finishing program.
        let rails = (rail_pass.tool.id != pass.tool.id).then_some(RailPass {
            pass: rail_pass,
            scallop: rail_scallop,
        });
        Ok(Finish {
            pass,
            scallop,
            steep_angle,
            tolerance,
            rails,
        })
    }
}
