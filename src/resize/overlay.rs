//! Two boards drawn over each other at true scale: the half outline from
//! the stringer in plan, and the bottom and deck at the stringer in side
//! view. Both are measured the same way, from slices of their meshes, so a
//! description and an STL can be drawn together.

use crate::model::mesh::Mesh;
use crate::slice::plane::{Axis, slice_many};
use crate::svg::Svg;

/// A board's plan and side curves, measured from its mesh.
pub struct Curves {
    /// Name, for the legend.
    pub name: String,
    /// Distance from the nose of each sample, mm.
    pub x: Vec<f64>,
    /// Half-width there (largest |y| of the section), mm.
    pub half_width: Vec<f64>,
    /// Lowest point of the section, mm.
    pub bottom: Vec<f64>,
    /// Highest point of the section, mm.
    pub deck: Vec<f64>,
}

/// Measures `mesh` at `samples` stations along x (nose at its smallest x).
pub fn curves(name: &str, mesh: &Mesh, samples: usize) -> Curves {
    let (lo, hi) = mesh.bounding_box().unwrap_or(([0.0; 3], [0.0; 3]));
    let len = hi[0] - lo[0];
    let xs: Vec<f64> = (1..samples)
        .map(|i| lo[0] + len * i as f64 / samples as f64)
        .collect();
    let slices = slice_many(mesh, Axis::X, &xs);
    let mut p = Curves {
        name: name.to_string(),
        x: vec![0.0],
        half_width: vec![0.0],
        bottom: vec![f64::NAN],
        deck: vec![f64::NAN],
    };
    for (x, s) in xs.iter().zip(&slices) {
        let pts = s.loops.iter().flatten();
        let (mut w, mut b, mut d) = (0.0f64, f64::INFINITY, f64::NEG_INFINITY);
        for q in pts {
            w = w.max(q[0].abs());
            b = b.min(q[1]);
            d = d.max(q[1]);
        }
        if b.is_finite() {
            p.x.push(x - lo[0]);
            p.half_width.push(w);
            p.bottom.push(b);
            p.deck.push(d);
        }
    }
    p.x.push(len);
    p.half_width.push(0.0);
    p.bottom.push(f64::NAN);
    p.deck.push(f64::NAN);
    p
}

const COLOURS: [&str; 2] = ["#1f4e9c", "#c0392b"];

/// The overlay of `a` and `b`.
pub fn svg(title: &str, a: &Curves, b: &Curves) -> String {
    let margin = 15.0;
    let len =
        a.x.last()
            .copied()
            .unwrap_or(0.0)
            .max(b.x.last().copied().unwrap_or(0.0));
    let half = a
        .half_width
        .iter()
        .chain(&b.half_width)
        .fold(0.0f64, |m, &v| m.max(v));
    let (zlo, zhi) = a
        .bottom
        .iter()
        .chain(&b.bottom)
        .chain(&a.deck)
        .chain(&b.deck)
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
            (l.min(v), h.max(v))
        });
    let side = (zhi - zlo).max(1.0);
    let mut doc = Svg::new(len + 2.0 * margin, half + side + 4.0 * margin + 12.0);
    doc.text(
        [margin, 0.6 * margin],
        4.0,
        &format!("{title}: half outline from the stringer, and side view; true scale (mm)"),
    );
    let plan_base = margin + 5.0 + half;
    let side_top = plan_base + 2.0 * margin;
    doc.line(
        [margin, plan_base],
        [margin + len, plan_base],
        "#888888",
        0.25,
        Some((3.0, 1.5)),
    );
    for (i, p) in [a, b].into_iter().enumerate() {
        let c = COLOURS[i];
        let plan: Vec<[f64; 2]> =
            p.x.iter()
                .zip(&p.half_width)
                .map(|(x, w)| [margin + x, plan_base - w])
                .collect();
        doc.path(&plan, false, c, 0.4, None);
        for curve in [&p.bottom, &p.deck] {
            let pts: Vec<[f64; 2]> =
                p.x.iter()
                    .zip(curve.iter())
                    .filter(|(_, z)| z.is_finite())
                    .map(|(x, z)| [margin + x, side_top + (zhi - z)])
                    .collect();
            doc.path(&pts, false, c, 0.4, None);
        }
        let y = side_top + side + margin + 6.0 * i as f64;
        doc.rect([margin, y - 3.0], [8.0, 3.0], c);
        doc.text([margin + 10.0, y], 3.5, &p.name);
    }
    doc.finish()
}
