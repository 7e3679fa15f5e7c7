//! The drop-cutter against brute force, closed forms and geometry.

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

/// `count` triangles, half long and half short (`sizes[0]`, `sizes[1]`
/// along X, the short size across), placed within `spread` of the
/// origin in plan and `height` in Z; and a mesh of them.
fn soup(
    rnd: &mut impl FnMut() -> f64,
    count: usize,
    spread: f64,
    sizes: [f64; 2],
    height: f64,
) -> (Vec<[[f64; 3]; 3]>, Mesh) {
    let mut tris = vec![];
    for _ in 0..count {
        let c = [rnd() * spread, rnd() * spread];
        let long = if rnd() > 0.5 { sizes[0] } else { sizes[1] };
        tris.push(
            [0, 1, 2].map(|_| [c[0] + rnd() * long, c[1] + rnd() * sizes[1], rnd() * height]),
        );
    }
    let mesh = Mesh {
        vertices: tris.iter().flatten().copied().collect(),
        triangles: (0..tris.len() as u32)
            .map(|k| [3 * k, 3 * k + 1, 3 * k + 2])
            .collect(),
    };
    (tris, mesh)
}

/// Drops `dc` (a ball of radius `r`) at `count` points over 80 × 80 mm
/// and checks each against the highest brute-force touch of `tris`, and
/// `above` on either side of it; returns how many points touched.
fn against_brute(
    dc: &DropCutter,
    tris: &[[[f64; 3]; 3]],
    r: f64,
    rnd: &mut impl FnMut() -> f64,
    count: usize,
) -> usize {
    let mut checked = 0;
    for _ in 0..count {
        let (x, y) = (rnd() * 80.0, rnd() * 80.0);
        let want = tris
            .iter()
            .filter_map(|t| brute(*t, x, y, r))
            .fold(None, |a: Option<f64>, z| Some(a.map_or(z, |a| a.max(z))));
        match (dc.drop(x, y), want) {
            (Some(g), Some(w)) => {
                assert!((g - w).abs() < 1e-6, "{g} vs {w} at {x},{y}");
                assert!(dc.above(x, y, g - 1e-5) && !dc.above(x, y, g + 1e-5));
                checked += 1;
            }
            (None, None) => assert!(!dc.above(x, y, f64::NEG_INFINITY)),
            (g, w) => panic!("{g:?} vs {w:?} at {x},{y}"),
        }
    }
    checked
}

#[test]
fn a_soup_drops_to_the_highest_of_its_triangles_alone() {
    // Brute force as above, triangle by triangle: over a soup of long
    // and short triangles spread over many cells, the drop is the
    // highest of the single triangles' touches, and `above` agrees
    // with it on either side of that height.
    let mut rnd = lcg(4242);
    let (tris, m) = soup(&mut rnd, 150, 60.0, [30.0, 4.0], 10.0);
    let r = 5.0;
    let dc = DropCutter::new(&[&m], Cutter::ball(2.0 * r));
    let checked = against_brute(&dc, &tris, r, &mut rnd, 400);
    assert!(checked > 200, "{checked}");
}

#[test]
fn a_tool_on_the_first_mesh_ignores_the_later_ones() {
    // Brute force as above: two soups prepared together (a board and its
    // tabs), a ball dropped on the first alone finds the highest of the
    // first soup's triangles and nothing of the second, however high
    // the second stands.
    let mut rnd = lcg(77);
    let (tris, first) = soup(&mut rnd, 120, 60.0, [30.0, 4.0], 10.0);
    let (_, mut second) = soup(&mut rnd, 120, 60.0, [30.0, 4.0], 10.0);
    for v in &mut second.vertices {
        v[2] += 20.0;
    }
    let r = 5.0;
    let prep = Arc::new(Prepared::new(&[&first, &second]));
    let dc = DropCutter::on_first(prep, Cutter::ball(2.0 * r), 1);
    let checked = against_brute(&dc, &tris, r, &mut rnd, 300);
    assert!(checked > 150, "{checked}");
}

#[test]
fn equal_touches_report_the_first_triangle_wherever_the_tool_is() {
    // Four steep faces meeting at an apex; a ball whose axis is off
    // the apex rests on the apex itself, touching all four at one
    // height (to the last bits), while the points of the faces' plan
    // boxes nearest its axis fall in different cells. Of equal touches
    // the one reported is the face first by highest corner, then in
    // the mesh (each face's touch found alone), not the one the search
    // meets first.
    let r = 3.0;
    for offset in [[-1.5, -1.5], [1.5, -1.2], [-0.4, 1.7], [1.1, 1.3]] {
        let base = [[-9.0, -9.0], [9.0, -9.0], [9.0, 9.0], [-9.0, 9.0]];
        let mut vertices = vec![[0.0, 0.0, 20.0]];
        vertices.extend(base.iter().map(|b| [b[0], b[1], 0.0]));
        let m = Mesh {
            vertices,
            triangles: vec![[0, 2, 3], [0, 3, 4], [0, 4, 1], [0, 1, 2]],
        };
        let alone: Vec<(f64, f64, [f64; 3])> = m
            .triangles
            .iter()
            .map(|t| {
                let one = Mesh {
                    vertices: m.vertices.clone(),
                    triangles: vec![*t],
                };
                let (z, n) = DropCutter::new(&[&one], Cutter::ball(2.0 * r))
                    .drop_contact(offset[0], offset[1])
                    .unwrap();
                let zmax = t
                    .map(|v| m.vertices[v as usize][2])
                    .into_iter()
                    .fold(f64::MIN, f64::max);
                (z, zmax, n)
            })
            .collect();
        let top = alone.iter().map(|a| a.0).fold(f64::MIN, f64::max);
        let equal: Vec<_> = alone.iter().filter(|a| a.0 >= top - EQUAL).collect();
        assert!(
            equal.len() >= 2,
            "{offset:?}: {} faces at the top",
            equal.len()
        );
        // The first of the highest corner among them.
        let want = equal
            .iter()
            .copied()
            .reduce(|a, b| if b.1 > a.1 { b } else { a })
            .unwrap();
        let (z, n) = DropCutter::new(&[&m], Cutter::ball(2.0 * r))
            .drop_contact(offset[0], offset[1])
            .unwrap();
        assert_eq!(z, want.0);
        let want = want.2;
        assert_eq!(n, want, "offset {offset:?}");
    }
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

#[test]
fn rays_at_a_lattice_are_the_point_drops_to_the_bit() {
    // The lattice's answers against the one-point drop of a point cutter
    // (itself checked against brute force above): a sphere (points on
    // its poles, edges and corners, where several faces touch at once)
    // and a soup of long and short triangles over it, lattices of nodes
    // and of cell centres reaching beyond both, all meshes and the
    // first alone.
    let sphere = uv_sphere(10.0, 24, 12);
    let (_, soup) = soup(&mut lcg(77), 120, 15.0, [20.0, 3.0], 12.0);
    let lattices = [
        Lattice {
            origin: [-12.0, -12.0],
            step: [0.5, 0.5],
            offset: 0.0,
            dims: [70, 66],
        },
        Lattice {
            origin: [-31.0, -13.3],
            step: [0.7, 0.45],
            offset: 0.5,
            dims: [90, 75],
        },
    ];
    let mut hits = 0;
    for meshes in [vec![&sphere, &soup], vec![&sphere]] {
        let all = [&sphere, &soup];
        let prepared = Arc::new(Prepared::new(&all));
        let point = DropCutter::new(&meshes, Cutter::flat(0.0));
        for lattice in &lattices {
            let got = prepared.rays(lattice, meshes.len());
            for j in 0..lattice.dims[1] {
                for i in 0..lattice.dims[0] {
                    let p = lattice.point(i, j);
                    let want = point.drop_contact(p[0], p[1]);
                    assert_eq!(got.contact(i, j), want, "{p:?}");
                    assert_eq!(got.hit(i, j), want.is_some());
                    hits += want.is_some() as usize;
                }
            }
        }
    }
    assert!(hits > 5000, "{hits}");
}

#[test]
fn a_hint_changes_no_answer_to_the_bit() {
    // The hint only lifts the floor the search starts from: with every
    // triangle as the hint (one touched, one beside, one far off, one
    // past the first mesh) the height, the floor kept and the normal
    // reported are those found without it, for each kind of tool, on a
    // soup of long and short triangles and on a sphere's facets.
    let (_, soup) = soup(&mut lcg(31), 60, 40.0, [20.0, 3.0], 12.0);
    let sphere = uv_sphere(10.0, 16, 8);
    let cutters = [
        Cutter::ball(12.7),
        Cutter::bull(25.4, 3.0),
        Cutter::flat(6.0),
    ];
    let mut rnd = lcg(5);
    for cutter in cutters {
        for (meshes, first) in [(vec![&soup, &sphere], 2), (vec![&soup, &sphere], 1)] {
            let dc = DropCutter::on_first(Arc::new(Prepared::new(&meshes)), cutter, first);
            let all = (soup.triangles.len() + sphere.triangles.len()) as u32;
            for _ in 0..40 {
                let (x, y) = (rnd() * 50.0 - 5.0, rnd() * 50.0 - 5.0);
                let floor = rnd() * 6.0;
                let (plain, contact) = (dc.drop_above(x, y, floor), dc.drop_contact(x, y));
                for t in (0..all).step_by(7).map(Some).chain([None]) {
                    let mut hint = t;
                    assert_eq!(dc.drop_above_near(x, y, floor, &mut hint), plain);
                    let mut hint = t;
                    assert_eq!(dc.drop_contact_near(x, y, &mut hint), contact);
                }
            }
        }
    }
}

#[test]
fn a_cell_extent_holds_what_index_places_there() {
    // The search tells which cell holds a point by comparing with each
    // cell's extent instead of dividing; every point must fall in the
    // extent of the cell `index` gives it, and in no other, at the
    // cells' edges above all (each edge, the doubles either side of it,
    // and points at random over and beyond the grid).
    let (_, soup) = soup(&mut lcg(9), 200, 300.0, [20.0, 3.0], 12.0);
    let prep = Prepared::new(&[&soup]);
    let mut rnd = lcg(12);
    for k in 0..2 {
        let mut offsets: Vec<f64> = prep.from[k]
            .iter()
            .flat_map(|&d| [d.next_down(), d, d.next_up()])
            .collect();
        offsets.extend((0..2000).map(|_| rnd() * 340.0 - 20.0));
        for d in offsets {
            let v = prep.origin[k] + d;
            let held: Vec<usize> = (0..prep.dims[k])
                .filter(|&i| {
                    let e = if k == 0 {
                        prep.extent(i, 0)
                    } else {
                        prep.extent(0, i)
                    };
                    let (lo, hi) = (e[2 * k], e[2 * k + 1]);
                    let off = v - prep.origin[k];
                    off >= lo && off < hi
                })
                .collect();
            assert_eq!(held, vec![prep.index(v, k)], "axis {k} at {v}");
        }
    }
}
