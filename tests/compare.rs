//! Design-against-cut comparison against geometry with known answers.

mod common;

use blanksmith::inspect::compare::compare;
use blanksmith::model::mesh::Mesh;
use common::*;

#[test]
fn a_sphere_against_itself_scaled_is_epsilon_r_away() {
    // A sphere of radius r and the same sphere scaled by 1 + ε about its
    // centre: every point moves ε·r outward, so the Hausdorff distance is
    // ε·r (standard geometry); the scaled mesh's vertices lie exactly that
    // far from the original's vertices, which are the nearest points.
    let (r, eps) = (100.0, 0.01);
    let a = uv_sphere(r, [0.0; 3], 32, 64);
    let b = Mesh {
        vertices: a
            .vertices
            .iter()
            .map(|v| v.map(|c| c * (1.0 + eps)))
            .collect(),
        triangles: a.triangles.clone(),
    };
    let (c, dev) = compare(&a, &b, false);
    assert!(
        (c.hausdorff_mm - eps * r).abs() < 1e-9 * r,
        "{}",
        c.hausdorff_mm
    );
    // The bigger cut stands proud of the design everywhere: positive deviation.
    assert!(dev.iter().all(|&d| d > 0.0));
    // Volume difference: ((1 + ε)³ − 1)·V of the mesh (scaling law).
    let v = c.design_volume_litres;
    assert!((c.volume_difference_litres - ((1.0 + eps).powi(3) - 1.0) * v).abs() < 1e-9);
}

#[test]
fn align_finds_a_board_moved_off_its_origin() {
    let path = format!("{}/fixtures/fish.yaml", env!("CARGO_MANIFEST_DIR"));
    let board = blanksmith::description::load(std::path::Path::new(&path)).unwrap();
    let design = blanksmith::meshing::mesher::mesh_board(&board, 0.2).unwrap();
    // Turn 2° about z and 1° about x, then shift: a cut clamped off square.
    let (a, b) = (2f64.to_radians(), 1f64.to_radians());
    let moved = Mesh {
        vertices: design
            .vertices
            .iter()
            .map(|p| {
                let (y1, z1) = (
                    p[1] * b.cos() - p[2] * b.sin(),
                    p[1] * b.sin() + p[2] * b.cos(),
                );
                [
                    p[0] * a.cos() - y1 * a.sin() + 30.0,
                    p[0] * a.sin() + y1 * a.cos() - 20.0,
                    z1 + 5.0,
                ]
            })
            .collect(),
        triangles: design.triangles.clone(),
    };
    let (plain, _) = compare(&design, &moved, false);
    assert!(plain.hausdorff_mm > 20.0);
    let (fitted, _) = compare(&design, &moved, true);
    let al = fitted.alignment.unwrap();
    assert!(
        fitted.hausdorff_mm < 0.05,
        "after alignment {} mm",
        fitted.hausdorff_mm
    );
    assert!(al.rms_after_mm < 0.01);
    assert!(
        (al.rotation_xyz_deg[2] + 2.0).abs() < 0.01,
        "{:?}",
        al.rotation_xyz_deg
    );
}
