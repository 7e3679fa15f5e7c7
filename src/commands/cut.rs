//! `cut`: router programs and setup sheet for both setups, simulated
//! before anything is written.

use super::*;
use crate::gcode::program::{self, CutPlan};
use crate::model::job::Job;
use crate::model::machine::Machine;
use crate::model::mesh::Mesh;
use crate::output;
use crate::profiles::job;
use crate::profiles::machine as profile;
use crate::profiles::stock::StockEntry;
use crate::toolpath::pick;
use crate::toolpath::setup::{CamError, Side};
use crate::verify::picture;
use crate::verify::report::Verification;
use crate::verify::setting::{ProgramSource, Setting, VerifyOptions};
use crate::verify::simulate;
use rayon::prelude::*;
use std::path::{Path, PathBuf};
use std::sync::Arc;

/// A board's cutting outputs (programs for any tool, setup sheet,
/// simulation report and pictures), so an earlier run's program for a tool
/// no longer used goes with the set it belonged to.
pub(crate) fn cut_family(name: &str) -> impl Fn(&str) -> bool + '_ {
    move |n: &str| {
        if n == format!("{name}.setup.txt")
            || n == format!("{name}.blanks.txt")
            || n == format!("{name}.cradles.pdf")
            || n.strip_prefix(name)
                .and_then(|r| r.strip_prefix(".cradle-"))
                .is_some_and(|r| matches!(r, "1.svg" | "2.svg" | "1.dxf" | "2.dxf"))
            || n.strip_prefix(name)
                .is_some_and(|r| r.starts_with(".verify."))
        {
            return true;
        }
        let Some(rest) = n.strip_prefix(name).and_then(|r| r.strip_prefix('-')) else {
            return false;
        };
        let rest = rest
            .strip_suffix(".deviation.svg")
            .or_else(|| rest.strip_suffix(".nc"))
            .unwrap_or("");
        let mut parts = rest.split('-');
        let setup = matches!(
            (parts.next(), parts.next()),
            (Some("1"), Some("deck")) | (Some("2"), Some("bottom"))
        );
        let tool = match parts.next() {
            None => true,
            Some(t) => t
                .strip_prefix('T')
                .is_some_and(|d| !d.is_empty() && d.bytes().all(|b| b.is_ascii_digit())),
        };
        setup && tool && parts.next().is_none()
    }
}

/// Machine and job for the cutting stage: files, or the shipped machine
/// and the default job.
#[derive(Debug, Clone, Default)]
pub struct CutArgs {
    /// Machine profile; the shipped generic gantry router when `None`.
    pub machine: Option<PathBuf>,
    /// Job profile; every default when `None`.
    pub job: Option<PathBuf>,
    /// The shop's stock list: the blank is picked from it (the job's own
    /// stock is then not used).
    pub stock_list: Option<PathBuf>,
}

/// Reads the stock list a cut picks its blank from, if any.
pub fn cut_blanks(args: &CutArgs) -> Result<Option<Vec<StockEntry>>, JobError> {
    Ok(args
        .stock_list
        .as_deref()
        .map(crate::profiles::stock::load_stock_list)
        .transpose()?)
}

/// Reads the machine and job a cut runs with.
pub fn cut_profiles(args: &CutArgs) -> Result<(Machine, Job), JobError> {
    let machine = match &args.machine {
        Some(p) => profile::load_machine(p)?,
        None => profile::generic_machine(),
    };
    let job = match &args.job {
        Some(p) => job::load_job(p, &machine)?,
        None => job::default_job(&machine)?,
    };
    Ok((machine, job))
}

/// Which machine and job profiles a cut uses, in a line: the machine's
/// name and file (or that it is the shipped one), the job's file (or the
/// defaults).
pub fn profiles_used(args: &CutArgs, machine: &Machine) -> String {
    let mut s = format!(
        "machine: {} ({}); job: {}",
        machine.name,
        args.machine
            .as_ref()
            .map_or("shipped, built in".to_string(), |p| p.display().to_string()),
        args.job
            .as_ref()
            .map_or("the defaults".to_string(), |p| p.display().to_string())
    );
    if let Some(p) = &args.stock_list {
        s.push_str(&format!("; blank picked from {}", p.display()));
    }
    s
}

/// The blank a stock list gives the board: the job with the first-ranked
/// blank as its stock, and the ranking as text; a fit error with every
/// blank's reason when none fits.
fn picked_job(
    design: &Design,
    mesh: &Mesh,
    apex: Option<&[[f64; 3]]>,
    litres: f64,
    machine: &Machine,
    job: &Job,
    blanks: &[StockEntry],
) -> Result<(Job, String, String), JobError> {
    let tried = pick::rank(mesh, apex, litres, job, machine, blanks);
    let text = pick::text(design.name(), litres, &tried);
    match tried.iter().find(|t| t.fit.is_ok()) {
        Some(t) => Ok((
            Job {
                stock: Some(t.entry.block.clone()),
                ..job.clone()
            },
            t.entry.name.clone(),
            text,
        )),
        None => Err(JobError::Cam(CamError::Fit(format!(
            "no blank in the stock list fits:\n{text}"
        )))),
    }
}

/// The cutting stage in memory: programs and setup sheet for a design,
/// from the job's stock or the best blank of `blanks`.
#[allow(clippy::too_many_arguments)]
pub fn cut_files(
    design: &Design,
    mesh: &Mesh,
    litres: f64,
    machine: &Machine,
    job: &Job,
    blanks: Option<&[StockEntry]>,
    dir: &Path,
    progress: &(dyn Fn(&str) + Sync),
) -> Result<(CutPlan, Verification, Files), JobError> {
    let apex = match design {
        Design::Board(b) => Some(program::apex_line(b)),
        Design::Mesh { .. } => None,
    };
    let picked = blanks
        .map(|list| picked_job(design, mesh, apex.as_deref(), litres, machine, job, list))
        .transpose()?;
    let job = picked.as_ref().map_or(job, |p| &p.0);
    let plan = program::plan(
        design.name(),
        litres,
        mesh,
        apex.as_deref(),
        design.board(),
        machine,
        job,
        progress,
    )?;
    // The last gate: simulate the programs as written against the board.
    let verification = verify_plan(&plan, machine, job, progress)?;
    if verification.has_findings() {
        return Err(JobError::Cam(crate::toolpath::setup::CamError::Refused(
            format!(
                "the simulation of the programs found problems, so none is written:\n{}",
                verification.text()
            ),
        )));
    }
    let mut plan = plan;
    if let Some((_, name, _)) = &picked {
        plan.sheet = plan.sheet.replacen(
            "\nFIT\n",
            &format!(
                "\nFIT\n  blank: {name}, picked from the stock list ({}.blanks.txt ranks them all)\n",
                design.name()
            ),
            1,
        );
    }
    let mut files: Files = plan
        .programs
        .iter()
        .map(|p| (dir.join(&p.file_name), p.text.clone().into_bytes()))
        .collect();
    files.push((
        dir.join(format!("{}.setup.txt", design.name())),
        plan.sheet.clone().into_bytes(),
    ));
    files.extend(verification_files(&verification, design.name(), dir));
    if let Some((_, _, text)) = &picked {
        files.push((
            dir.join(format!("{}.blanks.txt", design.name())),
            text.clone().into_bytes(),
        ));
    }
    let cradles = crate::toolpath::cradle::cradles(&plan.placement, job, design.name());
    if !cradles.is_empty() {
        let paper = crate::template::print::A4;
        let drawings: Vec<_> = cradles.iter().map(|(_, d)| d.clone()).collect();
        let pages = crate::template::tiling::tile_all(&drawings, paper);
        files.push((
            dir.join(format!("{}.cradles.pdf", design.name())),
            crate::template::print::to_pdf(&pages),
        ));
        for (setup, d) in &cradles {
            files.push((
                dir.join(format!("{}.cradle-{setup}.svg", design.name())),
                crate::template::drawing::to_svg(d).into_bytes(),
            ));
            files.push((
                dir.join(format!("{}.cradle-{setup}.dxf", design.name())),
                crate::template::dxf::to_dxf(d).map_err(JobError::Internal)?,
            ));
        }
    }
    Ok((plan, verification, files))
}

/// `cut`: reads a design (description or STL), writes its programs and
/// setup sheet into `dir`, or nothing if any gate refuses.
pub fn cut(
    path: &Path,
    args: &CutArgs,
    dir: &Path,
    progress: &(dyn Fn(&str) + Sync),
) -> Result<(CutPlan, Vec<PathBuf>), JobError> {
    let design = load_design(path)?;
    let (machine, job) = cut_profiles(args)?;
    let blanks = cut_blanks(args)?;
    output::ready(dir)?;
    let mesh = design.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?;
    let litres = crate::volume::measure::volume(&mesh) / 1e6;
    let (plan, _, files) = cut_files(
        &design,
        &mesh,
        litres,
        &machine,
        &job,
        blanks.as_deref(),
        dir,
        progress,
    )
    .map_err(|e| with_profiles(e, path, args))?;
    let inputs: Vec<&Path> = [
        Some(path),
        args.machine.as_deref(),
        args.job.as_deref(),
        args.stock_list.as_deref(),
    ]
    .into_iter()
    .flatten()
    .collect();
    let written = write_all(&files, &cut_family(design.name()), &inputs)?;
    Ok((plan, written))
}

/// `blanks`: the design tried in every blank of the stock list, ranked
/// (nothing is written).
pub fn blanks(path: &Path, args: &CutArgs) -> Result<(String, Vec<pick::Tried>), JobError> {
    let design = load_design(path)?;
    let (machine, job) = cut_profiles(args)?;
    let Some(list) = cut_blanks(args)? else {
        return Err(JobError::Flag(
            "--stock-list: missing; give the shop's stock list (YAML)".into(),
        ));
    };
    let mesh = design.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?;
    let litres = crate::volume::measure::volume(&mesh) / 1e6;
    let apex = match &design {
        Design::Board(b) => Some(program::apex_line(b)),
        Design::Mesh { .. } => None,
    };
    let tried = pick::rank(&mesh, apex.as_deref(), litres, &job, &machine, &list);
    Ok((pick::text(design.name(), litres, &tried), tried))
}

/// Plans both setups' programs for a design at the default mesh
/// tolerance, without writing or simulating anything.
pub fn plan_design(
    design: &Design,
    machine: &Machine,
    job: &Job,
    progress: &(dyn Fn(&str) + Sync),
) -> Result<CutPlan, JobError> {
    let mesh = design.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?;
    let litres = crate::volume::measure::volume(&mesh) / 1e6;
    let apex = match design {
        Design::Board(b) => Some(program::apex_line(b)),
        Design::Mesh { .. } => None,
    };
    Ok(program::plan(
        design.name(),
        litres,
        &mesh,
        apex.as_deref(),
        design.board(),
        machine,
        job,
        progress,
    )?)
}

/// Names the files a fit or gate error came from.
pub(crate) fn with_profiles(e: JobError, design: &Path, args: &CutArgs) -> JobError {
    match e {
        JobError::Cam(c) => {
            let job = args
                .job
                .as_ref()
                .map_or("the default job".to_string(), |p| p.display().to_string());
            let machine = args
                .machine
                .as_ref()
                .map_or("the shipped machine".to_string(), |p| {
                    p.display().to_string()
                });
            JobError::Cut {
                context: format!("{}: with {job} on {machine}", design.display()),
                source: Box::new(JobError::Cam(c)),
            }
        }
        other => other,
    }
}

/// Simulates a plan's own programs against its placed board.
pub fn verify_plan(
    plan: &CutPlan,
    machine: &Machine,
    job: &Job,
    progress: &dyn Fn(&str),
) -> Result<Verification, JobError> {
    verify_plan_with(plan, machine, job, VerifyOptions::default(), progress)
}

/// [`verify_plan`] with other options (a finer height map, say).
pub fn verify_plan_with(
    plan: &CutPlan,
    machine: &Machine,
    job: &Job,
    options: VerifyOptions,
    progress: &dyn Fn(&str),
) -> Result<Verification, JobError> {
    let sources = plan
        .programs
        .iter()
        .map(|p| ProgramSource {
            name: p.file_name.clone(),
            side: p.side,
            reader: Box::new(p.text.as_bytes()),
            loaded: Some(p.tool.id),
        })
        .collect();
    let setting = Setting {
        table_zero_after_flip: true,
        machine,
        block: plan.placement.block.clone(),
        table_position: job.table_position,
        default_tool: None,
        design: Some(&plan.placement.part),
        keep: crate::toolpath::setup::tab_rectangles(&plan.placement, job),
        floor: Some((&plan.placement, job.overlap)),
        pockets: plan.pockets.clone(),
        prepared: [Side::Deck, Side::Bottom].map(|side| {
            plan.setups
                .iter()
                .find(|s| s.side == side)
                .map(|s| Arc::clone(&s.prepared))
        }),
    };
    simulate::verify(sources, &setting, options, progress).map_err(JobError::Gcode)
}

/// The verification's JSON, text and pictures, in memory.
pub(crate) fn verification_files(v: &Verification, name: &str, dir: &Path) -> Files {
    let mut files: Files = vec![
        (
            dir.join(format!("{name}.verify.json")),
            v.to_json().into_bytes(),
        ),
        (
            dir.join(format!("{name}.verify.txt")),
            v.text().into_bytes(),
        ),
    ];
    let scale = picture::colour_scale(v);
    // One picture a side, drawn side by side (each compresses its PNG
    // alone, at the end of the run when little else is left to do).
    files.par_extend(v.maps.par_iter().map(|m| {
        let title = format!(
            "{name}: setup {} ({} up), stock left (blue) and gouges (red), plan view from above",
            m.side.number(),
            m.side.name()
        );
        (
            dir.join(format!(
                "{name}-{}-{}.deviation.svg",
                m.side.number(),
                m.side.name()
            )),
            picture::svg(m, scale, &title).into_bytes(),
        )
    }));
    files
}
