//! Rails and sections as a shaper measures them, taken on the mesh as
//! written to STL and read back with an independent reader (stl_io), cut
//! with a plane: the rail's thickness 1 in from the edge, the height of its
//! outermost point above the bottom edge, the section's area against the
//! shape's own integral, and the fullness of whole boards.
//!
//! The aim points are the trade's, from memory (common practice, no
//! published source): at the wide point of a performance shortboard the rail
//! 1 in from the edge is 50–60 % of the stringer thickness and its apex sits
//! 1/4–3/8 in above the bottom edge; through the last foot the edge is at
//! the bottom (hard) and the rail 3/4–1 in thick; volume ÷ (length × width ×
//! thickness) is about 0.52–0.58 for performance shortboards and about
//! 0.58–0.65 for fish, mid-lengths and longboards.

use blanksmith::description;
use blanksmith::meshing::mesher::{DEFAULT_TOLERANCE, mesh_board};
use blanksmith::model::board::Board;
use blanksmith::model::mesh::Mesh;
use blanksmith::slice::plane::{Axis, Slice, slice};
use blanksmith::volume::certificate::certify;

const INCH: f64 = 25.4;

fn fixture(name: &str) -> Board {
    let path = format!("{}/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    description::load(std::path::Path::new(&path)).unwrap()
}

/// The board meshed, written as binary STL and read back by stl_io.
fn stl_mesh(board: &Board) -> Mesh {
    let mesh = mesh_board(board, DEFAULT_TOLERANCE).unwrap();
    let triangles: Vec<stl_io::Triangle> = mesh
        .triangles
        .iter()
        .map(|t| {
            let v = t.map(|i| {
                let p = mesh.vertices[i as usize];
                stl_io::Vertex::new([p[0] as f32, p[1] as f32, p[2] as f32])
            });
            stl_io::Triangle {
                normal: stl_io::Normal::new([0.0, 0.0, 0.0]),
                vertices: v,
            }
        })
        .collect();
    let mut bytes = Vec::new();
    stl_io::write_stl(&mut bytes, triangles.iter()).unwrap();
    let read = stl_io::read_stl(&mut std::io::Cursor::new(bytes)).unwrap();
    Mesh {
        vertices: read
            .vertices
            .iter()
            .map(|v| [v[0] as f64, v[1] as f64, v[2] as f64])
            .collect(),
        triangles: read
            .faces
            .iter()
            .map(|f| f.vertices.map(|i| i as u32))
            .collect(),
    }
}

/// A rail as measured on one side of a section (the + side), the bottom
/// edge taken `tuck` in from the apex, where the description puts it.
#[derive(Debug)]
struct Measured {
    half_width: f64,
    stringer: f64,
    rail: f64,
    apex_above_edge: f64,
}

/// Heights where the section's outline crosses the vertical line at `y`.
fn crossings(s: &Slice, y: f64) -> Vec<f64> {
    let mut zs = vec![];
    for l in &s.loops {
        for k in 0..l.len() {
            let (a, b) = (l[k], l[(k + 1) % l.len()]);
            if (a[0] - y) * (b[0] - y) <= 0.0 && a[0] != b[0] {
                let t = (y - a[0]) / (b[0] - a[0]);
                zs.push(a[1] + t * (b[1] - a[1]));
            }
        }
    }
    zs
}

fn span(zs: &[f64]) -> f64 {
    let lo = zs.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = zs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    hi - lo
}

fn measure(mesh: &Mesh, x: f64, tuck: f64) -> Measured {
    let s = slice(mesh, Axis::X, x);
    let pts: Vec<[f64; 2]> = s.loops.iter().flatten().copied().collect();
    let w = pts.iter().map(|p| p[0]).fold(f64::NEG_INFINITY, f64::max);
    // The apex: the middle of the points within 0.05 mm of the widest.
    let near: Vec<f64> = pts
        .iter()
        .filter(|p| p[0] >= w - 0.05)
        .map(|p| p[1])
        .collect();
    let apex = 0.5
        * (near.iter().copied().fold(f64::INFINITY, f64::min)
            + near.iter().copied().fold(f64::NEG_INFINITY, f64::max));
    // The bottom edge: the bottom's height where the description puts the
    // edge, `tuck` in from the apex.
    let edge = crossings(&s, w - tuck.max(0.01))
        .into_iter()
        .fold(f64::INFINITY, f64::min);
    Measured {
        half_width: w,
        stringer: span(&crossings(&s, 0.0)),
        rail: span(&crossings(&s, w - INCH)),
        apex_above_edge: apex - edge,
    }
}

#[test]
fn the_demo_rails_measure_as_the_trade_expects() {
    let board = fixture("shortboard.yaml");
    let mesh = stl_mesh(&board);
    let l = board.length;
    let d = board.tip_station;
    // Nose-width station: the description's own 60 % rail, 3/8 in apex.
    let n = measure(&mesh, d, 0.625 * INCH);
    let share = n.rail / n.stringer;
    assert!((share - 0.60).abs() < 0.01, "N12 {n:?}: {share}");
    assert!((n.apex_above_edge - 0.375 * INCH).abs() < 0.5, "N12 {n:?}");
    // Wide point: 50–60 % and 1/4–3/8 in (aim points above).
    let m = measure(&mesh, board.outline.wide_point, 0.5 * INCH);
    let share = m.rail / m.stringer;
    assert!((0.50..=0.60).contains(&share), "wide point {m:?}: {share}");
    assert!(
        (0.25 * INCH..=0.375 * INCH).contains(&m.apex_above_edge),
        "wide point {m:?}"
    );
    assert!((2.0 * m.half_width - 19.5 * INCH).abs() < 0.5, "{m:?}");
    // 12 in from the tail: a hard edge at the bottom, a 3/4–1 in rail.
    let t = measure(&mesh, l - d, 0.0);
    assert!(t.apex_above_edge < 0.5, "T12 {t:?}");
    assert!((0.75 * INCH..=INCH).contains(&t.rail), "T12 {t:?}");
}

#[test]
fn the_longboard_rails_are_soft_and_full_as_written() {
    // Its description asks for rails 65 / 62 / 60 % of the stringer
    // thickness 1 in from the edge, the apex 3/4 in above a soft edge: a
    // 50/50 rail, whose apex sits near the middle of the rail's height
    // (common practice, no source).
    let board = fixture("longboard.yaml");
    let mesh = stl_mesh(&board);
    let l = board.length;
    let d = board.tip_station;
    for (x, want, apex, tuck) in [
        (d, 0.65, 0.75, 1.0),
        (board.outline.wide_point, 0.62, 0.75, 1.0),
        (l - d, 0.60, 0.25, 0.5),
    ] {
        let m = measure(&mesh, x, tuck * INCH);
        let share = m.rail / m.stringer;
        assert!((share - want).abs() < 0.01, "{x}: {m:?} {share}");
        assert!((m.apex_above_edge - apex * INCH).abs() < 0.5, "{x}: {m:?}");
        if apex > 0.5 {
            let middle = m.apex_above_edge / m.rail;
            assert!((0.3..=0.6).contains(&middle), "{x}: {m:?} {middle}");
        }
    }
}

#[test]
fn section_areas_on_the_mesh_match_the_shape() {
    // The mesh's section (a geo polygon of the STL cut by a plane) against
    // the section's own integral: the chord tolerance bounds the difference
    // by about the perimeter times twice the tolerance (stations and ring
    // points each within it).
    for name in ["shortboard.yaml", "fish.yaml", "longboard.yaml"] {
        let board = fixture(name);
        let mesh = stl_mesh(&board);
        let l = board.length;
        for k in 1..10 {
            let x = l * k as f64 / 10.0;
            let s = slice(&mesh, Axis::X, x);
            let exact = board.station(x).area();
            let bound = s.perimeter() * 2.0 * DEFAULT_TOLERANCE + 0.5;
            assert!(
                (s.area() - exact).abs() <= bound,
                "{name} at {x}: mesh {} mm² vs shape {exact} mm² (bound {bound})",
                s.area()
            );
        }
    }
}

#[test]
fn boards_are_as_full_as_the_trade_makes_them() {
    for (name, lo, hi) in [
        ("shortboard.yaml", 0.52, 0.58),
        ("fish.yaml", 0.58, 0.65),
        ("longboard.yaml", 0.58, 0.65),
    ] {
        let board = fixture(name);
        let c = certify(&board, DEFAULT_TOLERANCE).unwrap();
        let wide = 2.0 * board.half_width(board.outline.wide_point);
        let thick = board.foil.max_station().1;
        let ratio = c.measures.volume / (board.length * wide * thick);
        assert!((lo..=hi).contains(&ratio), "{name}: {ratio}");
    }
}

#[test]
fn the_default_tail_rocker_leaves_at_about_ten_degrees() {
    // Practitioners eyeball a shortboard's tail exit angle at about 10°
    // (common practice, no source): the demo gives only the tail's rocker
    // (2 in) and its low point, so its tail curve is the default one.
    let board = fixture("shortboard.yaml");
    let l = board.length;
    let tangent = board.rocker.slope(l).atan().to_degrees();
    assert!((8.0..=12.0).contains(&tangent), "{tangent}");
}
