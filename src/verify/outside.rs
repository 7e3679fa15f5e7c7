//! Foam the cutting leaves outside the design's plan but still on the
//! board: the fin along the parting line (the rail's widest line, where
//! the deck's and the bottom's cuts meet) and the patches beside the tabs.
//! Seen from above these columns have no design under them, so the
//! deviation maps cannot measure them; here each is measured as its true
//! distance to the design.

use super::report::ZoneReport;
use crate::geom::nearest::Nearest;
use crate::geom::zmap::ZMap;

/// How far out from the design's plan foam is followed as part of the
/// board, mm: past the widest fin a finishing ball leaves, short of the
/// stock beyond the outline's cut.
const BAND_MM: f64 = 30.0;

/// A cell's foam: its distance from the design, mm, and where (X, Y,
/// setup).
pub(super) type Measured = (f64, [f64; 3]);

/// Foam thinner than this in a column is none, mm.
const PRESENT_MM: f32 = 1e-3;

/// The fin along the parting line and the foam beside the tabs, on the
/// stock after both setups (`map`, in setup 2's coordinates): each column
/// of foam outside the plan (`inside` false) joined to the board through
/// other such columns, no farther than [`BAND_MM`] from the plan, not in a
/// tab (`keep`, in setup 2's coordinates). Each is measured at its top and
/// its bottom, the farther of the two from the design (`to_design` takes a
/// point in setup 2's coordinates to the design's): along a vertical line
/// the distance to a convex rail is greatest at an end. A column within
/// `tab_reach` of a tab is the tab's zone; the rest is the fin: each as
/// (distance, X, Y, setup) a cell.
pub(super) fn outside_plan(
    map: &ZMap,
    inside: &[bool],
    keep: &[[[f64; 2]; 2]],
    tab_reach: f64,
    near: &Nearest,
    to_design: impl Fn([f64; 3]) -> [f64; 3] + Sync,
) -> (Vec<Measured>, Vec<Measured>) {
    use rayon::prelude::*;
    let [nx, ny] = map.dims;
    let present = |k: usize| map.top[k] > map.bottom[k] + PRESENT_MM;
    let centre = |k: usize| map.centre(k % nx, k / nx);
    let tab = |k: usize| keep.iter().any(|r| in_rect(centre(k), r, 0.0));
    let around = |k: usize| {
        let (i, j) = (k % nx, k / nx);
        [
            (i > 0).then(|| k - 1),
            (i + 1 < nx).then(|| k + 1),
            (j > 0).then(|| k - nx),
            (j + 1 < ny).then(|| k + nx),
        ]
        .into_iter()
        .flatten()
    };
    let open = |k: usize| !inside[k] && present(k) && !tab(k);
    // Outward from the plan's edge, one cell a step, through foam only.
    let steps = (BAND_MM / map.cell[0].min(map.cell[1])).ceil() as usize;
    let mut reached = vec![false; nx * ny];
    let mut front: Vec<usize> = (0..nx * ny)
        .filter(|&k| open(k) && around(k).any(|n| inside[n]))
        .collect();
    for &k in &front {
        reached[k] = true;
    }
    let mut cells = front.clone();
    for _ in 1..steps {
        let mut next = vec![];
        for &k in &front {
            for n in around(k) {
                if !reached[n] && open(n) {
                    reached[n] = true;
                    next.push(n);
                }
            }
        }
        if next.is_empty() {
            break;
        }
        cells.extend(&next);
        front = next;
    }
    cells.sort_unstable();
    let measured: Vec<(bool, f64, [f64; 2])> = cells
        .par_iter()
        .map(|&k| {
            let c = centre(k);
            let d = [map.top[k], map.bottom[k]]
                .iter()
                .filter_map(|&z| near.closest(to_design([c[0], c[1], z as f64])))
                .map(|h| h.distance)
                .fold(0.0f64, f64::max);
            let by_tab = keep.iter().any(|r| in_rect(c, r, tab_reach));
            (by_tab, d, c)
        })
        .collect();
    let zone = |tabs: bool| {
        measured
            .iter()
            .filter(|m| m.0 == tabs)
            .map(|m| (m.1, [m.2[0], m.2[1], 2.0]))
            .collect()
    };
    (zone(false), zone(true))
}

/// Whether plan point `p` lies in rectangle `r` (min, max corners) grown
/// by `grow` on every side.
pub(super) fn in_rect(p: [f64; 2], r: &[[f64; 2]; 2], grow: f64) -> bool {
    p[0] >= r[0][0] - grow
        && p[0] <= r[1][0] + grow
        && p[1] >= r[0][1] - grow
        && p[1] <= r[1][1] + grow
}

/// A zone's figures from its cells' distances (mm) and places, each cell
/// `cell_area` mm²; none for no cells.
pub(super) fn summary(mut cells: Vec<Measured>, cell_area: f64) -> Option<ZoneReport> {
    if cells.is_empty() {
        return None;
    }
    cells.sort_by(|a, b| a.0.total_cmp(&b.0));
    let (max, at) = cells[cells.len() - 1];
    Some(ZoneReport {
        area_mm2: cells.len() as f64 * cell_area,
        median_mm: cells[cells.len() / 2].0,
        max_mm: max,
        at,
    })
}
