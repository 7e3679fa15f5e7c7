//! Design against cut: how far each surface is from the other, where the
//! largest deviations are, and by how much the volumes differ; optionally
//! after a best-fit placement of a cut that was not made at the design's
//! origin (iterative closest point, P. J. Besl and N. D. McKay, IEEE PAMI
//! 14(2), 1992, with the rigid fit of each step in closed form by unit
//! quaternions, B. K. P. Horn, J. Opt. Soc. Am. A 4(4), 1987).

use rayon::prelude::*;
use serde::Serialize;

use crate::geom::nearest::Nearest;
use crate::model::mesh::{Mesh, dot, sub};
use crate::svg::{self, Svg};
use crate::volume::measure as volume;

/// Distances from the points of one surface to the other.
#[derive(Debug, Clone, Serialize)]
pub struct Distances {
    /// Points measured (the surface's vertices).
    pub points: usize,
    /// Largest distance, mm.
    pub max_mm: f64,
    /// Mean distance, mm.
    pub mean_mm: f64,
    /// Root mean square distance, mm.
    pub rms_mm: f64,
}

/// A large deviation and where it is on the design.
#[derive(Debug, Clone, Serialize)]
pub struct Worst {
    /// The design point, mm.
    pub at_mm: [f64; 3],
    /// Signed deviation of the cut there: + the cut stands proud of the
    /// design (stock left), − it is inside the design (a gouge), mm.
    pub deviation_mm: f64,
}

/// The rigid placement found for the cut.
#[derive(Debug, Clone, Serialize)]
pub struct Alignment {
    /// Rotation applied to the cut (rows).
    pub rotation: [[f64; 3]; 3],
    /// The rotation as angles about x, then y, then z, degrees.
    pub rotation_xyz_deg: [f64; 3],
    /// Translation applied after the rotation, mm.
    pub translation_mm: [f64; 3],
    /// RMS distance of the sampled design points before, mm.
    pub rms_before_mm: f64,
    /// And after, mm.
    pub rms_after_mm: f64,
    /// ICP iterations run.
    pub iterations: usize,
}

/// What `compare` reports.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// Symmetric Hausdorff distance: the larger of the two maxima, mm.
    pub hausdorff_mm: f64,
    /// From the design's points to the cut.
    pub design_to_cut: Distances,
    /// From the cut's points to the design.
    pub cut_to_design: Distances,
    /// The largest deviations on the design, at least 50 mm apart.
    pub worst: Vec<Worst>,
    /// Design volume, litres.
    pub design_volume_litres: f64,
    /// Cut volume, litres.
    pub cut_volume_litres: f64,
    /// Cut minus design, litres.
    pub volume_difference_litres: f64,
    /// The placement found with `--align`.
    pub alignment: Option<Alignment>,
}

fn side(d: &[f64]) -> Distances {
    let n = d.len().max(1) as f64;
    Distances {
        points: d.len(),
        max_mm: d.iter().map(|x| x.abs()).fold(0.0, f64::max),
        mean_mm: d.iter().map(|x| x.abs()).sum::<f64>() / n,
        rms_mm: (d.iter().map(|x| x * x).sum::<f64>() / n).sqrt(),
    }
}

/// Signed deviation of `surface` at each point: + where the point lies
/// inside `surface` (the surface stands proud of it), − outside.
fn signed_distances(points: &[[f64; 3]], surface: &Nearest) -> Vec<f64> {
    points
        .par_iter()
        .map(|&p| match surface.closest(p) {
            Some(hit) => {
                let n = surface.normal(hit.triangle);
                if dot(sub(hit.point, p), n) >= 0.0 {
                    hit.distance
                } else {
                    -hit.distance
                }
            }
            None => f64::NAN,
        })
        .collect()
}

/// Largest eigenvector of a symmetric 4×4 matrix (cyclic Jacobi rotations;
/// Golub and Van Loan, *Matrix Computations*, sec. 8.5).
fn top_eigenvector(mut a: [[f64; 4]; 4]) -> [f64; 4] {
    let mut v = [[0.0; 4]; 4];
    for (i, row) in v.iter_mut().enumerate() {
        row[i] = 1.0;
    }
    for _ in 0..50 {
        let off: f64 = (0..4)
            .flat_map(|i| (0..4).filter(move |&j| j != i).map(move |j| (i, j)))
            .map(|(i, j)| a[i][j] * a[i][j])
            .sum();
        if off < 1e-30 {
            break;
        }
        for p in 0..3 {
            for q in p + 1..4 {
                if a[p][q].abs() < 1e-300 {
                    continue;
                }
                let theta = (a[q][q] - a[p][p]) / (2.0 * a[p][q]);
                let t = theta.signum() / (theta.abs() + (theta * theta + 1.0).sqrt());
                let t = if theta == 0.0 { 1.0 } else { t };
                let c = 1.0 / (t * t + 1.0).sqrt();
                let s = t * c;
                for row in a.iter_mut() {
                    let (akp, akq) = (row[p], row[q]);
                    row[p] = c * akp - s * akq;
                    row[q] = s * akp + c * akq;
                }
                let (rp, rq) = (a[p], a[q]);
                for k in 0..4 {
                    a[p][k] = c * rp[k] - s * rq[k];
                    a[q][k] = s * rp[k] + c * rq[k];
                }
                for row in v.iter_mut() {
                    let (vkp, vkq) = (row[p], row[q]);
                    row[p] = c * vkp - s * vkq;
                    row[q] = s * vkp + c * vkq;
                }
            }
        }
    }
    let best = (0..4)
        .max_by(|&i, &j| a[i][i].total_cmp(&a[j][j]))
        .unwrap_or(0);
    [v[0][best], v[1][best], v[2][best], v[3][best]]
}

/// The rotation and translation that best map `from[i]` onto `to[i]`
/// (least squares; Horn 1987).
pub fn rigid_fit(from: &[[f64; 3]], to: &[[f64; 3]]) -> ([[f64; 3]; 3], [f64; 3]) {
    let n = from.len() as f64;
    let mean = |pts: &[[f64; 3]]| {
        let mut m = [0.0; 3];
        for p in pts {
            for k in 0..3 {
                m[k] += p[k] / n;
            }
        }
        m
    };
    let (ca, cb) = (mean(from), mean(to));
    let mut s = [[0.0; 3]; 3];
    for (a, b) in from.iter().zip(to) {
        let (a, b) = (sub(*a, ca), sub(*b, cb));
        for i in 0..3 {
            for j in 0..3 {
                s[i][j] += a[i] * b[j];
            }
        }
    }
    let (sxx, sxy, sxz) = (s[0][0], s[0][1], s[0][2]);
    let (syx, syy, syz) = (s[1][0], s[1][1], s[1][2]);
    let (szx, szy, szz) = (s[2][0], s[2][1], s[2][2]);
    let nm = [
        [sxx + syy + szz, syz - szy, szx - sxz, sxy - syx],
        [syz - szy, sxx - syy - szz, sxy + syx, szx + sxz],
        [szx - sxz, sxy + syx, -sxx + syy - szz, syz + szy],
        [sxy - syx, szx + sxz, syz + szy, -sxx - syy + szz],
    ];
    let [w, x, y, z] = top_eigenvector(nm);
    let r = [
        [
            w * w + x * x - y * y - z * z,
            2.0 * (x * y - w * z),
            2.0 * (x * z + w * y),
        ],
        [
            2.0 * (x * y + w * z),
            w * w - x * x + y * y - z * z,
            2.0 * (y * z - w * x),
        ],
        [
            2.0 * (x * z - w * y),
            2.0 * (y * z + w * x),
            w * w - x * x - y * y + z * z,
        ],
    ];
    let rc = apply(&r, [0.0; 3], ca);
    (r, sub(cb, rc))
}

fn apply(r: &[[f64; 3]; 3], t: [f64; 3], p: [f64; 3]) -> [f64; 3] {
    [
        r[0][0] * p[0] + r[0][1] * p[1] + r[0][2] * p[2] + t[0],
        r[1][0] * p[0] + r[1][1] * p[1] + r[1][2] * p[2] + t[1],
        r[2][0] * p[0] + r[2][1] * p[1] + r[2][2] * p[2] + t[2],
    ]
}

fn compose(
    r2: &[[f64; 3]; 3],
    t2: [f64; 3],
    r1: &[[f64; 3]; 3],
    t1: [f64; 3],
) -> ([[f64; 3]; 3], [f64; 3]) {
    let mut r = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..3 {
            r[i][j] = (0..3).map(|k| r2[i][k] * r1[k][j]).sum();
        }
    }
    (r, apply(r2, t2, t1))
}

/// Moves `cut` onto `design` by iterative closest point; returns the moved
/// cut and the placement.
pub fn align(design: &Mesh, cut: &Mesh) -> (Mesh, Alignment) {
    let stride = (design.vertices.len() / 4000).max(1);
    let samples: Vec<[f64; 3]> = design.vertices.iter().step_by(stride).copied().collect();
    let tree = Nearest::new(cut);
    // Move the design samples onto the cut (the cut's tree stays put), then
    // invert: the cut's placement is the inverse of the samples'.
    let centre = |pts: &[[f64; 3]]| {
        let n = pts.len().max(1) as f64;
        pts.iter().fold([0.0; 3], |m, p| {
            [m[0] + p[0] / n, m[1] + p[1] / n, m[2] + p[2] / n]
        })
    };
    let id = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]];
    let rms_at = |r: &[[f64; 3]; 3], t: [f64; 3]| {
        let moved: Vec<[f64; 3]> = samples.iter().map(|&p| apply(r, t, p)).collect();
        let hits: Vec<[f64; 3]> = moved
            .par_iter()
            .map(|&p| tree.closest(p).map_or(p, |h| h.point))
            .collect();
        let rms = (moved
            .iter()
            .zip(&hits)
            .map(|(a, b)| dot(sub(*a, *b), sub(*a, *b)))
            .sum::<f64>()
            / moved.len().max(1) as f64)
            .sqrt();
        (moved, hits, rms)
    };
    let (_, _, rms_before) = rms_at(&id, [0.0; 3]);
    let (mut r, mut t) = (id, sub(centre(&cut.vertices), centre(&design.vertices)));
    let mut last = f64::INFINITY;
    let mut iterations = 0;
    let mut rms = rms_before;
    for _ in 0..100 {
        iterations += 1;
        let (moved, hits, now) = rms_at(&r, t);
        rms = now;
        if (last - now).abs() < 1e-7 * (1.0 + now) {
            break;
        }
        last = now;
        let (dr, dt) = rigid_fit(&moved, &hits);
        (r, t) = compose(&dr, dt, &r, t);
    }
    // The cut moves by the inverse: p = Rᵀ(q − t).
    let rt = [
        [r[0][0], r[1][0], r[2][0]],
        [r[0][1], r[1][1], r[2][1]],
        [r[0][2], r[1][2], r[2][2]],
    ];
    let back = apply(&rt, [0.0; 3], t);
    let inv_t = [-back[0], -back[1], -back[2]];
    let moved = Mesh {
        vertices: cut.vertices.iter().map(|&q| apply(&rt, inv_t, q)).collect(),
        triangles: cut.triangles.clone(),
    };
    // Angles of R = Rz·Ry·Rx.
    let ry = (-rt[2][0]).clamp(-1.0, 1.0).asin();
    let rx = rt[2][1].atan2(rt[2][2]);
    let rz = rt[1][0].atan2(rt[0][0]);
    let alignment = Alignment {
        rotation: rt,
        rotation_xyz_deg: [rx.to_degrees(), ry.to_degrees(), rz.to_degrees()],
        translation_mm: inv_t,
        rms_before_mm: rms_before,
        rms_after_mm: rms,
        iterations,
    };
    (moved, alignment)
}

/// Compares `cut` with `design`; with `align`, places the cut first.
/// Returns the comparison and the signed deviation at each design vertex.
pub fn compare(design: &Mesh, cut: &Mesh, align_first: bool) -> (Comparison, Vec<f64>) {
    let (cut, alignment) = if align_first {
        let (m, a) = align(design, cut);
        (m, Some(a))
    } else {
        (cut.clone(), None)
    };
    let (dt, ct) = (Nearest::new(design), Nearest::new(&cut));
    let on_design = signed_distances(&design.vertices, &ct);
    let on_cut = signed_distances(&cut.vertices, &dt);
    let (a, b) = (side(&on_design), side(&on_cut));
    let mut order: Vec<usize> = (0..on_design.len()).collect();
    order.sort_by(|&i, &j| {
        on_design[j]
            .abs()
            .total_cmp(&on_design[i].abs())
            .then(i.cmp(&j))
    });
    let mut worst: Vec<Worst> = vec![];
    for i in order {
        let p = design.vertices[i];
        if worst
            .iter()
            .all(|w| dot(sub(w.at_mm, p), sub(w.at_mm, p)) >= 50.0 * 50.0)
        {
            worst.push(Worst {
                at_mm: p,
                deviation_mm: on_design[i],
            });
            if worst.len() == 5 {
                break;
            }
        }
    }
    let (vd, vc) = (volume::volume(design) * 1e-6, volume::volume(&cut) * 1e-6);
    (
        Comparison {
            hausdorff_mm: a.max_mm.max(b.max_mm),
            design_to_cut: a,
            cut_to_design: b,
            worst,
            design_volume_litres: vd,
            cut_volume_litres: vc,
            volume_difference_litres: vc - vd,
            alignment,
        },
        on_design,
    )
}

/// Plan views of the design's deck (seen from above) and bottom (seen from
/// below, so mirrored across the stringer), coloured by the cut's deviation
/// (the extreme in each cell, interpolated across each triangle from its
/// corners), with a legend in mm; true scale.
pub fn deviation_svg(title: &str, design: &Mesh, deviation: &[f64]) -> String {
    let (lo, hi) = design.bounding_box().unwrap_or(([0.0; 3], [1.0; 3]));
    let (w, h) = (hi[0] - lo[0], hi[1] - lo[1]);
    let cell = (w.max(h) / 300.0).max(2.0);
    let (nx, ny) = (
        (w / cell).ceil().max(1.0) as usize,
        (h / cell).ceil().max(1.0) as usize,
    );
    // Two grids: deck (normal up) and bottom (normal down).
    let mut grids: [Vec<Option<f64>>; 2] = [vec![None; nx * ny], vec![None; nx * ny]];
    for t in &design.triangles {
        let [a, b, c] = design.corners(t);
        let n = crate::model::mesh::cross(sub(b, a), sub(c, a));
        let grid = &mut grids[usize::from(n[2] < 0.0)];
        let d = t.map(|v| deviation[v as usize]);
        let span = [a, b, c]
            .iter()
            .flat_map(|p| [a, b, c].map(|q| ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)).sqrt()))
            .fold(0.0, f64::max);
        let k = ((2.0 * span / cell).ceil() as usize).clamp(1, 400);
        for i in 0..=k {
            for j in 0..=k - i {
                let (u, v) = (i as f64 / k as f64, j as f64 / k as f64);
                let wgt = 1.0 - u - v;
                let x = wgt * a[0] + u * b[0] + v * c[0];
                let y = wgt * a[1] + u * b[1] + v * c[1];
                let dev = wgt * d[0] + u * d[1] + v * d[2];
                let ci = (((x - lo[0]) / cell) as usize).min(nx - 1);
                let cj = (((y - lo[1]) / cell) as usize).min(ny - 1);
                let g = &mut grid[cj * nx + ci];
                if g.is_none_or(|old| dev.abs() > old.abs()) {
                    *g = Some(dev);
                }
            }
        }
    }
    let scale = deviation
        .iter()
        .map(|d| d.abs())
        .fold(0.0, f64::max)
        .max(0.1);
    // Ten bands each side of zero: a stepped legend is easier to read.
    let band = |d: f64| svg::diverging((d / scale * 10.0).round() / 10.0);
    let margin = 15.0;
    let legend = 30.0;
    let panel = h + margin;
    let mut doc = Svg::new(w + 2.0 * margin, 2.0 * panel + 2.0 * margin + legend);
    doc.text(
        [margin, 0.6 * margin],
        4.0,
        &format!("{title}: cut against design, plan views, true scale (mm)"),
    );
    for (side, grid) in grids.iter().enumerate() {
        let top = margin + side as f64 * panel + 5.0;
        let label = if side == 0 {
            "deck, seen from above"
        } else {
            "bottom, seen from below"
        };
        doc.text([margin, top], 3.5, label);
        for j in 0..ny {
            // Deck: +y up the page; bottom seen from below: +y down.
            let row = if side == 0 { ny - 1 - j } else { j };
            let y = top + 2.0 + row as f64 * cell;
            // Runs of one colour along a row become one rectangle.
            let mut i = 0;
            while i < nx {
                let Some(d) = grid[j * nx + i] else {
                    i += 1;
                    continue;
                };
                let colour = band(d);
                let mut end = i + 1;
                while end < nx && grid[j * nx + end].is_some_and(|e| band(e) == colour) {
                    end += 1;
                }
                doc.rect(
                    [margin + i as f64 * cell, y],
                    [(end - i) as f64 * cell + 0.02, cell + 0.02],
                    &colour,
                );
                i = end;
            }
        }
    }
    let top = margin + 2.0 * panel + 10.0;
    let steps = 21;
    let bar = (w * 0.6).max(100.0);
    for k in 0..steps {
        let t = -1.0 + 0.1 * k as f64;
        doc.rect(
            [margin + bar * k as f64 / steps as f64, top],
            [bar / steps as f64 + 0.05, 5.0],
            &svg::diverging(t),
        );
    }
    for k in [0, 5, 10, 15, 20] {
        let t = -1.0 + 0.1 * k as f64;
        let x = margin + bar * (k as f64 + 0.5) / steps as f64 - 4.0;
        doc.text([x, top + 10.0], 3.0, &format!("{:+.2} mm", t * scale));
    }
    doc.text(
        [margin, top + 17.0],
        3.0,
        "blue: the cut is inside the design (gouge); red: it stands proud (stock left)",
    );
    doc.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rigid_fit_recovers_a_known_motion() {
        // A rotation of 30° about z and a shift (elementary kinematics).
        let (c, s) = (30f64.to_radians().cos(), 30f64.to_radians().sin());
        let r = [[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]];
        let from: Vec<[f64; 3]> = (0..20)
            .map(|i| [i as f64, (i * i % 7) as f64, (i % 3) as f64])
            .collect();
        let to: Vec<[f64; 3]> = from
            .iter()
            .map(|&p| apply(&r, [5.0, -2.0, 1.0], p))
            .collect();
        let (fr, ft) = rigid_fit(&from, &to);
        for i in 0..3 {
            for j in 0..3 {
                assert!((fr[i][j] - r[i][j]).abs() < 1e-9);
            }
        }
        assert!(
            (ft[0] - 5.0).abs() < 1e-9 && (ft[1] + 2.0).abs() < 1e-9 && (ft[2] - 1.0).abs() < 1e-9
        );
    }
}
