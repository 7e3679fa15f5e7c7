//! Welding a triangle soup into a shared-vertex mesh.
//!
//! First, corners with bit-identical coordinates become one vertex (−0.0 is
//! taken as 0.0). Then vertices still on open edges — where a crack left by
//! rounding in an exporter shows up — are merged with any other such vertex
//! within the weld tolerance, found with a k-d tree (kiddo). Vertices of a
//! closed surface are never moved: a short edge is geometry, not a crack.

use kiddo::{ImmutableKdTree, SquaredEuclidean};
use rayon::prelude::*;

use crate::meshing::topology::EdgeTable;
use crate::model::mesh::Mesh;

/// A welded mesh and what welding did.
#[derive(Debug, Clone)]
pub struct Welded {
    /// The mesh (f64 coordinates, shared vertices).
    pub mesh: Mesh,
    /// Soup corners that landed on an existing vertex exactly.
    pub exact_merges: usize,
    /// Vertices merged by the tolerance.
    pub near_merges: usize,
    /// The tolerance used, mm.
    pub tolerance: f64,
}

/// A default weld tolerance for a model: a millionth of its bounding-box
/// diagonal, at least 1 µm (about ten float steps at two metres).
pub fn default_tolerance(soup: &[[[f32; 3]; 3]]) -> f64 {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in soup.iter().flatten() {
        for k in 0..3 {
            lo[k] = lo[k].min(p[k] as f64);
            hi[k] = hi[k].max(p[k] as f64);
        }
    }
    let d = (0..3).map(|k| (hi[k] - lo[k]).powi(2)).sum::<f64>().sqrt();
    if d.is_finite() {
        (1e-6 * d).max(1e-3)
    } else {
        1e-3
    }
}

fn key(p: &[f32; 3]) -> [u32; 3] {
    // +0.0 and −0.0 are the same point.
    p.map(|v| if v == 0.0 { 0 } else { v.to_bits() })
}

fn find(parent: &mut [u32], mut i: u32) -> u32 {
    while parent[i as usize] != i {
        parent[i as usize] = parent[parent[i as usize] as usize];
        i = parent[i as usize];
    }
    i
}

/// Welds `soup` with `tolerance` mm (0 for exact only).
pub fn weld(soup: &[[[f32; 3]; 3]], tolerance: f64) -> Welded {
    weld_with_edges(soup, tolerance).0
}

/// Welds `soup`, also returning the welded mesh's edge table.
pub fn weld_with_edges(soup: &[[[f32; 3]; 3]], tolerance: f64) -> (Welded, EdgeTable) {
    let (vertices, triangles) = exact(soup);
    let exact_merges = 3 * soup.len() - vertices.len();
    let mut mesh = Mesh {
        vertices,
        triangles,
    };
    let mut near_merges = 0;
    let mut table = EdgeTable::new(&mesh);
    if tolerance > 0.0 {
        let open = table.open_vertices();
        if open.len() > 1 {
            let pts: Vec<[f64; 3]> = open.iter().map(|&v| mesh.vertices[v as usize]).collect();
            // Union-find over the open vertices; the lowest vertex id stands for each group.
            let mut parent: Vec<u32> = (0..mesh.vertices.len() as u32).collect();
            for (i, j) in near_pairs(&pts, tolerance) {
                let (a, b) = (
                    find(&mut parent, open[i as usize]),
                    find(&mut parent, open[j as usize]),
                );
                if a != b {
                    parent[a.max(b) as usize] = a.min(b);
                    near_merges += 1;
                }
            }
            if near_merges > 0 {
                for t in &mut mesh.triangles {
                    for v in t.iter_mut() {
                        *v = find(&mut parent, *v);
                    }
                }
                mesh = compact(mesh);
                table = EdgeTable::new(&mesh);
            }
        }
    }
    let welded = Welded {
        mesh,
        exact_merges,
        near_merges,
        tolerance,
    };
    (welded, table)
}

/// Pairs of points within `r` of each other, enough of them that their
/// connected groups are those of every such pair, in O(n log n): points
/// are binned in cubes whose diagonal is `r`, so the points of one cube
/// are all within `r` (each joined to its cube's first); two neighbouring
/// cubes are joined by one pair found within `r`, if any, searching the
/// smaller cube's points in a k-d tree of the larger. A crowd of
/// near-duplicates (thousands of points within `r` of one another) costs
/// one pass, not the square of its size.
fn near_pairs(pts: &[[f64; 3]], r: f64) -> Vec<(u32, u32)> {
    use rustc_hash::FxHashMap;
    let reach = pts.iter().flatten().fold(0.0f64, |m, v| m.max(v.abs()));
    // Below a billionth of the coordinates' size no two distinct f32
    // points (about 1e-7 apart relatively) are within reach: the exact
    // weld has done all there is, and the cube numbers stay in range.
    if r.is_nan() || r <= 1e-9 * reach {
        return vec![];
    }
    let side = r / 3f64.sqrt() * (1.0 - 1e-12);
    let cube = |p: &[f64; 3]| p.map(|v| (v / side).floor() as i64);
    let mut cubes: FxHashMap<[i64; 3], Vec<u32>> = FxHashMap::default();
    for (i, p) in pts.iter().enumerate() {
        cubes.entry(cube(p)).or_default().push(i as u32);
    }
    let mut keys: Vec<[i64; 3]> = cubes.keys().copied().collect();
    keys.sort_unstable();
    let mut pairs = vec![];
    for members in keys.iter().map(|k| &cubes[k]) {
        pairs.extend(members[1..].iter().map(|&j| (members[0], j)));
    }
    let r2 = r * r;
    let mut trees: FxHashMap<[i64; 3], ImmutableKdTree<f64, 3>> = FxHashMap::default();
    // Cubes up to two steps apart can hold points within r (2 · side < r).
    for k in &keys {
        for d in (0..125).map(|n| [n / 25 - 2, n / 5 % 5 - 2, n % 5 - 2]) {
            let o = [k[0] + d[0], k[1] + d[1], k[2] + d[2]];
            if o <= *k {
                continue;
            }
            let (Some(a), Some(b)) = (cubes.get(k), cubes.get(&o)) else {
                continue;
            };
            let (small, (large, lkey)) = if a.len() <= b.len() {
                (a, (b, o))
            } else {
                (b, (a, *k))
            };
            let d2 = |i: u32, j: u32| {
                let (p, q) = (pts[i as usize], pts[j as usize]);
                (0..3).map(|c| (p[c] - q[c]).powi(2)).sum::<f64>()
            };
            let hit = if small.len() * large.len() <= 1024 {
                small
                    .iter()
                    .find_map(|&i| large.iter().find(|&&j| d2(i, j) <= r2).map(|&j| (i, j)))
            } else {
                let tree = trees.entry(lkey).or_insert_with(|| {
                    let lp: Vec<[f64; 3]> = large.iter().map(|&j| pts[j as usize]).collect();
                    ImmutableKdTree::new_from_slice(&lp).expect("finite points")
                });
                small.iter().find_map(|&i| {
                    let n = tree
                        .query(&pts[i as usize])
                        .nearest_one::<SquaredEuclidean<f64>>()
                        .execute();
                    (n.distance <= r2).then(|| (i, large[n.item as usize]))
                })
            };
            pairs.extend(hit);
        }
    }
    pairs
}

/// Exact welding: every corner's coordinate bits sorted (in parallel), so
/// equal corners sit together; vertices are numbered in that sorted order,
/// which depends only on the coordinates, not on threads or file order.
fn exact(soup: &[[[f32; 3]; 3]]) -> (Vec<[f64; 3]>, Vec<[u32; 3]>) {
    let corners = 3 * soup.len();
    // One u128 a corner: x, y, z bits, then the corner's index.
    let mut items: Vec<u128> = (0..corners)
        .into_par_iter()
        .map(|c| {
            let k = key(&soup[c / 3][c % 3]);
            ((k[0] as u128) << 96) | ((k[1] as u128) << 64) | ((k[2] as u128) << 32) | c as u128
        })
        .collect();
    items.par_sort_unstable();
    let mut ids = vec![0u32; corners];
    let mut vertices: Vec<[f64; 3]> = Vec::with_capacity(corners / 5);
    let mut previous = None;
    for &item in &items {
        let (point, c) = (item >> 32, (item as u32) as usize);
        if previous != Some(point) {
            previous = Some(point);
            let p = soup[c / 3][c % 3];
            vertices.push([p[0] as f64, p[1] as f64, p[2] as f64]);
        }
        ids[c] = (vertices.len() - 1) as u32;
    }
    let triangles = ids.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect();
    (vertices, triangles)
}

/// Drops unused vertices, keeping the order of the rest.
fn compact(mesh: Mesh) -> Mesh {
    let mut new_id = vec![u32::MAX; mesh.vertices.len()];
    let mut vertices = vec![];
    let mut triangles = mesh.triangles;
    for t in &mut triangles {
        for v in t.iter_mut() {
            if new_id[*v as usize] == u32::MAX {
                new_id[*v as usize] = vertices.len() as u32;
                vertices.push(mesh.vertices[*v as usize]);
            }
            *v = new_id[*v as usize];
        }
    }
    Mesh {
        vertices,
        triangles,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cracks_close_and_exact_corners_share() {
        // Two triangles of a square whose shared edge is off by 1e-5 mm.
        let soup = [
            [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [1.0, 1.0, 0.0]],
            [[0.0, 0.0, -0.0], [1.00001, 1.0, 0.0], [0.0, 1.0, 0.0]],
        ];
        let exact = weld(&soup, 0.0);
        assert_eq!((exact.mesh.vertices.len(), exact.exact_merges), (5, 1));
        let w = weld(&soup, 1e-3);
        assert_eq!((w.mesh.vertices.len(), w.near_merges), (4, 1));
    }

    /// The groups are those of every pair within reach, checked against
    /// all pairs by brute force (the definition) on random clusters.
    #[test]
    fn near_pairs_join_what_all_pairs_join() {
        let mut seed = 7u64;
        let mut rnd = || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        for r in [0.01, 0.05, 0.2] {
            let pts: Vec<[f64; 3]> = (0..600)
                .map(|i| {
                    let c = (i % 7) as f64 * 0.3;
                    [c + 0.2 * rnd(), 0.2 * rnd(), 0.1 * rnd()]
                })
                .collect();
            let groups = |pairs: &[(u32, u32)]| {
                let mut parent: Vec<u32> = (0..pts.len() as u32).collect();
                for &(i, j) in pairs {
                    let (a, b) = (find(&mut parent, i), find(&mut parent, j));
                    parent[a.max(b) as usize] = a.min(b);
                }
                (0..pts.len() as u32)
                    .map(|i| find(&mut parent, i))
                    .collect::<Vec<_>>()
            };
            let mut all = vec![];
            for i in 0..pts.len() {
                for j in i + 1..pts.len() {
                    let d2: f64 = (0..3).map(|c| (pts[i][c] - pts[j][c]).powi(2)).sum();
                    if d2 <= r * r {
                        all.push((i as u32, j as u32));
                    }
                }
            }
            assert_eq!(groups(&near_pairs(&pts, r)), groups(&all), "r = {r}");
        }
    }
}
