//! Speed of mesh inspection and slicing on the demo meshed to about two
//! million triangles, held in memory as binary STL: read, weld, topology
//! and volume (`check`); and 200 cross-sections.
//!
//! Run with `cargo bench --bench check`; `benches/side_by_side.sh` runs the
//! same work through trimesh for the ratio.

use std::sync::LazyLock;

use blanksmith::model::mesh::Mesh;
use blanksmith::slice::plane::{Axis, slice_many};
use blanksmith::{description, description::demo, inspect::check as inspect, meshing::mesher, stl};
use divan::{Bencher, black_box};

fn main() {
    divan::main();
}

static FINE: LazyLock<(Vec<u8>, Mesh)> = LazyLock::new(|| {
    let board = description::board_from_str(demo::DEMO, demo::DEMO_NAME).unwrap();
    let mesh = mesher::mesh_board(&board, 0.0011).unwrap();
    let mut bytes = vec![];
    stl::write_binary(&mut bytes, &mesh, "bench").unwrap();
    eprintln!("{} triangles, {} bytes", mesh.triangles.len(), bytes.len());
    (bytes, mesh)
});

#[divan::bench(sample_count = 10, sample_size = 1)]
fn check_two_million_from_memory(b: Bencher) {
    let bytes = &FINE.0;
    b.bench(|| {
        let soup = stl::read(black_box(bytes)).unwrap();
        let (_, i) = inspect::inspect_soup(&soup, None);
        assert!(i.is_clean());
        i.volume_litres
    });
}

#[divan::bench(sample_count = 10, sample_size = 1)]
fn two_hundred_sections_of_two_million(b: Bencher) {
    let mesh = &FINE.1;
    let (lo, hi) = mesh.bounding_box().unwrap();
    let xs: Vec<f64> = (1..=200)
        .map(|i| lo[0] + (hi[0] - lo[0]) * i as f64 / 201.0)
        .collect();
    b.bench(|| slice_many(black_box(mesh), Axis::X, &xs).len());
}
