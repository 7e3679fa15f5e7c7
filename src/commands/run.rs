//! A parsed command line run: each command called with its flags, its
//! result rendered as text once, and the exit code chosen from what it
//! returned (0 done, 1 findings, 2 bad input or a system error).

use std::fmt::Display;
use std::path::{Path, PathBuf};

use super::cli::{
    BlanksFlags, CheckFlags, Cli, Command, CompareFlags, CutFlags, MakeFlags, MeshFlags,
    ReportFlags, ResizeFlags, SliceFlags, TemplatesFlags, VerifyFlags,
};
use super::{self as cmd, Input, JobError, Meshed, StlKind};
use crate::slice::contours;
use crate::template::print::{self, Paper};
use crate::units;

/// What a command leaves for the terminal: its standard output and
/// standard error, whole, and the exit code.
#[derive(Debug, Default)]
pub struct Outcome {
    /// Standard output.
    pub stdout: String,
    /// Standard error, one message a line.
    pub stderr: String,
    /// The exit code: 0 done, 1 findings, 2 when a board of a batch failed
    /// (the other boards' files are written).
    pub code: u8,
}

impl Outcome {
    fn say(&mut self, text: impl Display) {
        self.stdout.push_str(&text.to_string());
    }

    fn line(&mut self, text: impl Display) {
        self.say(text);
        self.stdout.push('\n');
    }

    fn warn(&mut self, text: impl Display) {
        self.stderr.push_str(&format!("blanksmith: {text}\n"));
    }

    fn wrote(&mut self, paths: &[PathBuf]) {
        for p in paths {
            self.line(format!("wrote {}", p.display()));
        }
    }

    /// Exit 1 where there are findings, else 0.
    fn findings(&mut self, any: bool) {
        self.code = u8::from(any);
    }
}

/// Runs the command line's command; an error is the exit 2 case.
pub fn run(cli: Cli) -> Result<Outcome, JobError> {
    let mut o = Outcome::default();
    match cli.command {
        Command::Mesh(f) => mesh(f, &mut o)?,
        Command::Report(f) => report(f, &mut o)?,
        Command::Check(f) => check(f, &mut o)?,
        Command::Slice(f) => slice(f, &mut o)?,
        Command::Compare(f) => compare(f, &mut o)?,
        Command::Resize(f) => resize(f, &mut o)?,
        Command::Diff(f) => {
            let d = cmd::diff(&f.a, &f.b, &f.out, &f.water.flags().water()?)?;
            o.say(cmd::diff_text(&d));
        }
        Command::Templates(f) => templates(f, &mut o)?,
        Command::Make(f) => make(f, &mut o)?,
        Command::Verify(f) => verify(f, &mut o)?,
        Command::Blanks(f) => blanks(f, &mut o)?,
        Command::Cut(f) => cut(f, &mut o)?,
    }
    Ok(o)
}

/// The mesh's summary (and table), the files written, and exit 1 when the
/// volume is not certified.
fn meshed(m: &Meshed, print_table: bool, o: &mut Outcome) {
    o.say(m.report.summary());
    if print_table {
        o.say(m.report.table());
    }
    for p in &m.written {
        let what = if p.extension().is_some_and(|e| e == "stl") {
            " (STL, millimetres)"
        } else {
            ""
        };
        o.line(format!("wrote {}{what}", p.display()));
    }
    o.findings(!m.report.certified);
    if !m.report.certified {
        o.warn(format!("NOT CERTIFIED: {}", m.report.failure()));
    }
}

fn mesh(f: MeshFlags, o: &mut Outcome) -> Result<(), JobError> {
    let b = cmd::load(&Input::File(f.board.clone()))?;
    let kind = if f.ascii {
        StlKind::Ascii
    } else {
        StlKind::Binary
    };
    let m = cmd::mesh_to(b, f.tolerance, &f.out, kind, false, &[f.board.as_path()])?;
    meshed(&m, false, o);
    Ok(())
}

fn report(f: ReportFlags, o: &mut Outcome) -> Result<(), JobError> {
    let w = f.water.flags().water()?;
    let b = cmd::load(&Input::File(f.board.clone()))?;
    let m = cmd::report(b, f.tolerance, &w, &f.board)?;
    if f.json {
        o.say(m.report.to_json());
        o.findings(!m.report.certified);
    } else {
        meshed(&m, true, o);
    }
    Ok(())
}

fn check(f: CheckFlags, o: &mut Outcome) -> Result<(), JobError> {
    let inspection = cmd::check(&f.mesh, f.weld)?;
    if f.json {
        o.say(inspection.to_json());
    } else {
        o.say(inspection.text(&f.mesh.display().to_string()));
    }
    o.findings(!inspection.is_clean());
    Ok(())
}

fn slice(f: SliceFlags, o: &mut Outcome) -> Result<(), JobError> {
    let unit = cmd::parse_unit(&f.units)?;
    let d = cmd::load_design(&f.design)?;
    let xs = cmd::parse_stations(f.stations.as_deref(), cmd::design_length(&d), unit)?;
    let step = match f.z_step {
        None => None,
        Some(t) => Some(
            units::parse_length(&t)
                .map_err(|e| JobError::Flag(format!("--z-step: {e}")))?
                .to_mm(unit),
        ),
    };
    let r = cmd::slice(&d, &xs, step, &f.out)?;
    for (s, q) in r
        .sections
        .iter()
        .zip(&r.section_at)
        .chain(r.waterlines.iter().zip(&r.waterline_at))
    {
        o.line(contours::describe(s, *q));
    }
    o.wrote(&r.written);
    Ok(())
}

fn compare(f: CompareFlags, o: &mut Outcome) -> Result<(), JobError> {
    let (c, written) = cmd::compare(&f.design, &f.cut, f.align, &f.out)?;
    if f.json {
        o.line(serde_json::to_string_pretty(&c).expect("serialisable"));
    } else {
        o.say(cmd::comparison_text(&c));
        o.wrote(&written);
    }
    Ok(())
}

fn resize(f: ResizeFlags, o: &mut Outcome) -> Result<(), JobError> {
    let args = cmd::ResizeArgs {
        length: f.length,
        width: f.width,
        thickness: f.thickness,
        volume: f.volume,
        keep: f.keep,
        water: f.water,
        from_water: f.from_water,
        rider_kg: f.rider_kg,
        litres_per_kg: f.litres_per_kg,
        name: f.name,
    };
    let r = cmd::resize(&f.board, &args, f.out.as_deref())?;
    o.say(cmd::resize_text(&r));
    Ok(())
}

fn templates(f: TemplatesFlags, o: &mut Outcome) -> Result<(), JobError> {
    let unit = cmd::parse_unit(&f.units)?;
    let paper = print::paper(&f.paper).map_err(JobError::Flag)?;
    let d = cmd::load_design(&f.design)?;
    let xs = cmd::parse_stations(f.stations.as_deref(), cmd::design_length(&d), unit)?;
    let only: Vec<String> = f
        .only
        .iter()
        .flat_map(|o| o.split(','))
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect();
    let t = cmd::templates(&d, paper, &only, &xs, &f.out)?;
    o.line(format!(
        "{} templates on {} pages of {}",
        t.drawings.len(),
        t.pages,
        paper.name
    ));
    o.wrote(&t.written);
    o.line("print at 100 % (actual size) and measure the calibration bars before cutting");
    Ok(())
}

fn make(f: MakeFlags, o: &mut Outcome) -> Result<(), JobError> {
    let args = cmd::CutArgs {
        machine: f.machine,
        job: f.job,
        stock_list: f.stock_list,
    };
    let cut = (!f.no_cut).then_some(&args);
    let paper = print::paper(&f.paper).map_err(JobError::Flag)?;
    if f.boards.len() > 1 {
        return make_many(&f.boards, f.tolerance, paper, &f.out, cut, f.quiet, o);
    }
    let input = f
        .boards
        .into_iter()
        .next()
        .map(Input::File)
        .unwrap_or(Input::Demo);
    let bar = spinner(f.quiet);
    let m = cmd::make(&input, f.tolerance, paper, &f.out, cut, &|s| {
        bar.set_message(s.to_string())
    });
    bar.finish_and_clear();
    let m = m?;
    meshed(&m.meshed, false, o);
    profiles_used(cut, o);
    match &m.cutting {
        cmd::Cutting::Failed(e) => {
            o.warn(format!(
                "no router programs (the shape's files are written): {e}"
            ));
            o.findings(true);
        }
        cmd::Cutting::Skipped => o.line("cutting skipped (--no-cut): no router programs"),
        cmd::Cutting::Done(_) => {}
    }
    Ok(())
}

/// The machine and job a cut used, when it could read them.
fn profiles_used(cut: Option<&cmd::CutArgs>, o: &mut Outcome) {
    if let Some(a) = cut
        && let Ok((machine, _)) = cmd::cut_profiles(a)
    {
        o.line(cmd::profiles_used(a, &machine));
    }
}

/// `make` for a day's orders: one spinner per board, a summary table at
/// the end; exit 2 if any board failed, else 1 if one is not certified or
/// has no programs.
fn make_many(
    boards: &[PathBuf],
    tolerance: f64,
    paper: Paper,
    out: &Path,
    cut: Option<&cmd::CutArgs>,
    quiet: bool,
    o: &mut Outcome,
) -> Result<(), JobError> {
    let bars = spinners(boards, quiet);
    let inputs: Vec<Input> = boards.iter().cloned().map(Input::File).collect();
    let result = cmd::make_many(&inputs, tolerance, paper, out, cut, &|k, s| {
        bars[k].set_message(s.to_string())
    });
    for b in &bars {
        b.finish_and_clear();
    }
    let (results, index) = result?;
    profiles_used(cut, o);
    o.line(format!(
        "{:<40} {:>9} {:>6} {:>16} {:>16}  verdict",
        "board", "litres", "fits", "setup 1", "setup 2"
    ));
    let mut short = false;
    let mut failed = 0;
    let dash = || "—".to_string();
    for (path, r) in boards.iter().zip(&results) {
        match r {
            Ok(m) => {
                let (fits, [t1, t2]) = match &m.cutting {
                    cmd::Cutting::Done(t) => ("yes", t.map(crate::gcode::program::duration)),
                    cmd::Cutting::Skipped => ("—", [dash(), dash()]),
                    cmd::Cutting::Failed(e) => {
                        o.warn(format!("{}: no router programs: {e}", path.display()));
                        (if e.is_misfit() { "no" } else { "—" }, [dash(), dash()])
                    }
                };
                let verdict = m.shortfall();
                short |= verdict.is_some();
                o.line(format!(
                    "{:<40} {:>7.2} L {:>6} {:>16} {:>16}  {}",
                    m.meshed.board.name,
                    m.meshed.report.volume_litres,
                    fits,
                    t1,
                    t2,
                    verdict.as_deref().unwrap_or("done")
                ));
            }
            Err(e) => {
                failed += 1;
                let fits = if e.is_misfit() { "no" } else { "—" };
                o.line(format!(
                    "{:<40} {:>9} {:>6} {:>16} {:>16}  failed",
                    path.display(),
                    "—",
                    fits,
                    "—",
                    "—"
                ));
                o.warn(format!("error: {e}"));
            }
        }
    }
    o.line(format!("wrote {}", index.display()));
    if failed > 0 {
        o.warn(format!("{failed} of {} boards failed", boards.len()));
        o.code = 2;
    } else {
        o.findings(short);
    }
    Ok(())
}

fn verify(f: VerifyFlags, o: &mut Outcome) -> Result<(), JobError> {
    let bar = spinner(f.quiet);
    let args = cmd::VerifyArgs {
        programs: f.programs,
        machine: f.machine,
        job: f.job,
        stock: f.stock,
        tool: f.tool,
        design: f.design,
        flip_after: f.flip_after,
        lenient: f.lenient,
        cell: f.cell,
    };
    let result = cmd::verify_programs(&args, f.out.as_deref(), &|s| bar.set_message(s.to_string()));
    bar.finish_and_clear();
    let (v, written) = result?;
    if f.json {
        o.say(v.to_json());
    } else {
        o.say(v.text());
        o.wrote(&written);
    }
    o.findings(v.has_findings());
    Ok(())
}

fn blanks(f: BlanksFlags, o: &mut Outcome) -> Result<(), JobError> {
    let args = cmd::CutArgs {
        machine: f.machine,
        job: f.job,
        stock_list: Some(f.stock_list),
    };
    let (text, tried) = cmd::blanks(&f.design, &args)?;
    if f.json {
        o.say(crate::toolpath::pick::to_json(&tried));
    } else {
        o.say(text);
    }
    o.findings(!tried.iter().any(|t| t.fit.is_ok()));
    Ok(())
}

fn cut(f: CutFlags, o: &mut Outcome) -> Result<(), JobError> {
    let bar = spinner(f.quiet);
    let args = cmd::CutArgs {
        machine: Some(f.machine),
        job: f.job,
        stock_list: f.stock_list,
    };
    let result = cmd::cut(&f.design, &args, &f.out, &|s| {
        bar.set_message(s.to_string())
    });
    bar.finish_and_clear();
    let (plan, written) = result?;
    for l in plan.placement.fit_lines() {
        o.line(l);
    }
    for p in &plan.programs {
        o.line(format!(
            "{}: {}, {}, about {}",
            p.file_name,
            p.tool.describe(),
            p.labels.join(" + "),
            crate::gcode::program::duration(p.time_s)
        ));
    }
    o.wrote(&written);
    o.line("read the setup sheet and the cautions in each program before cutting");
    Ok(())
}

/// A spinner on standard error with the stage being worked on; hidden
/// with `--quiet` (indicatif hides it too where standard error is not a
/// terminal).
fn spinner(quiet: bool) -> indicatif::ProgressBar {
    if quiet {
        return indicatif::ProgressBar::hidden();
    }
    let bar = indicatif::ProgressBar::new_spinner();
    bar.enable_steady_tick(std::time::Duration::from_millis(120));
    bar
}

/// One spinner a board, under one another.
fn spinners(boards: &[PathBuf], quiet: bool) -> Vec<indicatif::ProgressBar> {
    let multi = indicatif::MultiProgress::new();
    if quiet {
        multi.set_draw_target(indicatif::ProgressDrawTarget::hidden());
    }
    boards
        .iter()
        .map(|b| {
            let bar = multi.add(indicatif::ProgressBar::new_spinner());
            bar.set_prefix(b.display().to_string());
            bar.set_style(
                indicatif::ProgressStyle::with_template("{spinner} {prefix}: {msg}")
                    .expect("a valid template"),
            );
            bar.enable_steady_tick(std::time::Duration::from_millis(150));
            bar
        })
        .collect()
}
