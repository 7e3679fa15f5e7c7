//! Edge topology of a triangle mesh: is it a closed, consistently oriented
//! surface without degenerate or repeated triangles?

use rayon::prelude::*;

use crate::model::mesh::{Mesh, cross, dot, norm, sub};

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

/// One use of an edge by a triangle.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, PartialOrd, Ord)]
pub struct EdgeUse {
    /// The edge's higher vertex (the lower one is the bucket).
    pub hi: u32,
    /// Whether the triangle runs along it from high to low.
    pub backward: bool,
    /// The triangle.
    pub triangle: u32,
}

/// Every edge use of a mesh, grouped by the edge's lower vertex (a counting
/// sort, linear time) and sorted within each group.
pub struct EdgeTable {
    start: Vec<usize>,
    uses: Vec<EdgeUse>,
}

/// An undirected edge and the triangles that use it.
pub struct Edge<'a> {
    /// Lower vertex.
    pub lo: u32,
    /// Higher vertex.
    pub hi: u32,
    /// The uses (one per triangle side on this edge).
    pub uses: &'a [EdgeUse],
}

impl Edge<'_> {
    /// A closed, consistent edge: two uses running opposite ways.
    pub fn is_manifold(&self) -> bool {
        self.uses.len() == 2 && self.uses[0].backward != self.uses[1].backward
    }
}

impl EdgeTable {
    /// Builds the table.
    pub fn new(mesh: &Mesh) -> EdgeTable {
        let items = mesh.triangles.iter().enumerate().flat_map(|(i, t)| {
            (0..3).map(move |k| {
                let (a, b) = (t[k], t[(k + 1) % 3]);
                let (lo, hi, backward) = if a < b { (a, b, false) } else { (b, a, true) };
                (
                    lo,
                    EdgeUse {
                        hi,
                        backward,
                        triangle: i as u32,
                    },
                )
            })
        });
        let (start, mut uses) = bucket(mesh.vertices.len(), items);
        // Sort each vertex's group; groups split into chunks for the threads.
        let mut rest: &mut [EdgeUse] = &mut uses;
        let mut chunks = vec![];
        let step = 1 << 15;
        for lo in (0..start.len() - 1).step_by(step) {
            let hi = (lo + step).min(start.len() - 1);
            let (chunk, tail) = rest.split_at_mut(start[hi] - start[lo]);
            chunks.push((lo, hi, chunk));
            rest = tail;
        }
        chunks.into_par_iter().for_each(|(lo, hi, chunk)| {
            let base = start[lo];
            for v in lo..hi {
                chunk[start[v] - base..start[v + 1] - base].sort_unstable();
            }
        });
        EdgeTable { start, uses }
    }

    /// Every undirected edge, by lower then higher vertex.
    pub fn edges(&self) -> impl Iterator<Item = Edge<'_>> + '_ {
        (0..self.start.len() - 1).flat_map(move |lo| {
            let group = &self.uses[self.start[lo]..self.start[lo + 1]];
            let mut i = 0;
            std::iter::from_fn(move || {
                if i >= group.len() {
                    return None;
                }
                let hi = group[i].hi;
                let j = i + group[i..].iter().take_while(|u| u.hi == hi).count();
                let e = Edge {
                    lo: lo as u32,
                    hi,
                    uses: &group[i..j],
                };
                i = j;
                Some(e)
            })
        })
    }

    /// Vertices on edges used by one triangle only, ascending.
    pub fn open_vertices(&self) -> Vec<u32> {
        let mut v: Vec<u32> = self
            .edges()
            .filter(|e| e.uses.len() == 1)
            .flat_map(|e| [e.lo, e.hi])
            .collect();
        v.sort_unstable();
        v.dedup();
        v
    }
}

/// Counts edges, open and non-manifold edges, orientation conflicts,
/// degenerate and duplicate triangles, and the Euler characteristic.
pub fn analyse(mesh: &Mesh) -> Topology {
    let nv = mesh.vertices.len();
    let tris = &mesh.triangles;
    let degenerate = tris.par_iter().filter(|t| is_degenerate(mesh, t)).count();
    let table = EdgeTable::new(mesh);
    let (mut edges, mut open, mut non_manifold, mut inconsistent) = (0, 0, 0, 0);
    let mut used = vec![false; nv];
    for e in table.edges() {
        used[e.lo as usize] = true;
        used[e.hi as usize] = true;
        edges += 1;
        match e.uses.len() {
            1 => open += 1,
            2 if !e.is_manifold() => inconsistent += 1,
            2 => {}
            _ => non_manifold += 1,
        }
    }
    let duplicates = duplicate_triangles(mesh).len();
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

/// Triangles that repeat an earlier triangle's three vertices (any order).
pub fn duplicate_triangles(mesh: &Mesh) -> Vec<u32> {
    let tri_items = mesh.triangles.iter().enumerate().map(|(i, t)| {
        let mut s = *t;
        s.sort_unstable();
        (s[0], (((s[1] as u64) << 32) | s[2] as u64, i as u32))
    });
    let (start, mut rest) = bucket(mesh.vertices.len(), tri_items);
    let mut out = vec![];
    for w in start.windows(2) {
        let group = &mut rest[w[0]..w[1]];
        group.sort_unstable();
        out.extend(
            group
                .windows(2)
                .filter(|p| p[0].0 == p[1].0)
                .map(|p| p[1].1),
        );
    }
    out.sort_unstable();
    out
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
