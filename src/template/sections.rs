//! Female section templates: the board cut across at stations, each
//! section inside a frame to be cut out along its outline.

use crate::model::mesh::Mesh;
use crate::slice::plane::{Axis, slice_many};
use crate::template::drawing::{BORDER, Drawing, Item, Role, label};
use crate::units;

/// Female section templates at `stations` (mm from the nose), side by side:
/// each the section outline inside a frame, cut out along the outline.
pub fn sections(name: &str, mesh: &Mesh, stations: &[f64]) -> Drawing {
    let b = BORDER;
    let frame = 30.0;
    let (lo, hi) = mesh.bounding_box().unwrap_or(([0.0; 3], [0.0; 3]));
    let length = hi[0] - lo[0];
    let xs: Vec<f64> = stations.iter().map(|s| lo[0] + s).collect();
    let slices = slice_many(mesh, Axis::X, &xs);
    let mut items = vec![];
    let mut left = b;
    let mut height: f64 = 0.0;
    for (s, &at) in slices.iter().zip(stations) {
        let pts: Vec<[f64; 2]> = s.loops.iter().flatten().copied().collect();
        if pts.is_empty() {
            continue;
        }
        let (mut ylo, mut yhi, mut zlo, mut zhi) = (
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
        );
        for p in &pts {
            ylo = ylo.min(p[0]);
            yhi = yhi.max(p[0]);
            zlo = zlo.min(p[1]);
            zhi = zhi.max(p[1]);
        }
        let ox = left + frame - ylo;
        let oz = b + frame - zlo;
        let (fw, fh) = (yhi - ylo + 2.0 * frame, zhi - zlo + 2.0 * frame);
        items.push(Item::Line {
            points: vec![
                [left, b],
                [left + fw, b],
                [left + fw, b + fh],
                [left, b + fh],
            ],
            closed: true,
            role: Role::Guide,
        });
        for l in &s.loops {
            items.push(Item::Line {
                points: l.iter().map(|p| [ox + p[0], oz + p[1]]).collect(),
                closed: true,
                role: Role::Cut,
            });
        }
        items.push(Item::Line {
            points: vec![[ox, b], [ox, b + fh]],
            closed: false,
            role: Role::Guide,
        });
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
        items.push(Item::Text {
            at: [left + 3.0, b + fh + 4.0],
            size: 3.5,
            text: format!(
                "SECTION {} from nose, {} from tail",
                units::Both(at),
                units::Both(length - at)
            ),
        });
        items.push(Item::Text {
            at: [left + 3.0, b + fh + 9.0],
            size: 3.0,
            text: format!(
                "thickness at stringer {}; width {}",
                label(thick),
                label(yhi - ylo)
            ),
        });
        items.push(Item::Text {
            at: [left + 3.0, b + 4.0],
            size: 3.0,
            text: "cut along the section line; the frame is the template".into(),
        });
        left += fw + b;
        height = height.max(fh + 12.0);
    }
    Drawing {
        kind: "sections",
        title: format!("{name}: female section templates, full size"),
        width: left,
        height: height + 2.0 * b,
        items,
    }
}
