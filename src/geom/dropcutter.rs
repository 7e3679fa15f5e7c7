//! Drop-cutter: lower a tool along a vertical line until it touches the
//! mesh, exactly, against each candidate triangle's face, edges and
//! vertices. The tool's highest touching position is where it may go.
//!
//! Method: the classic drop-cutter decomposition (the contact is with the
//! face interior, an edge, or a vertex; the answer is the highest of the
//! three), as in Chuang, Chen and Chang, "Automated tool-path generation for
//! 3-axis machining" and Hwang, "Interference-free tool-path generation in
//! the NC machining of parametric compound surfaces" (CAD 24, 1992).
//! Candidates come from a bucket grid over the plan view, each bucket's
//! triangles sorted by their highest corner so the search stops as soon as
//! no remaining triangle can lift the tool. (A k-d tree over triangle
//! centroids cannot bound long triangles, and a board mesh is made of long
//! strips along the stringer; the grid bounds them exactly.)

use std::sync::Arc;

use rayon::prelude::*;

use crate::geom::contact::{Tri, ball_touch, bull_touch, flat_touch};
use crate::model::machine::{Cutter, ToolKind};
use crate::model::mesh::{Mesh, cross, norm, sub};

/// What the search reads of every candidate before it looks at the
/// triangle itself: the plan box and top corner, rounded outwards to `f32`
/// (20 bytes, so a side's worth stays in cache; the exact test uses `Tri`).
#[derive(Debug, Clone, Copy)]
struct Bound {
    bb: [f32; 4],
    zmax: f32,
}

/// `v` rounded to an `f32` no greater (`down`) or no less than it.
fn f32_toward(v: f64, down: bool) -> f32 {
    let f = v as f32;
    match (down, (f as f64).partial_cmp(&v)) {
        (true, Some(std::cmp::Ordering::Greater)) => f.next_down(),
        (false, Some(std::cmp::Ordering::Less)) => f.next_up(),
        _ => f,
    }
}

/// Meshes' triangles made ready for dropping any cutter: each one's
/// plane, edges and bounds, and the order highest first. Built once for a
/// mesh and shared by the drop-cutters of every tool on it.
#[derive(Debug)]
pub struct Prepared {
    /// In the meshes' order, which keeps neighbours near in memory.
    tris: Vec<Tri>,
    bounds: Vec<Bound>,
    /// Triangle indices by highest corner, highest first (then in order).
    order: Vec<u32>,
    /// The plan box of every corner.
    lo: [f64; 2],
    hi: [f64; 2],
}

impl Prepared {
    /// Prepares `meshes` (all together).
    pub fn new(meshes: &[&Mesh]) -> Prepared {
        let all: Vec<(&Mesh, &[u32; 3])> = meshes
            .iter()
            .flat_map(|m| m.triangles.iter().map(move |t| (*m, t)))
            .collect();
        let tris: Vec<Tri> = all
            .par_iter()
            .filter_map(|(mesh, t)| prepare(mesh.corners(t)))
            .collect();
        // A total order (height, then input order), so the unstable sort
        // is deterministic.
        let mut keys: Vec<(f64, u32)> = tris
            .iter()
            .enumerate()
            .map(|(i, t)| (t.zmax, i as u32))
            .collect();
        keys.par_sort_unstable_by(|a, c| c.0.total_cmp(&a.0).then(a.1.cmp(&c.1)));
        let order = keys.into_iter().map(|(_, i)| i).collect();
        let bounds: Vec<Bound> = tris
            .iter()
            .map(|t| Bound {
                bb: [
                    f32_toward(t.bb[0], true),
                    f32_toward(t.bb[1], true),
                    f32_toward(t.bb[2], false),
                    f32_toward(t.bb[3], false),
                ],
                zmax: f32_toward(t.zmax, false),
            })
            .collect();
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for t in &tris {
            lo = [lo[0].min(t.bb[0]), lo[1].min(t.bb[1])];
            hi = [hi[0].max(t.bb[2]), hi[1].max(t.bb[3])];
        }
        if tris.is_empty() {
            lo = [0.0, 0.0];
            hi = [1.0, 1.0];
        }
        Prepared {
            tris,
            bounds,
            order,
            lo,
            hi,
        }
    }
}

/// A triangle made ready for the contact tests (none when degenerate).
fn prepare(p: [[f64; 3]; 3]) -> Option<Tri> {
    let e1 = sub(p[1], p[0]);
    let e2 = sub(p[2], p[0]);
    let mut n = cross(e1, e2);
    let len = norm(n);
    if len.is_nan() || len <= 0.0 {
        return None;
    }
    n = [n[0] / len, n[1] / len, n[2] / len];
    if n[2] < 0.0 {
        n = [-n[0], -n[1], -n[2]];
    }
    let zmax = p[0][2].max(p[1][2]).max(p[2][2]);
    let bb = [
        p[0][0].min(p[1][0]).min(p[2][0]),
        p[0][1].min(p[1][1]).min(p[2][1]),
        p[0][0].max(p[1][0]).max(p[2][0]),
        p[0][1].max(p[1][1]).max(p[2][1]),
    ];
    let edge = |k: usize| {
        let u = sub(p[(k + 1) % 3], p[k]);
        let len = norm(u);
        if len.is_nan() || len <= 0.0 {
            return ([0.0; 3], 0.0, 0.0);
        }
        let u = [u[0] / len, u[1] / len, u[2] / len];
        (u, len, 1.0 - u[2] * u[2])
    };
    let edges = [edge(0), edge(1), edge(2)];
    Some(Tri {
        bb,
        p,
        edges,
        n,
        zmax,
    })
}

/// A mesh prepared for dropping one cutter.
#[derive(Debug, Clone)]
pub struct DropCutter {
    cutter: Cutter,
    prep: Arc<Prepared>,
    origin: [f64; 2],
    cell: f64,
    dims: [usize; 2],
    /// Start of each bucket in `items` (dims[0] * dims[1] + 1 entries).
    starts: Vec<u32>,
    items: Vec<u32>,
}

impl DropCutter {
    /// Indexes `meshes` (all together) for `cutter`.
    pub fn new(meshes: &[&Mesh], cutter: Cutter) -> DropCutter {
        DropCutter::on(Arc::new(Prepared::new(meshes)), cutter)
    }

    /// Indexes meshes already prepared for `cutter`.
    pub fn on(prep: Arc<Prepared>, cutter: Cutter) -> DropCutter {
        let r = cutter.radius;
        let (lo, hi) = (prep.lo, prep.hi);
        let origin = [lo[0] - r, lo[1] - r];
        let span = [hi[0] - lo[0] + 2.0 * r, hi[1] - lo[1] + 2.0 * r];
        // About 4 buckets per tool diameter, at most ~4 M buckets.
        // (at least 1.5 mm, about a board mesh's triangle: finer buckets only
        // repeat each triangle in more of them).
        let mut cell = (r / 2.0).max(1.5);
        while (span[0] / cell) * (span[1] / cell) > 4.0e6 {
            cell *= 1.5;
        }
        let dims = [
            (span[0] / cell).ceil().max(1.0) as usize,
            (span[1] / cell).ceil().max(1.0) as usize,
        ];
        let bucket_range = |t: &Tri| {
            let (a, b) = ([t.bb[0], t.bb[1]], [t.bb[2], t.bb[3]]);
            let i0 = (((a[0] - r - origin[0]) / cell).floor().max(0.0) as usize).min(dims[0] - 1);
            let i1 = (((b[0] + r - origin[0]) / cell).floor().max(0.0) as usize).min(dims[0] - 1);
            let j0 = (((a[1] - r - origin[1]) / cell).floor().max(0.0) as usize).min(dims[1] - 1);
            let j1 = (((b[1] + r - origin[1]) / cell).floor().max(0.0) as usize).min(dims[1] - 1);
            (i0, i1, j0, j1)
        };
        let nb = dims[0] * dims[1];
        let mut counts = vec![0u32; nb + 1];
        for t in &prep.tris {
            let (i0, i1, j0, j1) = bucket_range(t);
            for j in j0..=j1 {
                for i in i0..=i1 {
                    counts[j * dims[0] + i + 1] += 1;
                }
            }
        }
        for k in 0..nb {
            counts[k + 1] += counts[k];
        }
        let starts = counts.clone();
        // Buckets filled highest first come out sorted by height without
        // a sort of their own.
        let mut fill = counts;
        let mut items = vec![0u32; starts[nb] as usize];
        for &ti in &prep.order {
            let (i0, i1, j0, j1) = bucket_range(&prep.tris[ti as usize]);
            for j in j0..=j1 {
                for i in i0..=i1 {
                    let b = j * dims[0] + i;
                    items[fill[b] as usize] = ti;
                    fill[b] += 1;
                }
            }
        }
        DropCutter {
            cutter,
            prep,
            origin,
            cell,
            dims,
            starts,
            items,
        }
    }

    /// The prepared meshes, for another cutter's drop-cutter on them.
    pub fn prepared(&self) -> Arc<Prepared> {
        Arc::clone(&self.prep)
    }

    /// The cutter being dropped.
    pub fn cutter(&self) -> Cutter {
        self.cutter
    }

    /// Tip height where the cutter at (x, y) first touches the mesh from
    /// above; `None` where no triangle is within reach.
    pub fn drop(&self, x: f64, y: f64) -> Option<f64> {
        self.touch(x, y).map(|(z, _)| z)
    }

    /// Like [`drop`](Self::drop), with the unit normal (up) of the
    /// triangle touched.
    pub fn drop_contact(&self, x: f64, y: f64) -> Option<(f64, [f64; 3])> {
        self.touch(x, y).map(|(z, t)| (z, self.prep.tris[t].n))
    }

    /// The highest touch at (x, y) and the triangle touched.
    #[inline]
    fn touch(&self, x: f64, y: f64) -> Option<(f64, usize)> {
        let i = ((x - self.origin[0]) / self.cell).floor();
        let j = ((y - self.origin[1]) / self.cell).floor();
        if !(i >= 0.0 && j >= 0.0) || i as usize >= self.dims[0] || j as usize >= self.dims[1] {
            return None;
        }
        let b = j as usize * self.dims[0] + i as usize;
        let r = self.cutter.radius;
        let kind = self.cutter.kind;
        let mut best = (f64::NEG_INFINITY, 0);
        for &ti in &self.items[self.starts[b] as usize..self.starts[b + 1] as usize] {
            let bound = &self.prep.bounds[ti as usize];
            if bound.zmax as f64 <= best.0 {
                break;
            }
            if !may_lift(bound, x, y, &self.cutter, best.0) {
                continue;
            }
            let t = &self.prep.tris[ti as usize];
            let z = match kind {
                ToolKind::Ball => ball_touch(t, x, y, r, best.0),
                ToolKind::Bull => bull_touch(t, x, y, r, self.cutter.corner, best.0),
                ToolKind::Flat => flat_touch(t, x, y, r),
            };
            if z > best.0 {
                best = (z, ti as usize);
            }
        }
        (best.0 > f64::NEG_INFINITY).then_some(best)
    }

    /// [`drop`](Self::drop) at many points, in parallel; the order is kept.
    pub fn drop_many(&self, points: &[[f64; 2]]) -> Vec<Option<f64>> {
        points
            .par_chunks(4096)
            .flat_map_iter(|c| c.iter().map(|p| self.drop(p[0], p[1])))
            .collect()
    }
}

/// Whether triangle `t` can lift `cutter` at (x, y) above `best`: its
/// plan box within reach, and (for a ball or a bull-nose) its top corner,
/// lowered by how far the tool's surface rises at the box's distance,
/// above `best`.
#[inline]
fn may_lift(t: &Bound, x: f64, y: f64, cutter: &Cutter, best: f64) -> bool {
    let r = cutter.radius;
    let bb = t.bb.map(f64::from);
    let dx = (bb[0] - x).max(x - bb[2]).max(0.0);
    let dy = (bb[1] - y).max(y - bb[3]).max(0.0);
    let d2 = dx * dx + dy * dy;
    if d2 > r * r {
        return false;
    }
    match cutter.kind {
        ToolKind::Ball => t.zmax as f64 - (r - (r * r - d2).sqrt()) > best,
        ToolKind::Bull => t.zmax as f64 - cutter.height_at(d2.sqrt()).unwrap_or(0.0) > best,
        ToolKind::Flat => true,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::nearest::closest_on_triangle;

    fn plate(z: f64) -> Mesh {
        Mesh {
            vertices: vec![
                [-50.0, -50.0, z],
                [50.0, -50.0, z],
                [50.0, 50.0, z],
                [-50.0, 50.0, z],
            ],
            triangles: vec![[0, 1, 2], [0, 2, 3]],
        }
    }

    #[test]
    fn ball_over_a_flat_plate_sits_r_above() {
        // Geometry: a sphere resting on a plane has its centre r above it.
        let m = plate(3.0);
        let dc = DropCutter::new(&[&m], Cutter::ball(12.7));
        for (x, y) in [(0.0, 0.0), (10.3, -7.1), (-40.0, 40.0)] {
            let tip = dc.drop(x, y).unwrap();
            assert!((tip - 3.0).abs() < 1e-12, "{tip}");
        }
        let dc = DropCutter::new(&[&m], Cutter::flat(10.0));
        assert!((dc.drop(1.0, 2.0).unwrap() - 3.0).abs() < 1e-12);
    }

    /// Brute force: the highest centre height where the ball touches the
    /// triangle, from Ericson's closest-point routine (Real-Time Collision
    /// Detection, 5.1.5) and bisection on the distance, which is convex
    /// along the vertical line.
    fn brute(t: [[f64; 3]; 3], x: f64, y: f64, r: f64) -> Option<f64> {
        let dist = |z: f64| {
            let p = [x, y, z];
            let q = closest_on_triangle(p, t[0], t[1], t[2]);
            ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)).sqrt()
        };
        let (mut lo, mut hi) = (-200.0, 200.0);
        for _ in 0..200 {
            let m1 = lo + (hi - lo) / 3.0;
            let m2 = hi - (hi - lo) / 3.0;
            if dist(m1) < dist(m2) {
                hi = m2
            } else {
                lo = m1
            }
        }
        let zmin = 0.5 * (lo + hi);
        if dist(zmin) > r {
            return None;
        }
        let (mut a, mut b) = (zmin, 400.0);
        for _ in 0..200 {
            let m = 0.5 * (a + b);
            if dist(m) <= r { a = m } else { b = m }
        }
        Some(a - r)
    }

    /// Numbers in [−1, 1) from a 64-bit linear congruential generator
    /// (Knuth's MMIX constants): the same every run.
    fn lcg(mut seed: u64) -> impl FnMut() -> f64 {
        move || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((seed >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
        }
    }

    /// A triangle within 20 mm of the origin in plan and 10 mm in height,
    /// and a mesh of it alone.
    fn random_triangle(rnd: &mut impl FnMut() -> f64) -> ([[f64; 3]; 3], Mesh) {
        let t = [
            [rnd() * 20.0, rnd() * 20.0, rnd() * 10.0],
            [rnd() * 20.0, rnd() * 20.0, rnd() * 10.0],
            [rnd() * 20.0, rnd() * 20.0, rnd() * 10.0],
        ];
        let m = Mesh {
            vertices: t.to_vec(),
            triangles: vec![[0, 1, 2]],
        };
        (t, m)
    }

    #[test]
    fn ball_matches_brute_force_on_random_triangles() {
        let mut rnd = lcg(12345);
        let mut checked = 0;
        for _ in 0..300 {
            let (t, m) = random_triangle(&mut rnd);
            let r = 3.0 + 3.0 * rnd().abs();
            let dc = DropCutter::new(&[&m], Cutter::ball(2.0 * r));
            for _ in 0..10 {
                let (x, y) = (rnd() * 25.0, rnd() * 25.0);
                let got = dc.drop(x, y);
                let want = brute(t, x, y, r);
                match (got, want) {
                    (Some(g), Some(w)) => {
                        assert!((g - w).abs() < 1e-6, "{g} vs {w}");
                        checked += 1;
                    }
                    (None, None) => {}
                    // Grazing contacts within the bisection tolerance.
                    (g, w) => panic!("{g:?} vs {w:?} at {x},{y} for {t:?} r {r}"),
                }
            }
        }
        assert!(checked > 500, "{checked}");
    }

    #[test]
    fn ball_on_a_sphere_sits_r_plus_s_from_its_centre() {
        // Geometry: two touching spheres' centres are R + S apart. The mesh
        // sphere is inscribed, so the ball sits up to the sagitta lower.
        let s = 100.0;
        let sphere = uv_sphere(s, 720, 360);
        let r = 6.35;
        let dc = DropCutter::new(&[&sphere], Cutter::ball(2.0 * r));
        let sag = s * (1.0 - (std::f64::consts::PI / 360.0).cos());
        for (x, y) in [(0.0, 0.0), (30.0, 20.0), (-50.0, 60.0), (90.0, 0.0)] {
            let c = dc.drop(x, y).unwrap() + r;
            let d = (x * x + y * y + c * c).sqrt();
            assert!(d <= r + s + 1e-9 && d >= r + s - 2.0 * sag, "{d}");
        }
    }

    #[test]
    fn bull_on_a_tilted_plane_rests_on_its_corner_up_the_slope() {
        // Geometry: on the plane z = x·tan φ the corner circle's centre
        // stands a up the slope from the axis and c along the normal from
        // the contact, so the tip under the axis is at
        // (a + c·sin φ)·tan φ − c·(1 − cos φ).
        let (d, c) = (50.8, 6.35);
        let a = d / 2.0 - c;
        for deg in [0.0f64, 0.5, 3.0, 20.0, 50.0] {
            let (sn, cs) = (deg.to_radians().sin(), deg.to_radians().cos());
            let z = |x: f64| x * sn / cs;
            let m = Mesh {
                vertices: vec![
                    [-200.0, -200.0, z(-200.0)],
                    [200.0, -200.0, z(200.0)],
                    [200.0, 200.0, z(200.0)],
                    [-200.0, 200.0, z(-200.0)],
                ],
                triangles: vec![[0, 1, 2], [0, 2, 3]],
            };
            let dc = DropCutter::new(&[&m], Cutter::bull(d, c));
            let want = (a + c * sn) * sn / cs - c * (1.0 - cs);
            for (x, y) in [(0.0, 0.0), (0.0, 37.0)] {
                let got = dc.drop(x, y).unwrap() - z(x);
                assert!((got - want).abs() < 1e-9, "{deg}°: {got} vs {want}");
            }
        }
    }

    #[test]
    fn bull_is_the_highest_need_over_the_triangle() {
        // Brute force: the tip each point of the triangle needs (its
        // height less the tool's rise at its distance from the axis,
        // `Cutter::height_at`), at 240 × 240 points of the triangle; the
        // exact drop is never below any of them and within the sampling's
        // reach of the highest.
        let mut rnd = lcg(777);
        let mut checked = 0;
        for _ in 0..100 {
            let (t, m) = random_triangle(&mut rnd);
            let r = 6.0 + 6.0 * rnd().abs();
            let cutter = Cutter::bull(2.0 * r, r * (0.2 + 0.5 * rnd().abs()));
            let dc = DropCutter::new(&[&m], cutter);
            for _ in 0..4 {
                let (x, y) = (rnd() * 25.0, rnd() * 25.0);
                let n = 240;
                let mut want = f64::NEG_INFINITY;
                for i in 0..=n {
                    for j in 0..=(n - i) {
                        let (u, v) = (i as f64 / n as f64, j as f64 / n as f64);
                        let w = 1.0 - u - v;
                        let p: Vec<f64> = (0..3)
                            .map(|k| w * t[0][k] + u * t[1][k] + v * t[2][k])
                            .collect();
                        let d = (p[0] - x).hypot(p[1] - y);
                        if let Some(h) = cutter.height_at(d) {
                            want = want.max(p[2] - h);
                        }
                    }
                }
                match dc.drop(x, y) {
                    Some(got) => {
                        assert!(got >= want - 1e-6, "{got} below {want}");
                        assert!(got - want < 0.05, "{got} vs {want}");
                        checked += 1;
                    }
                    None => assert!(want == f64::NEG_INFINITY, "missed {want}"),
                }
            }
        }
        assert!(checked > 100, "{checked}");
    }

    fn uv_sphere(r: f64, nu: usize, nv: usize) -> Mesh {
        let mut vertices = vec![[0.0, 0.0, r]];
        for j in 1..nv {
            let th = std::f64::consts::PI * j as f64 / nv as f64;
            for i in 0..nu {
                let ph = 2.0 * std::f64::consts::PI * i as f64 / nu as f64;
                vertices.push([
                    r * th.sin() * ph.cos(),
                    r * th.sin() * ph.sin(),
                    r * th.cos(),
                ]);
            }
        }
        vertices.push([0.0, 0.0, -r]);
        let idx = |j: usize, i: usize| (1 + (j - 1) * nu + i % nu) as u32;
        let mut triangles = vec![];
        for i in 0..nu {
            triangles.push([0, idx(1, i), idx(1, i + 1)]);
        }
        for j in 1..nv - 1 {
            for i in 0..nu {
                triangles.push([idx(j, i), idx(j + 1, i), idx(j + 1, i + 1)]);
                triangles.push([idx(j, i), idx(j + 1, i + 1), idx(j, i + 1)]);
            }
        }
        let last = vertices.len() as u32 - 1;
        for i in 0..nu {
            triangles.push([idx(nv - 1, i + 1), idx(nv - 1, i), last]);
        }
        Mesh {
            vertices,
            triangles,
        }
    }
}
