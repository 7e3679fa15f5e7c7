//! The exact contact of a tool lowered along a vertical line with one
//! triangle: a ball against the face, its edges (a cylinder about each)
//! and its corners; a flat end against the face, edges and corners; a
//! bull-nose against the face and along each edge (its corners are the
//! edges' ends). The drop-cutter takes the highest over its candidates.

/// A triangle made ready for the contact tests.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Tri {
    /// Plan bounding box: min x, min y, max x, max y.
    pub bb: [f64; 4],
    pub p: [[f64; 3]; 3],
    /// Each edge k (corner k to k + 1): unit direction, length, and
    /// 1 − u_z², precomputed for the ball's edge test.
    pub edges: [([f64; 3], f64, f64); 3],
    /// Unit normal, made to point up (nz >= 0).
    pub n: [f64; 3],
    pub zmax: f64,
}

/// Where the vertical line through a point, (wx, wy) in plan from a
/// segment's start, crosses the cylinder of squared radius `r2` about the
/// segment (unit direction `u`, length `len`, `a` = 1 − u_z²): the height
/// above the start of the upper (`upper`) or lower crossing, if that
/// crossing is beside the segment rather than beyond its ends. Shared by
/// the drop-cutter (a ball on an edge) and the height map (the capsule a
/// ball sweeps).
#[inline]
pub fn cylinder_crossing(
    wx: f64,
    wy: f64,
    u: [f64; 3],
    len: f64,
    a: f64,
    r2: f64,
    upper: bool,
) -> Option<f64> {
    let (k0, bq, disc) = cylinder_quadratic(wx, wy, u, a, r2);
    if disc < 0.0 {
        return None;
    }
    let (s, along) = cylinder_root((k0, bq, disc), u, a, upper);
    (0.0..=len).contains(&along).then_some(s)
}

/// The quadratic in the height s whose roots are the crossings of
/// [`cylinder_crossing`]: the distance along the segment of the point
/// level with its start (k0), the linear coefficient and the
/// discriminant (negative: no crossing).
#[inline(always)]
pub fn cylinder_quadratic(wx: f64, wy: f64, u: [f64; 3], a: f64, r2: f64) -> (f64, f64, f64) {
    let k0 = wx * u[0] + wy * u[1];
    let bq = -2.0 * k0 * u[2];
    let cq = wx * wx + wy * wy - k0 * k0 - r2;
    (k0, bq, bq * bq - 4.0 * a * cq)
}

/// The upper or lower root of [`cylinder_quadratic`] (a discriminant not
/// below zero) and how far along the segment it lies.
#[inline(always)]
pub fn cylinder_root(
    (k0, bq, disc): (f64, f64, f64),
    u: [f64; 3],
    a: f64,
    upper: bool,
) -> (f64, f64) {
    let root = disc.sqrt();
    let s = if upper {
        (-bq + root) / (2.0 * a)
    } else {
        (-bq - root) / (2.0 * a)
    };
    (s, k0 + s * u[2])
}

/// Whether (x, y) lies in the triangle's plan projection (edges included).
#[inline]
fn inside_plan(t: &Tri, x: f64, y: f64) -> bool {
    let [a, b, c] = t.p;
    let d1 = (b[0] - a[0]) * (y - a[1]) - (b[1] - a[1]) * (x - a[0]);
    let d2 = (c[0] - b[0]) * (y - b[1]) - (c[1] - b[1]) * (x - b[0]);
    let d3 = (a[0] - c[0]) * (y - c[1]) - (a[1] - c[1]) * (x - c[0]);
    (d1 >= 0.0 && d2 >= 0.0 && d3 >= 0.0) || (d1 <= 0.0 && d2 <= 0.0 && d3 <= 0.0)
}

#[inline]
fn plane_z(t: &Tri, x: f64, y: f64) -> f64 {
    let a = t.p[0];
    a[2] - (t.n[0] * (x - a[0]) + t.n[1] * (y - a[1])) / t.n[2]
}

/// Faces steeper than this are left to their edges (no face contact from above).
const MIN_NZ: f64 = 1e-9;

/// Highest tip height of a ball of radius `r` centred over (x, y) touching
/// `t`, if above `floor` (else at most `floor`). Each contact's tip is no
/// higher than its contact point, so an edge or vertex that does not rise
/// above `floor` is skipped.
#[inline]
pub(crate) fn ball_touch(t: &Tri, x: f64, y: f64, r: f64, floor: f64) -> f64 {
    let mut best = floor;
    // Face: the centre sits r along the normal from the contact point.
    // The ball rests on the triangle's whole plane there, and no part of
    // the plane holds it higher: a plane that cannot lift it above
    // `floor` leaves nothing to find on its edges or corners.
    if t.n[2] > MIN_NZ {
        let qx = x - r * t.n[0];
        let qy = y - r * t.n[1];
        let on_plane = plane_z(t, qx, qy) + r * t.n[2] - r;
        if on_plane < floor {
            return floor;
        }
        if inside_plan(t, qx, qy) {
            best = best.max(on_plane);
        }
    }
    let r2 = r * r;
    for k in 0..3 {
        let p0 = t.p[k];
        let p1 = t.p[(k + 1) % 3];
        if p0[2].max(p1[2]) <= best {
            continue;
        }
        // Vertex.
        let d2 = (x - p0[0]).powi(2) + (y - p0[1]).powi(2);
        if d2 <= r2 && p0[2] > best {
            best = best.max(p0[2] + (r2 - d2).sqrt() - r);
        }
        // Edge: the centre line x = (x, y, s) at distance r from the line
        // through p0, p1; keep the contact only within the segment.
        let (u, len, a) = t.edges[k];
        if len <= 0.0 || a < 1e-12 {
            continue;
        }
        if let Some(s) = cylinder_crossing(x - p0[0], y - p0[1], u, len, a, r2, true) {
            best = best.max(p0[2] + s - r);
        }
    }
    best
}

/// Highest tip height of a flat end of radius `r` centred over (x, y) touching `t`.
#[inline]
pub(crate) fn flat_touch(t: &Tri, x: f64, y: f64, r: f64) -> f64 {
    flat_touch_above(t, x, y, r, f64::NEG_INFINITY)
}

/// [`flat_touch`] where it reaches `floor`; −∞ sooner where the
/// triangle's plane, highest over the disc at its rim up the slope, does
/// not (the triangle's edges and corners lie in that plane, within the
/// disc, so none rises above it).
#[inline]
pub(crate) fn flat_touch_above(t: &Tri, x: f64, y: f64, r: f64, floor: f64) -> f64 {
    if r == 0.0 {
        // A vertical ray: only a face can be hit (edges and corners are
        // hit only where a face is too).
        return if t.n[2] > MIN_NZ && inside_plan(t, x, y) {
            plane_z(t, x, y)
        } else {
            f64::NEG_INFINITY
        };
    }
    let mut best = f64::NEG_INFINITY;
    // Face: a plane is highest over the disc at the rim point up the slope.
    if t.n[2] > MIN_NZ {
        let g = (t.n[0] * t.n[0] + t.n[1] * t.n[1]).sqrt();
        let (qx, qy) = if g > 1e-15 {
            (x - r * t.n[0] / g, y - r * t.n[1] / g)
        } else {
            (x, y)
        };
        let on_plane = plane_z(t, qx, qy);
        if on_plane < floor {
            return f64::NEG_INFINITY;
        }
        if inside_plan(t, qx, qy) {
            best = on_plane;
        }
    }
    let r2 = r * r;
    for k in 0..3 {
        let p0 = t.p[k];
        let p1 = t.p[(k + 1) % 3];
        let d2 = (x - p0[0]).powi(2) + (y - p0[1]).powi(2);
        if d2 <= r2 {
            best = best.max(p0[2]);
        }
        // Edge: z is linear along it, so its highest point over the disc is
        // where the segment leaves the disc.
        let dx = p1[0] - p0[0];
        let dy = p1[1] - p0[1];
        let a = dx * dx + dy * dy;
        if a <= 0.0 {
            continue;
        }
        let fx = p0[0] - x;
        let fy = p0[1] - y;
        let b = 2.0 * (fx * dx + fy * dy);
        let c = fx * fx + fy * fy - r2;
        let disc = b * b - 4.0 * a * c;
        if disc < 0.0 {
            continue;
        }
        let sq = disc.sqrt();
        for s in [(-b - sq) / (2.0 * a), (-b + sq) / (2.0 * a)] {
            if (0.0..=1.0).contains(&s) {
                best = best.max(p0[2] + s * (p1[2] - p0[2]));
            }
        }
    }
    best
}

/// Highest tip height of a bull-nose of radius `r` (corner radius `c`,
/// flat radius `a = r − c`) centred over (x, y) touching `t`, if above
/// `floor` (else at most `floor`).
///
/// The tool is a flat disc of radius `a` swept by a ball of radius `c`,
/// so against a face it touches where both are lowest along the face's
/// normal n: the corner circle's centre `a` up the slope from the axis,
/// the contact `c` along −n from there (geometry: a support point of a
/// Minkowski sum is the sum of the parts' support points). Against an
/// edge the tip it needs at each point of the edge is the point's height
/// less the tool's rise `h(d)` at the point's distance `d` from the axis
/// (flat to `a`, then the corner arc); `d` is convex along the edge and
/// `h` convex and rising, so the need is concave and its highest point is
/// found by golden-section search (Kiefer, "Sequential minimax search for
/// a maximum", Proc. AMS 4, 1953). A vertex is an edge's end.
#[inline]
pub(crate) fn bull_touch(t: &Tri, x: f64, y: f64, r: f64, c: f64, floor: f64) -> f64 {
    let a = r - c;
    let mut best = floor;
    if t.n[2] > MIN_NZ {
        let g = (t.n[0] * t.n[0] + t.n[1] * t.n[1]).sqrt();
        let (ux, uy) = if g > 1e-15 {
            (t.n[0] / g, t.n[1] / g)
        } else {
            (0.0, 0.0)
        };
        let qx = x - a * ux - c * t.n[0];
        let qy = y - a * uy - c * t.n[1];
        if inside_plan(t, qx, qy) {
            best = best.max(plane_z(t, qx, qy) - c + c * t.n[2]);
        }
    }
    let rise = |d: f64| {
        if d <= a {
            0.0
        } else {
            let u = d - a;
            c - (c * c - u * u).max(0.0).sqrt()
        }
    };
    let r2 = r * r;
    for k in 0..3 {
        let p0 = t.p[k];
        let p1 = t.p[(k + 1) % 3];
        if p0[2].max(p1[2]) <= best {
            continue;
        }
        // Where along the edge (0..1) the point is within r of the axis.
        let (dx, dy) = (p1[0] - p0[0], p1[1] - p0[1]);
        let (fx, fy) = (p0[0] - x, p0[1] - y);
        let qa = dx * dx + dy * dy;
        let qb = 2.0 * (fx * dx + fy * dy);
        let qc = fx * fx + fy * fy - r2;
        let (s0, s1) = if qa <= 1e-18 {
            if qc > 0.0 {
                continue;
            }
            (0.0, 0.0)
        } else {
            let disc = qb * qb - 4.0 * qa * qc;
            if disc < 0.0 {
                continue;
            }
            let sq = disc.sqrt();
            let (lo, hi) = ((-qb - sq) / (2.0 * qa), (-qb + sq) / (2.0 * qa));
            if hi < 0.0 || lo > 1.0 {
                continue;
            }
            (lo.max(0.0), hi.min(1.0))
        };
        let need = |s: f64| {
            let (ex, ey) = (fx + s * dx, fy + s * dy);
            let d = (ex * ex + ey * ey).sqrt().min(r);
            p0[2] + s * (p1[2] - p0[2]) - rise(d)
        };
        // No point of the edge needs more than its top less the rise at
        // the edge's nearest approach to the axis.
        let foot = if qa > 1e-18 {
            (-(fx * dx + fy * dy) / qa).clamp(s0, s1)
        } else {
            0.0
        };
        let (ex, ey) = (fx + foot * dx, fy + foot * dy);
        let nearest = (ex * ex + ey * ey).sqrt().min(r);
        if p0[2].max(p1[2]) - rise(nearest) <= best {
            continue;
        }
        let mut top = need(s0).max(need(s1));
        if s1 > s0 {
            const INV_PHI: f64 = 0.618_033_988_749_894_8;
            let (mut lo, mut hi) = (s0, s1);
            let mut m1 = hi - INV_PHI * (hi - lo);
            let mut m2 = lo + INV_PHI * (hi - lo);
            let (mut f1, mut f2) = (need(m1), need(m2));
            // 0.618^32 of an edge: 0.02 µm of a 10 cm edge, and the need
            // is flat at its highest point.
            for _ in 0..32 {
                if f1 < f2 {
                    lo = m1;
                    m1 = m2;
                    f1 = f2;
                    m2 = lo + INV_PHI * (hi - lo);
                    f2 = need(m2);
                } else {
                    hi = m2;
                    m2 = m1;
                    f2 = f1;
                    m1 = hi - INV_PHI * (hi - lo);
                    f1 = need(m1);
                }
            }
            top = top.max(f1).max(f2);
        }
        best = best.max(top);
    }
    best
}
