//! The `blanksmith` command: parses arguments, calls the library, prints
//! once. Exit codes: 0 done, 1 findings (the volume certificate failed,
//! `check` found problems, or `make` could make no programs), 2 bad input
//! or a system error.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// Standard output, written as a whole each time: a reader that stops early
/// (`blanksmith report | head`) ends the run quietly instead of a panic.
fn emit(text: &str) {
    use std::io::Write as _;
    let mut out = std::io::stdout().lock();
    if let Err(e) = out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            std::process::exit(0);
        }
        eprintln!("blanksmith: error: standard output: {e}");
        std::process::exit(2);
    }
}

macro_rules! say {
    ($($t:tt)*) => { emit(&format!($($t)*)) };
}

macro_rules! sayln {
    () => { emit("\n") };
    ($($t:tt)*) => { emit(&(format!($($t)*) + "\n")) };
}

use blanksmith::commands::{self as jobs, Input, JobError, Meshed, StlKind};
use blanksmith::meshing::mesher::DEFAULT_TOLERANCE;
use blanksmith::slice::contours;
use blanksmith::units;

#[derive(Parser)]
#[command(
    name = "blanksmith",
    version,
    about = "Surfboard descriptions to certified meshes, STL and shop files"
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Mesh a board: writes DIR/<name>.stl (millimetres) and DIR/<name>.report.json.
    Mesh {
        /// Board description (YAML).
        board: PathBuf,
        /// Output folder.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
        /// Chord tolerance of the mesh, mm.
        #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
        tolerance: f64,
        /// Write ASCII STL instead of binary.
        #[arg(long)]
        ascii: bool,
    },
    /// Print the measurement table at stations, the volume certificate and
    /// the tail pull estimate.
    Report {
        /// Board description (YAML).
        board: PathBuf,
        /// Print the JSON report instead of text.
        #[arg(long)]
        json: bool,
        /// Chord tolerance of the mesh, mm.
        #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
        tolerance: f64,
        #[command(flatten)]
        water: WaterOptions,
    },
    /// Inspect an STL file: closed? which way out? how many litres? Exit 1
    /// when it has findings.
    Check {
        /// Binary or ASCII STL, millimetres.
        mesh: PathBuf,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
        /// Weld tolerance for vertices on open edges, mm (default: a millionth
        /// of the model's diagonal, at least 0.001 mm).
        #[arg(long)]
        weld: Option<f64>,
    },
    /// Cut a board or mesh into cross-sections (and waterlines): an SVG at
    /// true scale and a CSV of contour points per set.
    Slice {
        /// Board description (YAML) or a closed STL (x along the board).
        design: PathBuf,
        /// Stations, comma-separated: `300mm`, `12in`, `12in from tail`,
        /// `centre`, `1in behind`; bare numbers in --units. Default: 12 in
        /// from each tip and the wide point (or centre).
        #[arg(long)]
        stations: Option<String>,
        /// Waterlines every this far above the lowest point, e.g. `10mm`.
        #[arg(long)]
        z_step: Option<String>,
        /// Unit of bare numbers in --stations and --z-step: in or mm.
        #[arg(long, default_value = "mm")]
        units: String,
        /// Output folder.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
    },
    /// Compare a cut board (STL) with its design: distances both ways,
    /// where the largest deviations are, the volume difference, and a
    /// plan-view deviation map (SVG).
    Compare {
        /// Board description (YAML) or a closed STL.
        design: PathBuf,
        /// The cut board as a closed STL, in the design's coordinates
        /// unless --align is given.
        cut: PathBuf,
        /// Best-fit the cut onto the design first (iterative closest point).
        #[arg(long)]
        align: bool,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
        /// Output folder for the deviation map.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
    },
    /// Resize a board: proportionally (--length alone), by length only
    /// (--keep width,thickness), to a width or thickness, or to a target
    /// volume (solved on what is not kept); for other water; for a rider.
    /// Writes a new description and an overlay SVG.
    Resize {
        /// Board description (YAML).
        board: PathBuf,
        /// New length (e.g. 5'8"; bare numbers in the board's unit).
        #[arg(long)]
        length: Option<String>,
        /// New width at the wide point.
        #[arg(long)]
        width: Option<String>,
        /// New greatest thickness.
        #[arg(long)]
        thickness: Option<String>,
        /// Target volume, litres.
        #[arg(long)]
        volume: Option<f64>,
        /// What to keep: length, width, thickness (comma-separated).
        #[arg(long)]
        keep: Option<String>,
        /// Water the new board is for: fresh, salt, or a density in kg/m³.
        #[arg(long)]
        water: Option<String>,
        /// Water the board (or --volume) suits now (default salt).
        #[arg(long)]
        from_water: Option<String>,
        /// Rider's weight, kg (with --litres-per-kg: sets the target volume).
        #[arg(long)]
        rider_kg: Option<f64>,
        /// Litres per kilogram of rider wanted (a rule of thumb).
        #[arg(long)]
        litres_per_kg: Option<f64>,
        /// Name of the new board (default: <name>-resized).
        #[arg(long)]
        name: Option<String>,
        /// Where to write the new description (default out/<new name>.yaml).
        #[arg(short, long)]
        out: Option<PathBuf>,
    },
    /// Two boards side by side: measurements every 6 in, volumes, and an
    /// overlay of outlines and rockers (SVG).
    Diff {
        /// First board (YAML or closed STL).
        a: PathBuf,
        /// Second board (YAML or closed STL).
        b: PathBuf,
        #[command(flatten)]
        water: WaterOptions,
        /// Output folder for the overlay.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
    },
    /// Full-size templates for hand shaping: half outline, rocker, female
    /// sections and a shaping sheet, tiled 1:1 on ordinary paper (PDF), and
    /// one true-scale SVG a template for plotters and cutters.
    Templates {
        /// Board description (YAML) or a closed STL.
        design: PathBuf,
        /// a4, a3, letter, tabloid, or roll:WIDTH (e.g. roll:914mm).
        #[arg(long, default_value = "a4")]
        paper: String,
        /// Only these, comma-separated: outline, rocker, sections, sheet.
        #[arg(long)]
        only: Option<String>,
        /// Section stations, comma-separated, as for `slice`.
        #[arg(long)]
        stations: Option<String>,
        /// Unit of bare numbers in --stations: in or mm.
        #[arg(long, default_value = "mm")]
        units: String,
        /// Output folder.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
    },
    /// The main job: every output for a board into DIR/<name>/. With no
    /// board, the built-in demo.
    Make {
        /// Board descriptions (YAML), e.g. `orders/*.yaml`, made in parallel; the
        /// built-in demo when none is given.
        boards: Vec<PathBuf>,
        /// Output folder.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
        /// Chord tolerance of the mesh, mm.
        #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
        tolerance: f64,
        /// Paper for the templates and the order sheet: a4, a3, letter, tabloid, or
        /// roll:WIDTH (the order sheet then on an A4-sized page).
        #[arg(long, default_value = "a4")]
        paper: String,
        /// Machine profile (YAML); the shipped generic gantry router when left out.
        #[arg(long)]
        machine: Option<PathBuf>,
        /// Job profile (YAML); every default when left out.
        #[arg(long)]
        job: Option<PathBuf>,
        /// The shop's stock list (YAML): the blank is picked from it, the
        /// ranking written as `<name>.blanks.txt`.
        #[arg(long, conflicts_with = "no_cut")]
        stock_list: Option<PathBuf>,
        /// Make the shape's files only (STL, reports, templates, page): no
        /// router programs.
        #[arg(long)]
        no_cut: bool,
        /// No progress display.
        #[arg(long)]
        quiet: bool,
    },
    /// Simulate programs before they run: rapids into stock, moves outside the
    /// machine, cuts with the spindle off, gouges and leftover against a design.
    /// Exit 0 clean, 1 findings, 2 unreadable input.
    Verify {
        /// Programs in running order (setup 1 first).
        #[arg(required = true)]
        programs: Vec<PathBuf>,
        /// Machine profile (YAML).
        #[arg(long)]
        machine: PathBuf,
        /// Job profile (YAML): its block and placement (without it, the programs' headers give them).
        #[arg(long, conflicts_with = "stock")]
        job: Option<PathBuf>,
        /// Block X 0..L, Y 0..W, Z -T..0 (zero on the top face, front-left corner), e.g. 300x200x50mm.
        #[arg(long)]
        stock: Option<String>,
        /// Tool for a program that names none in the machine's list: KIND:DIAMETER[:CORNER],
        /// e.g. flat:10mm, ball:12.7mm, bull:20mm:3mm.
        #[arg(long)]
        tool: Option<String>,
        /// Design to measure against: description or STL, placed as the job or the programs'
        /// header places it (else taken in the programs' own coordinates).
        #[arg(long)]
        design: Option<PathBuf>,
        /// How many programs run before the flip (default: from the programs' headers;
        /// of two other programs, the second).
        #[arg(long)]
        flip_after: Option<usize>,
        /// List words outside the supported subset as skipped instead of refusing them.
        #[arg(long)]
        lenient: bool,
        /// Height-map cell, mm.
        #[arg(long, default_value_t = 0.5)]
        cell: f64,
        /// Print the JSON report.
        #[arg(long)]
        json: bool,
        /// Folder for the report and deviation pictures.
        #[arg(short, long)]
        out: Option<PathBuf>,
        /// No progress display.
        #[arg(long)]
        quiet: bool,
    },
    /// Router programs for both sides of the blank: writes DIR/<name>-<setup>-<side>-T<n>.nc
    /// and DIR/<name>.setup.txt, or nothing when a safety gate refuses.
    Cut {
        /// Board description (YAML) or closed mesh (STL, mm, nose at low X, stringer along X).
        design: PathBuf,
        /// Machine profile (YAML).
        #[arg(long)]
        machine: PathBuf,
        /// Job profile (YAML); every default when left out.
        #[arg(long)]
        job: Option<PathBuf>,
        /// The shop's stock list (YAML): the blank is picked from it.
        #[arg(long)]
        stock_list: Option<PathBuf>,
        /// Output folder.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
        /// No progress display.
        #[arg(long)]
        quiet: bool,
    },
    /// Pick the blank: the board tried in every blank of the shop's stock
    /// list with the job's holding, on the machine; the ones it fits ranked
    /// by the foam cut away, each with its least margin and where, and why
    /// each other one does not fit. Writes nothing.
    Blanks {
        /// Board description (YAML) or closed mesh (STL, mm).
        design: PathBuf,
        /// The shop's stock list (YAML).
        #[arg(long)]
        stock_list: PathBuf,
        /// Machine profile (YAML); the shipped generic gantry router when left out.
        #[arg(long)]
        machine: Option<PathBuf>,
        /// Job profile (YAML): its holding, skin and tools; every default when left out.
        #[arg(long)]
        job: Option<PathBuf>,
        /// Print JSON instead of text.
        #[arg(long)]
        json: bool,
    },
}

/// The tail pull estimate's assumptions (a rough momentum estimate: the
/// water the bottom turns at the tail's exit angle).
#[derive(clap::Args)]
struct WaterOptions {
    /// Board speed: 4 (m/s), 4m/s, 15km/h, 9mph or 8kn [default: 4 m/s].
    #[arg(long, allow_hyphen_values = true)]
    speed: Option<String>,
    /// Thickness of the water layer the bottom turns (bare numbers mm)
    /// [default: 2cm].
    #[arg(long, allow_hyphen_values = true)]
    water_depth: Option<String>,
    /// Width of bottom turning it: a share of the width at the tail
    /// station (12 in from the tail), e.g. 50%, or a width, e.g. 20cm
    /// [default: 50%].
    #[arg(long)]
    water_width: Option<String>,
    /// Water: fresh, salt, or a density in kg/m³ [default: salt].
    #[arg(long)]
    water: Option<String>,
    /// Also estimate the pull at this exit angle, degrees (0 to 45).
    #[arg(long, allow_hyphen_values = true)]
    exit_angle: Option<f64>,
}

impl WaterOptions {
    fn flags(self) -> jobs::WaterFlags {
        jobs::WaterFlags {
            speed: self.speed,
            depth: self.water_depth,
            width: self.water_width,
            water: self.water,
            angle: self.exit_angle,
        }
    }
}

fn finish(m: &Meshed, print_table: bool) -> ExitCode {
    say!("{}", m.report.summary());
    if print_table {
        say!("{}", m.report.table());
    }
    for p in &m.written {
        let what = if p.extension().is_some_and(|e| e == "stl") {
            " (STL, millimetres)"
        } else {
            ""
        };
        sayln!("wrote {}{what}", p.display());
    }
    if m.report.certified {
        ExitCode::SUCCESS
    } else {
        eprintln!("blanksmith: NOT CERTIFIED: {}", m.report.failure());
        ExitCode::from(1)
    }
}

fn run(cli: Cli) -> Result<ExitCode, JobError> {
    match cli.command {
        Command::Mesh {
            board,
            out,
            tolerance,
            ascii,
        } => {
            let b = jobs::load(&Input::File(board.clone()))?;
            let kind = if ascii {
                StlKind::Ascii
            } else {
                StlKind::Binary
            };
            let m = jobs::mesh_to(b, tolerance, &out, kind, false, &[board.as_path()])?;
            Ok(finish(&m, false))
        }
        Command::Report {
            board,
            json,
            tolerance,
            water,
        } => {
            let w = water.flags().water()?;
            let b = jobs::load(&Input::File(board.clone()))?;
            let m = jobs::report(b, tolerance, &w, &board)?;
            if json {
                say!("{}", m.report.to_json());
                Ok(if m.report.certified {
                    ExitCode::SUCCESS
                } else {
                    ExitCode::from(1)
                })
            } else {
                Ok(finish(&m, true))
            }
        }
        Command::Check { mesh, json, weld } => {
            let inspection = jobs::check(&mesh, weld)?;
            if json {
                say!("{}", inspection.to_json());
            } else {
                say!("{}", inspection.text(&mesh.display().to_string()));
            }
            Ok(if inspection.is_clean() {
                ExitCode::SUCCESS
            } else {
                ExitCode::from(1)
            })
        }
        Command::Slice {
            design,
            stations,
            z_step,
            units,
            out,
        } => {
            let unit = jobs::parse_unit(&units)?;
            let d = jobs::load_design(&design)?;
            let xs = jobs::parse_stations(stations.as_deref(), jobs::design_length(&d), unit)?;
            let step = match z_step {
                None => None,
                Some(t) => Some(
                    units::parse_length(&t)
                        .map_err(|e| JobError::Flag(format!("--z-step: {e}")))?
                        .to_mm(unit),
                ),
            };
            let r = jobs::slice(&d, &xs, step, &out)?;
            for (s, q) in r
                .sections
                .iter()
                .zip(&r.section_at)
                .chain(r.waterlines.iter().zip(&r.waterline_at))
            {
                sayln!("{}", contours::describe(s, *q));
            }
            for p in &r.written {
                sayln!("wrote {}", p.display());
            }
            Ok(ExitCode::SUCCESS)
        }
        Command::Compare {
            design,
            cut,
            align,
            json,
            out,
        } => {
            let (c, written) = jobs::compare(&design, &cut, align, &out)?;
            if json {
                sayln!(
                    "{}",
                    serde_json::to_string_pretty(&c).expect("serialisable")
                );
            } else {
                say!("{}", jobs::comparison_text(&c));
                for p in &written {
                    sayln!("wrote {}", p.display());
                }
            }
            Ok(ExitCode::SUCCESS)
        }
        Command::Resize {
            board,
            length,
            width,
            thickness,
            volume,
            keep,
            water,
            from_water,
            rider_kg,
            litres_per_kg,
            name,
            out,
        } => {
            let args = jobs::ResizeArgs {
                length,
                width,
                thickness,
                volume,
                keep,
                water,
                from_water,
                rider_kg,
                litres_per_kg,
                name,
            };
            let r = jobs::resize(&board, &args, out.as_deref())?;
            say!("{}", jobs::resize_text(&r));
            Ok(ExitCode::SUCCESS)
        }
        Command::Diff { a, b, out, water } => {
            let d = jobs::diff(&a, &b, &out, &water.flags().water()?)?;
            say!("{}", jobs::diff_text(&d));
            Ok(ExitCode::SUCCESS)
        }
        Command::Templates {
            design,
            paper,
            only,
            stations,
            units,
            out,
        } => {
            let unit = jobs::parse_unit(&units)?;
            let paper = blanksmith::template::tiling::paper(&paper).map_err(JobError::Flag)?;
            let d = jobs::load_design(&design)?;
            let xs = jobs::parse_stations(stations.as_deref(), jobs::design_length(&d), unit)?;
            let only: Vec<String> = only
                .iter()
                .flat_map(|o| o.split(','))
                .map(|s| s.trim().to_string())
                .filter(|s| !s.is_empty())
                .collect();
            let t = jobs::templates(&d, paper, &only, &xs, &out)?;
            sayln!(
                "{} templates on {} pages of {}",
                t.drawings.len(),
                t.pages,
                paper.name
            );
            for p in &t.written {
                sayln!("wrote {}", p.display());
            }
            sayln!("print at 100 % (actual size) and measure the calibration bars before cutting");
            Ok(ExitCode::SUCCESS)
        }
        Command::Make {
            boards,
            out,
            tolerance,
            paper,
            machine,
            job,
            stock_list,
            no_cut,
            quiet,
        } => {
            let args = jobs::CutArgs {
                machine,
                job,
                stock_list,
            };
            let cut = (!no_cut).then_some(&args);
            let paper = blanksmith::template::tiling::paper(&paper).map_err(JobError::Flag)?;
            if boards.len() <= 1 {
                let input = boards
                    .into_iter()
                    .next()
                    .map(Input::File)
                    .unwrap_or(Input::Demo);
                let bar = progress(quiet);
                let m = jobs::make(&input, tolerance, paper, &out, cut, &|s| {
                    bar.set_message(s.to_string())
                });
                bar.finish_and_clear();
                let m = m?;
                let code = finish(&m.meshed, false);
                if let Some(a) = cut
                    && let Ok((machine, _)) = jobs::cut_profiles(a)
                {
                    sayln!("{}", jobs::profiles_used(a, &machine));
                }
                return Ok(match &m.cutting {
                    jobs::Cutting::Failed(e) => {
                        eprintln!(
                            "blanksmith: no router programs (the shape's files are written): {e}"
                        );
                        if code == ExitCode::SUCCESS {
                            ExitCode::from(1)
                        } else {
                            code
                        }
                    }
                    jobs::Cutting::Skipped => {
                        sayln!("cutting skipped (--no-cut): no router programs");
                        code
                    }
                    jobs::Cutting::Done(_) => code,
                });
            }
            make_many(boards, tolerance, paper, &out, cut, quiet)
        }
        Command::Verify {
            programs,
            machine,
            job,
            stock,
            tool,
            design,
            flip_after,
            lenient,
            cell,
            json,
            out,
            quiet,
        } => {
            let bar = progress(quiet);
            let args = jobs::VerifyArgs {
                programs,
                machine,
                job,
                stock,
                tool,
                design,
                flip_after,
                lenient,
                cell,
            };
            let result =
                jobs::verify_programs(&args, out.as_deref(), &|s| bar.set_message(s.to_string()));
            bar.finish_and_clear();
            let (v, written) = result?;
            if json {
                say!("{}", v.to_json());
            } else {
                say!("{}", v.text());
                for p in &written {
                    sayln!("wrote {}", p.display());
                }
            }
            Ok(if v.has_findings() {
                ExitCode::from(1)
            } else {
                ExitCode::SUCCESS
            })
        }
        Command::Blanks {
            design,
            stock_list,
            machine,
            job,
            json,
        } => {
            let args = jobs::CutArgs {
                machine,
                job,
                stock_list: Some(stock_list),
            };
            let (text, tried) = jobs::blanks(&design, &args)?;
            if json {
                say!("{}", blanksmith::toolpath::pick::to_json(&tried));
            } else {
                say!("{text}");
            }
            Ok(if tried.iter().any(|t| t.fit.is_ok()) {
                ExitCode::SUCCESS
            } else {
                ExitCode::from(1)
            })
        }
        Command::Cut {
            design,
            machine,
            job,
            stock_list,
            out,
            quiet,
        } => {
            let bar = progress(quiet);
            let args = jobs::CutArgs {
                machine: Some(machine),
                job,
                stock_list,
            };
            let result = jobs::cut(&design, &args, &out, &|s| bar.set_message(s.to_string()));
            bar.finish_and_clear();
            let (plan, written) = result?;
            for l in plan.placement.fit_lines() {
                sayln!("{l}");
            }
            for p in &plan.programs {
                sayln!(
                    "{}: {}, {}, about {}",
                    p.file_name,
                    p.tool.describe(),
                    p.labels.join(" + "),
                    blanksmith::gcode::program::duration(p.time_s)
                );
            }
            for p in &written {
                sayln!("wrote {}", p.display());
            }
            sayln!("read the setup sheet and the cautions in each program before cutting");
            Ok(ExitCode::SUCCESS)
        }
    }
}

/// `make` for a day's orders: one spinner per board, a summary table at
/// the end; exit 2 if any board failed, else 1 if one is not certified or
/// has no programs.
fn make_many(
    boards: Vec<PathBuf>,
    tolerance: f64,
    paper: blanksmith::template::tiling::Paper,
    out: &std::path::Path,
    cut: Option<&jobs::CutArgs>,
    quiet: bool,
) -> Result<ExitCode, JobError> {
    let multi = indicatif::MultiProgress::new();
    if quiet {
        multi.set_draw_target(indicatif::ProgressDrawTarget::hidden());
    }
    let bars: Vec<indicatif::ProgressBar> = boards
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
        .collect();
    let inputs: Vec<Input> = boards.iter().cloned().map(Input::File).collect();
    let result = jobs::make_many(&inputs, tolerance, paper, out, cut, &|k, s| {
        bars[k].set_message(s.to_string())
    });
    for b in &bars {
        b.finish_and_clear();
    }
    let (results, index) = result?;
    if let Some(a) = cut
        && let Ok((machine, _)) = jobs::cut_profiles(a)
    {
        sayln!("{}", jobs::profiles_used(a, &machine));
    }
    sayln!(
        "{:<40} {:>9} {:>6} {:>16} {:>16}  verdict",
        "board",
        "litres",
        "fits",
        "setup 1",
        "setup 2"
    );
    let mut short = false;
    let mut failed = 0;
    for (path, r) in boards.iter().zip(&results) {
        match r {
            Ok(m) => {
                let (fits, [t1, t2]) = match &m.cutting {
                    jobs::Cutting::Done(t) => ("yes", t.map(blanksmith::gcode::program::duration)),
                    jobs::Cutting::Skipped => ("—", ["—".to_string(), "—".to_string()]),
                    jobs::Cutting::Failed(e) => {
                        eprintln!("blanksmith: {}: no router programs: {e}", path.display());
                        (
                            if e.is_misfit() { "no" } else { "—" },
                            ["—".to_string(), "—".to_string()],
                        )
                    }
                };
                let verdict = m.shortfall();
                short |= verdict.is_some();
                sayln!(
                    "{:<40} {:>7.2} L {:>6} {:>16} {:>16}  {}",
                    m.meshed.board.name,
                    m.meshed.report.volume_litres,
                    fits,
                    t1,
                    t2,
                    verdict.as_deref().unwrap_or("done")
                );
            }
            Err(e) => {
                failed += 1;
                let fits = if e.is_misfit() { "no" } else { "—" };
                sayln!(
                    "{:<40} {:>9} {:>6} {:>16} {:>16}  failed",
                    path.display(),
                    "—",
                    fits,
                    "—",
                    "—"
                );
                eprintln!("blanksmith: error: {e}");
            }
        }
    }
    sayln!("wrote {}", index.display());
    if failed > 0 {
        eprintln!("blanksmith: {failed} of {} boards failed", boards.len());
        return Ok(ExitCode::from(2));
    }
    Ok(if short {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    })
}

/// A spinner with the stage being worked on, on standard error; hidden
/// with `--quiet` or when standard error is not a terminal.
fn progress(quiet: bool) -> indicatif::ProgressBar {
    if quiet {
        return indicatif::ProgressBar::hidden();
    }
    let bar = indicatif::ProgressBar::new_spinner();
    bar.enable_steady_tick(std::time::Duration::from_millis(120));
    bar
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(code) => code,
        Err(e) => {
            eprintln!("blanksmith: error: {e}");
            ExitCode::from(2)
        }
    }
}
