//! `verify`: any programs simulated against a block and a design.

use super::*;
use crate::gcode::program::{self};
use crate::model::job::Block;
use crate::output;
use crate::profiles::job;
use crate::profiles::machine as profile;
use crate::toolpath::setup::Side;
use crate::verify::report::Verification;
use crate::verify::setting::{ProgramSource, Setting, VerifyOptions};
use crate::verify::simulate;
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
    // The programs' headers: the project's own programs record their block,
    // where the design sits in it, and where setup 2's Z0 is.
    let heads = headers(&args.programs)?;
    let first_head = heads.first().map_or("", String::as_str);
    let pose = program::read_pose(first_head);
    let mesh = match &design {
        Some(d) => Some(d.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?),
        None => None,
    };
    let Stock {
        block,
        table_position,
        part,
        keep,
        placed,
        basis,
    } = stock(args, job.as_ref(), design.as_ref(), mesh, first_head)?;
    let block_for_pockets = block.clone();
    let (sources, zeroed_on_table) = sources(args, &heads)?;
    let zero_on_table = job.is_some() || zeroed_on_table;
    let setting = Setting {
        // Programs planned against a job are written with setup 2's Z0 on
        // the spoilboard top (their header says so); others are read as
        // zeroed on the turned block's top.
        table_zero_after_flip: zero_on_table,
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
        // The design's fin boxes and plug, where the placement is known.
        pockets: match (design.as_ref().and_then(Design::board), &placed, pose) {
            (Some(b), Some(p), _) => crate::toolpath::pockets::zones(b, &p.pose, &p.block),
            (Some(b), None, Some(pose)) if args.stock.is_none() => {
                crate::toolpath::pockets::zones(b, &pose, &block_for_pockets)
            }
            _ => vec![],
        },
        prepared: [None, None],
    };
    let options = VerifyOptions {
        cell: args.cell,
        lenient: args.lenient,
        ..Default::default()
    };
    let mut v = simulate::verify(sources, &setting, options, progress).map_err(JobError::Gcode)?;
    v.basis = Some(basis);
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

/// The first 16 KiB of each program, its header comment joined back
/// (where the project's own programs record their block, the design's
/// place in it, and setup 2's Z0).
fn headers(programs: &[PathBuf]) -> Result<Vec<String>, JobError> {
    let mut heads = Vec::new();
    for path in programs {
        use std::io::Read as _;
        let mut head = Vec::new();
        std::fs::File::open(path)
            .and_then(|f| f.take(16 * 1024).read_to_end(&mut head))
            .map_err(|e| JobError::Read {
                path: path.display().to_string(),
                message: e.to_string(),
            })?;
        heads.push(program::header_text(&String::from_utf8_lossy(&head)));
    }
    Ok(heads)
}

/// The block the programs cut, where it sits on the table, the design in
/// its coordinates, what is left standing on purpose, the placement (from
/// a job) and a line saying where all that came from.
struct Stock {
    block: Block,
    table_position: [f64; 2],
    part: Option<crate::model::mesh::Mesh>,
    keep: Vec<[[f64; 2]; 2]>,
    placed: Option<crate::toolpath::setup::Placement>,
    basis: String,
}

/// The stock from `--stock`, the job, or the programs' header, in that
/// order of what was given.
fn stock(
    args: &VerifyArgs,
    job: Option<&crate::model::job::Job>,
    design: Option<&Design>,
    mesh: Option<crate::model::mesh::Mesh>,
    first_head: &str,
) -> Result<Stock, JobError> {
    let pose = program::read_pose(first_head);
    let posed = |mesh: Option<crate::model::mesh::Mesh>| match (mesh, pose) {
        (Some(m), Some(p)) => Some(p.apply_mesh(&m)),
        (m, _) => m,
    };
    let design_basis = match (&design, pose) {
        (None, _) => "",
        (Some(_), Some(_)) => {
            "; the design placed as the programs' header records (the ball's reach is judged without the job's parting surface: give --job for that)"
        }
        (Some(_), None) => {
            "; the design as given, in the programs' coordinates (their header records no placement)"
        }
    };
    let (block, table_position, part, keep, placed, basis) = match (&args.stock, job) {
        (Some(s), None) => {
            let block = parse_block(s)?;
            let at = program::read_stock(first_head)
                .ok()
                .flatten()
                .map_or([0.0, 0.0], |(_, at)| at);
            let basis = format!("block from --stock{design_basis}");
            let keep = match pose {
                Some(_) => program::read_kept(first_head).unwrap_or_default(),
                None => vec![],
            };
            (block, at, posed(mesh), keep, None, basis)
        }
        (Some(s), Some(j)) => {
            let block = parse_block(s)?;
            let basis = "block from --stock, placed as the job says; the design as given".into();
            (block, j.table_position, mesh, vec![], None, basis)
        }
        (None, Some(j)) => match (design, mesh) {
            (Some(d), Some(mesh)) => {
                let apex = match d {
                    Design::Board(b) => Some(program::apex_line(b)),
                    Design::Mesh { .. } => None,
                };
                let place = crate::toolpath::setup::place(&mesh, apex.as_deref(), j)?;
                let keep = crate::toolpath::setup::tab_rectangles(&place, j);
                let (block, part) = (place.block.clone(), place.part.clone());
                let basis = "block and the design's placement from the job".into();
                (
                    block,
                    j.table_position,
                    Some(part),
                    keep,
                    Some(place),
                    basis,
                )
            }
            _ => match &j.stock {
                Some(b) => (
                    b.clone(),
                    j.table_position,
                    None,
                    vec![],
                    None,
                    "block from the job".into(),
                ),
                None => {
                    return Err(JobError::Flag(
                        "the job sizes its block from the board: give --design, or --stock LxWxT"
                            .into(),
                    ));
                }
            },
        },
        (None, None) => match program::read_stock(first_head) {
            Ok(Some((block, at))) => {
                let basis = format!("block from the programs' header{design_basis}");
                let keep = program::read_kept(first_head).unwrap_or_default();
                (block, at, posed(mesh), keep, None, basis)
            }
            Ok(None) => {
                return Err(JobError::Flag(
                    "the programs' header names no stock: give --stock LxWxT (e.g. 300x200x50mm) or --job JOB.yaml".into(),
                ));
            }
            Err(why) => {
                return Err(JobError::Flag(format!(
                    "{why}: give --job JOB.yaml (the job they were cut with), or --stock LxWxT"
                )));
            }
        },
    };
    Ok(Stock {
        block,
        table_position,
        part,
        keep,
        placed,
        basis,
    })
}

/// The programs as sources for the simulation, each with its setup (from
/// `--flip-after`, the header, or the order), and whether a header says
/// setup 2 is zeroed on the spoilboard.
fn sources(
    args: &VerifyArgs,
    heads: &[String],
) -> Result<(Vec<ProgramSource<'static>>, bool), JobError> {
    let mut sources = Vec::new();
    let count = args.programs.len();
    let mut zero_on_table = false;
    for (k, path) in args.programs.iter().enumerate() {
        let file = std::fs::File::open(path).map_err(|e| JobError::Read {
            path: path.display().to_string(),
            message: e.to_string(),
        })?;
        let reader = std::io::BufReader::new(file);
        let head = &heads[k];
        let side = match args.flip_after {
            Some(n) if k < n => Side::Deck,
            Some(_) => Side::Bottom,
            // The project's own programs name their setup in the header;
            // of two programs from elsewhere, the second follows the flip.
            None => {
                if head.contains("setup 2 of 2")
                    || (count == 2 && k == 1 && !head.contains("setup 1 of 2"))
                {
                    Side::Bottom
                } else {
                    Side::Deck
                }
            }
        };
        if side == Side::Bottom && head.contains("Z0 on the spoilboard top") {
            zero_on_table = true;
        }
        sources.push(ProgramSource {
            name: path.display().to_string(),
            side,
            reader: Box::new(reader),
            loaded: None,
        });
    }
    Ok((sources, zero_on_table))
}
