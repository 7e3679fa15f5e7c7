//! Mesh inspection against standard geometry and an independent STL library.

mod common;

use blanksmith::inspect::check::{Inspection, inspect_soup};
use blanksmith::model::mesh::Mesh;
use blanksmith::stl;
use common::*;
use std::f64::consts::PI;

fn check(m: &Mesh) -> Inspection {
    let soup = stl::read(&stl_bytes(m)).unwrap();
    inspect_soup(&soup, None).1
}

#[test]
fn uv_sphere_converges_to_the_sphere() {
    // Standard geometry: V = 4/3·π·r³, A = 4·π·r². An inscribed polyhedron
    // falls short by O(1/n²); check the error shrinks and is small.
    let r: f64 = 100.0;
    let (v_exact, a_exact) = (4.0 / 3.0 * PI * r.powi(3), 4.0 * PI * r * r);
    let mut last = f64::INFINITY;
    for n in [16, 32, 64, 128] {
        let i = check(&uv_sphere(r, [0.0; 3], n, 2 * n));
        assert!(i.is_clean(), "{:?}", i.findings);
        assert_eq!((i.components, i.euler_characteristic), (1, 2));
        assert_eq!(i.component_list[0].genus, Some(0));
        let err = (v_exact - i.volume_litres.unwrap() * 1e6).abs() / v_exact;
        assert!(err < last, "n = {n}: {err}");
        last = err;
        if n == 128 {
            assert!(err < 1e-3, "{err}");
            assert!((a_exact - i.surface_area_m2 * 1e6).abs() / a_exact < 1e-3);
        }
    }
}

#[test]
fn torus_has_genus_one() {
    // Standard geometry: χ = 0, genus 1, V = 2·π²·R·r².
    let (big_r, r): (f64, f64) = (300.0, 80.0);
    let i = check(&torus(big_r, r, 256, 128));
    assert!(i.is_clean(), "{:?}", i.findings);
    assert_eq!(i.euler_characteristic, 0);
    assert_eq!(i.component_list[0].genus, Some(1));
    let want = 2.0 * PI * PI * big_r * r * r;
    assert!((i.volume_litres.unwrap() * 1e6 - want).abs() / want < 1e-3);
}

#[test]
fn a_cube_without_its_lid_has_one_hole_of_four_edges() {
    let i = check(&cube(10.0, true));
    assert!(!i.watertight);
    assert_eq!((i.open_edges, i.holes), (4, 1));
    assert!(i.volume_litres.is_none());
    let f = i.findings.iter().find(|f| f.kind == "open_edges").unwrap();
    assert_eq!(f.examples.len(), 4);
    // The examples are the midpoints of the top rim (z = 10).
    assert!(f.examples.iter().all(|p| p[2] == 10.0));
}

#[test]
fn one_flipped_triangle_is_found_and_all_flipped_is_inside_out() {
    let mut m = uv_sphere(50.0, [0.0; 3], 16, 32);
    m.triangles[40].swap(1, 2);
    let i = check(&m);
    assert_eq!(i.inconsistent_edges, 3);
    assert!(!i.watertight && !i.is_clean());
    let mut m = uv_sphere(50.0, [0.0; 3], 16, 32);
    for t in &mut m.triangles {
        t.swap(1, 2);
    }
    let i = check(&m);
    assert!(i.watertight && i.inside_out && !i.is_clean());
    assert!(i.signed_sum_litres < 0.0);
}

#[test]
fn separate_pieces_and_duplicates_are_reported() {
    let mut a = cube(10.0, false);
    let b = uv_sphere(5.0, [50.0, 0.0, 0.0], 8, 16);
    let off = a.vertices.len() as u32;
    a.vertices.extend(&b.vertices);
    a.triangles
        .extend(b.triangles.iter().map(|t| t.map(|v| v + off)));
    let i = check(&a);
    assert_eq!(i.components, 2);
    assert!(i.component_list.iter().all(|c| c.closed));
    let mut d = cube(10.0, false);
    d.triangles.push(d.triangles[0]);
    let i = check(&d);
    assert_eq!(i.duplicate_triangles, 1);
    assert_eq!(i.non_manifold_edges, 3);
}

#[test]
fn cracks_are_welded_by_tolerance() {
    // Shift one copy of a shared corner by 1e-4 mm: exact welding leaves a
    // crack (open edges), the tolerance closes it.
    let m = cube(10.0, false);
    let mut soup = stl::read(&stl_bytes(&m)).unwrap();
    for t in &mut soup.triangles[..2] {
        for p in t.iter_mut() {
            if *p == [10.0, 10.0, 0.0] {
                p[0] += 1e-4;
            }
        }
    }
    let exact = inspect_soup(&soup, Some(0.0)).1;
    assert!(exact.open_edges > 0);
    let welded = inspect_soup(&soup, Some(1e-3)).1;
    assert!(welded.is_clean(), "{:?}", welded.findings);
    assert_eq!(welded.welded_vertices, 1);
}

#[test]
fn ascii_and_binary_give_the_same_report() {
    let m = torus(100.0, 30.0, 48, 24);
    let mut ascii = vec![];
    stl::write_ascii(&mut ascii, &m, "torus").unwrap();
    let a = inspect_soup(&stl::read(&ascii).unwrap(), None).1;
    let b = inspect_soup(&stl::read(&stl_bytes(&m)).unwrap(), None).1;
    let strip = |i: &Inspection| {
        let mut v: serde_json::Value = serde_json::from_str(&i.to_json()).unwrap();
        v.as_object_mut().unwrap().remove("format");
        v
    };
    assert_eq!(strip(&a), strip(&b));
}

#[test]
fn a_file_written_by_stl_io_reads_back_byte_identical() {
    // stl_io (an independent STL library) writes a mesh; we read and weld it,
    // and stl_io writes our result again: the bytes must not change.
    let m = uv_sphere(40.0, [1.0, 2.0, 3.0], 12, 24);
    let tris: Vec<stl_io::Triangle> = m
        .triangles
        .iter()
        .map(|t| {
            let c = m.corners(t);
            let v = |p: [f64; 3]| stl_io::Vertex::new([p[0] as f32, p[1] as f32, p[2] as f32]);
            stl_io::Triangle {
                normal: stl_io::Normal::new([0.0, 0.0, 1.0]),
                vertices: [v(c[0]), v(c[1]), v(c[2])],
            }
        })
        .collect();
    let mut first = vec![];
    stl_io::write_stl(&mut first, tris.iter()).unwrap();
    let (welded, _) = inspect_soup(&stl::read(&first).unwrap(), None);
    let again: Vec<stl_io::Triangle> = welded
        .mesh
        .triangles
        .iter()
        .map(|t| {
            let c = welded.mesh.corners(t);
            let v = |p: [f64; 3]| stl_io::Vertex::new([p[0] as f32, p[1] as f32, p[2] as f32]);
            stl_io::Triangle {
                normal: stl_io::Normal::new([0.0, 0.0, 1.0]),
                vertices: [v(c[0]), v(c[1]), v(c[2])],
            }
        })
        .collect();
    let mut second = vec![];
    stl_io::write_stl(&mut second, again.iter()).unwrap();
    assert_eq!(first, second);
}
