//! Speed of the cutting and simulation stages on the demo shortboard: the
//! drop-cutter alone (cutter positions per second on a ~20,000-triangle
//! mesh, the size used to compare with opencamlib), both setups' programs
//! with the default job (12.7 mm ball, 0.1 mm scallop), and the simulation
//! of those programs at 0.5 mm cells.
//!
//! Run with `cargo bench --bench cam`; quote medians.

use std::sync::LazyLock;

use blanksmith::board::Board;
use blanksmith::cam::dropcutter::DropCutter;
use blanksmith::cam::profile::{self, Cutter};
use blanksmith::cam::{job, program};
use blanksmith::mesh::Mesh;
use blanksmith::{certificate, demo, description, jobs, mesher};
use divan::black_box;

fn main() {
    divan::main();
}

fn demo_board() -> Board {
    description::board_from_str(demo::DEMO, demo::DEMO_NAME).unwrap()
}

/// The demo at a tolerance that gives about 20,000 triangles.
static SMALL: LazyLock<Mesh> = LazyLock::new(|| {
    let m = mesher::mesh_board(&demo_board(), 0.6).unwrap();
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

#[divan::bench(sample_count = 3, sample_size = 1)]
fn both_setups_demo_default_job() -> usize {
    let board = demo_board();
    let c = certificate::certify(&board, mesher::DEFAULT_TOLERANCE).unwrap();
    let m = profile::generic_machine();
    let j = job::default_job(&m).unwrap();
    let plan = program::plan(
        &board.name,
        28.0,
        &c.mesh,
        Some(&program::apex_line(&board)),
        &m,
        &j,
        &|_| {},
    )
    .unwrap();
    plan.programs.iter().map(|p| p.text.len()).sum()
}

#[divan::bench(sample_count = 3, sample_size = 1)]
fn simulate_both_setups_demo(b: divan::Bencher) {
    let board = demo_board();
    let c = certificate::certify(&board, mesher::DEFAULT_TOLERANCE).unwrap();
    let m = profile::generic_machine();
    let j = job::default_job(&m).unwrap();
    let plan = program::plan(
        &board.name,
        28.0,
        &c.mesh,
        Some(&program::apex_line(&board)),
        &m,
        &j,
        &|_| {},
    )
    .unwrap();
    b.bench(|| {
        jobs::verify_plan(&plan, &m, &j, &|_| {})
            .unwrap()
            .removed_volume_litres
    });
}
