//! The commands' work, reachable without the command line: read a board,
//! certify its mesh, and write the files of a job. Nothing is written until
//! everything a command writes has been computed, and each file is written
//! atomically.

use std::path::{Path, PathBuf};

use crate::description::demo;
use crate::description::{self, DescriptionError};
use crate::gcode::program::{self, CutPlan};
use crate::inspect::check::{self as inspect, Inspection};
use crate::inspect::compare::Comparison;
use crate::meshing::mesher::MeshError;
use crate::model::board::Board;
use crate::model::job::{Block, Job};
use crate::model::machine::Machine;
use crate::model::mesh::Mesh;
use crate::output;
use crate::profiles::job;
use crate::profiles::machine as profile;
use crate::slice::contours::{self, SliceSet};
use crate::slice::plane::{Axis, Slice};
use crate::stl;
use crate::toolpath::setup::Side;
use crate::verify::picture;
use crate::verify::simulate::{
    self as verify, ProgramSource, Setting, Verification, VerifyOptions,
};
use crate::volume::certificate::{self, Certified};
use crate::volume::report::Report;

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
    /// A program could not be read.
    #[error("{0}")]
    Gcode(crate::gcode::read::GcodeError),
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

/// Reads and inspects an STL file, welding at `weld` mm (default from its size).
pub fn check(path: &Path, weld: Option<f64>) -> Result<Inspection, JobError> {
    if path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("yaml") || e.eq_ignore_ascii_case("yml"))
    {
        return Err(JobError::Option(format!(
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

/// Puts a command's files (all in one folder) in place as one set: all of
/// them or none (see [`output`]). Files of the same kind for the same board
/// that the set replaces are told by `family`; `inputs` are never written.
fn write_all(
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
fn exactly(files: &[(PathBuf, Vec<u8>)]) -> impl Fn(&str) -> bool + '_ {
    move |n: &str| {
        files
            .iter()
            .any(|(p, _)| p.file_name().is_some_and(|f| f == n))
    }
}

/// A board's cutting outputs (programs for any tool, setup sheet,
/// simulation report and pictures), so an earlier run's program for a tool
/// no longer used goes with the set it belonged to.
fn cut_family(name: &str) -> impl Fn(&str) -> bool + '_ {
    move |n: &str| {
        if n == format!("{name}.setup.txt")
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
fn mesh_files(
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

/// What became of `make`'s cutting stage.
#[derive(Debug)]
pub enum Cutting {
    /// Not asked for.
    Skipped,
    /// Programs written; estimated run time of setup 1 and setup 2, s.
    Done([f64; 2]),
    /// Planning or a gate refused: the design's files were written, no
    /// programs.
    Failed(JobError),
}

/// A board made: its certified mesh and what became of the cutting.
pub struct Made {
    /// The board, its mesh and report, and every file written.
    pub meshed: Meshed,
    /// The cutting stage.
    pub cutting: Cutting,
}

impl Made {
    /// Why the run is not a full success, if it is not: the volume not
    /// certified, or no programs.
    pub fn shortfall(&self) -> Option<String> {
        if !self.meshed.report.certified {
            return Some("volume NOT certified".into());
        }
        match &self.cutting {
            Cutting::Failed(e) if e.is_misfit() => Some("no programs: does not fit".into()),
            Cutting::Failed(_) => Some("no programs: cutting refused".into()),
            _ => None,
        }
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

/// The file that marks a folder as a board's made folder (it is replaced
/// whole by the next `make` of that board, and only then).
fn board_marker(name: &str) -> String {
    format!("{name}.report.json")
}

/// The main job for one board: everything into `<out>/<name>/`: the
/// certified mesh (STL and reports), the full-size templates on A4, the
/// programs and their simulation (unless `cut` is `None`), and the page;
/// all computed before any file is written, and the folder replaced whole.
/// A cutting stage that fails leaves the design's files and the reason.
pub fn make(
    input: &Input,
    tolerance: f64,
    out: &Path,
    cut: Option<&CutArgs>,
    progress: &(dyn Fn(&str) + Sync),
) -> Result<Made, JobError> {
    let profiles = cut.map(cut_profiles).transpose()?;
    let board = load(input)?;
    crate::meshing::mesher::check_tolerance(tolerance)?;
    output::ready(out)?;
    let dir = out.join(&board.name);
    let certified = certificate::certify(&board, tolerance)?;
    let (report, mut files) = mesh_files(&board, &certified, &dir, StlKind::Binary, true);
    let design = Design::Board(Box::new(board.clone()));
    let (_, _, template_files) = template_files(
        &design,
        &certified.mesh,
        Some(&report),
        crate::template::tiling::A4,
        &[],
        &[],
        &dir,
    )?;
    files.extend(template_files);
    let source = match input {
        Input::File(p) => p.clone(),
        Input::Demo => PathBuf::from(demo::DEMO_NAME),
    };
    let cutting = match (cut, &profiles) {
        (Some(args), Some((machine, job))) => {
            let litres = certified.certificate.mesh_litres;
            cut_files(
                &design,
                &certified.mesh,
                litres,
                machine,
                job,
                &dir,
                progress,
            )
            .map_err(|e| Some(with_profiles(e, &source, args)))
        }
        _ => Err(None),
    };
    let page = {
        let section = match &cutting {
            Ok((plan, verification, cut_files)) => {
                files.extend(cut_files.iter().cloned());
                crate::page::CutSection::Done { plan, verification }
            }
            Err(None) => crate::page::CutSection::Skipped,
            Err(Some(e)) => crate::page::CutSection::Failed(e.to_string()),
        };
        board_page(&report, section, &files, &dir)
    };
    files.push((dir.join("index.html"), page.into_bytes()));
    let named: Vec<(String, Vec<u8>)> = files
        .into_iter()
        .map(|(p, b)| {
            let rel = p.strip_prefix(&dir).unwrap_or(&p).display().to_string();
            (rel, b)
        })
        .collect();
    let inputs: Vec<&Path> = [Some(source.as_path())]
        .into_iter()
        .chain(
            cut.iter()
                .flat_map(|a| [a.machine.as_deref(), a.job.as_deref()]),
        )
        .flatten()
        .collect();
    let written = output::write_folder(&dir, &named, &board_marker(&board.name), &inputs)?;
    let cutting = match cutting {
        Ok((plan, _, _)) => Cutting::Done(setup_times(&plan)),
        Err(None) => Cutting::Skipped,
        Err(Some(e)) => Cutting::Failed(e),
    };
    Ok(Made {
        meshed: Meshed {
            board,
            certified,
            report,
            written,
        },
        cutting,
    })
}

fn setup_times(plan: &CutPlan) -> [f64; 2] {
    let mut t = [0.0; 2];
    for p in &plan.programs {
        t[(p.side.number() - 1) as usize] += p.time_s;
    }
    t
}

/// The board's report page from the files about to be written.
fn board_page(report: &Report, cut: crate::page::CutSection, files: &Files, dir: &Path) -> String {
    let text = |suffix: &str| -> Option<&str> {
        files
            .iter()
            .find(|(p, _)| p.to_string_lossy().ends_with(suffix))
            .and_then(|(_, b)| std::str::from_utf8(b).ok())
    };
    let mut templates = vec![];
    for (title, suffix) in [
        ("Plan view: outline", ".outline.svg"),
        ("Side view: rocker and foil", ".rocker.svg"),
        ("Sections", ".sections.svg"),
    ] {
        if let Some(t) = text(suffix) {
            templates.push((title, t));
        }
    }
    let deviations = files
        .iter()
        .filter(|(p, _)| p.to_string_lossy().ends_with(".deviation.svg"))
        .filter_map(|(_, b)| std::str::from_utf8(b).ok())
        .collect();
    let mut names: Vec<String> = files
        .iter()
        .filter_map(|(p, _)| p.strip_prefix(dir).ok().map(|q| q.display().to_string()))
        .collect();
    names.push("index.html".into());
    names.sort();
    crate::page::board_page(&crate::page::BoardPage {
        report,
        templates,
        cut,
        deviations,
        files: names,
    })
}

/// Two inputs of one run that would make the same folder.
fn duplicate_names(inputs: &[Input], boards: &[Result<Board, DescriptionError>]) -> Option<String> {
    for (j, b) in boards.iter().enumerate() {
        let Ok(b) = b else { continue };
        for (i, a) in boards[..j].iter().enumerate() {
            if let Ok(a) = a
                && a.name == b.name
            {
                let show = |k: usize| match &inputs[k] {
                    Input::File(p) => p.display().to_string(),
                    Input::Demo => demo::DEMO_NAME.to_string(),
                };
                return Some(format!(
                    "{} and {} both describe a board named `{}`: their files would go into one folder and one would be lost; nothing was made (give each board its own `name:`, or list a file once)",
                    show(i),
                    show(j),
                    a.name
                ));
            }
        }
    }
    None
}

/// `make` for many boards at once, in parallel: each board in its own
/// folder, a failure (even a fault in the program) not stopping the
/// others; then `out/index.html` listing them all. Two boards with one
/// name are refused before any work. `progress(k, stage)` reports board
/// `k`'s stage.
pub fn make_many(
    inputs: &[Input],
    tolerance: f64,
    out: &Path,
    cut: Option<&CutArgs>,
    progress: &(dyn Fn(usize, &str) + Sync),
) -> Result<(Vec<Result<Made, JobError>>, PathBuf), JobError> {
    use rayon::prelude::*;
    let boards: Vec<Result<Board, DescriptionError>> = inputs.iter().map(load).collect();
    if let Some(why) = duplicate_names(inputs, &boards) {
        return Err(JobError::SameName(why));
    }
    cut.map(cut_profiles).transpose()?;
    output::ready(out)?;
    let results: Vec<Result<Made, JobError>> = inputs
        .par_iter()
        .enumerate()
        .map(|(k, input)| {
            std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                make(input, tolerance, out, cut, &|s| progress(k, s))
            }))
            .unwrap_or_else(|p| Err(JobError::Internal(panic_text(&p))))
        })
        .collect();
    let rows: Vec<crate::page::Row> = inputs
        .iter()
        .zip(&results)
        .map(|(input, r)| match r {
            Ok(m) => crate::page::Row {
                name: m.meshed.board.name.clone(),
                litres: Some(m.meshed.report.volume_litres),
                times: match m.cutting {
                    Cutting::Done(t) => Some(t),
                    _ => None,
                },
                verdict: m.shortfall().unwrap_or_else(|| "done".into()),
            },
            Err(e) => crate::page::Row {
                name: match input {
                    Input::File(p) => p.display().to_string(),
                    Input::Demo => demo::DEMO_NAME.to_string(),
                },
                litres: None,
                times: None,
                verdict: format!("failed: {}", e.to_string().lines().next().unwrap_or("")),
            },
        })
        .collect();
    let index = out.join("index.html");
    let page = crate::page::run_page(&rows);
    output::write_set(
        out,
        &[("index.html".to_string(), page.into_bytes())],
        &|n| n == "index.html",
        &[],
    )?;
    Ok((results, index))
}

/// The message a panic carried.
fn panic_text(p: &Box<dyn std::any::Any + Send>) -> String {
    p.downcast_ref::<&str>()
        .map(|s| s.to_string())
        .or_else(|| p.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "no message".into())
}

/// Machine and job for the cutting stage: files, or the shipped machine
/// and the default job.
#[derive(Debug, Clone, Default)]
pub struct CutArgs {
    /// Machine profile; the shipped generic gantry router when `None`.
    pub machine: Option<PathBuf>,
    /// Job profile; every default when `None`.
    pub job: Option<PathBuf>,
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

/// The cutting stage in memory: programs and setup sheet for a design.
pub fn cut_files(
    design: &Design,
    mesh: &Mesh,
    litres: f64,
    machine: &Machine,
    job: &Job,
    dir: &Path,
    progress: &(dyn Fn(&str) + Sync),
) -> Result<(CutPlan, Verification, Files), JobError> {
    let apex = match design {
        Design::Board(b) => Some(program::apex_line(b)),
        Design::Mesh { .. } => None,
    };
    let plan = program::plan(
        design.name(),
        litres,
        mesh,
        apex.as_deref(),
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
    output::ready(dir)?;
    let mesh = design.mesh(crate::meshing::mesher::DEFAULT_TOLERANCE)?;
    let litres = crate::volume::measure::volume(&mesh) / 1e6;
    let (plan, _, files) = cut_files(&design, &mesh, litres, &machine, &job, dir, progress)
        .map_err(|e| with_profiles(e, path, args))?;
    let inputs: Vec<&Path> = [Some(path), args.machine.as_deref(), args.job.as_deref()]
        .into_iter()
        .flatten()
        .collect();
    let written = write_all(&files, &cut_family(design.name()), &inputs)?;
    Ok((plan, written))
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
        machine,
        job,
        progress,
    )?)
}

/// Names the files a fit or gate error came from.
fn with_profiles(e: JobError, design: &Path, args: &CutArgs) -> JobError {
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
        .ok_or_else(|| JobError::Option("the mesh is empty".into()))?;
    let length = hi[0] - lo[0];
    let section_at: Vec<f64> = if stations.is_empty() {
        default_stations(design, length)
    } else {
        stations.to_vec()
    };
    if let Some(&bad) = section_at.iter().find(|&&x| !(0.0..=length).contains(&x)) {
        return Err(JobError::Option(format!(
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
                return Err(JobError::Option(format!(
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

/// `resize` as typed: lengths as text in the board's own unit unless they
/// carry one; water as `fresh`, `salt` or a density in kg/m³.
#[derive(Debug, Clone, Default)]
pub struct ResizeArgs {
    /// New length.
    pub length: Option<String>,
    /// New width.
    pub width: Option<String>,
    /// New thickness.
    pub thickness: Option<String>,
    /// Target volume, litres.
    pub volume: Option<f64>,
    /// Comma-separated: length, width, thickness.
    pub keep: Option<String>,
    /// Water the new board is for.
    pub water: Option<String>,
    /// Water the board (or the target volume) suits now.
    pub from_water: Option<String>,
    /// Rider's weight, kg.
    pub rider_kg: Option<f64>,
    /// Litres per kilogram the rider wants (a rule of thumb).
    pub litres_per_kg: Option<f64>,
    /// Name of the new board.
    pub name: Option<String>,
}

/// A resized board, its reports old and new, and the files written.
pub struct ResizeOutcome {
    /// The old board's report.
    pub old: Report,
    /// The new board's report.
    pub new: Report,
    /// Factors along, across, up.
    pub factors: [f64; 3],
    /// What the solver adjusted and the target it met.
    pub solved: Option<(String, f64)>,
    /// The water densities used (now, new), kg/m³.
    pub water: Option<(f64, f64)>,
    /// The rider's weight and the volume the rule of thumb gives.
    pub rider: Option<(f64, f64)>,
    /// Files written.
    pub written: Vec<PathBuf>,
}

fn water_density(text: &str) -> Result<f64, JobError> {
    match text.trim().to_ascii_lowercase().as_str() {
        "fresh" => Ok(crate::resize::scale::FRESH_WATER),
        "salt" | "sea" => Ok(crate::resize::scale::SALT_WATER),
        other => match other
            .trim_end_matches("kg/m3")
            .trim_end_matches("g/l")
            .trim()
            .parse::<f64>()
        {
            Ok(d) if (900.0..=1300.0).contains(&d) => Ok(d),
            _ => Err(JobError::Option(format!(
                "water `{text}`: use fresh, salt, or a density in kg/m³ (900 to 1300, e.g. 1010)"
            ))),
        },
    }
}

/// Resizes the board in `path` and writes the new description to `out`
/// (and an overlay SVG beside it).
pub fn resize(
    path: &Path,
    args: &ResizeArgs,
    out: Option<&Path>,
) -> Result<ResizeOutcome, JobError> {
    let board = description::load(path)?;
    if let Some(dest) = out {
        output::ready(dest.parent().unwrap_or(Path::new("")))?;
    }
    let unit = description::write::unit_of(&board);
    let tol = crate::meshing::mesher::DEFAULT_TOLERANCE;
    let old_cert = certificate::certify(&board, tol)?;
    let old = Report::new(&board, &old_cert, None);
    let length = |name: &str, v: &Option<String>| -> Result<Option<f64>, JobError> {
        v.as_ref()
            .map(|t| {
                crate::units::parse_length(t)
                    .map(|l| l.to_mm(unit))
                    .map_err(|e| JobError::Option(format!("--{name}: {e}")))
            })
            .transpose()
    };
    let mut keep = crate::resize::scale::Keep::default();
    for item in args
        .keep
        .iter()
        .flat_map(|k| k.split(','))
        .map(str::trim)
        .filter(|s| !s.is_empty())
    {
        match item {
            "length" => keep.length = true,
            "width" => keep.width = true,
            "thickness" => keep.thickness = true,
            other => {
                return Err(JobError::Option(format!(
                    "--keep {other}: use length, width or thickness, separated by commas"
                )));
            }
        }
    }
    let water = match (&args.water, &args.from_water) {
        (None, None) => None,
        (to, from) => {
            let to = to
                .as_deref()
                .map(water_density)
                .transpose()?
                .unwrap_or(crate::resize::scale::SALT_WATER);
            let from = from
                .as_deref()
                .map(water_density)
                .transpose()?
                .unwrap_or(crate::resize::scale::SALT_WATER);
            Some((from, to))
        }
    };
    let rider = match (args.rider_kg, args.litres_per_kg) {
        (Some(kg), Some(r)) if kg > 0.0 && kg < 400.0 && r > 0.0 && r < 5.0 => {
            Some((kg, crate::resize::scale::rider_volume(kg, r)))
        }
        (None, None) => None,
        _ => {
            return Err(JobError::Option(
                "give --rider-kg (0 to 400) and --litres-per-kg (0 to 5) together".into(),
            ));
        }
    };
    let request = crate::resize::scale::Request {
        length: length("length", &args.length)?,
        width: length("width", &args.width)?,
        thickness: length("thickness", &args.thickness)?,
        volume: args.volume.or(rider.map(|r| r.1)),
        keep,
        water,
    };
    let r = crate::resize::scale::resize(&board, &request, old.width_mm, old.thickness_mm, tol)
        .map_err(|e| JobError::Option(e.to_string()))?;
    let mut new_board = r.board;
    new_board.name = match &args.name {
        Some(n) => n.clone(),
        None => format!("{}-resized", board.name),
    };
    let new_cert = certificate::certify(&new_board, tol)?;
    let new = Report::new(&new_board, &new_cert, None);
    let dest = match out {
        Some(p) => p.to_path_buf(),
        None => PathBuf::from("out").join(format!("{}.yaml", new_board.name)),
    };
    let comment = format!(
        "Written by blanksmith resize from {}: x {:.6}, y {:.6}, z {:.6}.\nStation tables rule; edit them like any description.",
        path.display(),
        r.factors[0],
        r.factors[1],
        r.factors[2]
    );
    let yaml = description::write::to_yaml(&new_board, unit, &comment);
    // The file must read back as the same shape before it is written.
    let back = description::board_from_str(
        &yaml,
        &format!("{} (the resized board, not written)", dest.display()),
    )
    .map_err(|e| JobError::Resize(Box::new(e)))?;
    let back_litres = crate::volume::integrals::profile(&back).volume() * 1e-6;
    if (back_litres - new.volume_litres_surface).abs() > 1e-6 {
        return Err(JobError::Option(format!(
            "internal: the written description holds {back_litres:.6} L, not {:.6} L; nothing written",
            new.volume_litres_surface
        )));
    }
    let overlay = crate::resize::overlay::svg(
        &format!("{} against {}", new_board.name, board.name),
        &crate::resize::overlay::profile(&board.name, &old_cert.mesh, 200),
        &crate::resize::overlay::profile(&new_board.name, &new_cert.mesh, 200),
    );
    let svg_path = dest.with_extension("overlay.svg");
    let files = [(dest, yaml.into_bytes()), (svg_path, overlay.into_bytes())];
    let written = write_all(&files, &exactly(&files), &[path])?;
    Ok(ResizeOutcome {
        old,
        new,
        factors: r.factors,
        solved: r.adjusted.zip(r.target_litres),
        water,
        rider,
        written,
    })
}

/// Measurements of two designs side by side, and the overlay written.
pub struct Diff {
    /// Names.
    pub names: [String; 2],
    /// Rows: from the nose, then (width, thickness, bottom, deck) of each, mm.
    pub rows: Vec<(f64, [[f64; 4]; 2])>,
    /// Volumes, litres.
    pub litres: [f64; 2],
    /// Lengths, mm.
    pub lengths: [f64; 2],
    /// Files written.
    pub written: Vec<PathBuf>,
}

/// Compares two designs (descriptions or closed STL) station by station.
pub fn diff(a: &Path, b: &Path, dir: &Path) -> Result<Diff, JobError> {
    let tol = crate::meshing::mesher::DEFAULT_TOLERANCE;
    let designs = [load_design(a)?, load_design(b)?];
    output::ready(dir)?;
    let meshes = [designs[0].mesh(tol)?, designs[1].mesh(tol)?];
    let names = [designs[0].name().to_string(), designs[1].name().to_string()];
    let lengths = [0, 1].map(|i| {
        meshes[i]
            .bounding_box()
            .map_or(0.0, |(lo, hi)| hi[0] - lo[0])
    });
    let step = 6.0 * crate::units::MM_PER_INCH;
    let longest = lengths[0].max(lengths[1]);
    let xs: Vec<f64> = (1..)
        .map(|i| i as f64 * step)
        .take_while(|&x| x < longest)
        .collect();
    // Each design measured the same way: the extents of its sections.
    let measure = |i: usize| -> Vec<[f64; 4]> {
        let lo = meshes[i].bounding_box().map_or(0.0, |(lo, _)| lo[0]);
        let at: Vec<f64> = xs.iter().map(|x| lo + x).collect();
        crate::slice::plane::slice_many(&meshes[i], Axis::X, &at)
            .iter()
            .map(|s| {
                let (mut w, mut zb, mut zd) = (0.0f64, f64::INFINITY, f64::NEG_INFINITY);
                for q in s.loops.iter().flatten() {
                    w = w.max(q[0].abs());
                    zb = zb.min(q[1]);
                    zd = zd.max(q[1]);
                }
                if zb.is_finite() {
                    [2.0 * w, zd - zb, zb, zd]
                } else {
                    [0.0, 0.0, f64::NAN, f64::NAN]
                }
            })
            .collect()
    };
    let (ma, mb) = (measure(0), measure(1));
    let rows = xs
        .iter()
        .zip(ma.iter().zip(&mb))
        .map(|(&x, (p, q))| (x, [*p, *q]))
        .collect();
    let litres = [0, 1].map(|i| crate::volume::measure::volume(&meshes[i]) * 1e-6);
    let svg = crate::resize::overlay::svg(
        &format!("{} against {}", names[1], names[0]),
        &crate::resize::overlay::profile(&names[0], &meshes[0], 200),
        &crate::resize::overlay::profile(&names[1], &meshes[1], 200),
    );
    let files = [(
        dir.join(format!("{}-vs-{}.overlay.svg", names[1], names[0])),
        svg.into_bytes(),
    )];
    let written = write_all(&files, &exactly(&files), &[a, b])?;
    Ok(Diff {
        names,
        rows,
        litres,
        lengths,
        written,
    })
}

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
/// (tiled on `paper`) and one SVG a template. `only` picks from outline,
/// rocker, sections, sheet; `stations` (mm from the nose) places the
/// sections (default: 12 in from each tip and the wide point).
pub fn templates(
    design: &Design,
    paper: crate::template::tiling::Paper,
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

/// Files to write: paths and bytes.
type Files = Vec<(PathBuf, Vec<u8>)>;

/// The templates' PDF and SVGs in memory, from a design's mesh (and report).
fn template_files(
    design: &Design,
    mesh: &Mesh,
    report: Option<&Report>,
    paper: crate::template::tiling::Paper,
    only: &[String],
    stations: &[f64],
    dir: &Path,
) -> Result<(Vec<crate::template::drawing::Drawing>, usize, Files), JobError> {
    use crate::template::drawing as template;
    let all = ["outline", "rocker", "sections", "sheet"];
    for o in only {
        if !all.contains(&o.as_str()) {
            return Err(JobError::Option(format!(
                "--only {o}: choose from outline, rocker, sections, sheet"
            )));
        }
    }
    let want = |k: &str| only.is_empty() || only.iter().any(|o| o == k);
    let side = match design {
        Design::Board(b) => template::side_of(b),
        Design::Mesh { name, mesh } => template::side_of_mesh(name, mesh),
    };
    let length = side.length();
    let section_at = if stations.is_empty() {
        default_stations(design, length)
    } else {
        stations.to_vec()
    };
    if let Some(&bad) = section_at.iter().find(|&&x| !(0.0 < x && x < length)) {
        return Err(JobError::Option(format!(
            "station {} is off the board (0 to {})",
            crate::units::Both(bad),
            crate::units::Both(length)
        )));
    }
    let mut drawings = vec![];
    if want("outline") {
        drawings.push(template::outline(&side));
    }
    if want("rocker") {
        drawings.push(template::rocker(&side));
    }
    if want("sections") {
        drawings.push(template::sections(design.name(), mesh, &section_at));
    }
    let name = design.name();
    let mut pages = vec![];
    if want("sheet") {
        let lines = match report {
            Some(r) => template::sheet(r),
            None => vec![
                format!("{name}: shaping sheet"),
                "(a mesh from elsewhere: no measurements beyond the templates)".into(),
            ],
        };
        pages.push(crate::template::tiling::sheet_page(&lines, paper, name));
    }
    for d in &drawings {
        pages.extend(crate::template::tiling::tile(d, paper, name));
    }
    let mut files = vec![(
        dir.join(format!("{name}.templates.pdf")),
        crate::template::tiling::to_pdf(&pages),
    )];
    for d in &drawings {
        files.push((
            dir.join(format!("{name}.{}.svg", d.kind)),
            template::to_svg(d).into_bytes(),
        ));
    }
    Ok((drawings, pages.len(), files))
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
        })
        .collect();
    let setting = Setting {
        machine,
        block: plan.placement.block.clone(),
        table_position: job.table_position,
        default_tool: None,
        design: Some(&plan.placement.part),
        keep: tab_rectangles(&plan.placement, job),
        floor: Some((&plan.placement, job.overlap)),
    };
    verify::verify(sources, &setting, options, progress).map_err(JobError::Gcode)
}

/// The tabs' plan rectangles, grown by the finishing tool's radius plus
/// 1 mm: the ball cannot reach closer to a tab's side, and that foam goes
/// with the tab when it is cut off and sanded.
fn tab_rectangles(place: &crate::toolpath::setup::Placement, job: &Job) -> Vec<[[f64; 2]; 2]> {
    let g = job.finishing.pass.tool.cutter.radius + 1.0;
    place
        .tabs
        .iter()
        .filter_map(|t| t.bounding_box())
        .map(|(lo, hi)| [[lo[0] - g, lo[1] - g], [hi[0] + g, hi[1] + g]])
        .collect()
}

/// The verification's JSON, text and pictures, in memory.
fn verification_files(v: &Verification, name: &str, dir: &Path) -> Files {
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
    let scale = v.leftover_p95_mm.unwrap_or(0.1).max(v.gouge_tolerance_mm) * 4.0;
    for m in &v.maps {
        let title = format!(
            "{name}: setup {} ({} up), stock left (blue) and gouges (red), plan view from above",
            m.side.number(),
            m.side.name()
        );
        files.push((
            dir.join(format!(
                "{name}-{}-{}.deviation.svg",
                m.side.number(),
                m.side.name()
            )),
            picture::svg(m, scale, &title).into_bytes(),
        ));
    }
    files
}

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
        JobError::Option(format!(
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
        return Err(JobError::Option(format!(
            "--cell {} mm is outside 0.05..10 mm",
            args.cell
        )));
    }
    let default_tool = match &args.tool {
        Some(t) => Some(
            crate::model::machine::parse_cutter(t)
                .map_err(|e| JobError::Option(format!("--tool {e}")))?,
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
                    return Err(JobError::Option(
                        "the job sizes its block from the board: give --design, or --stock LxWxT"
                            .into(),
                    ));
                }
            },
        },
        (None, None) => {
            return Err(JobError::Option(
                "give --stock LxWxT (e.g. 300x200x50mm) or --job JOB.yaml".into(),
            ));
        }
    };
    let mut sources = Vec::new();
    let count = args.programs.len();
    for (k, path) in args.programs.iter().enumerate() {
        let file = std::fs::File::open(path)
            .map_err(|e| JobError::Option(format!("{}: cannot read: {e}", path.display())))?;
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
        });
    }
    let setting = Setting {
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
    let v = verify::verify(sources, &setting, options, progress).map_err(JobError::Gcode)?;
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
