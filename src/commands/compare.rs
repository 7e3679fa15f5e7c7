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
        return Err(JobError::Option(format!(
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
