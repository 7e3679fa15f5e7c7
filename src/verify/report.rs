//! What a simulation found: findings at their lines, each program's
//! figures, the deviation maps against the design, the pockets; as text
//! and JSON.

use crate::toolpath::setup::Side;

/// Most findings of one kind kept (the count is still right in the text).
pub(super) const MAX_FINDINGS: usize = 200;

/// One finding, at a line.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Finding {
    /// The program.
    pub program: String,
    /// Line (1-based).
    pub line: usize,
    /// What happened.
    pub what: String,
    /// Where (X, Y) in program coordinates, mm.
    pub at: [f64; 2],
}

/// A pocket as the simulation cut it.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PocketReport {
    /// What it is.
    pub label: String,
    /// Setup 1 or 2.
    pub setup: u8,
    /// Designed depth, mm.
    pub depth_mm: f64,
    /// The median depth below the design over the cells inside, mm.
    pub depth_median_mm: f64,
    /// The deepest, mm.
    pub depth_max_mm: f64,
    /// Plan area cut to at least half the depth (cells x cell area), mm².
    pub area_mm2: f64,
    /// Designed plan area, mm².
    pub design_area_mm2: f64,
    /// Foam removed below the design surface, ml.
    pub volume_ml: f64,
}

/// What each program does.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ProgramReport {
    /// The program.
    pub name: String,
    /// Setup 1 or 2.
    pub setup: u32,
    /// Lines read.
    pub lines: usize,
    /// Estimated run time, s.
    pub time_estimate_s: f64,
    /// Tool travel, mm.
    pub path_length_mm: f64,
    /// Stock removed, L.
    pub removed_volume_litres: f64,
    /// Words skipped (lenient reading).
    pub skipped: Vec<String>,
}

/// The verification, in numbers.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Verification {
    /// Rapid moves that touched uncut stock.
    pub collisions: Vec<Finding>,
    /// Moves outside the machine's travel or below the table top.
    pub out_of_envelope: Vec<Finding>,
    /// Cutting moves with the spindle stopped.
    pub spindle_off_cuts: Vec<Finding>,
    /// Feeds or speeds beyond the machine, cuts deeper than the tool allows.
    pub limits: Vec<Finding>,
    /// Deepest gouge into the design, mm (normal to the surface), when a design is given.
    pub gouge_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub gouge_at: Option<[f64; 3]>,
    /// Most stock left on the design, mm (normal).
    pub leftover_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub leftover_at: Option<[f64; 3]>,
    /// 95th percentile of the leftover, mm.
    pub leftover_p95_mm: Option<f64>,
    /// Most stock left where the side's finishing ball can touch the
    /// design, mm: what the scallop target is about.
    pub leftover_reachable_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub leftover_reachable_at: Option<[f64; 3]>,
    /// Plan area the finishing ball cannot reach (a notch, a corner
    /// tighter than the ball) with stock left on it, mm².
    pub unreachable_mm2: f64,
    /// The most stock left there, mm, and where (X, Y, setup).
    pub unreachable_max_mm: Option<f64>,
    /// Where (X, Y, setup).
    pub unreachable_at: Option<[f64; 3]>,
    /// The foam outside the design's plan still joined to the board (true
    /// distance to the design), after both setups: the fin along the
    /// parting line, and what the outline's cutter leaves in a notch.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub parting_line: Option<ZoneReport>,
    /// The foam left on the board at the tabs: on the design's plan inside
    /// the tabs' rectangles, and outside it within a finishing ball's
    /// radius of them (true distance to the design where it is steep or
    /// off the plan).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub tab_zones: Option<ZoneReport>,
    /// Gouge tolerance used, mm.
    pub gouge_tolerance_mm: f64,
    /// All stock removed, L.
    pub removed_volume_litres: f64,
    /// Whole run time estimate, s.
    pub time_estimate_s: f64,
    /// Whole tool travel, mm.
    pub path_length_mm: f64,
    /// Height-map cell, mm.
    pub cell_mm: f64,
    /// Where the block and the design's placement came from, when the
    /// caller says (`verify` from anywhere); none for a `make` or `cut` run.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub basis: Option<String>,
    /// Per program.
    pub programs: Vec<ProgramReport>,
    /// Each pocket cut into the design on purpose, as simulated.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub pockets: Vec<PocketReport>,
    /// Deviation maps (setup 1, setup 2) for pictures; not in the JSON.
    #[serde(skip)]
    pub maps: Vec<DeviationMap>,
}

/// Foam left in one zone outside the design's plan, as the true distance
/// from the foam to the design.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ZoneReport {
    /// Plan area with foam on it, mm².
    pub area_mm2: f64,
    /// Median distance, mm.
    pub median_mm: f64,
    /// Greatest distance, mm.
    pub max_mm: f64,
    /// Where the greatest is (X, Y, setup).
    pub at: [f64; 3],
}

/// Signed deviation from the design per cell, in a setup's coordinates:
/// positive is stock left, negative a gouge; NaN off the design; the
/// stock's presence where there is no design.
#[derive(Debug, Clone, PartialEq)]
pub struct DeviationMap {
    /// Setup.
    pub side: Side,
    /// Grid origin, cell and size.
    pub origin: [f64; 2],
    /// Cell size.
    pub cell: [f64; 2],
    /// Cells in X and Y.
    pub dims: [usize; 2],
    /// Deviation, mm, or NaN where the design is absent.
    pub deviation: Vec<f32>,
    /// Whether stock remains (for cells off the design).
    pub stock: Vec<bool>,
    /// Cells with more than [`REACH_CHECKED_MM`] left that the side's
    /// finishing ball cannot touch (empty when the side had no ball).
    pub unreachable: Vec<bool>,
}

/// Leftover above which a cell is checked for reach by the ball.
pub const REACH_CHECKED_MM: f64 = 0.05;

impl Verification {
    /// Nothing found yet: the figures a simulation starts from.
    pub fn empty(cell_mm: f64, gouge_tolerance_mm: f64) -> Verification {
        Verification {
            collisions: vec![],
            out_of_envelope: vec![],
            spindle_off_cuts: vec![],
            limits: vec![],
            gouge_max_mm: None,
            gouge_at: None,
            leftover_max_mm: None,
            leftover_at: None,
            leftover_p95_mm: None,
            leftover_reachable_max_mm: None,
            leftover_reachable_at: None,
            unreachable_mm2: 0.0,
            unreachable_max_mm: None,
            unreachable_at: None,
            parting_line: None,
            tab_zones: None,
            gouge_tolerance_mm,
            removed_volume_litres: 0.0,
            time_estimate_s: 0.0,
            path_length_mm: 0.0,
            cell_mm,
            basis: None,
            programs: vec![],
            pockets: vec![],
            maps: vec![],
        }
    }

    /// Whether anything must stop the job.
    pub fn has_findings(&self) -> bool {
        !self.collisions.is_empty()
            || !self.out_of_envelope.is_empty()
            || !self.spindle_off_cuts.is_empty()
            || !self.limits.is_empty()
            || self
                .gouge_max_mm
                .is_some_and(|g| g > self.gouge_tolerance_mm)
    }

    /// The text report: the verdict, then what to look at.
    pub fn text(&self) -> String {
        use std::fmt::Write as _;
        let mut s = String::new();
        let verdict = if self.has_findings() {
            "FINDINGS: do not run these programs as they are"
        } else if self.gouge_max_mm.is_some() {
            "clean: no collision, no move outside the machine, no cut with the spindle off, no gouge beyond tolerance"
        } else {
            "clean: no collision, no move outside the machine, no cut with the spindle off; gouges not checked (no design given: give --design or --job)"
        };
        let _ = writeln!(s, "verification ({} mm cells): {verdict}", self.cell_mm);
        if let Some(b) = &self.basis {
            let _ = writeln!(s, "  {b}");
        }
        for (name, list) in [
            ("rapid into stock", &self.collisions),
            ("outside the machine", &self.out_of_envelope),
            ("cutting with the spindle off", &self.spindle_off_cuts),
            ("beyond a limit", &self.limits),
        ] {
            if list.is_empty() {
                continue;
            }
            let _ = writeln!(
                s,
                "{} {name}{}:",
                list.len(),
                if list.len() >= MAX_FINDINGS {
                    " or more"
                } else {
                    ""
                }
            );
            for f in list.iter().take(10) {
                let _ = writeln!(
                    s,
                    "  {}:{}: {} at X {:.1} Y {:.1} mm",
                    f.program, f.line, f.what, f.at[0], f.at[1]
                );
            }
        }
        if let (Some(g), Some(at)) = (self.gouge_max_mm, self.gouge_at) {
            let _ = writeln!(
                s,
                "deepest gouge {g:.3} mm (tolerance {:.3} mm) at X {:.1} Y {:.1} mm in setup {}",
                self.gouge_tolerance_mm, at[0], at[1], at[2]
            );
        }
        if let (Some(l), Some(p95), Some(at)) =
            (self.leftover_max_mm, self.leftover_p95_mm, self.leftover_at)
        {
            let _ = writeln!(
                s,
                "stock left on the board: 95 % of it under {p95:.3} mm, at most {l:.3} mm at X {:.1} Y {:.1} mm in setup {}: look there when sanding",
                at[0], at[1], at[2]
            );
        }
        if let (Some(l), Some(at)) = (self.leftover_reachable_max_mm, self.leftover_reachable_at)
            && self.unreachable_mm2 > 0.0
        {
            let _ = writeln!(
                s,
                "where the finishing ball reaches: at most {l:.3} mm left, at X {:.1} Y {:.1} mm in setup {}",
                at[0], at[1], at[2]
            );
        }
        if let (Some(l), Some(at)) = (self.unreachable_max_mm, self.unreachable_at) {
            let _ = writeln!(
                s,
                "the finishing ball cannot reach {:.1} cm² (a notch, a corner tighter than the ball, the rail just above the parting line): up to {l:.3} mm left there, the most at X {:.1} Y {:.1} mm in setup {}: finish it by hand or with a smaller tool",
                self.unreachable_mm2 / 100.0,
                at[0],
                at[1],
                at[2]
            );
        }
        for (z, words) in [
            (
                &self.parting_line,
                "outside the outline (the fin along the parting line, a notch's apex)",
            ),
            (
                &self.tab_zones,
                "at the tabs, where the board meets them and beside them",
            ),
        ] {
            if let Some(z) = z {
                let _ = writeln!(
                    s,
                    "{words}: {:.1} cm² of foam, {:.3} mm off the design at the median, at most {:.3} mm at X {:.1} Y {:.1} mm in setup {}: sand it off with the rail",
                    z.area_mm2 / 100.0,
                    z.median_mm,
                    z.max_mm,
                    z.at[0],
                    z.at[1],
                    z.at[2]
                );
            }
        }
        for p in &self.pockets {
            let _ = writeln!(
                s,
                "pocket {} (setup {}): {:.2} mm deep at the median, {:.2} mm at most (designed {:.2} mm), {:.0} mm² cut (designed {:.0} mm²), {:.1} ml",
                p.label,
                p.setup,
                p.depth_median_mm,
                p.depth_max_mm,
                p.depth_mm,
                p.area_mm2,
                p.design_area_mm2,
                p.volume_ml
            );
        }
        let _ = writeln!(
            s,
            "removed {:.2} L of foam; tool travel {:.1} m; estimated run time {}",
            self.removed_volume_litres,
            self.path_length_mm / 1000.0,
            crate::gcode::program::duration(self.time_estimate_s)
        );
        for p in &self.programs {
            let _ = writeln!(
                s,
                "  setup {} {}: {} lines, {}, removes {:.2} L{}",
                p.setup,
                p.name,
                p.lines,
                crate::gcode::program::duration(p.time_estimate_s),
                p.removed_volume_litres,
                if p.skipped.is_empty() {
                    String::new()
                } else {
                    format!(", {} words skipped", p.skipped.len())
                }
            );
        }
        s
    }

    /// The JSON report.
    pub fn to_json(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).expect("a report serialises");
        s.push('\n');
        s
    }
}
