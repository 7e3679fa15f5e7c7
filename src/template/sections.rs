//! Female section templates: the board cut across at stations, each half
//! section (stringer to rail) inside a frame to be cut out along its line,
//! then held on the stringer and flipped for the other rail.

use crate::model::mesh::Mesh;
use crate::slice::plane::{Axis, slice_many};
use crate::template::drawing::{BORDER, Drawing, Item, Role, label};
use crate::units;

/// Frame left above the deck and below the bottom, mm: stiff enough to
/// hold the template's shape.
const FRAME_V: f64 = 25.0;
/// Frame left beyond the rail, mm.
const FRAME_H: f64 = 15.0;
/// Clear paper between one section's words and the next frame, mm.
const GAP: f64 = 20.0;

/// The part of a closed loop (y across, z up) on the side y ≥ 0, clipped
/// at the stringer (Sutherland–Hodgman against one half-plane), as a line
/// from the stringer round the rail back to the stringer; the whole loop,
/// closed, when it does not cross the stringer.
fn half(loop_: &[[f64; 2]]) -> Option<(Vec<[f64; 2]>, bool)> {
    let n = loop_.len();
    let mut out: Vec<[f64; 2]> = vec![];
    for k in 0..n {
        let (p, q) = (loop_[k], loop_[(k + 1) % n]);
        if p[0] >= 0.0 {
            out.push(p);
        }
        if (p[0] >= 0.0) != (q[0] >= 0.0) {
            let t = p[0] / (p[0] - q[0]);
            out.push([0.0, p[1] + t * (q[1] - p[1])]);
        }
    }
    if out.len() < 2 {
        return None;
    }
    // The edge along the stringer closes the clipped loop: open it there.
    let m = out.len();
    let on = |p: [f64; 2]| p[0].abs() < 1e-9;
    match (0..m).find(|&k| on(out[k]) && on(out[(k + 1) % m]) && out[k] != out[(k + 1) % m]) {
        Some(k) => {
            out.rotate_left((k + 1) % m);
            Some((out, false))
        }
        None => Some((out, true)),
    }
}

/// Female section templates at `stations` (mm from the nose), one above
/// the other, the first at the top: each half section inside a frame
/// whose left edge is the stringer, with its distances from both ends.
pub fn sections(name: &str, mesh: &Mesh, stations: &[f64]) -> Drawing {
    let b = BORDER;
    let (lo, hi) = mesh.bounding_box().unwrap_or(([0.0; 3], [0.0; 3]));
    let length = hi[0] - lo[0];
    let xs: Vec<f64> = stations.iter().map(|s| lo[0] + s).collect();
    let slices = slice_many(mesh, Axis::X, &xs);
    let mut items = vec![];
    let mut bottom = b;
    let mut width: f64 = 0.0;
    // From the last station up, so the first ends at the top.
    for (s, &at) in slices.iter().zip(stations).rev() {
        let halves: Vec<(Vec<[f64; 2]>, bool)> = s.loops.iter().filter_map(|l| half(l)).collect();
        let pts: Vec<[f64; 2]> = halves.iter().flat_map(|h| h.0.iter().copied()).collect();
        if pts.is_empty() {
            continue;
        }
        let (mut yhi, mut zlo, mut zhi) = (0.0f64, f64::INFINITY, f64::NEG_INFINITY);
        for p in &pts {
            yhi = yhi.max(p[0]);
            zlo = zlo.min(p[1]);
            zhi = zhi.max(p[1]);
        }
        let (ox, oz) = (b, bottom + FRAME_V - zlo);
        let (fw, fh) = (yhi + FRAME_H, zhi - zlo + 2.0 * FRAME_V);
        items.push(Item::Line {
            points: vec![
                [b, bottom],
                [b + fw, bottom],
                [b + fw, bottom + fh],
                [b, bottom + fh],
            ],
            closed: true,
            role: Role::Guide,
        });
        for (line, closed) in halves {
            items.push(Item::Line {
                points: line.iter().map(|p| [ox + p[0], oz + p[1]]).collect(),
                closed,
                role: Role::Cut,
            });
        }
        // Thickness at the stringer: where the section crosses y = 0.
        let (mut tb, mut td) = (f64::INFINITY, f64::NEG_INFINITY);
        for l in &s.loops {
            for k in 0..l.len() {
                let (p, q) = (l[k], l[(k + 1) % l.len()]);
                if (p[0] <= 0.0) != (q[0] <= 0.0) {
                    let z = p[1] + (q[1] - p[1]) * (0.0 - p[0]) / (q[0] - p[0]);
                    tb = tb.min(z);
                    td = td.max(z);
                }
            }
        }
        let thick = if tb.is_finite() { td - tb } else { zhi - zlo };
        for (k, text) in [
            "left edge: the stringer; flip for the other rail".to_string(),
            "cut along the section line; the frame is the template".to_string(),
        ]
        .into_iter()
        .enumerate()
        {
            items.push(Item::Text {
                at: [b + 3.0, bottom + 3.5 + 4.5 * k as f64],
                size: 3.0,
                text,
            });
        }
        items.push(Item::Text {
            at: [b + 3.0, bottom + fh + 4.0],
            size: 3.0,
            text: format!(
                "thickness at stringer {}; half width {}",
                label(thick),
                label(yhi)
            ),
        });
        items.push(Item::Text {
            at: [b + 3.0, bottom + fh + 9.0],
            size: 3.5,
            text: format!(
                "SECTION {} from nose, {} from tail",
                units::Both(at),
                units::Both(length - at)
            ),
        });
        width = width.max(fw);
        bottom += fh + 14.0 + GAP;
    }
    Drawing {
        kind: "sections",
        title: format!("{name}: female section templates (half), full size"),
        width: width + 2.0 * b,
        height: bottom - GAP + b,
        items,
    }
}
