//! Volume, area and centre of a closed mesh by the divergence theorem.
//!
//! For a closed, outward-oriented triangle mesh the enclosed volume is
//! V = (1/6) Σ v0 · (v1 × v2) (Gauss's divergence theorem applied to the
//! field F = r/3; e.g. Zhang and Chen, "Efficient feature extraction for 2D/3D
//! objects in mesh representation", ICIP 2001). Each term is the signed
//! volume of the tetrahedron from the origin to the triangle; the origin is
//! moved onto the mesh first so that a board far from the origin loses no
//! digits to cancellation.

use rayon::prelude::*;

use crate::model::mesh::{Mesh, cross, dot, norm, sub};

/// Mass properties of a closed mesh (unit density).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measures {
    /// Enclosed volume, mm³ (negative for an inside-out mesh).
    pub volume: f64,
    /// Surface area, mm².
    pub area: f64,
    /// Centre of volume, mm.
    pub centroid: [f64; 3],
}

/// Triangles summed per parallel chunk. Chunks are fixed and their sums
/// added in order, so the result does not depend on the number of threads.
const CHUNK: usize = 1 << 15;

/// A point of the mesh to measure about: any vertex is within the mesh's
/// size of every triangle, which keeps the terms small wherever the mesh sits.
fn local_origin(mesh: &Mesh) -> [f64; 3] {
    mesh.vertices.first().copied().unwrap_or([0.0; 3])
}

/// Volume alone, in mm³: the divergence sum about a local origin.
pub fn volume(mesh: &Mesh) -> f64 {
    let o = local_origin(mesh);
    let v = &mesh.vertices;
    let partial: Vec<f64> = mesh
        .triangles
        .par_chunks(CHUNK)
        .map(|chunk| {
            let mut six_v = 0.0;
            for t in chunk {
                let a = sub(v[t[0] as usize], o);
                let b = sub(v[t[1] as usize], o);
                let c = sub(v[t[2] as usize], o);
                six_v += dot(a, cross(b, c));
            }
            six_v
        })
        .collect();
    partial.iter().sum::<f64>() / 6.0
}

/// The divergence sum of each labelled piece (`labels[t]` < `pieces`), mm³.
pub fn volumes_by_label(mesh: &Mesh, labels: &[usize], pieces: usize) -> Vec<f64> {
    let o = local_origin(mesh);
    let v = &mesh.vertices;
    let mut six_v = vec![0.0; pieces];
    for (t, &c) in mesh.triangles.iter().zip(labels) {
        let a = sub(v[t[0] as usize], o);
        let b = sub(v[t[1] as usize], o);
        let d = sub(v[t[2] as usize], o);
        six_v[c] += dot(a, cross(b, d));
    }
    six_v.into_iter().map(|x| x / 6.0).collect()
}

/// Volume, surface area and centre of volume.
pub fn measure(mesh: &Mesh) -> Measures {
    let o = local_origin(mesh);
    let v = &mesh.vertices;
    let partial: Vec<[f64; 5]> = mesh
        .triangles
        .par_chunks(CHUNK)
        .map(|chunk| {
            // 6V, 2A, and the first moments (times 24).
            let mut acc = [0.0; 5];
            for t in chunk {
                let a = sub(v[t[0] as usize], o);
                let b = sub(v[t[1] as usize], o);
                let c = sub(v[t[2] as usize], o);
                let det = dot(a, cross(b, c));
                acc[0] += det;
                acc[1] += norm(cross(sub(b, a), sub(c, a)));
                // The tetrahedron (o, a, b, c) has its centroid at (a + b + c) / 4.
                for k in 0..3 {
                    acc[2 + k] += det * (a[k] + b[k] + c[k]);
                }
            }
            acc
        })
        .collect();
    let mut acc = [0.0; 5];
    for p in &partial {
        for k in 0..5 {
            acc[k] += p[k];
        }
    }
    let six_v = acc[0];
    let centroid = if six_v != 0.0 {
        [
            o[0] + acc[2] / (4.0 * six_v),
            o[1] + acc[3] / (4.0 * six_v),
            o[2] + acc[4] / (4.0 * six_v),
        ]
    } else {
        o
    };
    Measures {
        volume: six_v / 6.0,
        area: 0.5 * acc[1],
        centroid,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn unit_cube(offset: f64) -> Mesh {
        Mesh::cuboid([offset; 3], [1.0; 3])
    }

    #[test]
    fn unit_cube_far_away() {
        // A unit cube has volume 1, area 6, centre at its middle (elementary
        // geometry), wherever it sits.
        for offset in [0.0, 1e4, -3.3e6] {
            let m = measure(&unit_cube(offset));
            assert!((m.volume - 1.0).abs() < 1e-9, "{offset}: {}", m.volume);
            assert!((m.area - 6.0).abs() < 1e-9);
            assert!((m.centroid[0] - (offset + 0.5)).abs() < 1e-9);
            assert_eq!(volume(&unit_cube(offset)), m.volume);
        }
    }
}
