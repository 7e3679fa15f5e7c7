//! The commands' work, one file a command, reachable without the command
//! line: read a board, certify its mesh, and write the files of a job.
//! Nothing is written until everything a command writes has been computed,
//! and then a command's files are put in place as one set (`output`).
//! `cli` is the command line as `clap` reads it; `run` calls the work with
//! the flags and renders what it returns, once.

pub mod cli;
pub mod run;
mod mesh;
mod make;
mod cut;
mod slice;
mod compare;
mod resize;
mod diff;
mod templates;
mod verify;

pub use self::verify::*;
pub use compare::*;
pub use cut::*;
pub use diff::*;
pub use make::*;
pub use mesh::*;
pub use resize::*;
pub use slice::*;
pub use templates::*;

use crate::description::demo;
use crate::description::{self, DescriptionError};
use crate::inspect::check as inspect;
use crate::meshing::mesher::MeshError;
use crate::model::board::Board;
use crate::model::mesh::Mesh;
use crate::output;
use crate::stl;
use crate::units::Unit;
use std::path::{Path, PathBuf};

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
    /// A command-line value is unreadable, out of range, or missing.
    #[error("{0}")]
    Flag(String),
    /// A file is not of the kind the command takes (a description where
    /// an STL is wanted), or holds nothing to work on.
    #[error("{0}")]
    WrongKind(String),
    /// A file could not be read.
    #[error("{path}: cannot read: {message}")]
    Read {
        /// The file.
        path: String,
        /// What the system said.
        message: String,
    },
    /// The resize asked for cannot be made.
    #[error("{0}")]
    ResizeRequest(#[from] crate::resize::scale::ResizeError),
    /// A program could not be read.
    #[error("{0}")]
    Gcode(crate::gcode::read::GcodeError),
    /// The tail pull's options do not suit the board.
    #[error("{0}")]
    Water(#[from] crate::volume::tail_pull::WaterError),
    /// The tail pull's options do not suit this board.
    #[error("{board}: {source}")]
    WaterFor {
        /// The board's file or name.
        board: String,
        /// The option and the rule.
        source: crate::volume::tail_pull::WaterError,
    },
    /// The board does not fit, or a safety gate refused the program.
    #[error("{0}")]
    Cam(#[from] crate::toolpath::setup::CamError),
    /// The files could not be put in place (nothing was changed).
    #[error("{0}")]
    Output(#[from] output::OutputError),
    /// The cutting stage refused a design with these profiles.
    #[error("{context}: {source}")]
    Cut {
        /// The design, job and machine.
        context: String,
        /// Why.
        source: Box<JobError>,
    },
    /// An STL cannot serve as a design.
    #[error("{0}")]
    MeshDesign(String),
    /// The resized board breaks a rule of the description.
    #[error(
        "the board resized as asked breaks a rule of a description, so nothing was written; ask for a smaller change:\n{0}"
    )]
    Resize(Box<DescriptionError>),
    /// Two boards of one run share a name.
    #[error("{0}")]
    SameName(String),
    /// A fault in blanksmith itself, caught so other boards go on.
    #[error(
        "internal error (a fault in blanksmith, not in the board; please report it with the board file): {0}"
    )]
    Internal(String),
}

/// Reads the board an input names.
pub fn load(input: &Input) -> Result<Board, DescriptionError> {
    match input {
        Input::File(path) => description::load(path),
        Input::Demo => description::board_from_str(demo::DEMO, demo::DEMO_NAME),
    }
}

/// Puts a command's files (all in one folder) in place as one set: all of
/// them or none (see [`output`]). Files of the same kind for the same board
/// that the set replaces are told by `family`; `inputs` are never written.
pub(crate) fn write_all(
    files: &[(PathBuf, Vec<u8>)],
    family: &dyn Fn(&str) -> bool,
    inputs: &[&Path],
) -> Result<Vec<PathBuf>, JobError> {
    let Some((first, _)) = files.first() else {
        return Ok(vec![]);
    };
    let dir = first.parent().unwrap_or(Path::new(""));
    let named: Vec<(String, Vec<u8>)> = files
        .iter()
        .map(|(p, b)| {
            debug_assert_eq!(p.parent(), Some(dir), "one folder a set");
            let name = p.file_name().map(|n| n.to_string_lossy().into_owned());
            (name.unwrap_or_default(), b.clone())
        })
        .collect();
    let written = output::write_set(dir, &named, family, inputs)?;
    Ok(files
        .iter()
        .map(|(p, _)| p.clone())
        .filter(|p| written.iter().any(|w| w.file_name() == p.file_name()))
        .collect())
}

/// The files a set replaces: exactly these names.
pub(crate) fn exactly(files: &[(PathBuf, Vec<u8>)]) -> impl Fn(&str) -> bool + '_ {
    move |n: &str| {
        files
            .iter()
            .any(|(p, _)| p.file_name().is_some_and(|f| f == n))
    }
}

impl JobError {
    /// The board does not fit the stock or the machine.
    pub fn is_misfit(&self) -> bool {
        match self {
            JobError::Cam(crate::toolpath::setup::CamError::Fit(_)) => true,
            JobError::Cut { source, .. } => source.is_misfit(),
            _ => false,
        }
    }
}

/// Something to cut or draw: a board description or a mesh from elsewhere.
pub enum Design {
    /// A board description (meshed on demand).
    Board(Box<Board>),
    /// A closed mesh read from STL, welded; x runs along the board.
    Mesh {
        /// File stem.
        name: String,
        /// The mesh.
        mesh: Mesh,
    },
}

impl Design {
    /// Name for output files.
    pub fn name(&self) -> &str {
        match self {
            Design::Board(b) => &b.name,
            Design::Mesh { name, .. } => name,
        }
    }

    /// The description, when the design is one (not a mesh).
    pub fn board(&self) -> Option<&Board> {
        match self {
            Design::Board(b) => Some(b),
            Design::Mesh { .. } => None,
        }
    }

    /// The mesh to slice or cut (a board is meshed at `tolerance`).
    pub fn mesh(&self, tolerance: f64) -> Result<Mesh, JobError> {
        match self {
            Design::Board(b) => Ok(crate::meshing::mesher::mesh_board(b, tolerance)?),
            Design::Mesh { mesh, .. } => Ok(mesh.clone()),
        }
    }
}

/// Reads a design: `.stl` files as meshes (which must pass `check`), anything
/// else as a board description.
pub fn load_design(path: &Path) -> Result<Design, JobError> {
    let is_stl = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("stl"));
    if !is_stl {
        return Ok(Design::Board(Box::new(description::load(path)?)));
    }
    let soup = stl::read_file(path).map_err(|source| JobError::Stl {
        path: path.display().to_string(),
        source,
    })?;
    let (welded, inspection) = inspect::inspect_soup(&soup, None);
    if !inspection.watertight || inspection.inside_out {
        let kinds: Vec<String> = inspection
            .findings
            .iter()
            .map(|f| format!("{} {}", f.count, f.kind.replace('_', " ")))
            .collect();
        return Err(JobError::MeshDesign(format!(
            "{}: not a clean closed solid ({}); run `blanksmith check` on it for where",
            path.display(),
            kinds.join(", ")
        )));
    }
    // Every later stage sizes its grids from the design: bound it first.
    let max = crate::description::MAX_LENGTH;
    if let Some((lo, hi)) = welded.mesh.bounding_box()
        && let Some((axis, size)) = ["X", "Y", "Z"]
            .into_iter()
            .zip((0..3).map(|k| hi[k] - lo[k]))
            .find(|&(_, d)| d.is_nan() || d > max)
    {
        return Err(JobError::MeshDesign(format!(
            "{}: the solid is {} in {axis}; a design may be at most {max} mm (20') in any direction. An STL is read as millimetres: is this file in another unit?",
            path.display(),
            crate::units::Both(size)
        )));
    }
    let name: String = path
        .file_stem()
        .map(|s| {
            s.to_string_lossy()
                .chars()
                .map(|c| {
                    if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                        c
                    } else {
                        '-'
                    }
                })
                .collect()
        })
        .unwrap_or_else(|| "mesh".to_string());
    Ok(Design::Mesh {
        name,
        mesh: welded.mesh,
    })
}

/// Files to write: paths and bytes.
pub(crate) type Files = Vec<(PathBuf, Vec<u8>)>;

/// `--units in|mm`.
pub fn parse_unit(units: &str) -> Result<Unit, JobError> {
    match units {
        "in" => Ok(Unit::In),
        "mm" => Ok(Unit::Mm),
        other => Err(JobError::Flag(format!("--units {other}: use `in` or `mm`"))),
    }
}

/// A design's length along X, mm.
pub fn design_length(d: &Design) -> f64 {
    match d {
        Design::Board(b) => b.length,
        Design::Mesh { mesh, .. } => mesh.bounding_box().map_or(0.0, |(lo, hi)| hi[0] - lo[0]),
    }
}

/// `--stations` text to distances from the nose, mm.
pub fn parse_stations(list: Option<&str>, length: f64, unit: Unit) -> Result<Vec<f64>, JobError> {
    let mut xs = vec![];
    for item in list
        .iter()
        .flat_map(|s| s.split(','))
        .map(str::trim)
        .filter(|s| !s.is_empty())
    {
        let p = crate::description::values::parse_position(item)
            .map_err(|e| JobError::Flag(format!("--stations: {e}")))?;
        xs.push(p.from_nose(length, unit));
    }
    Ok(xs)
}
