//! Speed of the foundation on the demo shortboard: describe → mesh →
//! certify → STL at the default tolerance; a ~2-million-triangle mesh; the
//! divergence sum against a plain pass over the same bytes (the memory floor).
//!
//! Run with `cargo bench --bench mesh`; quote medians.

use std::sync::LazyLock;

use blanksmith::model::board::Board;
use blanksmith::model::mesh::Mesh;
use blanksmith::{
    description, description::demo, meshing::mesher, stl, volume::certificate,
    volume::measure as volume,
};
use divan::{Bencher, black_box};

fn main() {
    divan::main();
}

/// Tolerance that gives the demo about 2 million triangles.
const FINE: f64 = 0.0011;

fn demo_board() -> Board {
    description::board_from_str(demo::DEMO, demo::DEMO_NAME).unwrap()
}

static FINE_MESH: LazyLock<Mesh> = LazyLock::new(|| {
    let m = mesher::mesh_board(&demo_board(), FINE).unwrap();
    eprintln!("fine mesh: {} triangles", m.triangles.len());
    m
});

#[divan::bench(sample_count = 30)]
fn demo_describe_mesh_certify_stl() -> usize {
    let board = description::board_from_str(black_box(demo::DEMO), demo::DEMO_NAME).unwrap();
    let c = certificate::certify(&board, mesher::DEFAULT_TOLERANCE).unwrap();
    let mut out = Vec::new();
    stl::write_binary(&mut out, &c.mesh, "bench").unwrap();
    out.len()
}

#[divan::bench(sample_count = 5, sample_size = 1)]
fn demo_two_million_triangle_mesh(b: Bencher) {
    let board = demo_board();
    b.bench(|| mesher::mesh_board(&board, FINE).unwrap().triangles.len());
}

#[divan::bench(sample_count = 40)]
fn divergence_sum_two_million(b: Bencher) {
    let m = &*FINE_MESH;
    b.counter(divan::counter::ItemsCount::new(m.triangles.len()))
        .bench(|| volume::volume(black_box(m)));
}

#[divan::bench(sample_count = 40)]
fn plain_pass_two_million(b: Bencher) {
    // Reads every corner of every triangle and adds the coordinates: the same
    // memory traffic as the divergence sum with almost no arithmetic.
    let m = &*FINE_MESH;
    b.counter(divan::counter::ItemsCount::new(m.triangles.len()))
        .bench(|| {
            let v = &black_box(m).vertices;
            let mut s = 0.0;
            for t in &m.triangles {
                for &i in t {
                    let p = v[i as usize];
                    s += p[0] + p[1] + p[2];
                }
            }
            s
        });
}

/// A resize to a target volume (33 L, length kept): the Illinois solve on
/// the mesh volume, at the default tolerance and at 0.002 mm.
#[divan::bench(args = [mesher::DEFAULT_TOLERANCE, 0.002], sample_count = 5, sample_size = 1)]
fn demo_resize_to_33_litres(tolerance: f64) -> f64 {
    use blanksmith::resize::scale::{self as resize, Keep, Request};
    let board = demo_board();
    let cert = certificate::certify(&board, mesher::DEFAULT_TOLERANCE).unwrap();
    let old = blanksmith::volume::report::Report::new(&board, &cert, None);
    let request = Request {
        length: None,
        width: None,
        thickness: None,
        volume: Some(33.0),
        keep: Keep {
            length: true,
            ..Keep::default()
        },
        water: None,
    };
    resize::resize(&board, &request, old.width_mm, old.thickness_mm, tolerance)
        .unwrap()
        .board
        .length
}
