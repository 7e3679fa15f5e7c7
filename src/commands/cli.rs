//! The command line: every command and its flags as `clap` reads them.
//! The flag text becomes values in the commands' own files; `run` calls
//! them and renders what they return.
//!
//! The doc comments here are the command's `--help` text, written for the
//! terminal (`DIR/<name>.stl`, `KIND:DIAMETER[:CORNER]`), not as rustdoc.
#![allow(rustdoc::invalid_html_tags, rustdoc::broken_intra_doc_links)]

use std::path::PathBuf;

use clap::{Parser, Subcommand};

use super::WaterFlags;
use crate::meshing::mesher::DEFAULT_TOLERANCE;

/// The whole command line.
#[derive(Parser)]
#[command(
    name = "blanksmith",
    version,
    about = "Surfboard descriptions to certified meshes, STL and shop files"
)]
pub struct Cli {
    /// The command and its flags.
    #[command(subcommand)]
    pub command: Command,
}

/// The commands.
#[derive(Subcommand)]
pub enum Command {
    /// Mesh a board: writes DIR/<name>.stl (millimetres) and DIR/<name>.report.json.
    Mesh(MeshFlags),
    /// Print the measurement table at stations, the volume certificate and
    /// the tail pull estimate.
    Report(ReportFlags),
    /// Inspect an STL file: closed? which way out? how many litres? Exit 1
    /// when it has findings.
    Check(CheckFlags),
    /// Cut a board or mesh into cross-sections (and waterlines): an SVG at
    /// true scale and a CSV of contour points per set.
    Slice(SliceFlags),
    /// Compare a cut board (STL) with its design: distances both ways,
    /// where the largest deviations are, the volume difference, and a
    /// plan-view deviation map (SVG).
    Compare(CompareFlags),
    /// Resize a board: proportionally (--length alone), by length only
    /// (--keep width,thickness), to a width or thickness, or to a target
    /// volume (solved on what is not kept); for other water; for a rider.
    /// Writes a new description and an overlay SVG.
    Resize(ResizeFlags),
    /// Two boards side by side: measurements every 6 in, volumes, and an
    /// overlay of outlines and rockers (SVG).
    Diff(DiffFlags),
    /// Full-size templates for hand shaping: half outline, rocker, female
    /// sections and a shaping sheet, tiled 1:1 on ordinary paper (PDF), and
    /// one true-scale SVG a template for plotters and cutters.
    Templates(TemplatesFlags),
    /// The main job: every output for a board into DIR/<name>/. With no
    /// board, the built-in demo.
    Make(MakeFlags),
    /// Simulate programs before they run: rapids into stock, moves outside the
    /// machine, cuts with the spindle off, gouges and leftover against a design.
    /// Exit 0 clean, 1 findings, 2 unreadable input.
    Verify(VerifyFlags),
    /// Router programs for both sides of the blank: writes DIR/<name>-<setup>-<side>-T<n>.nc
    /// and DIR/<name>.setup.txt, or nothing when a safety gate refuses.
    Cut(CutFlags),
    /// Pick the blank: the board tried in every blank of the shop's stock
    /// list with the job's holding, on the machine; the ones it fits ranked
    /// by the foam cut away, each with its least margin and where, and why
    /// each other one does not fit. Writes nothing.
    Blanks(BlanksFlags),
}

/// The flags of `mesh`.
#[derive(clap::Args)]
pub struct MeshFlags {
    /// Board description (YAML).
    pub board: PathBuf,
    /// Output folder.
    #[arg(short, long, default_value = "out")]
    pub out: PathBuf,
    /// Chord tolerance of the mesh, mm.
    #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
    pub tolerance: f64,
    /// Write ASCII STL instead of binary.
    #[arg(long)]
    pub ascii: bool,
}

/// The flags of `report`.
#[derive(clap::Args)]
pub struct ReportFlags {
    /// Board description (YAML).
    pub board: PathBuf,
    /// Print the JSON report instead of text.
    #[arg(long)]
    pub json: bool,
    /// Chord tolerance of the mesh, mm.
    #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
    pub tolerance: f64,
    #[command(flatten)]
    pub water: WaterOptions,
}

/// The flags of `check`.
#[derive(clap::Args)]
pub struct CheckFlags {
    /// Binary or ASCII STL, millimetres.
    pub mesh: PathBuf,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
    /// Weld tolerance for vertices on open edges, mm (default: a millionth
    /// of the model's diagonal, at least 0.001 mm).
    #[arg(long)]
    pub weld: Option<f64>,
}

/// The flags of `slice`.
#[derive(clap::Args)]
pub struct SliceFlags {
    /// Board description (YAML) or a closed STL (x along the board).
    pub design: PathBuf,
    /// Stations, comma-separated: `300mm`, `12in`, `12in from tail`,
    /// `centre`, `1in behind`; bare numbers in --units. Default: 12 in
    /// from each tip and the wide point (or centre).
    #[arg(long)]
    pub stations: Option<String>,
    /// Waterlines every this far above the lowest point, e.g. `10mm`.
    #[arg(long)]
    pub z_step: Option<String>,
    /// Unit of bare numbers in --stations and --z-step: in or mm.
    #[arg(long, default_value = "mm")]
    pub units: String,
    /// Output folder.
    #[arg(short, long, default_value = "out")]
    pub out: PathBuf,
}

/// The flags of `compare`.
#[derive(clap::Args)]
pub struct CompareFlags {
    /// Board description (YAML) or a closed STL.
    pub design: PathBuf,
    /// The cut board as a closed STL, in the design's coordinates
    /// unless --align is given.
    pub cut: PathBuf,
    /// Best-fit the cut onto the design first (iterative closest point).
    #[arg(long)]
    pub align: bool,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
    /// Output folder for the deviation map.
    #[arg(short, long, default_value = "out")]
    pub out: PathBuf,
}

/// The flags of `resize`.
#[derive(clap::Args)]
pub struct ResizeFlags {
    /// Board description (YAML).
    pub board: PathBuf,
    /// New length (e.g. 5'8"; bare numbers in the board's unit).
    #[arg(long)]
    pub length: Option<String>,
    /// New width at the wide point.
    #[arg(long)]
    pub width: Option<String>,
    /// New greatest thickness.
    #[arg(long)]
    pub thickness: Option<String>,
    /// Target volume, litres.
    #[arg(long)]
    pub volume: Option<f64>,
    /// What to keep: length, width, thickness (comma-separated).
    #[arg(long)]
    pub keep: Option<String>,
    /// Water the new board is for: fresh, salt, or a density in kg/m³.
    #[arg(long)]
    pub water: Option<String>,
    /// Water the board (or --volume) suits now (default salt).
    #[arg(long)]
    pub from_water: Option<String>,
    /// Rider's weight, kg (with --litres-per-kg: sets the target volume).
    #[arg(long)]
    pub rider_kg: Option<f64>,
    /// Litres per kilogram of rider wanted (a rule of thumb).
    #[arg(long)]
    pub litres_per_kg: Option<f64>,
    /// Name of the new board (default: <name>-resized).
    #[arg(long)]
    pub name: Option<String>,
    /// Where to write the new description (default out/<new name>.yaml).
    #[arg(short, long)]
    pub out: Option<PathBuf>,
}

/// The flags of `diff`.
#[derive(clap::Args)]
pub struct DiffFlags {
    /// First board (YAML or closed STL).
    pub a: PathBuf,
    /// Second board (YAML or closed STL).
    pub b: PathBuf,
    #[command(flatten)]
    pub water: WaterOptions,
    /// Output folder for the overlay.
    #[arg(short, long, default_value = "out")]
    pub out: PathBuf,
}

/// The flags of `templates`.
#[derive(clap::Args)]
pub struct TemplatesFlags {
    /// Board description (YAML) or a closed STL.
    pub design: PathBuf,
    /// a4, a3, letter, tabloid, or roll:WIDTH (e.g. roll:914mm).
    #[arg(long, default_value = "a4")]
    pub paper: String,
    /// Only these, comma-separated: outline, rocker, sections, sheet.
    #[arg(long)]
    pub only: Option<String>,
    /// Section stations, comma-separated, as for `slice`.
    #[arg(long)]
    pub stations: Option<String>,
    /// Unit of bare numbers in --stations: in or mm.
    #[arg(long, default_value = "mm")]
    pub units: String,
    /// Output folder.
    #[arg(short, long, default_value = "out")]
    pub out: PathBuf,
}

/// The flags of `make`.
#[derive(clap::Args)]
pub struct MakeFlags {
    /// Board descriptions (YAML), e.g. `orders/*.yaml`, made in parallel; the
    /// built-in demo when none is given.
    pub boards: Vec<PathBuf>,
    /// Output folder.
    #[arg(short, long, default_value = "out")]
    pub out: PathBuf,
    /// Chord tolerance of the mesh, mm.
    #[arg(long, default_value_t = DEFAULT_TOLERANCE)]
    pub tolerance: f64,
    /// Paper for the templates and the order sheet: a4, a3, letter, tabloid, or
    /// roll:WIDTH (the order sheet then on an A4-sized page).
    #[arg(long, default_value = "a4")]
    pub paper: String,
    /// Machine profile (YAML); the shipped generic gantry router when left out.
    #[arg(long)]
    pub machine: Option<PathBuf>,
    /// Job profile (YAML); every default when left out.
    #[arg(long)]
    pub job: Option<PathBuf>,
    /// The shop's stock list (YAML): the blank is picked from it, the
    /// ranking written as `<name>.blanks.txt`.
    #[arg(long, conflicts_with = "no_cut")]
    pub stock_list: Option<PathBuf>,
    /// Make the shape's files only (STL, reports, templates, page): no
    /// router programs.
    #[arg(long)]
    pub no_cut: bool,
    /// No progress display.
    #[arg(long)]
    pub quiet: bool,
}

/// The flags of `verify`.
#[derive(clap::Args)]
pub struct VerifyFlags {
    /// Programs in running order (setup 1 first).
    #[arg(required = true)]
    pub programs: Vec<PathBuf>,
    /// Machine profile (YAML).
    #[arg(long)]
    pub machine: PathBuf,
    /// Job profile (YAML): its block and placement (without it, the programs' headers give them).
    #[arg(long, conflicts_with = "stock")]
    pub job: Option<PathBuf>,
    /// Block X 0..L, Y 0..W, Z -T..0 (zero on the top face, front-left corner), e.g. 300x200x50mm.
    #[arg(long)]
    pub stock: Option<String>,
    /// Tool for a program that names none in the machine's list: KIND:DIAMETER[:CORNER],
    /// e.g. flat:10mm, ball:12.7mm, bull:20mm:3mm.
    #[arg(long)]
    pub tool: Option<String>,
    /// Design to measure against: description or STL, placed as the job or the programs'
    /// header places it (else taken in the programs' own coordinates).
    #[arg(long)]
    pub design: Option<PathBuf>,
    /// How many programs run before the flip (default: from the programs' headers;
    /// of two other programs, the second).
    #[arg(long)]
    pub flip_after: Option<usize>,
    /// List words outside the supported subset as skipped instead of refusing them.
    #[arg(long)]
    pub lenient: bool,
    /// Height-map cell, mm.
    #[arg(long, default_value_t = 0.5)]
    pub cell: f64,
    /// Print the JSON report.
    #[arg(long)]
    pub json: bool,
    /// Folder for the report and deviation pictures.
    #[arg(short, long)]
    pub out: Option<PathBuf>,
    /// No progress display.
    #[arg(long)]
    pub quiet: bool,
}

/// The flags of `cut`.
#[derive(clap::Args)]
pub struct CutFlags {
    /// Board description (YAML) or closed mesh (STL, mm, nose at low X, stringer along X).
    pub design: PathBuf,
    /// Machine profile (YAML).
    #[arg(long)]
    pub machine: PathBuf,
    /// Job profile (YAML); every default when left out.
    #[arg(long)]
    pub job: Option<PathBuf>,
    /// The shop's stock list (YAML): the blank is picked from it.
    #[arg(long)]
    pub stock_list: Option<PathBuf>,
    /// Output folder.
    #[arg(short, long, default_value = "out")]
    pub out: PathBuf,
    /// No progress display.
    #[arg(long)]
    pub quiet: bool,
}

/// The flags of `blanks`.
#[derive(clap::Args)]
pub struct BlanksFlags {
    /// Board description (YAML) or closed mesh (STL, mm).
    pub design: PathBuf,
    /// The shop's stock list (YAML).
    #[arg(long)]
    pub stock_list: PathBuf,
    /// Machine profile (YAML); the shipped generic gantry router when left out.
    #[arg(long)]
    pub machine: Option<PathBuf>,
    /// Job profile (YAML): its holding, skin and tools; every default when left out.
    #[arg(long)]
    pub job: Option<PathBuf>,
    /// Print JSON instead of text.
    #[arg(long)]
    pub json: bool,
}

/// The tail pull estimate's assumptions (a rough momentum estimate: the
/// water the bottom turns at the tail's exit angle).
#[derive(clap::Args)]
pub struct WaterOptions {
    /// Board speed: 4 (m/s), 4m/s, 15km/h, 9mph or 8kn [default: 4 m/s].
    #[arg(long, allow_hyphen_values = true)]
    pub speed: Option<String>,
    /// Thickness of the water layer the bottom turns (bare numbers mm)
    /// [default: 2cm].
    #[arg(long, allow_hyphen_values = true)]
    pub water_depth: Option<String>,
    /// Width of bottom turning it: a share of the width at the tail
    /// station (12 in from the tail), e.g. 50%, or a width, e.g. 20cm
    /// [default: 50%].
    #[arg(long)]
    pub water_width: Option<String>,
    /// Water: fresh, salt, or a density in kg/m³ [default: salt].
    #[arg(long)]
    pub water: Option<String>,
    /// Also estimate the pull at this exit angle, degrees (0 to 45).
    #[arg(long, allow_hyphen_values = true)]
    pub exit_angle: Option<f64>,
}

impl WaterOptions {
    /// The flags as the tail pull's reader takes them.
    pub fn flags(self) -> WaterFlags {
        WaterFlags {
            speed: self.speed,
            depth: self.water_depth,
            width: self.water_width,
            water: self.water,
            angle: self.exit_angle,
        }
    }
}
