//! Where the board sits in the stock, the parting surface through its rail
//! apex, the tabs and registration holes, and the flip between the setups.
//!
//! Setup coordinates: X along the block (nose towards X 0), Y across, Z
//! down from the block's top face; zero at the top face's front-left
//! corner. The second setup is the block turned over about the X axis,
//! and its zero is again the top front-left corner.

use crate::model::job::{Block, Holding, Job, Pitch};
use crate::model::machine::Machine;
use crate::model::mesh::{Mesh, cross, norm, sub};
use crate::profiles::machine::mm_text;
use crate::units;

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

fn z_extent(vs: &[[f64; 3]], deg: f64) -> f64 {
    let (s, c) = deg.to_radians().sin_cos();
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for v in vs {
        let z = -v[0] * s + v[2] * c;
        lo = lo.min(z);
        hi = hi.max(z);
    }
    hi - lo
}

/// Places the board (any closed mesh, nose at low X, stringer along X) in
/// the job's block. `apex` is the rail apex line (x, 0, z) in the mesh's
/// coordinates when the shape is known; otherwise it is read off the mesh.
pub fn place(board: &Mesh, apex: Option<&[[f64; 3]]>, job: &Job) -> Result<Placement, CamError> {
    let Some((lo, hi)) = board.bounding_box() else {
        return Err(CamError::Fit("the mesh is empty".into()));
    };
    // Pitch: the tilt within ±8° that needs the least thickness (sampled
    // every 0.1°, then refined), kept only if it saves more than 1 mm.
    let rockered = job.stock.as_ref().filter(|b| b.rocker.is_some());
    let pitch = match (job.pitch, rockered) {
        (Pitch::Degrees(d), _) => d,
        (Pitch::Auto, Some(b)) => blank_pitch(board, lo, hi, b),
        (Pitch::Auto, None) => {
            let hull: Vec<[f64; 3]> = board.vertices.clone();
            let mut best = (z_extent(&hull, 0.0), 0.0);
            for k in -80..=80 {
                let d = k as f64 * 0.1;
                let e = z_extent(&hull, d);
                if e < best.0 - 1e-9 {
                    best = (e, d);
                }
            }
            if z_extent(&hull, 0.0) - best.0 > 1.0 {
                best.1
            } else {
                0.0
            }
        }
    };
    let centre = [
        (lo[0] + hi[0]) / 2.0,
        (lo[1] + hi[1]) / 2.0,
        (lo[2] + hi[2]) / 2.0,
    ];
    let turned: Vec<[f64; 3]> = board
        .vertices
        .iter()
        .map(|v| {
            rotate_y(
                [v[0] - centre[0], v[1] - centre[1], v[2] - centre[2]],
                pitch,
            )
        })
        .collect();
    let (mut tlo, mut thi) = ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]);
    for v in &turned {
        for a in 0..3 {
            tlo[a] = tlo[a].min(v[a]);
            thi[a] = thi[a].max(v[a]);
        }
    }
    let size = [thi[0] - tlo[0], thi[1] - tlo[1], thi[2] - tlo[2]];
    let r_rough = job.roughing.tool.cutter.radius;
    // With a frame, the band, the tool's width and 5 mm of whole stock at
    // the sides, and the holes beyond each tip; in a cradle only the skin
    // (the holes find their own room, below).
    let (end_need, side_need) = match job.holding {
        Holding::Frame => (
            job.hole_gap + job.hole_diameter + 10.0,
            job.frame + 2.0 * r_rough + 5.0,
        ),
        Holding::Cradle => (job.skin, job.skin),
    };
    let block = match &job.stock {
        Some(b) => b.clone(),
        None => {
            let up = |v: f64, step: f64| (v / step).ceil() * step;
            Block::flat(
                up(size[0] + 2.0 * end_need, 10.0),
                up(size[1] + 2.0 * side_need, 10.0),
                up(size[2] + 2.0 * job.skin, 5.0),
            )
        }
    };
    let mut short = Vec::new();
    let need_len = size[0] + 2.0 * end_need;
    let what_for = match job.holding {
        Holding::Frame => "room for its holes and frame",
        Holding::Cradle => "its skin at each end",
    };
    if block.length < need_len {
        short.push(format!(
            "length: the block is {} long, the board with {what_for} needs {} ({} short)",
            both(block.length),
            both(need_len),
            both(need_len - block.length)
        ));
    }
    // The least room at the sides, and where (X from the board's nose):
    // against the plan shape where the stock has one.
    let sx = block.length / 2.0 - (tlo[0] + thi[0]) / 2.0;
    let mid_y = (tlo[1] + thi[1]) / 2.0;
    let side_room = turned
        .iter()
        .map(|v| {
            let x = v[0] + sx;
            (
                block.width_at(x) / 2.0 - (v[1] - mid_y).abs(),
                x - sx - tlo[0],
            )
        })
        .fold((f64::INFINITY, 0.0), |a, b| if b.0 < a.0 { b } else { a });
    if block.plan.is_some() && side_room.0 < side_need {
        short.push(format!(
            "width: the blank's plan shape leaves {} at the side {} from the board's nose, the board with {} needs {} ({} short)",
            both(side_room.0),
            both(side_room.1),
            match job.holding {
                Holding::Frame => "its cut band and frame",
                Holding::Cradle => "its skin",
            },
            both(side_need),
            both(side_need - side_room.0)
        ));
    }
    let need_w = size[1] + 2.0 * side_need;
    if block.width < need_w {
        short.push(format!(
            "width: the block is {} wide, the board with {} needs {} ({} short)",
            both(block.width),
            match job.holding {
                Holding::Frame => "its cut band and frame",
                Holding::Cradle => "its skin at each side",
            },
            both(need_w),
            both(need_w - block.width)
        ));
    }
    let need_t = size[2] + 2.0 * job.skin;
    // Where the thickness is tightest: the X of the highest and lowest points.
    let at_top = turned
        .iter()
        .max_by(|a, b| a[2].total_cmp(&b[2]))
        .map_or(0.0, |v| v[0] - tlo[0]);
    // A rockered blank: the room between its curves at each X, with the
    // board centred along it and raised to balance the room over and under.
    let blank_fit = rockered.map(|b| {
        let sx = b.length / 2.0 - (tlo[0] + thi[0]) / 2.0;
        vertical_room(&turned, sx, b)
    });
    if let Some(f) = &blank_fit
        && f.margin < job.skin
    {
        let room = if f.margin >= 0.0 {
            format!(
                "leaves at most {} of foam over the deck and under the bottom",
                both(f.margin)
            )
        } else {
            format!("stands {} out of the blank's curves", both(-f.margin))
        };
        short.push(format!(
            "rocker: tilted {pitch:.1}°, the board {room} at the tightest, {} from the blank's nose end; it needs {} skin ({} short)",
            both(if f.over.0 < f.under.0 { f.over.1 } else { f.under.1 }),
            mm_text(job.skin),
            both(job.skin - f.margin)
        ));
    } else if blank_fit.is_none() && block.thickness < need_t {
        short.push(format!(
            "thickness: the block is {} thick, the board tilted {pitch:.1}° needs {} with {} skin ({} short), tightest {} from the nose",
            both(block.thickness),
            both(need_t),
            mm_text(job.skin),
            both(need_t - block.thickness),
            both(at_top)
        ));
    }
    if !short.is_empty() {
        return Err(CamError::Fit(short.join("; ")));
    }
    let shift = [
        block.length / 2.0 - (tlo[0] + thi[0]) / 2.0,
        block.width / 2.0 - (tlo[1] + thi[1]) / 2.0,
        match &blank_fit {
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
    // Parting surface: in each 2 mm slab along X, the middle of the height
    // range of the points within 0.2 mm of the widest (a rail is nearly
    // vertical at its apex, so the single widest point is not a steady guide).
    let bins = ((x_range[1] - x_range[0]) / 2.0).ceil().max(1.0) as usize;
    let bin_of = |x: f64| (((x - x_range[0]) / 2.0).round().max(0.0) as usize).min(bins);
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
    if let Some(line) = apex {
        parting = line
            .iter()
            .map(|v| {
                let t = rotate_y(
                    [v[0] - centre[0], v[1] - centre[1], v[2] - centre[2]],
                    pitch,
                );
                [t[0] + shift[0], t[2] + shift[2]]
            })
            .collect();
        parting.sort_by(|a, b| a[0].total_cmp(&b[0]));
    }
    if parting.is_empty() {
        parting.push([x_range[0], -block.thickness / 2.0]);
    }
    let (top, bottom) = match &blank_fit {
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
                    at_top + tlo[0] + shift[0] - x_range[0],
                ),
                (tlo[2] + shift[2] + block.thickness, at_bottom - x_range[0]),
            )
        }
    };
    // Off the stringer, where there is one: beside it, in pairs.
    let beside = block
        .stringer
        .as_ref()
        .map(|st| st.width / 2.0 + STRINGER_CLEAR + job.hole_diameter / 2.0);
    let holes = match job.holding {
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
        Holding::Cradle => cradle_holes(&part, x_range, centre_y, &block, job, beside)?,
    };
    // Tabs: from 5 mm inside each tip out past the cut band, centred on the
    // parting height at the tip.
    let tab = |x0: f64, x1: f64, y: f64, z: f64| {
        Mesh::cuboid(
            [x0, y - job.tabs[0] / 2.0, z - job.tabs[1] / 2.0],
            [x1 - x0, job.tabs[0], job.tabs[1]],
        )
    };
    // The bottom's highest point in each 2 mm slab: the down-facing
    // triangles' highest vertex (only where it is above the parting).
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
    let bottom_high: Vec<[f64; 2]> = high
        .iter()
        .enumerate()
        .filter(|(_, z)| z.is_finite())
        .map(|(k, &z)| [x_range[0] + 2.0 * k as f64, z])
        .collect();
    let z_nose = parting.first().map_or(0.0, |p| p[1]);
    let z_tail = parting.last().map_or(0.0, |p| p[1]);
    let reach = job.frame + 2.0 * r_rough + 5.0;
    let tabs = match (job.holding, &block.stringer) {
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
    };
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
            side: (side_room.0, side_room.1),
        },
        pose: Pose {
            pitch,
            centre,
            centre_at: shift,
        },
    })
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

/// Whether the placed stock (and, in a cradle, the tool running round it)
/// stays inside the machine's travel, with the clearance above it.
pub fn fits_machine(p: &Placement, m: &Machine, job: &Job) -> Result<(), CamError> {
    let b = &p.block;
    let [tx, ty] = job.table_position;
    let mut why = Vec::new();
    // In a cradle the roughing runs round the stock's edges: its offsets
    // reach a tool radius and two 2 mm cells beyond them.
    let g = match job.holding {
        Holding::Frame => 0.0,
        Holding::Cradle => job.roughing.tool.cutter.radius + 4.0,
    };
    let what = if g > 0.0 {
        "the tool running round the block"
    } else {
        "the block"
    };
    if tx + b.length + g > m.travel[0] {
        why.push(format!(
            "{what} runs to machine X {:.1} mm but X travel is {:.1} mm",
            tx + b.length + g,
            m.travel[0]
        ));
    }
    if ty + b.width + g > m.travel[1] {
        why.push(format!(
            "{what} runs to machine Y {:.1} mm but Y travel is {:.1} mm",
            ty + b.width + g,
            m.travel[1]
        ));
    }
    if tx - g < 0.0 || ty - g < 0.0 {
        why.push(format!(
            "{what} reaches machine X {:.1} mm, Y {:.1} mm, below 0: move the block in (table_position) by at least {:.1} mm",
            tx - g,
            ty - g,
            g
        ));
    }
    let top = m.table_top + b.thickness + m.clearance;
    if top > m.travel[2] {
        why.push(format!(
            "the block top plus clearance is {:.1} mm above the bed but Z travel is {:.1} mm",
            top, m.travel[2]
        ));
    }
    if why.is_empty() {
        Ok(())
    } else {
        let hint = if job.holding == Holding::Frame && tx + b.length > m.travel[0] {
            " (held in cradles, `holding: cradle` in the job, the stock needs no frame, tabs or holes beyond the tips: see the README, Holding in cradles)"
        } else {
            ""
        };
        Err(CamError::Fit(format!(
            "the stock does not fit the machine: {}{hint}",
            why.join("; ")
        )))
    }
}

/// Least foam between the stringer and a hole or tab beside it.
const STRINGER_CLEAR: f64 = 3.0;

/// Least stock between a registration hole and the stock's edge.
const HOLE_WALL: f64 = 5.0;

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

/// Room for a board in a rockered blank.
struct Room {
    /// Least of (deck − point) over the board before lifting, and its X.
    over: (f64, f64),
    /// Least of (point − bottom) before lifting, and its X.
    under: (f64, f64),
    /// The lift that balances the two.
    lift: f64,
    /// The foam left over and under after the lift.
    margin: f64,
}

/// The room between the blank's curves for `points` (centred, turned)
/// moved `sx` along X: exact on the curves.
fn vertical_room(points: &[[f64; 3]], sx: f64, b: &Block) -> Room {
    let (mut over, mut under) = ((f64::INFINITY, 0.0), (f64::INFINITY, 0.0));
    for v in points {
        let x = v[0] + sx;
        let (d, bt) = b.deck_bottom_z(x);
        if d - v[2] < over.0 {
            over = (d - v[2], x);
        }
        if v[2] - bt < under.0 {
            under = (v[2] - bt, x);
        }
    }
    let lift = (over.0 - under.0) / 2.0;
    Room {
        over,
        under,
        lift,
        margin: (over.0 + under.0) / 2.0,
    }
}

/// The tilt within ±8° (every 0.1°) that leaves the most foam over and
/// under the board in a rockered blank; level unless a tilt gains more
/// than 1 mm. The search reads the curves off a 1 mm table and takes at
/// most 20,000 of the board's points.
fn blank_pitch(board: &Mesh, lo: [f64; 3], hi: [f64; 3], b: &Block) -> f64 {
    let centre = [
        (lo[0] + hi[0]) / 2.0,
        (lo[1] + hi[1]) / 2.0,
        (lo[2] + hi[2]) / 2.0,
    ];
    let step = board.vertices.len().div_ceil(20_000).max(1);
    let pts: Vec<[f64; 3]> = board
        .vertices
        .iter()
        .step_by(step)
        .map(|v| [v[0] - centre[0], v[1] - centre[1], v[2] - centre[2]])
        .collect();
    let n = b.length.ceil() as usize;
    let table: Vec<(f64, f64)> = (0..=n).map(|k| b.deck_bottom_z(k as f64)).collect();
    let at = |x: f64| {
        let x = x.clamp(0.0, n as f64);
        let k = (x.floor() as usize).min(n.saturating_sub(1));
        let t = x - k as f64;
        let (a, c) = (table[k], table[(k + 1).min(n)]);
        (a.0 + t * (c.0 - a.0), a.1 + t * (c.1 - a.1))
    };
    let margin = |deg: f64| {
        let turned: Vec<[f64; 3]> = pts.iter().map(|&v| rotate_y(v, deg)).collect();
        let (mut x0, mut x1) = (f64::INFINITY, f64::NEG_INFINITY);
        for v in &turned {
            x0 = x0.min(v[0]);
            x1 = x1.max(v[0]);
        }
        let sx = b.length / 2.0 - (x0 + x1) / 2.0;
        let (mut over, mut under) = (f64::INFINITY, f64::INFINITY);
        for v in &turned {
            let (d, bt) = at(v[0] + sx);
            over = over.min(d - v[2]);
            under = under.min(v[2] - bt);
        }
        (over + under) / 2.0
    };
    let level = margin(0.0);
    let mut best = (level, 0.0);
    for k in -80..=80 {
        let d = k as f64 * 0.1;
        let m = margin(d);
        if m > best.0 + 1e-9 {
            best = (m, d);
        }
    }
    if best.0 - level > 1.0 { best.1 } else { 0.0 }
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
    let k = p.partition_point(|q| q[0] <= x).clamp(1, p.len() - 1);
    let (a, b) = (p[k - 1], p[k]);
    a[1] + (b[1] - a[1]) * (x - a[0]) / (b[0] - a[0]).max(1e-12)
}

#[cfg(test)]
mod tests {
    use super::*;

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
