//! `templates`: full-size templates of a design.

use super::*;
use crate::model::mesh::Mesh;
use crate::output;
use crate::volume::certificate::{self};
use crate::volume::report::Report;
use std::path::{Path, PathBuf};

/// The templates written for a design.
pub struct Templates {
    /// Pages in the PDF.
    pub pages: usize,
    /// The drawings.
    pub drawings: Vec<crate::template::drawing::Drawing>,
    /// Files written.
    pub written: Vec<PathBuf>,
}

/// Writes the full-size templates of a design: `DIR/<name>.templates.pdf`
/// (tiled on `paper`) one SVG and one DXF a template. `only` picks from outline,
/// rocker, sections, sheet; `stations` (mm from the nose) places the
/// sections (default: 12 in from each tip and the wide point).
pub fn templates(
    design: &Design,
    paper: crate::template::print::Paper,
    only: &[String],
    stations: &[f64],
    dir: &Path,
) -> Result<Templates, JobError> {
    output::ready(dir)?;
    let tol = crate::meshing::mesher::DEFAULT_TOLERANCE;
    let (mesh, report) = match design {
        Design::Board(b) => {
            let c = certificate::certify(b, tol)?;
            let r = Report::new(b, &c, None);
            (c.mesh, Some(r))
        }
        Design::Mesh { mesh, .. } => (mesh.clone(), None),
    };
    let (drawings, pages, files) =
        template_files(design, &mesh, report.as_ref(), paper, only, stations, dir)?;
    let written = write_all(&files, &exactly(&files), &[])?;
    Ok(Templates {
        pages,
        drawings,
        written,
    })
}

/// The templates' PDF and SVGs in memory, from a design's mesh (and report).
pub(crate) fn template_files(
    design: &Design,
    mesh: &Mesh,
    report: Option<&Report>,
    paper: crate::template::print::Paper,
    only: &[String],
    stations: &[f64],
    dir: &Path,
) -> Result<(Vec<crate::template::drawing::Drawing>, usize, Files), JobError> {
    use crate::template::drawing as template;
    let all = ["outline", "rocker", "sections", "sheet"];
    for o in only {
        if !all.contains(&o.as_str()) {
            return Err(JobError::Flag(format!(
                "--only {o}: choose from outline, rocker, sections, sheet"
            )));
        }
    }
    let want = |k: &str| only.is_empty() || only.iter().any(|o| o == k);
    let side = match design {
        Design::Board(b) => template::curves_of(b),
        Design::Mesh { name, mesh } => template::curves_of_mesh(name, mesh),
    };
    let length = side.length();
    let section_at = if stations.is_empty() {
        default_stations(design, length)
    } else {
        stations.to_vec()
    };
    if let Some(&bad) = section_at.iter().find(|&&x| !(0.0 < x && x < length)) {
        return Err(JobError::Flag(format!(
            "station {} is off the board (0 to {})",
            crate::units::Both(bad),
            crate::units::Both(length)
        )));
    }
    let mut drawings = vec![];
    if want("outline") {
        let mut d = template::outline(&side);
        if let Design::Board(b) = design {
            d.items.extend(template::fitting_marks(b));
        }
        drawings.push(d);
    }
    if want("rocker") {
        drawings.push(template::rocker(&side));
    }
    if want("sections") {
        drawings.push(crate::template::sections::sections(
            design.name(),
            mesh,
            &section_at,
        ));
    }
    let name = design.name();
    let mut pages = vec![];
    if want("sheet") {
        let lines = match report {
            Some(r) => crate::template::sheet::sheet(r),
            None => vec![
                format!("{name}: shaping sheet"),
                "(a mesh from elsewhere: no measurements beyond the templates)".into(),
            ],
        };
        pages.push(crate::template::print::sheet_page(&lines, paper));
    }
    pages.extend(crate::template::tiling::tile_all(&drawings, paper));
    let mut files = vec![(
        dir.join(format!("{name}.templates.pdf")),
        crate::template::print::to_pdf(&pages),
    )];
    for d in &drawings {
        files.push((
            dir.join(format!("{name}.{}.svg", d.kind)),
            template::to_svg(d).into_bytes(),
        ));
        files.push((
            dir.join(format!("{name}.{}.dxf", d.kind)),
            crate::template::dxf::to_dxf(d).map_err(JobError::Internal)?,
        ));
    }
    Ok((drawings, pages.len(), files))
}
