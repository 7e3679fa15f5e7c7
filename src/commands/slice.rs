//! `slice`: sections and waterlines of a design.

use super::*;
use crate::output;
use crate::slice::contours::{self, SliceSet};
use crate::slice::plane::{Axis, Slice};
use std::path::{Path, PathBuf};

/// Cross-sections and waterlines of a design, and the files written.
pub struct Sliced {
    /// Cross-sections, in the order asked.
    pub sections: Vec<Slice>,
    /// Distance of each section from the nose, mm.
    pub section_at: Vec<f64>,
    /// Waterlines, from the bottom up.
    pub waterlines: Vec<Slice>,
    /// Height of each above the lowest point, mm.
    pub waterline_at: Vec<f64>,
    /// Files written.
    pub written: Vec<PathBuf>,
}

/// Where `slice` cuts when no stations are asked for: 12 in (300 mm in a
/// mm board) from the nose, the wide point (or centre), 12 in from the tail.
pub fn default_stations(design: &Design, length: f64) -> Vec<f64> {
    match design {
        Design::Board(b) => vec![
            b.tip_station,
            b.outline.wide_point,
            b.length - b.tip_station,
        ],
        Design::Mesh { .. } => {
            let d = crate::units::MM_PER_FOOT.min(0.25 * length);
            vec![d, 0.5 * length, length - d]
        }
    }
}

/// Slices `design` at `stations` (mm from the nose; default stations when
/// empty) and, with `z_step`, at waterlines every `z_step` mm from the
/// lowest point; writes SVG and CSV into `dir`.
pub fn slice(
    design: &Design,
    stations: &[f64],
    z_step: Option<f64>,
    dir: &Path,
) -> Result<Sliced, JobError> {
    output::ready(dir)?;
    let mesh = design.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?;
    let (lo, hi) = mesh
        .bounding_box()
        .ok_or_else(|| JobError::WrongKind("the mesh is empty".into()))?;
    let length = hi[0] - lo[0];
    let section_at: Vec<f64> = if stations.is_empty() {
        default_stations(design, length)
    } else {
        stations.to_vec()
    };
    if let Some(&bad) = section_at.iter().find(|&&x| !(0.0..=length).contains(&x)) {
        return Err(JobError::Flag(format!(
            "station {} is off the board, which runs 0 to {} from the nose",
            crate::units::Both(bad),
            crate::units::Both(length)
        )));
    }
    let xs: Vec<f64> = section_at.iter().map(|x| lo[0] + x).collect();
    let sections = crate::slice::plane::slice_many(&mesh, Axis::X, &xs);
    let (waterlines, waterline_at) = match z_step {
        None => (vec![], vec![]),
        Some(step) => {
            let height = hi[2] - lo[2];
            if !(step.is_finite() && step > 0.0 && height / step <= 1000.0) {
                return Err(JobError::Flag(format!(
                    "--z-step {step} mm gives more than 1000 waterlines (or is not positive)"
                )));
            }
            let at: Vec<f64> = (1..)
                .map(|i| i as f64 * step)
                .take_while(|&z| z < height)
                .collect();
            let zs: Vec<f64> = at.iter().map(|z| lo[2] + z).collect();
            (crate::slice::plane::slice_many(&mesh, Axis::Z, &zs), at)
        }
    };
    let name = design.name();
    let set = SliceSet {
        name,
        slices: &sections,
        quoted: section_at.clone(),
    };
    let mut files = vec![
        (
            dir.join(format!("{name}.sections.svg")),
            contours::sections_svg(&set).into_bytes(),
        ),
        (
            dir.join(format!("{name}.sections.csv")),
            contours::csv(&set).into_bytes(),
        ),
    ];
    if !waterlines.is_empty() {
        let set = SliceSet {
            name,
            slices: &waterlines,
            quoted: waterline_at.clone(),
        };
        files.push((
            dir.join(format!("{name}.waterlines.svg")),
            contours::waterlines_svg(&set).into_bytes(),
        ));
        files.push((
            dir.join(format!("{name}.waterlines.csv")),
            contours::csv(&set).into_bytes(),
        ));
    }
    // Waterlines from an earlier run go with the set they belonged to.
    let family = |n: &str| {
        ["sections", "waterlines"]
            .iter()
            .any(|k| n == format!("{name}.{k}.svg") || n == format!("{name}.{k}.csv"))
    };
    let written = write_all(&files, &family, &[])?;
    Ok(Sliced {
        sections,
        section_at,
        waterlines,
        waterline_at,
        written,
    })
}
