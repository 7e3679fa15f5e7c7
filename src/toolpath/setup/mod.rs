//! Where the board sits in the stock, the parting surface through its rail
//! apex, the tabs and registration holes, and the flip between the setups.
//!
//! Setup coordinates: X along the block (nose towards X 0), Y across, Z
//! down from the block's top face; zero at the top face's front-left
//! corner. The second setup is the block turned over about the X axis,
//! and its zero is again the top front-left corner.

use crate::model::job::{Block, Job};
use crate::model::mesh::{Mesh, cross, norm, sub};
use crate::profiles::values::mm_text;
use crate::units;

mod fit;
mod holding;

pub use fit::fits_machine;
pub use holding::tab_rectangles;

/// Why a job cannot be cut.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CamError {
    /// The board does not fit the stock or the machine.
    #[error("the board does not fit: {0}")]
    Fit(String),
    /// The work would take unbounded time or memory.
    #[error("over a limit: {0}")]
    Limit(String),
    /// A safety gate refused the program.
    #[error("refused: {0}")]
    Refused(String),
}

/// Which side is up.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// Setup 1: deck up.
    Deck,
    /// Setup 2: after the flip, bottom up.
    Bottom,
}

impl Side {
    /// `deck` or `bottom`.
    pub fn name(self) -> &'static str {
        match self {
            Side::Deck => "deck",
            Side::Bottom => "bottom",
        }
    }
    /// 1 or 2.
    pub fn number(self) -> u32 {
        match self {
            Side::Deck => 1,
            Side::Bottom => 2,
        }
    }
}

/// How much room the board has.
#[derive(Debug, Clone, PartialEq)]
pub struct Margins {
    /// Least foam over the deck, and the X where it is least.
    pub top: (f64, f64),
    /// Least foam under the bottom, and where.
    pub bottom: (f64, f64),
    /// From the block's front end to the nose.
    pub nose: f64,
    /// From the tail to the block's back end.
    pub tail: f64,
    /// From each long side of the stock (its plan shape, where it has
    /// one) to the board at the tightest, and where (X from the nose).
    pub side: (f64, f64),
}

/// The board placed in its block, ready for toolpaths.
#[derive(Debug, Clone)]
pub struct Placement {
    /// The block.
    pub block: Block,
    /// Tilt about Y applied, degrees.
    pub pitch: f64,
    /// The board in setup-1 coordinates.
    pub part: Mesh,
    /// Parting surface (rail apex) height along X, setup-1 coordinates, every 2 mm.
    pub parting: Vec<[f64; 2]>,
    /// Highest point of the board's bottom along X (setup-1 coordinates,
    /// every 2 mm) where it stands above the parting surface: a concave cut
    /// up into the board above the rail's apex. The bottom setup may reach
    /// that far.
    pub bottom_high: Vec<[f64; 2]>,
    /// Board's X extent.
    pub x_range: [f64; 2],
    /// Board's half-width at its widest.
    pub half_width: f64,
    /// Centreline Y (the stringer).
    pub centre_y: f64,
    /// Registration hole centres (X, Y), setup-1 coordinates: on the
    /// centreline, or in pairs mirrored about it (the flip maps each hole
    /// of a pair onto the other).
    pub holes: Vec<[f64; 2]>,
    /// Tab blocks in setup-1 coordinates.
    pub tabs: Vec<Mesh>,
    /// Room around the board.
    pub margins: Margins,
    /// How the design was put into the block: turned `pitch` degrees about
    /// Y round `centre` (the design's own box centre), then moved by
    /// `shift` (see [`Pose`]).
    pub pose: Pose,
}

/// A design's rigid placement in setup-1 coordinates: turned `pitch`
/// degrees about Y (nose up for positive) round `centre`, then moved so
/// that `centre` lands at `centre_at`. The programs' headers carry it, so
/// they can be verified without the job that placed the board.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pose {
    /// Tilt about Y, degrees.
    pub pitch: f64,
    /// The point turned round, in the design's coordinates (mm).
    pub centre: [f64; 3],
    /// Where that point lands, setup-1 coordinates (mm).
    pub centre_at: [f64; 3],
}

impl Pose {
    /// A design point in setup-1 coordinates.
    pub fn apply(&self, v: [f64; 3]) -> [f64; 3] {
        let t = rotate_y(
            [
                v[0] - self.centre[0],
                v[1] - self.centre[1],
                v[2] - self.centre[2],
            ],
            self.pitch,
        );
        [
            t[0] + self.centre_at[0],
            t[1] + self.centre_at[1],
            t[2] + self.centre_at[2],
        ]
    }

    /// A design mesh in setup-1 coordinates.
    pub fn apply_mesh(&self, mesh: &Mesh) -> Mesh {
        Mesh {
            vertices: mesh.vertices.iter().map(|&v| self.apply(v)).collect(),
            triangles: mesh.triangles.clone(),
        }
    }
}

/// Turns a setup-1 point into setup-2 coordinates (and back: the flip is
/// its own inverse): a half turn about the X axis through the block's
/// middle, (x, y, z) -> (x, W - y, -T - z).
pub fn flip(p: [f64; 3], block: &Block) -> [f64; 3] {
    [p[0], block.width - p[1], -block.thickness - p[2]]
}

/// A mesh turned over with the block.
pub fn flip_mesh(mesh: &Mesh, block: &Block) -> Mesh {
    Mesh {
        vertices: mesh.vertices.iter().map(|&v| flip(v, block)).collect(),
        triangles: mesh.triangles.clone(),
    }
}

fn rotate_y(v: [f64; 3], deg: f64) -> [f64; 3] {
    // Nose (low x) up for positive pitch.
    let (s, c) = deg.to_radians().sin_cos();
    [v[0] * c + v[2] * s, v[1], -v[0] * s + v[2] * c]
}

/// Places the board (any closed mesh, nose at low X, stringer along X) in
/// the job's block. `apex` is the rail apex line (x, 0, z) in the mesh's
/// coordinates when the shape is known; otherwise it is read off the mesh.
pub fn place(board: &Mesh, apex: Option<&[[f64; 3]]>, job: &Job) -> Result<Placement, CamError> {
    let Some((lo, hi)) = board.bounding_box() else {
        return Err(CamError::Fit("the mesh is empty".into()));
    };
    let pitch = fit::pitch(board, [lo, hi], job);
    let centre = [
        (lo[0] + hi[0]) / 2.0,
        (lo[1] + hi[1]) / 2.0,
        (lo[2] + hi[2]) / 2.0,
    ];
    let turn = |v: &[f64; 3]| {
        rotate_y(
            [v[0] - centre[0], v[1] - centre[1], v[2] - centre[2]],
            pitch,
        )
    };
    let turned: Vec<[f64; 3]> = board.vertices.iter().map(turn).collect();
    let (mut tlo, mut thi) = ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]);
    for v in &turned {
        for a in 0..3 {
            tlo[a] = tlo[a].min(v[a]);
            thi[a] = thi[a].max(v[a]);
        }
    }
    let fit = fit::fit(&turned, [tlo, thi], job, pitch)?;
    let block = fit.block;
    let shift = [
        block.length / 2.0 - (tlo[0] + thi[0]) / 2.0,
        block.width / 2.0 - (tlo[1] + thi[1]) / 2.0,
        match &fit.blank {
            Some(f) => f.lift,
            None => -block.thickness / 2.0 - (tlo[2] + thi[2]) / 2.0,
        },
    ];
    let part = Mesh {
        vertices: turned
            .iter()
            .map(|v| [v[0] + shift[0], v[1] + shift[1], v[2] + shift[2]])
            .collect(),
        triangles: board.triangles.clone(),
    };
    let x_range = [tlo[0] + shift[0], thi[0] + shift[0]];
    let centre_y = block.width / 2.0;
    let apex: Option<Vec<[f64; 2]>> = apex.map(|line| {
        line.iter()
            .map(|v| {
                let t = turn(v);
                [t[0] + shift[0], t[2] + shift[2]]
            })
            .collect()
    });
    let (parting, half_width) = parting(&part, x_range, centre_y, apex, block.thickness);
    let (top, bottom) = match &fit.blank {
        Some(f) => (
            (f.over.0 - f.lift, f.over.1 - x_range[0]),
            (f.under.0 + f.lift, f.under.1 - x_range[0]),
        ),
        None => {
            let at_bottom = turned
                .iter()
                .min_by(|a, b| a[2].total_cmp(&b[2]))
                .map_or(0.0, |v| v[0] + shift[0]);
            (
                (
                    -(thi[2] + shift[2]),
                    fit.at_top + tlo[0] + shift[0] - x_range[0],
                ),
                (tlo[2] + shift[2] + block.thickness, at_bottom - x_range[0]),
            )
        }
    };
    let holes = holding::holes(&part, x_range, centre_y, &block, job)?;
    let bottom_high = bottom_high(&part, x_range);
    let tabs = holding::tabs(&part, x_range, centre_y, &parting, &block, job);
    let tail = block.length - x_range[1];
    Ok(Placement {
        block,
        pitch,
        part,
        parting,
        bottom_high,
        x_range,
        half_width,
        centre_y,
        holes,
        tabs,
        margins: Margins {
            top,
            bottom,
            nose: x_range[0],
            tail,
            side: fit.side_room,
        },
        pose: Pose {
            pitch,
            centre,
            centre_at: shift,
        },
    })
}

/// 2 mm slabs along X from the board's nose: the slab of an X.
fn slab(x_range: [f64; 2]) -> (usize, impl Fn(f64) -> usize) {
    let bins = ((x_range[1] - x_range[0]) / 2.0).ceil().max(1.0) as usize;
    (bins, move |x: f64| {
        (((x - x_range[0]) / 2.0).round().max(0.0) as usize).min(bins)
    })
}

/// The parting surface (x, z) and the board's greatest half-width: in each
/// 2 mm slab along X, the middle of the height range of the points within
/// 0.2 mm of the widest (a rail is nearly vertical at its apex, so the
/// single widest point is not a steady guide); the shape's own apex line
/// where it is known.
fn parting(
    part: &Mesh,
    x_range: [f64; 2],
    centre_y: f64,
    apex: Option<Vec<[f64; 2]>>,
    thickness: f64,
) -> (Vec<[f64; 2]>, f64) {
    let (bins, bin_of) = slab(x_range);
    let mut widest = vec![f64::NEG_INFINITY; bins + 1];
    let mut half_width: f64 = 0.0;
    for v in &part.vertices {
        let w = (v[1] - centre_y).abs();
        half_width = half_width.max(w);
        let k = bin_of(v[0]);
        widest[k] = widest[k].max(w);
    }
    let mut band = vec![(f64::INFINITY, f64::NEG_INFINITY); bins + 1];
    for v in &part.vertices {
        let k = bin_of(v[0]);
        if (v[1] - centre_y).abs() >= widest[k] - 0.2 {
            band[k] = (band[k].0.min(v[2]), band[k].1.max(v[2]));
        }
    }
    let mut parting: Vec<[f64; 2]> = band
        .iter()
        .enumerate()
        .filter(|(_, b)| b.0 <= b.1)
        .map(|(k, b)| [x_range[0] + 2.0 * k as f64, 0.5 * (b.0 + b.1)])
        .collect();
    if let Some(mut line) = apex {
        line.sort_by(|a, b| a[0].total_cmp(&b[0]));
        parting = line;
    }
    if parting.is_empty() {
        parting.push([x_range[0], -thickness / 2.0]);
    }
    (parting, half_width)
}

/// The bottom's highest point in each 2 mm slab (x, z): the down-facing
/// triangles' highest vertex.
fn bottom_high(part: &Mesh, x_range: [f64; 2]) -> Vec<[f64; 2]> {
    let (bins, bin_of) = slab(x_range);
    let mut high = vec![f64::NEG_INFINITY; bins + 1];
    for t in &part.triangles {
        let [a, b, c] = t.map(|v| part.vertices[v as usize]);
        let n = cross(sub(b, a), sub(c, a));
        let len = norm(n);
        // Facing clearly down (a tail's end face or the apex band stands
        // near vertical and does not count).
        if n[2] >= -0.3 * len || n[2].is_nan() {
            continue;
        }
        for v in [a, b, c] {
            let k = bin_of(v[0]);
            high[k] = high[k].max(v[2]);
        }
    }
    high.iter()
        .enumerate()
        .filter(|(_, z)| z.is_finite())
        .map(|(k, &z)| [x_range[0] + 2.0 * k as f64, z])
        .collect()
}

impl Placement {
    /// Parting height at X in setup-1 coordinates (held level past the tips).
    pub fn parting_at(&self, x: f64) -> f64 {
        line_at(&self.parting, x)
    }

    /// Lowest height a tool tip may reach outside the part at X in a setup:
    /// the parting surface, less the overlap; on the bottom, past the
    /// parting to the bottom's highest point where a concave rises above it.
    pub fn floor_at(&self, side: Side, x: f64, overlap: f64) -> f64 {
        let zp = self.parting_at(x);
        match side {
            Side::Deck => zp - overlap,
            Side::Bottom => {
                let high = if self.bottom_high.is_empty() {
                    zp
                } else {
                    zp.max(line_at(&self.bottom_high, x))
                };
                -self.block.thickness - high - overlap
            }
        }
    }

    /// No less than [`floor_at`](Self::floor_at) anywhere along X: the
    /// floor follows the parting line between its points, and a concave
    /// only lowers it on the bottom.
    pub fn floor_highest(&self, side: Side, overlap: f64) -> f64 {
        let heights = self.parting.iter().map(|p| p[1]);
        // Interpolating between two points can round past both by a bit.
        let slack = 1e-9;
        match side {
            Side::Deck => heights.fold(f64::NEG_INFINITY, f64::max) - overlap + slack,
            Side::Bottom => {
                -self.block.thickness - heights.fold(f64::INFINITY, f64::min) - overlap + slack
            }
        }
    }

    /// The part and tabs as the tool sees them in a setup.
    pub fn guard(&self, side: Side) -> Vec<Mesh> {
        let mut all = vec![self.part.clone()];
        all.extend(self.tabs.iter().cloned());
        match side {
            Side::Deck => all,
            Side::Bottom => all.iter().map(|m| flip_mesh(m, &self.block)).collect(),
        }
    }

    /// Text lines on the fit, for reports and the setup sheet.
    pub fn fit_lines(&self) -> Vec<String> {
        let m = &self.margins;
        let b = &self.block;
        vec![
            match &b.rocker {
                None => format!(
                    "block {} x {} x {} (L x W x T)",
                    both(b.length),
                    both(b.width),
                    both(b.thickness)
                ),
                Some(r) => format!(
                    "rockered blank {} x {}, {} high overall, {} stations (allowance {})",
                    both(b.length),
                    both(b.width),
                    both(b.thickness),
                    r.stations.len(),
                    mm_text(r.allowance)
                ),
            },
            format!("board tilted {:.1}° about Y to fit the rocker", self.pitch),
            format!(
                "foam over the deck: at least {} ({} from the nose)",
                both(m.top.0),
                both(m.top.1.max(0.0))
            ),
            format!(
                "foam under the bottom: at least {} ({} from the nose)",
                both(m.bottom.0),
                both(m.bottom.1.max(0.0))
            ),
            match &b.plan {
                None => format!(
                    "block end to nose {}, tail to block end {}, each side {}",
                    both(m.nose),
                    both(m.tail),
                    both(m.side.0)
                ),
                Some(p) => format!(
                    "blank end to nose {}, tail to blank end {}, each side at least {} ({} from the nose; plan shape of {} stations)",
                    both(m.nose),
                    both(m.tail),
                    both(m.side.0),
                    both(m.side.1.max(0.0)),
                    p.len()
                ),
            },
        ]
    }
}

fn both(mm: f64) -> String {
    units::Both(mm).to_string()
}

/// Height of a line of (x, z) points at `x`, linear between them and held
/// level past its ends.
fn line_at(p: &[[f64; 2]], x: f64) -> f64 {
    if x <= p[0][0] {
        return p[0][1];
    }
    if x >= p[p.len() - 1][0] {
        return p[p.len() - 1][1];
    }
    // The first point past x (as a binary search finds it), looked for
    // from where it would be if the points were evenly spaced, as they
    // nearly are.
    let last = p.len() - 1;
    let guess = (x - p[0][0]) / (p[last][0] - p[0][0]) * last as f64;
    let mut k = (guess as usize).clamp(1, last);
    while k > 1 && p[k - 1][0] > x {
        k -= 1;
    }
    while k < last && p[k][0] <= x {
        k += 1;
    }
    let (a, b) = (p[k - 1], p[k]);
    a[1] + (b[1] - a[1]) * (x - a[0]) / (b[0] - a[0]).max(1e-12)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_line_is_read_between_the_points_a_binary_search_finds() {
        // Unevenly spaced points, some bunched, one repeated: the segment
        // used is the one `partition_point` (the standard library's binary
        // search) picks, at every X, between points and on them.
        let xs: [f64; 10] = [0.0, 2.0, 2.5, 2.6, 9.0, 9.0, 10.0, 31.0, 32.0, 40.0];
        let p: Vec<[f64; 2]> = xs.iter().map(|&x| [x, (x * 0.37).sin()]).collect();
        for k in 0..=4100 {
            let x = -1.0 + k as f64 * 0.01;
            let want = if x <= 0.0 {
                p[0][1]
            } else if x >= 40.0 {
                p[9][1]
            } else {
                let k = p.partition_point(|q| q[0] <= x).clamp(1, 9);
                let (a, b) = (p[k - 1], p[k]);
                a[1] + (b[1] - a[1]) * (x - a[0]) / (b[0] - a[0]).max(1e-12)
            };
            assert_eq!(line_at(&p, x).to_bits(), want.to_bits(), "at x = {x}");
        }
    }

    #[test]
    fn the_flip_maps_the_registration_holes_onto_themselves() {
        // A half turn about the X axis through the block's middle keeps any
        // point on the centreline's vertical plane at the same X and Y.
        let block = Block::flat(2000.0, 600.0, 150.0);
        for x in [40.0, 1960.0] {
            let p = [x, 300.0, -37.0];
            let q = flip(p, &block);
            assert_eq!([q[0], q[1]], [p[0], p[1]]);
            assert_eq!(flip(q, &block), p);
        }
        // And it is a rotation: the top front-left corner goes to the bottom back-left.
        assert_eq!(flip([0.0, 0.0, 0.0], &block), [0.0, 600.0, -150.0]);
    }
}
