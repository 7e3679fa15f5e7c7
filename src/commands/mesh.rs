//! `mesh`, `report` and `check`: a board certified and written as STL, or
//! an STL inspected; and the tail pull's options, which `report` and `diff`
//! take.

use super::*;
use crate::inspect::check::{self as inspect, Inspection};
use crate::model::board::Board;
use crate::output;
use crate::stl;
use crate::units::{Length, parse_length};
use crate::volume::certificate::{self, Certified};
use crate::volume::report::Report;
use crate::volume::tail_pull::{Water, WaterError, WaterWidth, parse_speed};
use std::path::{Path, PathBuf};

/// Reads and inspects an STL file, welding at `weld` mm (default from its size).
pub fn check(path: &Path, weld: Option<f64>) -> Result<Inspection, JobError> {
    if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("yaml") || e.eq_ignore_ascii_case("yml"))
    {
        return Err(JobError::WrongKind(format!(
            "{}: `check` inspects STL files; for a board description use `blanksmith report` (its mesh is checked there)",
            path.display()
        )));
    }
    let soup = stl::read_file(path).map_err(|source| JobError::Stl {
        path: path.display().to_string(),
        source,
    })?;
    if let Some(w) = weld
        && !(w.is_finite() && (0.0..=10.0).contains(&w))
    {
        return Err(JobError::Flag(format!("--weld {w} mm is outside 0..10 mm")));
    }
    Ok(inspect::inspect_soup(&soup, weld).1)
}

/// A certified board and its report.
pub struct Meshed {
    /// The board.
    pub board: Board,
    /// Its mesh and certificate.
    pub certified: Certified,
    /// The report (its `stl` names the file written, if any).
    pub report: Report,
    /// Files written, in order.
    pub written: Vec<PathBuf>,
}

/// STL flavour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StlKind {
    /// Binary STL (the default).
    Binary,
    /// ASCII STL.
    Ascii,
}

/// Certifies `board` and writes `<dir>/<name>.stl` and
/// `<dir>/<name>.report.json` (and the text table when `table` is set).
pub fn mesh_to(
    board: Board,
    tolerance: f64,
    dir: &Path,
    kind: StlKind,
    table: bool,
    inputs: &[&Path],
) -> Result<Meshed, JobError> {
    crate::meshing::mesher::check_tolerance(tolerance)?;
    output::ready(dir)?;
    let certified = certificate::certify(&board, tolerance)?;
    let (report, files) = mesh_files(&board, &certified, dir, kind, table);
    let written = write_all(&files, &exactly(&files), inputs)?;
    Ok(Meshed {
        board,
        certified,
        report,
        written,
    })
}

/// The STL and report files of a certified board, in memory.
pub(crate) fn mesh_files(
    board: &Board,
    certified: &Certified,
    dir: &Path,
    kind: StlKind,
    table: bool,
) -> (Report, Files) {
    let stl_path = dir.join(format!("{}.stl", board.name));
    // The report names its STL by file name: the two sit in one folder and
    // move together, and the report is the same whatever folder it is in.
    let stl_name = format!("{}.stl", board.name);
    let report = Report::new(board, certified, Some(stl_name));
    let mut stl_bytes = Vec::new();
    let header = format!("blanksmith {} mm", board.name);
    match kind {
        StlKind::Binary => stl::write_binary(&mut stl_bytes, &certified.mesh, &header),
        StlKind::Ascii => stl::write_ascii(&mut stl_bytes, &certified.mesh, &board.name),
    }
    .expect("writing to memory cannot fail");
    // Read the file back as written (f32 coordinates) and inspect it: the
    // rounding must not have opened, folded or flattened anything.
    let mut report = report;
    let written_check = stl::read(&stl_bytes).map(|soup| inspect::inspect_soup(&soup, Some(0.0)).1);
    report.stl_clean = Some(matches!(&written_check, Ok(i) if i.is_clean()));
    report.certified &= report.stl_clean == Some(true);
    let mut files = vec![
        (stl_path, stl_bytes),
        (
            dir.join(format!("{}.report.json", board.name)),
            report.to_json().into_bytes(),
        ),
    ];
    if table {
        let text = format!("{}\n{}", report.summary(), report.table());
        files.push((
            dir.join(format!("{}.report.txt", board.name)),
            text.into_bytes(),
        ));
    }
    (report, files)
}

/// Certifies `board` without writing anything, its tail pull estimated
/// for `water` (checked against the board before the mesh is made).
pub fn report(
    board: Board,
    tolerance: f64,
    water: &Water,
    file: &Path,
) -> Result<Meshed, JobError> {
    let pull =
        crate::volume::tail_pull::estimate(&board, water).map_err(|source| JobError::WaterFor {
            board: file.display().to_string(),
            source,
        })?;
    let mut m = certify_only(board, tolerance)?;
    m.report.tail_pull = Some(pull);
    Ok(m)
}

/// Certifies `board` without writing anything.
pub fn certify_only(board: Board, tolerance: f64) -> Result<Meshed, JobError> {
    let certified = certificate::certify(&board, tolerance)?;
    let report = Report::new(&board, &certified, None);
    Ok(Meshed {
        board,
        certified,
        report,
        written: vec![],
    })
}

/// The options as written on the command line (each `None` keeps the
/// default of [`Water`]).
#[derive(Debug, Clone, Default)]
pub struct WaterFlags {
    /// `--speed`: `4`, `4m/s`, `15km/h`, `9mph`, `8kn`.
    pub speed: Option<String>,
    /// `--water-depth`: a length; bare numbers are millimetres.
    pub depth: Option<String>,
    /// `--water-width`: `50%` of the width at the tail station, or a length.
    pub width: Option<String>,
    /// `--water`: fresh, salt, or a density in kg/m³.
    pub water: Option<String>,
    /// `--exit-angle`: degrees.
    pub angle: Option<f64>,
}

fn length_mm(option: &'static str, text: &str) -> Result<f64, WaterError> {
    parse_length(text)
        .map(|l| match l {
            Length::Bare(v) => v,
            Length::Mm(v) => v,
        })
        .map_err(|e| WaterError {
            option,
            value: format!("`{text}`"),
            rule: format!("{}; bare numbers are millimetres", e.why),
        })
}

impl WaterFlags {
    /// The water the options describe (ranges are checked against the
    /// board by [`crate::volume::tail_pull::estimate`]).
    pub fn water(&self) -> Result<Water, JobError> {
        let mut w = Water::default();
        if let Some(s) = &self.speed {
            w.speed_m_s = parse_speed(s)?;
        }
        if let Some(d) = &self.depth {
            w.depth_mm = length_mm("--water-depth", d)?;
        }
        if let Some(t) = &self.width {
            w.width = match t.trim().strip_suffix('%') {
                Some(p) => WaterWidth::ShareOfTail(
                    p.trim().parse::<f64>().map_err(|_| WaterError {
                        option: "--water-width",
                        value: format!("`{t}`"),
                        rule: "not a share; write e.g. 50% or a width such as 20cm".into(),
                    })? / 100.0,
                ),
                None => WaterWidth::Mm(length_mm("--water-width", t)?),
            };
        }
        if let Some(t) = &self.water {
            w.density_kg_m3 =
                super::resize::water_density(t).map_err(|e| JobError::Flag(format!("--{}", e)))?;
        }
        w.angle_deg = self.angle;
        Ok(w)
    }
}
