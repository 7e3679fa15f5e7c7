//! The closest point of a triangle mesh to any point: a bounding-volume tree
//! over the triangles, searched branch-and-bound, with the exact closest
//! point on each candidate triangle (Ericson, *Real-Time Collision
//! Detection*, 2005, sec. 5.1.5).

use crate::model::mesh::{Mesh, cross, dot, sub};

/// Closest point of triangle (a, b, c) to p.
pub fn closest_on_triangle(p: [f64; 3], a: [f64; 3], b: [f64; 3], c: [f64; 3]) -> [f64; 3] {
    let add =
        |x: [f64; 3], y: [f64; 3], s: f64| [x[0] + s * y[0], x[1] + s * y[1], x[2] + s * y[2]];
    let (ab, ac, ap) = (sub(b, a), sub(c, a), sub(p, a));
    let (d1, d2) = (dot(ab, ap), dot(ac, ap));
    if d1 <= 0.0 && d2 <= 0.0 {
        return a;
    }
    let bp = sub(p, b);
    let (d3, d4) = (dot(ab, bp), dot(ac, bp));
    if d3 >= 0.0 && d4 <= d3 {
        return b;
    }
    let vc = d1 * d4 - d3 * d2;
    if vc <= 0.0 && d1 >= 0.0 && d3 <= 0.0 {
        return add(a, ab, d1 / (d1 - d3));
    }
    let cp = sub(p, c);
    let (d5, d6) = (dot(ab, cp), dot(ac, cp));
    if d6 >= 0.0 && d5 <= d6 {
        return c;
    }
    let vb = d5 * d2 - d1 * d6;
    if vb <= 0.0 && d2 >= 0.0 && d6 <= 0.0 {
        return add(a, ac, d2 / (d2 - d6));
    }
    let va = d3 * d6 - d5 * d4;
    if va <= 0.0 && (d4 - d3) >= 0.0 && (d5 - d6) >= 0.0 {
        return add(b, sub(c, b), (d4 - d3) / ((d4 - d3) + (d5 - d6)));
    }
    let denom = 1.0 / (va + vb + vc);
    let (v, w) = (vb * denom, vc * denom);
    add(add(a, ab, v), ac, w)
}

#[derive(Clone, Copy)]
struct Node {
    lo: [f64; 3],
    hi: [f64; 3],
    /// Children (left, right) for an inner node; (first, count) of `order` for a leaf.
    a: u32,
    b: u32,
    leaf: bool,
}

/// A bounding-volume tree over a mesh's triangles.
pub struct Nearest<'m> {
    mesh: &'m Mesh,
    nodes: Vec<Node>,
    order: Vec<u32>,
}

/// The closest point found, its triangle and distance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hit {
    /// The closest point on the mesh.
    pub point: [f64; 3],
    /// The triangle it lies on.
    pub triangle: u32,
    /// Distance from the query, mm.
    pub distance: f64,
}

const LEAF: usize = 8;

fn box_distance2(p: [f64; 3], lo: [f64; 3], hi: [f64; 3]) -> f64 {
    (0..3)
        .map(|k| {
            let d = (lo[k] - p[k]).max(0.0).max(p[k] - hi[k]);
            d * d
        })
        .sum()
}

impl<'m> Nearest<'m> {
    /// Builds the tree (median splits on the longest axis of the centroids).
    pub fn new(mesh: &'m Mesh) -> Nearest<'m> {
        let centroids: Vec<[f64; 3]> = mesh
            .triangles
            .iter()
            .map(|t| {
                let [a, b, c] = mesh.corners(t);
                [
                    (a[0] + b[0] + c[0]) / 3.0,
                    (a[1] + b[1] + c[1]) / 3.0,
                    (a[2] + b[2] + c[2]) / 3.0,
                ]
            })
            .collect();
        let mut order: Vec<u32> = (0..mesh.triangles.len() as u32).collect();
        let mut nodes = Vec::with_capacity(2 * mesh.triangles.len() / LEAF + 2);
        let mut tree = Nearest {
            mesh,
            nodes: vec![],
            order: vec![],
        };
        if !order.is_empty() {
            let n = order.len();
            tree.split(&mut nodes, &mut order, &centroids, 0, n);
        }
        tree.nodes = nodes;
        tree.order = order;
        tree
    }

    fn bounds(&self, ids: &[u32]) -> ([f64; 3], [f64; 3]) {
        let mut lo = [f64::INFINITY; 3];
        let mut hi = [f64::NEG_INFINITY; 3];
        for &t in ids {
            for p in self.mesh.corners(&self.mesh.triangles[t as usize]) {
                for k in 0..3 {
                    lo[k] = lo[k].min(p[k]);
                    hi[k] = hi[k].max(p[k]);
                }
            }
        }
        (lo, hi)
    }

    fn split(
        &self,
        nodes: &mut Vec<Node>,
        order: &mut [u32],
        centroids: &[[f64; 3]],
        first: usize,
        count: usize,
    ) -> u32 {
        let ids = &mut order[first..first + count];
        let (lo, hi) = self.bounds(ids);
        let index = nodes.len() as u32;
        nodes.push(Node {
            lo,
            hi,
            a: first as u32,
            b: count as u32,
            leaf: true,
        });
        if count <= LEAF {
            return index;
        }
        let extent: Vec<f64> = (0..3).map(|k| hi[k] - lo[k]).collect();
        let axis = (0..3)
            .max_by(|&a, &b| extent[a].total_cmp(&extent[b]))
            .unwrap_or(0);
        let mid = count / 2;
        ids.select_nth_unstable_by(mid, |&a, &b| {
            centroids[a as usize][axis].total_cmp(&centroids[b as usize][axis])
        });
        let left = self.split(nodes, order, centroids, first, mid);
        let right = self.split(nodes, order, centroids, first + mid, count - mid);
        nodes[index as usize] = Node {
            lo,
            hi,
            a: left,
            b: right,
            leaf: false,
        };
        index
    }

    /// The closest point of the mesh to `p` (`None` for an empty mesh).
    pub fn closest(&self, p: [f64; 3]) -> Option<Hit> {
        if self.nodes.is_empty() {
            return None;
        }
        let mut best = Hit {
            point: [0.0; 3],
            triangle: u32::MAX,
            distance: f64::INFINITY,
        };
        let mut best2 = f64::INFINITY;
        let mut stack = vec![0u32];
        while let Some(i) = stack.pop() {
            let n = self.nodes[i as usize];
            if box_distance2(p, n.lo, n.hi) >= best2 {
                continue;
            }
            if n.leaf {
                for &t in &self.order[n.a as usize..(n.a + n.b) as usize] {
                    let [a, b, c] = self.mesh.corners(&self.mesh.triangles[t as usize]);
                    let q = closest_on_triangle(p, a, b, c);
                    let d = sub(q, p);
                    let d2 = dot(d, d);
                    if d2 < best2 {
                        best2 = d2;
                        best = Hit {
                            point: q,
                            triangle: t,
                            distance: d2.sqrt(),
                        };
                    }
                }
            } else {
                // Nearer child last, so it is searched first.
                let (l, r) = (self.nodes[n.a as usize], self.nodes[n.b as usize]);
                if box_distance2(p, l.lo, l.hi) < box_distance2(p, r.lo, r.hi) {
                    stack.extend([n.b, n.a]);
                } else {
                    stack.extend([n.a, n.b]);
                }
            }
        }
        Some(best)
    }

    /// Outward unit normal of triangle `t`.
    pub fn normal(&self, t: u32) -> [f64; 3] {
        let [a, b, c] = self.mesh.corners(&self.mesh.triangles[t as usize]);
        let n = cross(sub(b, a), sub(c, a));
        let l = dot(n, n).sqrt();
        if l > 0.0 {
            [n[0] / l, n[1] / l, n[2] / l]
        } else {
            [0.0; 3]
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closest_points_on_a_triangle() {
        let (a, b, c) = ([0.0, 0.0, 0.0], [2.0, 0.0, 0.0], [0.0, 2.0, 0.0]);
        // Above the face: straight down; beyond a vertex: the vertex; beside
        // an edge: its foot on the edge (elementary geometry).
        assert_eq!(
            closest_on_triangle([0.5, 0.5, 3.0], a, b, c),
            [0.5, 0.5, 0.0]
        );
        assert_eq!(closest_on_triangle([-1.0, -1.0, 0.0], a, b, c), a);
        assert_eq!(
            closest_on_triangle([1.0, -2.0, 1.0], a, b, c),
            [1.0, 0.0, 0.0]
        );
        assert_eq!(
            closest_on_triangle([2.0, 2.0, 0.0], a, b, c),
            [1.0, 1.0, 0.0]
        );
    }

    #[test]
    fn tree_agrees_with_brute_force() {
        let mut vertices = vec![];
        let mut triangles = vec![];
        for i in 0..20u32 {
            for j in 0..20u32 {
                vertices.push([i as f64, j as f64, ((i * 7 + j * 3) % 5) as f64 * 0.3]);
            }
        }
        for i in 0..19u32 {
            for j in 0..19u32 {
                let v = i * 20 + j;
                triangles.push([v, v + 20, v + 21]);
                triangles.push([v, v + 21, v + 1]);
            }
        }
        let m = Mesh {
            vertices,
            triangles,
        };
        let tree = Nearest::new(&m);
        for k in 0..200 {
            let p = [
                (k * 37 % 230) as f64 * 0.1 - 1.0,
                (k * 53 % 210) as f64 * 0.1,
                (k % 7) as f64 - 2.0,
            ];
            let brute = m
                .triangles
                .iter()
                .map(|t| {
                    let [a, b, c] = m.corners(t);
                    let q = closest_on_triangle(p, a, b, c);
                    dot(sub(q, p), sub(q, p)).sqrt()
                })
                .fold(f64::INFINITY, f64::min);
            assert!((tree.closest(p).unwrap().distance - brute).abs() < 1e-12);
        }
    }
}
