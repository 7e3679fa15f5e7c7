//! The commands' work, reachable without the command line: read a board,
//! certify its mesh, and write the files of a job. Nothing is written until
//! everything a command writes has been computed, and each file is written
//! atomically.

use std::path::{Path, PathBuf};

use crate::board::Board;
use crate::certificate::{self, Certified};
use crate::demo;
use crate::description::{self, DescriptionError};
use crate::inspect::{self, Inspection};
use crate::mesher::MeshError;
use crate::output;
use crate::report::Report;
use crate::stl;

/// Where a board comes from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Input {
    /// A description file.
    File(PathBuf),
    /// The built-in demo board.
    Demo,
}

/// Why a job could not run. Each is an input or system error (exit 2).
#[derive(Debug, thiserror::Error)]
pub enum JobError {
    /// The description could not be read or broke a rule.
    #[error("{0}")]
    Description(#[from] DescriptionError),
    /// The board could not be meshed.
    #[error("{0}")]
    Mesh(#[from] MeshError),
    /// An STL file could not be read.
    #[error("{path}: {source}")]
    Stl {
        /// The file.
        path: String,
        /// What is wrong with it.
        source: stl::StlError,
    },
    /// A command-line value is out of range.
    #[error("{0}")]
    Option(String),
    /// A file could not be written.
    #[error("{path}: cannot write: {source}")]
    Write {
        /// The file.
        path: String,
        /// What the system said.
        source: std::io::Error,
    },
}

/// Reads and inspects an STL file, welding at `weld` mm (default from its size).
pub fn check(path: &Path, weld: Option<f64>) -> Result<Inspection, JobError> {
    let soup = stl::read_file(path).map_err(|source| JobError::Stl {
        path: path.display().to_string(),
        source,
    })?;
    if let Some(w) = weld
        && !(w.is_finite() && (0.0..=10.0).contains(&w))
    {
        return Err(JobError::Option(format!(
            "--weld {w} mm is outside 0..10 mm"
        )));
    }
    Ok(inspect::inspect_soup(&soup, weld).1)
}

/// Reads the board an input names.
pub fn load(input: &Input) -> Result<Board, DescriptionError> {
    match input {
        Input::File(path) => description::load(path),
        Input::Demo => description::board_from_str(demo::DEMO, demo::DEMO_NAME),
    }
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

fn write_all(files: &[(PathBuf, Vec<u8>)]) -> Result<Vec<PathBuf>, JobError> {
    let mut written = vec![];
    for (path, bytes) in files {
        output::write_atomic(path, bytes).map_err(|source| JobError::Write {
            path: path.display().to_string(),
            source,
        })?;
        written.push(path.clone());
    }
    Ok(written)
}

/// Certifies `board` and writes `<dir>/<name>.stl` and
/// `<dir>/<name>.report.json` (and the text table when `table` is set).
pub fn mesh_to(
    board: Board,
    tolerance: f64,
    dir: &Path,
    kind: StlKind,
    table: bool,
) -> Result<Meshed, JobError> {
    let certified = certificate::certify(&board, tolerance)?;
    let stl_path = dir.join(format!("{}.stl", board.name));
    let report = Report::new(&board, &certified, Some(stl_path.display().to_string()));
    let mut stl_bytes = Vec::new();
    let header = format!("blanksmith {} mm", board.name);
    match kind {
        StlKind::Binary => stl::write_binary(&mut stl_bytes, &certified.mesh, &header),
        StlKind::Ascii => stl::write_ascii(&mut stl_bytes, &certified.mesh, &board.name),
    }
    .expect("writing to memory cannot fail");
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
    let written = write_all(&files)?;
    Ok(Meshed {
        board,
        certified,
        report,
        written,
    })
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

/// The main job for one board: everything into `<out>/<name>/`.
pub fn make(input: &Input, tolerance: f64, out: &Path) -> Result<Meshed, JobError> {
    let board = load(input)?;
    let dir = out.join(&board.name);
    mesh_to(board, tolerance, &dir, StlKind::Binary, true)
}
