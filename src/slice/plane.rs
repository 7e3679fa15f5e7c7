//! Planar slices of a mesh: cross-sections at stations along the length and
//! Z-level contours (waterlines), as closed contours and `geo` polygons with
//! holes. Templates and toolpaths both start here.
//!
//! Each vertex is classed above the plane (signed distance ≥ 0) or below,
//! as if the plane were a hair below any point on it, so a vertex exactly on
//! the plane, an edge in the plane or a coplanar triangle never yields a
//! doubled or missing segment (simulation of
//! simplicity in its simplest form: Edelsbrunner and Mücke, ACM Trans.
//! Graphics 9(1), 1990). Every crossing is computed from its edge's lower
//! vertex, so the two triangles on an edge produce the same point bit for
//! bit, and segments are chained by edge, not by distance.

use geo::{Area, Contains, Coord, LineString, MultiPolygon, Polygon};
use rayon::prelude::*;
use rustc_hash::FxHashMap;

use crate::geom::field::signed_area;
use crate::model::mesh::Mesh;

/// The axis a family of planes is perpendicular to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Axis {
    /// Planes x = c: cross-sections; contours in (y, z).
    X,
    /// Planes y = c: profiles; contours in (x, z).
    Y,
    /// Planes z = c: waterlines; contours in (x, y).
    Z,
}

impl Axis {
    fn index(self) -> usize {
        match self {
            Axis::X => 0,
            Axis::Y => 1,
            Axis::Z => 2,
        }
    }

    /// The two coordinates kept in the plane, in order.
    fn plane(self) -> (usize, usize) {
        match self {
            Axis::X => (1, 2),
            Axis::Y => (0, 2),
            Axis::Z => (0, 1),
        }
    }
}

/// One planar slice.
#[derive(Debug, Clone)]
pub struct Slice {
    /// The plane's axis.
    pub axis: Axis,
    /// The plane's position on that axis, mm.
    pub at: f64,
    /// Closed contours in the plane's coordinates, mm.
    pub loops: Vec<Vec<[f64; 2]>>,
    /// Chains that did not close (only from meshes with holes).
    pub open: Vec<Vec<[f64; 2]>>,
    /// The closed contours as polygons with holes.
    pub polygons: MultiPolygon<f64>,
}

impl Slice {
    /// Enclosed area, mm².
    pub fn area(&self) -> f64 {
        self.polygons.unsigned_area()
    }

    /// Length of every closed contour, holes included, mm.
    pub fn perimeter(&self) -> f64 {
        self.loops
            .iter()
            .map(|l| {
                (0..l.len())
                    .map(|i| {
                        let (p, q) = (l[i], l[(i + 1) % l.len()]);
                        ((q[0] - p[0]).powi(2) + (q[1] - p[1]).powi(2)).sqrt()
                    })
                    .sum::<f64>()
            })
            .sum()
    }
}

/// Slices `mesh` by planes perpendicular to `axis` at `positions`, in parallel.
pub fn slice_many(mesh: &Mesh, axis: Axis, positions: &[f64]) -> Vec<Slice> {
    let k = axis.index();
    // Planes in order, so each triangle finds the planes it crosses by search.
    let mut order: Vec<usize> = (0..positions.len()).collect();
    order.sort_by(|&a, &b| positions[a].total_cmp(&positions[b]));
    let sorted: Vec<f64> = order.iter().map(|&i| positions[i]).collect();
    let mut crossing: Vec<Vec<u32>> = vec![vec![]; positions.len()];
    for (t, tri) in mesh.triangles.iter().enumerate() {
        let c = tri.map(|v| mesh.vertices[v as usize][k]);
        let (lo, hi) = (c[0].min(c[1]).min(c[2]), c[0].max(c[1]).max(c[2]));
        // A triangle crosses plane p when some vertex is below (< p) and some above (≥ p).
        let first = sorted.partition_point(|&p| p <= lo);
        let last = sorted.partition_point(|&p| p <= hi);
        for s in &mut crossing[first..last] {
            s.push(t as u32);
        }
    }
    let mut out: Vec<Option<Slice>> = vec![None; positions.len()];
    let done: Vec<(usize, Slice)> = crossing
        .into_par_iter()
        .enumerate()
        .map(|(s, tris)| (order[s], slice_one(mesh, axis, sorted[s], &tris)))
        .collect();
    for (i, slice) in done {
        out[i] = Some(slice);
    }
    out.into_iter()
        .map(|s| s.expect("every plane sliced"))
        .collect()
}

/// Slices `mesh` by one plane.
pub fn slice(mesh: &Mesh, axis: Axis, at: f64) -> Slice {
    slice_many(mesh, axis, &[at]).pop().expect("one plane")
}

fn edge_key(a: u32, b: u32) -> u64 {
    ((a.min(b) as u64) << 32) | a.max(b) as u64
}

fn slice_one(mesh: &Mesh, axis: Axis, at: f64, tris: &[u32]) -> Slice {
    let k = axis.index();
    let (u, v) = axis.plane();
    let above = |i: u32| mesh.vertices[i as usize][k] >= at;
    let cross = |a: u32, b: u32| -> [f64; 2] {
        let (lo, hi) = (a.min(b), a.max(b));
        let (p, q) = (mesh.vertices[lo as usize], mesh.vertices[hi as usize]);
        let t = (p[k] - at) / (p[k] - q[k]);
        [p[u] + t * (q[u] - p[u]), p[v] + t * (q[v] - p[v])]
    };
    // Each crossed triangle gives one segment, from the edge it runs up
    // through to the edge it runs down through, so segments chain head to tail.
    let mut next: FxHashMap<u64, (u64, [f64; 2], [f64; 2])> = FxHashMap::default();
    let mut heads: Vec<u64> = Vec::with_capacity(tris.len());
    for &t in tris {
        let tri = mesh.triangles[t as usize];
        let (mut up, mut down) = (None, None);
        for i in 0..3 {
            let (a, b) = (tri[i], tri[(i + 1) % 3]);
            match (above(a), above(b)) {
                (false, true) => up = Some((a, b)),
                (true, false) => down = Some((a, b)),
                _ => {}
            }
        }
        if let (Some((a, b)), Some((c, d))) = (up, down) {
            let from = edge_key(a, b);
            next.insert(from, (edge_key(c, d), cross(a, b), cross(c, d)));
            heads.push(from);
        }
    }
    let ends: rustc_hash::FxHashSet<u64> = next.values().map(|n| n.0).collect();
    let mut visited: rustc_hash::FxHashSet<u64> = Default::default();
    let (mut loops, mut open) = (vec![], vec![]);
    // Chains that start where no segment ends come first (only a mesh with
    // holes has them); every other segment lies on a closed loop.
    let starts = heads
        .iter()
        .filter(|h| !ends.contains(h))
        .chain(heads.iter());
    for &start in starts {
        if visited.contains(&start) {
            continue;
        }
        let mut pts: Vec<[f64; 2]> = vec![];
        let mut key = start;
        let closed = loop {
            visited.insert(key);
            let (to, from_point, to_point) = next[&key];
            if pts.last() != Some(&from_point) {
                pts.push(from_point);
            }
            if to == start {
                break true;
            }
            if !next.contains_key(&to) || visited.contains(&to) {
                pts.push(to_point);
                break false;
            }
            key = to;
        };
        if closed {
            if pts.len() > 1 && pts.first() == pts.last() {
                pts.pop();
            }
            if pts.len() >= 3 {
                loops.push(pts);
            }
        } else if pts.len() >= 2 {
            open.push(pts);
        }
    }
    let polygons = polygons(&loops);
    Slice {
        axis,
        at,
        loops,
        open,
        polygons,
    }
}

/// Nests loops into polygons: a loop inside an even number of others is an
/// outer boundary, inside an odd number a hole of the smallest that holds it.
fn polygons(loops: &[Vec<[f64; 2]>]) -> MultiPolygon<f64> {
    let ring = |l: &[[f64; 2]], ccw: bool| -> LineString<f64> {
        let mut pts: Vec<Coord<f64>> = l.iter().map(|p| Coord { x: p[0], y: p[1] }).collect();
        if (signed_area(l) > 0.0) != ccw {
            pts.reverse();
        }
        LineString::new(pts)
    };
    let plain: Vec<Polygon<f64>> = loops
        .iter()
        .map(|l| Polygon::new(ring(l, true), vec![]))
        .collect();
    let areas: Vec<f64> = loops.iter().map(|l| signed_area(l).abs()).collect();
    let inside = |i: usize, j: usize| {
        // Loop i inside loop j: a point of i strictly inside j (contours do not cross).
        areas[i] < areas[j] && plain[j].contains(&geo::Point::new(loops[i][0][0], loops[i][0][1]))
    };
    let depth: Vec<usize> = (0..loops.len())
        .map(|i| (0..loops.len()).filter(|&j| j != i && inside(i, j)).count())
        .collect();
    let mut outers: Vec<(usize, Vec<LineString<f64>>)> = (0..loops.len())
        .filter(|&i| depth[i].is_multiple_of(2))
        .map(|i| (i, vec![]))
        .collect();
    for h in (0..loops.len()).filter(|&i| !depth[i].is_multiple_of(2)) {
        let parent = outers
            .iter_mut()
            .filter(|(o, _)| depth[*o] + 1 == depth[h] && inside(h, *o))
            .min_by(|a, b| areas[a.0].total_cmp(&areas[b.0]));
        if let Some((_, holes)) = parent {
            holes.push(ring(&loops[h], false));
        }
    }
    MultiPolygon::new(
        outers
            .into_iter()
            .map(|(o, holes)| Polygon::new(ring(&loops[o], true), holes))
            .collect(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cube() -> Mesh {
        Mesh::cuboid([0.0; 3], [1.0; 3])
    }

    #[test]
    fn unit_cube_slices_are_unit_squares() {
        // Any plane through a unit cube parallel to a face cuts a unit square
        // (elementary geometry), including a plane holding a face: the plane
        // is taken just below points that lie on it, so at the top face
        // (1.0) it cuts the square and at the bottom face (0.0) nothing.
        for axis in [Axis::X, Axis::Y, Axis::Z] {
            for at in [0.001, 0.25, 0.5, 1.0] {
                let s = slice(&cube(), axis, at);
                assert_eq!(s.loops.len(), 1, "{axis:?} {at}");
                assert!(
                    (s.area() - 1.0).abs() < 1e-12,
                    "{axis:?} {at}: {}",
                    s.area()
                );
                assert!((s.perimeter() - 4.0).abs() < 1e-12);
                assert!(s.open.is_empty());
            }
            assert!(slice(&cube(), axis, 0.0).loops.is_empty());
        }
    }
}
