//! Slices drawn and tabled: a true-scale SVG of each set of slices and a
//! CSV of their contour points, for templates, checking and other programs.

use std::fmt::Write as _;

use crate::slice::plane::{Axis, Slice};
use crate::svg::{self, Svg};
use crate::units::Both;

const MARGIN: f64 = 15.0;
const LABEL: f64 = 5.0;

/// A set of slices with the distance each is quoted at (from the nose for
/// cross-sections, above the lowest point for waterlines).
pub struct SliceSet<'a> {
    /// Board or mesh name.
    pub name: &'a str,
    /// The slices.
    pub slices: &'a [Slice],
    /// What each slice's position means, for labels.
    pub quoted: Vec<f64>,
}

fn bounds(slices: &[Slice]) -> ([f64; 2], [f64; 2]) {
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for p in slices
        .iter()
        .flat_map(|s| s.loops.iter().chain(&s.open))
        .flatten()
    {
        for k in 0..2 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    if !lo[0].is_finite() {
        return ([0.0; 2], [1.0; 2]);
    }
    (lo, hi)
}

/// One line of text about a slice.
pub fn describe(s: &Slice, quoted: f64) -> String {
    let place = match s.axis {
        Axis::X => format!("section {} from the nose", Both(quoted)),
        Axis::Y => format!("profile {} off the stringer", Both(quoted)),
        Axis::Z => format!("waterline {} up", Both(quoted)),
    };
    let open = if s.open.is_empty() {
        String::new()
    } else {
        format!(", {} open chains (the mesh has holes)", s.open.len())
    };
    format!(
        "{place}: area {:.2} cm², perimeter {:.1} mm, {} contour{}{open}",
        s.area() / 100.0,
        s.perimeter(),
        s.loops.len(),
        if s.loops.len() == 1 { "" } else { "s" }
    )
}

/// Cross-sections stacked one under another, each in its own panel with
/// its label and the centreline; true scale in mm.
pub fn sections_svg(set: &SliceSet) -> String {
    let (lo, hi) = bounds(set.slices);
    let w = hi[0] - lo[0];
    let panel = |s: &Slice| {
        let (a, b) = bounds(std::slice::from_ref(s));
        (b[1] - a[1]).max(1.0)
    };
    let height: f64 = set
        .slices
        .iter()
        .map(|s| panel(s) + LABEL + MARGIN)
        .sum::<f64>()
        + MARGIN;
    let mut doc = Svg::new(w + 2.0 * MARGIN, height + LABEL);
    doc.text(
        [MARGIN, MARGIN * 0.6],
        4.0,
        &format!("{}: cross-sections, true scale (mm)", set.name),
    );
    let mut top = MARGIN + LABEL;
    for (s, &q) in set.slices.iter().zip(&set.quoted) {
        let (_, b) = bounds(std::slice::from_ref(s));
        let h = panel(s);
        doc.text([MARGIN, top], 3.5, &describe(s, q));
        let base = top + LABEL;
        // y across to the right; z up, so flip it.
        let map = |p: &[f64; 2]| [MARGIN + p[0] - lo[0], base + (b[1] - p[1])];
        let cx = MARGIN - lo[0];
        doc.line(
            [cx, base - 2.0],
            [cx, base + h + 2.0],
            "#888888",
            0.25,
            Some((3.0, 1.5)),
        );
        for l in &s.loops {
            doc.path(
                &l.iter().map(map).collect::<Vec<_>>(),
                true,
                "black",
                0.35,
                None,
            );
        }
        for l in &s.open {
            doc.path(
                &l.iter().map(map).collect::<Vec<_>>(),
                false,
                "red",
                0.35,
                None,
            );
        }
        top = base + h + MARGIN;
    }
    doc.finish()
}

/// Waterlines overlaid in plan view (x along the board to the right, +y
/// up the page), one colour a level; true scale in mm.
pub fn waterlines_svg(set: &SliceSet) -> String {
    let (lo, hi) = bounds(set.slices);
    let (w, h) = (hi[0] - lo[0], hi[1] - lo[1]);
    let legend = 6.0 * set.slices.len() as f64;
    let mut doc = Svg::new(w + 2.0 * MARGIN, h + 2.0 * MARGIN + legend + LABEL);
    doc.text(
        [MARGIN, MARGIN * 0.6],
        4.0,
        &format!("{}: waterlines, plan view, true scale (mm)", set.name),
    );
    let map = |p: &[f64; 2]| [MARGIN + p[0] - lo[0], MARGIN + LABEL + (hi[1] - p[1])];
    let n = set.slices.len().max(2) - 1;
    for (i, (s, &q)) in set.slices.iter().zip(&set.quoted).enumerate() {
        let colour = svg::ramp(i as f64 / n as f64);
        for l in &s.loops {
            doc.path(
                &l.iter().map(map).collect::<Vec<_>>(),
                true,
                &colour,
                0.35,
                None,
            );
        }
        let y = MARGIN + LABEL + h + MARGIN + 6.0 * i as f64;
        doc.rect([MARGIN, y - 3.0], [8.0, 3.0], &colour);
        doc.text([MARGIN + 10.0, y], 3.5, &describe(s, q));
    }
    doc.finish()
}

/// Every contour point: `slice,axis,at_mm,quoted_mm,contour,closed,point,u_mm,v_mm`
/// where (u, v) is (y, z) for sections and (x, y) for waterlines.
pub fn csv(set: &SliceSet) -> String {
    let mut s = String::from("slice,axis,at_mm,quoted_mm,contour,closed,point,u_mm,v_mm\n");
    for (i, (sl, &q)) in set.slices.iter().zip(&set.quoted).enumerate() {
        let axis = match sl.axis {
            Axis::X => "x",
            Axis::Y => "y",
            Axis::Z => "z",
        };
        let contours = sl
            .loops
            .iter()
            .map(|l| (l, true))
            .chain(sl.open.iter().map(|l| (l, false)));
        for (c, (l, closed)) in contours.enumerate() {
            for (k, p) in l.iter().enumerate() {
                let _ = writeln!(
                    s,
                    "{i},{axis},{:.4},{q:.4},{c},{closed},{k},{:.4},{:.4}",
                    sl.at, p[0], p[1]
                );
            }
        }
    }
    s
}
