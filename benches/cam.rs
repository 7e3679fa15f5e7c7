//! Speed of the cutting and simulation stages on the demo shortboard: the
//! drop-cutter alone (cutter positions per second on a ~20,000-triangle
//! mesh, the size used to compare with opencamlib), both setups' programs
//! with the default job (12.7 mm ball, 0.1 mm scallop), and the simulation
//! of those programs at 0.5 mm cells.
//!
//! Run with `cargo bench --bench cam`; quote medians.

use std::sync::LazyLock;

use blanksmith::gcode::program;
use blanksmith::geom::dropcutter::DropCutter;
use blanksmith::model::board::Board;
use blanksmith::model::machine::Cutter;
use blanksmith::model::mesh::Mesh;
use blanksmith::profiles::job;
use blanksmith::profiles::machine as profile;
use blanksmith::template::print;
use blanksmith::{
    commands as cmd, description, description::demo, meshing::mesher, volume::certificate,
};
use divan::black_box;

fn main() {
    divan::main();
}

fn demo_board() -> Board {
    description::board_from_str(demo::DEMO, demo::DEMO_NAME).unwrap()
}

/// The demo at a tolerance that gives about 20,000 triangles.
static SMALL: LazyLock<Mesh> = LazyLock::new(|| {
    let m = mesher::mesh_board(&demo_board(), 0.1).unwrap();
    eprintln!("small mesh: {} triangles", m.triangles.len());
    m
});

/// A 1 mm grid of cutter positions over the small mesh's plan.
static GRID: LazyLock<Vec<[f64; 2]>> = LazyLock::new(|| {
    let (lo, hi) = SMALL.bounding_box().unwrap();
    let mut pts = vec![];
    let mut y = lo[1];
    while y <= hi[1] {
        let mut x = lo[0];
        while x <= hi[0] {
            pts.push([x, y]);
            x += 1.0;
        }
        y += 1.0;
    }
    eprintln!("grid: {} positions", pts.len());
    pts
});

#[divan::bench(sample_count = 5, sample_size = 1)]
fn drop_cutter_ball_12_7_on_20k_triangles(b: divan::Bencher) {
    let dc = DropCutter::new(&[&*SMALL], Cutter::ball(12.7));
    let grid = &*GRID;
    b.counter(divan::counter::ItemsCount::new(grid.len()))
        .bench(|| dc.drop_many(black_box(grid)).len());
}

/// The demo's programs for a job given as YAML text, with its machine and job.
fn demo_plan(
    job_text: &str,
) -> (
    program::CutPlan,
    blanksmith::model::machine::Machine,
    blanksmith::model::job::Job,
) {
    let board = demo_board();
    let c = certificate::certify(&board, mesher::DEFAULT_TOLERANCE).unwrap();
    let m = profile::generic_machine();
    let j = job::job_from_str(job_text, "bench.yaml", &m).unwrap();
    let plan = program::plan(
        &board.name,
        28.0,
        &c.mesh,
        Some(&program::apex_line(&board)),
        Some(&board),
        &m,
        &j,
        &|_| {},
    )
    .unwrap();
    (plan, m, j)
}

#[divan::bench(sample_count = 3, sample_size = 1)]
fn both_setups_demo_default_job() -> usize {
    let (plan, _, _) = demo_plan("{}");
    plan.programs.iter().map(|p| p.text.len()).sum()
}

#[divan::bench(sample_count = 3, sample_size = 1)]
fn simulate_both_setups_demo(b: divan::Bencher) {
    let (plan, m, j) = demo_plan("{}");
    b.bench(|| {
        cmd::verify_plan(&plan, &m, &j, &|_| {})
            .unwrap()
            .removed_volume_litres
    });
}

/// The points opencamlib dropped (`benches/opencamlib_side_by_side.sh`
/// writes them, with its heights); skipped when the script has not run.
#[divan::bench(sample_count = 5, sample_size = 1)]
fn same_points_as_opencamlib(b: divan::Bencher) {
    let (Ok(stl), Ok(csv)) = (
        std::env::var("BLANKSMITH_OCL_STL"),
        std::env::var("BLANKSMITH_OCL_CSV"),
    ) else {
        return;
    };
    let soup = blanksmith::stl::read_file(std::path::Path::new(&stl)).unwrap();
    let mesh = blanksmith::inspect::check::inspect_soup(&soup, Some(0.0))
        .0
        .mesh;
    let rows: Vec<[f64; 3]> = std::fs::read_to_string(csv)
        .unwrap()
        .lines()
        .map(|l| {
            let v: Vec<f64> = l.split(',').map(|s| s.parse().unwrap()).collect();
            [v[0], v[1], v[2]]
        })
        .collect();
    let pts: Vec<[f64; 2]> = rows.iter().map(|r| [r[0], r[1]]).collect();
    let dc = DropCutter::new(&[&mesh], Cutter::ball(12.7));
    let ours = dc.drop_many(&pts);
    let mut worst: f64 = 0.0;
    let mut both = 0;
    for (r, z) in rows.iter().zip(&ours) {
        if let Some(z) = z
            && r[2] > -999.0
        {
            worst = worst.max((r[2] - z).abs());
            both += 1;
        }
    }
    eprintln!(
        "blanksmith: {} positions, {both} on the mesh in both; largest height difference {worst:.2e} mm",
        pts.len()
    );
    b.counter(divan::counter::ItemsCount::new(pts.len()))
        .bench(|| dc.drop_many(black_box(&pts)).len());
}

/// The templates of the demo on A4: outline, rocker and sections drawn,
/// tiled and written as one PDF, in memory.
#[divan::bench(sample_count = 10)]
fn templates_demo_a4() -> usize {
    use blanksmith::{template::drawing as template, template::tiling};
    let board = demo_board();
    let c = certificate::certify(&board, mesher::DEFAULT_TOLERANCE).unwrap();
    let side = template::curves_of(&board);
    let stations = [
        board.tip_station,
        board.length / 2.0,
        board.length - board.tip_station,
    ];
    let drawings = [
        template::outline(&side),
        template::rocker(&side),
        blanksmith::template::sections::sections(&board.name, &c.mesh, &stations),
    ];
    let mut pages = vec![];
    for d in &drawings {
        pages.extend(tiling::tile(d, print::A4));
    }
    print::to_pdf(&pages).len()
        + drawings
            .iter()
            .map(|d| template::to_svg(d).len())
            .sum::<usize>()
}

/// Both setups at a fine finish (0.05 mm scallop): about twice the positions.
#[divan::bench(sample_count = 2, sample_size = 1)]
fn both_setups_demo_fine_scallop() -> usize {
    let (plan, _, _) = demo_plan("finishing:\n  scallop: 0.05\n");
    plan.programs.iter().map(|p| p.text.len()).sum()
}

/// Both setups from the pre-rockered blank of `fixtures/job-rockered-blank.yaml`.
#[divan::bench(sample_count = 3, sample_size = 1)]
fn both_setups_demo_rockered_blank() -> usize {
    let (plan, _, _) = demo_plan(include_str!("../fixtures/job-rockered-blank.yaml"));
    plan.programs.iter().map(|p| p.text.len()).sum()
}

/// The simulation of the demo's programs at 0.25 mm cells (four times the
/// cells of the default).
#[divan::bench(sample_count = 2, sample_size = 1)]
fn simulate_both_setups_demo_fine_cells(b: divan::Bencher) {
    let (plan, m, j) = demo_plan("{}");
    let options = blanksmith::verify::setting::VerifyOptions {
        cell: 0.25,
        ..Default::default()
    };
    b.bench(|| {
        cmd::verify_plan_with(&plan, &m, &j, options, &|_| {})
            .unwrap()
            .removed_volume_litres
    });
}

/// `make` on the demo, every stage, files written into a temporary folder.
#[divan::bench(sample_count = 3, sample_size = 1)]
fn make_demo_end_to_end() -> usize {
    let dir = tempfile::tempdir().unwrap();
    let cut = cmd::CutArgs {
        machine: None,
        job: None,
        stock_list: None,
    };
    let m = cmd::make(
        &cmd::Input::Demo,
        mesher::DEFAULT_TOLERANCE,
        blanksmith::template::print::A4,
        dir.path(),
        Some(&cut),
        &|_| {},
    )
    .unwrap();
    m.meshed.written.len()
}
