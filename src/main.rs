//! The `blanksmith` command: parses arguments, calls the library, prints
//! once. Exit codes: 0 done, 1 findings (the volume certificate failed, or
//! `check` found problems), 2 bad input or a system error.

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

use blanksmith::contours;
use blanksmith::description::values::parse_position;
use blanksmith::jobs::{self, Input, JobError, Meshed, StlKind};
use blanksmith::mesher::DEFAULT_TOLERANCE;
use blanksmith::units::{self, Unit};

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
    /// Print the measurement table at stations and the volume certificate.
    Report {
        /// Board description (YAML).
        board: PathBuf,
        /// Print the JSON report instead of text.
        #[arg(long)]
        json: bool,
        /// Chord tolerance of the mesh, mm.
        #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
        tolerance: f64,
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
    /// The main job: every output for a board into DIR/<name>/. With no
    /// board, the built-in demo.
    Make {
        /// Board description (YAML); the built-in demo when left out.
        board: Option<PathBuf>,
        /// Output folder.
        #[arg(short, long, default_value = "out")]
        out: PathBuf,
        /// Chord tolerance of the mesh, mm.
        #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
        tolerance: f64,
    },
}

fn finish(m: &Meshed, print_table: bool) -> ExitCode {
    print!("{}", m.report.summary());
    if print_table {
        print!("{}", m.report.table());
    }
    for p in &m.written {
        let what = if p.extension().is_some_and(|e| e == "stl") {
            " (STL, millimetres)"
        } else {
            ""
        };
        println!("wrote {}{what}", p.display());
    }
    if m.report.certified {
        ExitCode::SUCCESS
    } else {
        eprintln!("blanksmith: NOT CERTIFIED: {}", m.report.failure());
        ExitCode::from(1)
    }
}

fn comparison_text(c: &blanksmith::compare::Comparison) -> String {
    use std::fmt::Write as _;
    let mut s = String::new();
    if let Some(a) = &c.alignment {
        let _ = writeln!(
            s,
            "alignment: rotated {:.3}°, {:.3}°, {:.3}° about x, y, z and moved {:.3}, {:.3}, {:.3} mm ({} iterations; RMS {:.3} → {:.3} mm)",
            a.rotation_xyz_deg[0],
            a.rotation_xyz_deg[1],
            a.rotation_xyz_deg[2],
            a.translation_mm[0],
            a.translation_mm[1],
            a.translation_mm[2],
            a.iterations,
            a.rms_before_mm,
            a.rms_after_mm
        );
    }
    let _ = writeln!(s, "largest distance (Hausdorff) {:.3} mm", c.hausdorff_mm);
    for (what, side) in [
        ("design to cut", &c.design_to_cut),
        ("cut to design", &c.cut_to_design),
    ] {
        let _ = writeln!(
            s,
            "  {what}: max {:.3} mm, mean {:.3} mm, RMS {:.3} mm over {} points",
            side.max_mm, side.mean_mm, side.rms_mm, side.points
        );
    }
    let _ = writeln!(
        s,
        "largest deviations on the design (+ stock left, − gouge):"
    );
    for w in &c.worst {
        let _ = writeln!(
            s,
            "  {:+.3} mm at ({:.1}, {:.1}, {:.1}) mm",
            w.deviation_mm, w.at_mm[0], w.at_mm[1], w.at_mm[2]
        );
    }
    let _ = writeln!(
        s,
        "volume: design {:.3} L, cut {:.3} L, difference {:+.3} L",
        c.design_volume_litres, c.cut_volume_litres, c.volume_difference_litres
    );
    s
}

fn run(cli: Cli) -> Result<ExitCode, JobError> {
    match cli.command {
        Command::Mesh {
            board,
            out,
            tolerance,
            ascii,
        } => {
            let b = jobs::load(&Input::File(board))?;
            let kind = if ascii {
                StlKind::Ascii
            } else {
                StlKind::Binary
            };
            let m = jobs::mesh_to(b, tolerance, &out, kind, false)?;
            Ok(finish(&m, false))
        }
        Command::Report {
            board,
            json,
            tolerance,
        } => {
            let b = jobs::load(&Input::File(board))?;
            let m = jobs::certify_only(b, tolerance)?;
            if json {
                print!("{}", m.report.to_json());
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
                print!("{}", inspection.to_json());
            } else {
                print!("{}", inspection.text(&mesh.display().to_string()));
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
            let unit = match units.as_str() {
                "in" => Unit::In,
                "mm" => Unit::Mm,
                other => {
                    return Err(JobError::Option(format!(
                        "--units {other}: use `in` or `mm`"
                    )));
                }
            };
            let d = jobs::load_design(&design)?;
            let length = match &d {
                jobs::Design::Board(b) => b.length,
                jobs::Design::Mesh { mesh, .. } => {
                    mesh.bounding_box().map_or(0.0, |(lo, hi)| hi[0] - lo[0])
                }
            };
            let mut xs = vec![];
            for item in stations
                .iter()
                .flat_map(|s| s.split(','))
                .map(str::trim)
                .filter(|s| !s.is_empty())
            {
                let p = parse_position(item)
                    .map_err(|e| JobError::Option(format!("--stations: {e}")))?;
                xs.push(p.from_nose(length, unit));
            }
            let step = match z_step {
                None => None,
                Some(t) => Some(
                    units::parse_length(&t)
                        .map_err(|e| JobError::Option(format!("--z-step: {e}")))?
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
                println!("{}", contours::describe(s, *q));
            }
            for p in &r.written {
                println!("wrote {}", p.display());
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
                println!(
                    "{}",
                    serde_json::to_string_pretty(&c).expect("serialisable")
                );
            } else {
                print!("{}", comparison_text(&c));
                for p in &written {
                    println!("wrote {}", p.display());
                }
            }
            Ok(ExitCode::SUCCESS)
        }
        Command::Make {
            board,
            out,
            tolerance,
        } => {
            let input = board.map(Input::File).unwrap_or(Input::Demo);
            let m = jobs::make(&input, tolerance, &out)?;
            Ok(finish(&m, false))
        }
    }
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
