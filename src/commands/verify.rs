//! `verify`: any programs simulated against a block and a design.

use super::*;
use crate::gcode::program::{self};
use crate::model::job::Block;
use crate::output;
use crate::profiles::job;
use crate::profiles::machine as profile;
use crate::toolpath::setup::Side;
use crate::verify::simulate::{
    self as simulate, ProgramSource, Setting, Verification, VerifyOptions,
};
use std::path::{Path, PathBuf};

/// What `verify` runs on.
#[derive(Debug, Clone, Default)]
pub struct VerifyArgs {
    /// The programs, in running order.
    pub programs: Vec<PathBuf>,
    /// Machine profile.
    pub machine: PathBuf,
    /// Job profile (its stock, placement and table position).
    pub job: Option<PathBuf>,
    /// `LxWxT` block.
    pub stock: Option<String>,
    /// Tool for programs without a listed T word.
    pub tool: Option<String>,
    /// Design (description or STL).
    pub design: Option<PathBuf>,
    /// Number of programs before the flip (default: from their headers).
    pub flip_after: Option<usize>,
    /// Skip words outside the subset.
    pub lenient: bool,
    /// Height-map cell, mm.
    pub cell: f64,
}

/// Reads `300x200x50mm` or `74x22x4in` (each part a length; a unit at the
/// end applies to the bare numbers, mm when there is none).
pub fn parse_block(text: &str) -> Result<Block, JobError> {
    let bad = |why: String| {
        JobError::Flag(format!(
            "--stock {text}: {why}; write LxWxT, e.g. 2100x650x120mm"
        ))
    };
    let t = text.trim().to_ascii_lowercase();
    let (body, unit) = if let Some(b) = t.strip_suffix("mm") {
        (b.to_string(), crate::units::Unit::Mm)
    } else if let Some(b) = t.strip_suffix("in") {
        (b.to_string(), crate::units::Unit::In)
    } else {
        (t.clone(), crate::units::Unit::Mm)
    };
    let parts: Vec<&str> = body.split('x').map(str::trim).collect();
    if parts.len() != 3 {
        return Err(bad("three sizes are needed".into()));
    }
    let mut v = [0.0; 3];
    for (k, p) in parts.iter().enumerate() {
        let l = crate::units::parse_length(p).map_err(|e| bad(e.to_string()))?;
        v[k] = l.to_mm(unit);
        if !(v[k] > 0.0 && v[k] <= 20_000.0) {
            return Err(bad(format!(
                "{} must be more than 0 and at most 20 m",
                ["the length", "the width", "the thickness"][k]
            )));
        }
    }
    Ok(Block::flat(v[0], v[1], v[2]))
}

/// `verify`: simulates programs from anywhere; writes the report and
/// pictures into `dir` when given.
pub fn verify_programs(
    args: &VerifyArgs,
    dir: Option<&Path>,
    progress: &dyn Fn(&str),
) -> Result<(Verification, Vec<PathBuf>), JobError> {
    if let Some(d) = dir {
        output::ready(d)?;
    }
    let machine = profile::load_machine(&args.machine)?;
    if !(args.cell.is_finite() && (0.05..=10.0).contains(&args.cell)) {
        return Err(JobError::Flag(format!(
            "--cell {} mm is outside 0.05..10 mm",
            args.cell
        )));
    }
    let default_tool = match &args.tool {
        Some(t) => Some(
            crate::model::machine::parse_cutter(t)
                .map_err(|e| JobError::Flag(format!("--tool {e}")))?,
        ),
        None => None,
    };
    let job = match &args.job {
        Some(p) => Some(job::load_job(p, &machine)?),
        None => None,
    };
    let design = match &args.design {
        Some(p) => Some(load_design(p)?),
        None => None,
    };
    // The block, and where the design sits in it.
    let (block, table_position, part, keep, placed) = match (&args.stock, &job) {
        (Some(s), _) => {
            let block = parse_block(s)?;
            let part = match &design {
                Some(d) => Some(d.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?),
                None => None,
            };
            let at = job.as_ref().map_or([0.0, 0.0], |j| j.table_position);
            (block, at, part, vec![], None)
        }
        (None, Some(j)) => match &design {
            Some(d) => {
                let mesh = d.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?;
                let apex = match d {
                    Design::Board(b) => Some(program::apex_line(b)),
                    Design::Mesh { .. } => None,
                };
                let place = crate::toolpath::setup::place(&mesh, apex.as_deref(), j)?;
                let keep = tab_rectangles(&place, j);
                let (block, part) = (place.block.clone(), place.part.clone());
                (block, j.table_position, Some(part), keep, Some(place))
            }
            None => match &j.stock {
                Some(b) => (b.clone(), j.table_position, None, vec![], None),
                None => {
                    return Err(JobError::Flag(
                        "the job sizes its block from the board: give --design, or --stock LxWxT"
                            .into(),
                    ));
                }
            },
        },
        (None, None) => {
            return Err(JobError::Flag(
                "give --stock LxWxT (e.g. 300x200x50mm) or --job JOB.yaml".into(),
            ));
        }
    };
    let mut sources = Vec::new();
    let count = args.programs.len();
    for (k, path) in args.programs.iter().enumerate() {
        let file = std::fs::File::open(path).map_err(|e| JobError::Read {
            path: path.display().to_string(),
            message: e.to_string(),
        })?;
        let mut reader = std::io::BufReader::new(file);
        let side = match args.flip_after {
            Some(n) if k < n => Side::Deck,
            Some(_) => Side::Bottom,
            None => {
                // The project's own programs name their setup in the header;
                // of two programs from elsewhere, the second follows the flip.
                use std::io::BufRead as _;
                let head = reader
                    .fill_buf()
                    .map(|b| String::from_utf8_lossy(&b[..b.len().min(4096)]).to_string())
                    .unwrap_or_default();
                if head.contains("(setup 2 of 2")
                    || (count == 2 && k == 1 && !head.contains("(setup 1 of 2"))
                {
                    Side::Bottom
                } else {
                    Side::Deck
                }
            }
        };
        sources.push(ProgramSource {
            name: path.display().to_string(),
            side,
            reader: Box::new(reader),
            loaded: None,
        });
    }
    let setting = Setting {
        // Programs planned against a job are written with setup 2's Z0 on
        // the spoilboard top; a bare block's programs are read as zeroed
        // on the turned block's top.
        table_zero_after_flip: job.is_some(),
        machine: &machine,
        block,
        table_position,
        default_tool,
        design: part.as_ref(),
        keep,
        floor: placed
            .as_ref()
            .zip(job.as_ref())
            .map(|(p, j)| (p, j.overlap)),
    };
    let options = VerifyOptions {
        cell: args.cell,
        lenient: args.lenient,
        ..Default::default()
    };
    let v = simulate::verify(sources, &setting, options, progress).map_err(JobError::Gcode)?;
    let mut written = vec![];
    if let Some(dir) = dir {
        let name = design
            .as_ref()
            .map_or("programs".to_string(), |d| d.name().to_string());
        let files = verification_files(&v, &name, dir);
        let inputs: Vec<&Path> = args
            .programs
            .iter()
            .map(PathBuf::as_path)
            .chain(
                [
                    Some(args.machine.as_path()),
                    args.job.as_deref(),
                    args.design.as_deref(),
                ]
                .into_iter()
                .flatten(),
            )
            .collect();
        written = write_all(&files, &exactly(&files), &inputs)?;
    }
    Ok((v, written))
}
