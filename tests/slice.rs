//! Slices against standard geometry and against the mesh's own volume.

mod common;

use blanksmith::slice::plane::{Axis, slice, slice_many};
use blanksmith::{description, meshing::mesher, volume::measure as volume};
use common::*;
use std::f64::consts::PI;

#[test]
fn a_sphere_cut_at_height_z_is_a_circle_of_radius_sqrt_r2_minus_z2() {
    // Standard geometry: the circle has radius ρ = √(r² − z²), area πρ²,
    // perimeter 2πρ. The UV sphere is inscribed, so the slice is a polygon
    // inside the circle: compare to the tessellation's relative tolerance.
    let r = 100.0f64;
    let m = uv_sphere(r, [0.0; 3], 200, 400);
    for z in [-60.0f64, 0.0, 25.0, 80.0] {
        let s = slice(&m, Axis::Z, z);
        assert_eq!(s.loops.len(), 1);
        let rho = (r * r - z * z).sqrt();
        assert!(
            (s.area() / (PI * rho * rho) - 1.0).abs() < 1e-3,
            "z {z}: {}",
            s.area()
        );
        assert!(
            (s.perimeter() / (2.0 * PI * rho) - 1.0).abs() < 1e-3,
            "z {z}: {}",
            s.perimeter()
        );
    }
}

#[test]
fn a_torus_cut_through_its_middle_is_an_annulus() {
    // Standard geometry: the plane z = 0 cuts a torus (R, r) in the annulus
    // between radii R − r and R + r: area π((R+r)² − (R−r)²) = 4πRr, one hole.
    let (big_r, r) = (300.0f64, 80.0f64);
    let s = slice(&torus(big_r, r, 720, 90), Axis::Z, 0.0);
    assert_eq!(s.loops.len(), 2);
    assert_eq!(s.polygons.0.len(), 1);
    assert_eq!(s.polygons.0[0].interiors().len(), 1);
    let want = 4.0 * PI * big_r * r;
    assert!((s.area() / want - 1.0).abs() < 1e-3, "{}", s.area());
}

#[test]
fn section_areas_integrate_to_the_mesh_volume() {
    // Between two stations every mesh triangle spans the gap, so a section's
    // area is a quadratic in x there, and Simpson's rule on the stations and
    // their midpoints is exact (Simpson's rule integrates cubics exactly):
    // the slices must give back the divergence-theorem volume.
    for name in ["shortboard.yaml", "fish.yaml"] {
        let path = format!("{}/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
        let board = description::load(std::path::Path::new(&path)).unwrap();
        let plan = mesher::sample(&board, 0.05).unwrap();
        let mesh = mesher::build(&board, &plan);
        let xs = plan.stations();
        let mut at = vec![];
        for w in xs.windows(2) {
            at.extend([w[0], 0.5 * (w[0] + w[1]), w[1]]);
        }
        let areas: Vec<f64> = slice_many(&mesh, Axis::X, &at)
            .iter()
            .map(|s| s.area())
            .collect();
        let simpson: f64 = xs
            .windows(2)
            .enumerate()
            .map(|(i, w)| {
                (w[1] - w[0]) / 6.0 * (areas[3 * i] + 4.0 * areas[3 * i + 1] + areas[3 * i + 2])
            })
            .sum();
        let v = volume::volume(&mesh);
        assert!((simpson / v - 1.0).abs() < 1e-9, "{name}: {simpson} vs {v}");
    }
}

#[test]
fn slicing_many_planes_matches_slicing_one_at_a_time() {
    let m = torus(200.0, 50.0, 96, 48);
    let zs = [-49.0, -20.0, 0.0, 10.0, 49.9];
    let many = slice_many(&m, Axis::Z, &zs);
    for (s, &z) in many.iter().zip(&zs) {
        assert_eq!(s.area(), slice(&m, Axis::Z, z).area());
    }
}
