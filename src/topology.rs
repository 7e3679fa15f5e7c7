//! Edge topology of a triangle mesh: is it a closed, consistently oriented
//! surface without degenerate or repeated triangles?

use rayon::prelude::*;

use crate::mesh::{Mesh, cross, dot, norm, sub};

/// What the edge structure of a mesh says about it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
pub struct Topology {
    /// Vertices used by at least one triangle.
    pub vertices: usize,
    /// Distinct undirected edges.
    pub edges: usize,
    /// Triangles.
    pub triangles: usize,
    /// Edges used by one triangle only (the rims of holes).
    pub open_edges: usize,
    /// Edges used by more than two triangles.
    pub non_manifold_edges: usize,
    /// Edges whose two triangles run the same way along them (one is flipped).
    pub inconsistent_edges: usize,
    /// Triangles with a repeated vertex or no area.
    pub degenerate_triangles: usize,
    /// Triangles that repeat another's three vertices.
    pub duplicate_triangles: usize,
    /// V − E + F over the used vertices.
    pub euler_characteristic: i64,
}

impl Topology {
    /// Closed, two triangles on every edge running opposite ways, nothing
    /// degenerate or repeated.
    pub fn is_watertight(&self) -> bool {
        self.triangles > 0
            && self.open_edges == 0
            && self.non_manifold_edges == 0
            && self.inconsistent_edges == 0
            && self.degenerate_triangles == 0
            && self.duplicate_triangles == 0
    }
}

/// Whether triangle `t` has a repeated vertex or (to rounding) no area.
pub fn is_degenerate(mesh: &Mesh, t: &[u32; 3]) -> bool {
    if t[0] == t[1] || t[1] == t[2] || t[0] == t[2] {
        return true;
    }
    let [a, b, c] = mesh.corners(t);
    let (e1, e2) = (sub(b, a), sub(c, a));
    let n = norm(cross(e1, e2));
    // sin of the corner angle below 1e-12: collinear to double rounding.
    n <= 1e-12 * norm(e1) * norm(e2) || !n.is_finite() || dot(e1, e1) == 0.0
}

/// Groups `items` by `key` (a vertex id below `buckets`) with a counting
/// sort: returns the bucket offsets and the items in bucket order.
fn bucket<T: Copy + Default>(
    buckets: usize,
    items: impl Iterator<Item = (u32, T)> + Clone,
) -> (Vec<usize>, Vec<T>) {
    let mut start = vec![0usize; buckets + 1];
    for (k, _) in items.clone() {
        start[k as usize + 1] += 1;
    }
    for i in 0..buckets {
        start[i + 1] += start[i];
    }
    let mut fill = start.clone();
    let mut out = vec![T::default(); start[buckets]];
    for (k, v) in items {
        out[fill[k as usize]] = v;
        fill[k as usize] += 1;
    }
    (start, out)
}

/// Counts edges, open and non-manifold edges, orientation conflicts,
/// degenerate and duplicate triangles, and the Euler characteristic.
///
/// Edges are grouped by their lower vertex (a counting sort, linear time),
/// then matched within each small group.
pub fn analyse(mesh: &Mesh) -> Topology {
    let nv = mesh.vertices.len();
    let tris = &mesh.triangles;
    let degenerate = tris.par_iter().filter(|t| is_degenerate(mesh, t)).count();
    let edge_items = tris.iter().flat_map(|t| {
        (0..3).map(move |k| {
            let (a, b) = (t[k], t[(k + 1) % 3]);
            // The higher vertex and the direction (bit 0: runs high to low).
            if a < b {
                (a, (b as u64) << 1)
            } else {
                (b, ((a as u64) << 1) | 1)
            }
        })
    });
    let (start, mut ends) = bucket(nv, edge_items);
    let (mut edges, mut open, mut non_manifold, mut inconsistent) = (0, 0, 0, 0);
    let mut used = vec![false; nv];
    for lo in 0..nv {
        let group = &mut ends[start[lo]..start[lo + 1]];
        if group.is_empty() {
            continue;
        }
        used[lo] = true;
        group.sort_unstable();
        let mut i = 0;
        while i < group.len() {
            let hi = group[i] >> 1;
            used[hi as usize] = true;
            let mut j = i;
            let mut backward = 0;
            while j < group.len() && group[j] >> 1 == hi {
                backward += (group[j] & 1) as usize;
                j += 1;
            }
            edges += 1;
            match j - i {
                1 => open += 1,
                2 if backward != 1 => inconsistent += 1,
                2 => {}
                _ => non_manifold += 1,
            }
            i = j;
        }
    }
    let tri_items = tris.iter().map(|t| {
        let mut s = *t;
        s.sort_unstable();
        (s[0], ((s[1] as u64) << 32) | s[2] as u64)
    });
    let (tstart, mut rest) = bucket(nv, tri_items);
    let mut duplicates = 0;
    for lo in 0..nv {
        let group = &mut rest[tstart[lo]..tstart[lo + 1]];
        group.sort_unstable();
        duplicates += group.windows(2).filter(|w| w[0] == w[1]).count();
    }
    let vertices = used.iter().filter(|&&u| u).count();
    Topology {
        vertices,
        edges,
        triangles: tris.len(),
        open_edges: open,
        non_manifold_edges: non_manifold,
        inconsistent_edges: inconsistent,
        degenerate_triangles: degenerate,
        duplicate_triangles: duplicates,
        euler_characteristic: vertices as i64 - edges as i64 + tris.len() as i64,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tetrahedron() -> Mesh {
        Mesh {
            vertices: vec![
                [0.0, 0.0, 0.0],
                [1.0, 0.0, 0.0],
                [0.0, 1.0, 0.0],
                [0.0, 0.0, 1.0],
            ],
            triangles: vec![[0, 2, 1], [0, 1, 3], [1, 2, 3], [0, 3, 2]],
        }
    }

    #[test]
    fn tetrahedron_is_a_closed_sphere() {
        // Euler's polyhedron formula: V − E + F = 2 for a sphere (4 − 6 + 4).
        let t = analyse(&tetrahedron());
        assert!(t.is_watertight(), "{t:?}");
        assert_eq!((t.vertices, t.edges, t.euler_characteristic), (4, 6, 2));
    }

    #[test]
    fn faults_are_counted() {
        let mut m = tetrahedron();
        m.triangles[1] = [0, 3, 1]; // flipped: its three edges now conflict
        let t = analyse(&m);
        assert_eq!(t.inconsistent_edges, 3);
        let mut m = tetrahedron();
        m.triangles.pop(); // a hole bounded by three edges
        assert_eq!(analyse(&m).open_edges, 3);
        let mut m = tetrahedron();
        m.triangles.push([0, 2, 1]);
        let t = analyse(&m);
        assert_eq!((t.duplicate_triangles, t.non_manifold_edges), (1, 3));
        let mut m = tetrahedron();
        m.vertices.push([0.5, 0.0, 0.0]);
        m.triangles.push([0, 1, 4]);
        assert_eq!(analyse(&m).degenerate_triangles, 1);
    }
}
