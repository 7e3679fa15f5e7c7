//! Test shapes of standard geometry, as indexed meshes.
#![allow(dead_code)]

use blanksmith::model::mesh::Mesh;
use std::f64::consts::PI;

/// A UV sphere of radius `r` centred at `c`: `lat` bands, `lon` segments,
/// outward. Its volume tends to 4/3·π·r³ and its area to 4·π·r².
pub fn uv_sphere(r: f64, c: [f64; 3], lat: usize, lon: usize) -> Mesh {
    let mut vertices = vec![[c[0], c[1], c[2] + r]];
    for i in 1..lat {
        let th = PI * i as f64 / lat as f64;
        for j in 0..lon {
            let ph = 2.0 * PI * j as f64 / lon as f64;
            vertices.push([
                c[0] + r * th.sin() * ph.cos(),
                c[1] + r * th.sin() * ph.sin(),
                c[2] + r * th.cos(),
            ]);
        }
    }
    vertices.push([c[0], c[1], c[2] - r]);
    let south = (vertices.len() - 1) as u32;
    let ring = |i: usize, j: usize| (1 + (i - 1) * lon + j % lon) as u32;
    let mut triangles = vec![];
    for j in 0..lon {
        triangles.push([0, ring(1, j), ring(1, j + 1)]);
        triangles.push([south, ring(lat - 1, j + 1), ring(lat - 1, j)]);
    }
    for i in 1..lat - 1 {
        for j in 0..lon {
            let (a, b, c2, d) = (
                ring(i, j),
                ring(i, j + 1),
                ring(i + 1, j),
                ring(i + 1, j + 1),
            );
            triangles.push([a, c2, d]);
            triangles.push([a, d, b]);
        }
    }
    Mesh {
        vertices,
        triangles,
    }
}

/// A torus about the z axis: tube radius `r` at distance `big_r`, outward.
/// Euler characteristic 0, genus 1, volume 2·π²·R·r² (standard geometry).
pub fn torus(big_r: f64, r: f64, n: usize, m: usize) -> Mesh {
    let mut vertices = vec![];
    for i in 0..n {
        let u = 2.0 * PI * i as f64 / n as f64;
        for j in 0..m {
            let v = 2.0 * PI * j as f64 / m as f64;
            let w = big_r + r * v.cos();
            vertices.push([w * u.cos(), w * u.sin(), r * v.sin()]);
        }
    }
    let id = |i: usize, j: usize| ((i % n) * m + j % m) as u32;
    let mut triangles = vec![];
    for i in 0..n {
        for j in 0..m {
            triangles.push([id(i, j), id(i + 1, j), id(i + 1, j + 1)]);
            triangles.push([id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
        }
    }
    Mesh {
        vertices,
        triangles,
    }
}

/// A cube of side `size`, outward; without its top face (z = size) when `open`.
pub fn cube(size: f64, open: bool) -> Mesh {
    let mut m = Mesh::cuboid([0.0; 3], [size; 3]);
    if open {
        // The top face is the second quad: its two triangles.
        m.triangles.drain(2..4);
    }
    m
}

/// Binary STL bytes of a mesh (through the project's writer).
pub fn stl_bytes(m: &Mesh) -> Vec<u8> {
    let mut b = vec![];
    blanksmith::stl::write_binary(&mut b, m, "test").unwrap();
    b
}
