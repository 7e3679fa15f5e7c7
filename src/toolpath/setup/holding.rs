//! How the board is held and found again after the flip: the
//! registration holes (beyond the tips, or beside the board in a cradle),
//! the tabs that hold it in the frame, and the tabs' zones.

use super::{CamError, Placement, both};
use crate::model::job::{Block, Holding, Job};
use crate::model::mesh::Mesh;

/// Least foam between the stringer and a hole or tab beside it.
const STRINGER_CLEAR: f64 = 3.0;

/// Least stock between a registration hole and the stock's edge.
const HOLE_WALL: f64 = 5.0;

/// The registration holes (X, Y, setup-1 coordinates): with a frame,
/// beyond each tip; in a cradle, where the stock has room (below); off the
/// stringer, where there is one, in pairs beside it.
pub(super) fn holes(
    part: &Mesh,
    x_range: [f64; 2],
    centre_y: f64,
    block: &Block,
    job: &Job,
) -> Result<Vec<[f64; 2]>, CamError> {
    // Off the stringer, where there is one: beside it, in pairs.
    let beside = block
        .stringer
        .as_ref()
        .map(|st| st.width / 2.0 + STRINGER_CLEAR + job.hole_diameter / 2.0);
    Ok(match job.holding {
        Holding::Frame => {
            let hr = job.hole_diameter / 2.0;
            let ends = [
                x_range[0] - job.hole_gap - hr,
                x_range[1] + job.hole_gap + hr,
            ];
            match beside {
                None => ends.map(|x| [x, centre_y]).to_vec(),
                Some(d) => ends
                    .iter()
                    .flat_map(|&x| [[x, centre_y - d], [x, centre_y + d]])
                    .collect(),
            }
        }
        Holding::Cradle => cradle_holes(part, x_range, centre_y, block, job, beside)?,
    })
}

/// The tabs in setup-1 coordinates: with a frame, from 5 mm inside each
/// tip out past the cut band, at the parting height there (in pairs beside
/// a stringer); none in a cradle.
pub(super) fn tabs(
    part: &Mesh,
    x_range: [f64; 2],
    centre_y: f64,
    parting: &[[f64; 2]],
    block: &Block,
    job: &Job,
) -> Vec<Mesh> {
    let r_rough = job.roughing.tool.cutter.radius;
    let tab = |x0: f64, x1: f64, y: f64, z: f64| {
        Mesh::cuboid(
            [x0, y - job.tabs[0] / 2.0, z - job.tabs[1] / 2.0],
            [x1 - x0, job.tabs[0], job.tabs[1]],
        )
    };
    let z_nose = parting.first().map_or(0.0, |p| p[1]);
    let z_tail = parting.last().map_or(0.0, |p| p[1]);
    let reach = job.frame + 2.0 * r_rough + 5.0;
    match (job.holding, &block.stringer) {
        (Holding::Frame, None) => vec![
            tab(x_range[0] - reach, x_range[0] + 5.0, centre_y, z_nose),
            tab(x_range[1] - 5.0, x_range[1] + reach, centre_y, z_tail),
        ],
        // Beside the stringer, in pairs: each from 5 mm inside the
        // board's end across its own width, out past the cut band.
        (Holding::Frame, Some(st)) => {
            let d = st.width / 2.0 + STRINGER_CLEAR + job.tabs[0] / 2.0;
            let mut v = Vec::new();
            for y in [centre_y - d, centre_y + d] {
                let near = part
                    .vertices
                    .iter()
                    .filter(|q| (q[1] - y).abs() <= job.tabs[0] / 2.0);
                let (x0, x1) = near.fold((f64::INFINITY, f64::NEG_INFINITY), |a, q| {
                    (a.0.min(q[0]), a.1.max(q[0]))
                });
                v.push(tab(x_range[0] - reach, x0 + 5.0, y, z_nose));
                v.push(tab(x1 - 5.0, x_range[1] + reach, y, z_tail));
            }
            v
        }
        (Holding::Cradle, _) => Vec::new(),
    }
}

/// The registration holes of a board held in a cradle, at each end: on
/// the centreline beyond the tip where the end margin holds the hole, its
/// gap and a wall to the stock's end; otherwise a pair mirrored about the
/// centreline, as near the stock's end as the wall allows and just clear
/// of the board (the gap from its outline, read off the placed mesh within
/// the hole's reach along X).
fn cradle_holes(
    part: &Mesh,
    x_range: [f64; 2],
    centre_y: f64,
    block: &Block,
    job: &Job,
    beside: Option<f64>,
) -> Result<Vec<[f64; 2]>, CamError> {
    let hr = job.hole_diameter / 2.0;
    let gap = job.hole_gap;
    let mut holes = Vec::new();
    for (end, tip, out) in [("nose", x_range[0], -1.0), ("tail", x_range[1], 1.0)] {
        let on_line = tip + out * (gap + hr);
        if on_line - hr >= HOLE_WALL && on_line + hr <= block.length - HOLE_WALL {
            match beside {
                None => holes.push([on_line, centre_y]),
                Some(d) => {
                    holes.push([on_line, centre_y - d]);
                    holes.push([on_line, centre_y + d]);
                }
            }
            continue;
        }
        let x = if out < 0.0 {
            hr + HOLE_WALL
        } else {
            block.length - hr - HOLE_WALL
        };
        let reach = hr + gap;
        let half = part
            .vertices
            .iter()
            .filter(|v| (v[0] - x).abs() <= reach)
            .map(|v| (v[1] - centre_y).abs())
            .fold(0.0, f64::max);
        let d = (half + gap + hr).max(beside.unwrap_or(0.0));
        if centre_y + d + hr + HOLE_WALL > block.width {
            return Err(CamError::Fit(format!(
                "registration holes: a {} hole at the {end} needs {} of stock beyond the tip, or a pair beside it {} from the centreline; the stock has {} beyond the tip and is {} wide",
                both(job.hole_diameter),
                both(gap + 2.0 * hr + HOLE_WALL),
                both(d),
                both(if out < 0.0 { tip } else { block.length - tip }),
                both(block.width)
            )));
        }
        holes.push([x, centre_y - d]);
        holes.push([x, centre_y + d]);
    }
    Ok(holes)
}

/// The tabs' plan rectangles (setup-1 X and Y, low and high corners),
/// grown by the finishing tool's radius plus 1 mm: the ball cannot reach
/// closer to a tab's side, and that foam goes with the tab when it is cut
/// off and sanded.
pub fn tab_rectangles(place: &Placement, job: &Job) -> Vec<[[f64; 2]; 2]> {
    let g = job.finishing.pass.tool.cutter.radius + 1.0;
    place
        .tabs
        .iter()
        .filter_map(|t| t.bounding_box())
        .map(|(lo, hi)| [[lo[0] - g, lo[1] - g], [hi[0] + g, hi[1] + g]])
        .collect()
}
