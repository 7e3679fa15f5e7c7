//! `mesh`, `report` and `check`: a board certified and written as STL, or
//! an STL inspected.

use super::*;
use crate::inspect::check::{self as inspect, Inspection};
use crate::model::board::Board;
use crate::output;
use crate::stl;
use crate::volume::certificate::{self, Certified};
use crate::volume::report::Report;
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
