//! `compare`: a cut board against its design.

use super::*;
use crate::inspect::compare::Comparison;
use crate::output;
use std::path::{Path, PathBuf};

/// Compares a cut (STL) with its design; writes the deviation map into `dir`.
pub fn compare(
    design: &Path,
    cut: &Path,
    align: bool,
    dir: &Path,
) -> Result<(Comparison, Vec<PathBuf>), JobError> {
    let d = load_design(design)?;
    let c = load_design(cut)?;
    output::ready(dir)?;
    if matches!(c, Design::Board(_)) {
        return Err(JobError::WrongKind(format!(
            "{}: the cut must be an STL file",
            cut.display()
        )));
    }
    let (dm, cm) = (
        d.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?,
        c.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?,
    );
    let (comparison, deviation) = crate::inspect::compare::compare(&dm, &cm, align);
    let title = format!("{} against {}", c.name(), d.name());
    let svg = crate::inspect::compare::deviation_svg(&title, &dm, &deviation);
    let path = dir.join(format!("{}-vs-{}.deviation.svg", c.name(), d.name()));
    let files = [(path, svg.into_bytes())];
    let written = write_all(&files, &exactly(&files), &[design, cut])?;
    Ok((comparison, written))
}

/// The comparison as `compare` prints it.
pub fn comparison_text(c: &crate::inspect::compare::Comparison) -> String {
    use std::fmt::Write as _;
    let mut s = String::new();
    if let Some(a) = &c.alignment {
        let _ = writeln!(
            s,
            "alignment: rotated {:.3}°, {:.3}°, {:.3}° about x, y, z and moved {:.3}, {:.3}, {:.3} mm ({} iterations; RMS {:.3} → {:.3} mm)",
            a.rotation_xyz_deg[0],
            a.rotation_xyz_deg[1],
            a.rotation_xyz_deg[2],
            a.translation_mm[0],
            a.translation_mm[1],
            a.translation_mm[2],
            a.iterations,
            a.rms_before_mm,
            a.rms_after_mm
        );
    }
    let _ = writeln!(s, "largest distance (Hausdorff) {:.3} mm", c.hausdorff_mm);
    for (what, side) in [
        ("design to cut", &c.design_to_cut),
        ("cut to design", &c.cut_to_design),
    ] {
        let _ = writeln!(
            s,
            "  {what}: max {:.3} mm, mean {:.3} mm, RMS {:.3} mm over {} points",
            side.max_mm, side.mean_mm, side.rms_mm, side.points
        );
    }
    let _ = writeln!(
        s,
        "largest deviations on the design (+ stock left, − gouge):"
    );
    for w in &c.worst {
        let _ = writeln!(
            s,
            "  {:+.3} mm at ({:.1}, {:.1}, {:.1}) mm",
            w.deviation_mm, w.at_mm[0], w.at_mm[1], w.at_mm[2]
        );
    }
    let _ = writeln!(
        s,
        "volume: design {:.3} L, cut {:.3} L, difference {:+.3} L",
        c.design_volume_litres, c.cut_volume_litres, c.volume_difference_litres
    );
    s
}
