//! Whether and how the board fits: the tilt about Y, the block (given or
//! sized to the board), the room at the ends, the sides and over and under
//! (between a rockered blank's curves), each shortfall said in the shop's
//! units; and whether the placed stock fits the machine.

use super::{CamError, Placement, both, rotate_y};
use crate::model::job::{Block, Holding, Job, Pitch};
use crate::model::machine::Machine;
use crate::model::mesh::Mesh;
use crate::profiles::values::mm_text;

/// The tilt about Y, degrees: the job's, or within ±8° (every 0.1°) the
/// one that needs the least thickness (or leaves the most room in a
/// rockered blank), kept only if it saves more than 1 mm.
pub(super) fn pitch(board: &Mesh, [lo, hi]: [[f64; 3]; 2], job: &Job) -> f64 {
    let rockered = job.stock.as_ref().filter(|b| b.rocker.is_some());
    match (job.pitch, rockered) {
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
    }
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

/// The board (turned, centred) in its block: the block, the least room
/// at the sides, where the board is highest, the room in a rockered blank.
pub(super) struct Fit {
    /// The job's stock, or a block sized to the board.
    pub block: Block,
    /// Least room at the sides and its X from the board's nose.
    pub side_room: (f64, f64),
    /// X from the nose of the board's highest point.
    pub at_top: f64,
    /// The room between a rockered blank's curves.
    pub blank: Option<Room>,
}

/// How the turned board's points (`turned`, box `tlo`..`thi`) fit the
/// job's stock; every shortfall said at once.
pub(super) fn fit(
    turned: &[[f64; 3]],
    [tlo, thi]: [[f64; 3]; 2],
    job: &Job,
    pitch: f64,
) -> Result<Fit, CamError> {
    let size = [thi[0] - tlo[0], thi[1] - tlo[1], thi[2] - tlo[2]];
    let r_rough = job.roughing.tool.cutter.radius;
    // With a frame, the band, the tool's width and 5 mm of whole stock at
    // the sides, and the holes beyond each tip; in a cradle only the skin
    // (the holes find their own room, below).
    let need = match job.holding {
        Holding::Frame => [
            job.hole_gap + job.hole_diameter + 10.0,
            job.frame + 2.0 * r_rough + 5.0,
        ],
        Holding::Cradle => [job.skin, job.skin],
    };
    let block = match &job.stock {
        Some(b) => b.clone(),
        None => {
            let up = |v: f64, step: f64| (v / step).ceil() * step;
            Block::flat(
                up(size[0] + 2.0 * need[0], 10.0),
                up(size[1] + 2.0 * need[1], 10.0),
                up(size[2] + 2.0 * job.skin, 5.0),
            )
        }
    };
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
    // Where the thickness is tightest: the X of the highest and lowest points.
    let at_top = turned
        .iter()
        .max_by(|a, b| a[2].total_cmp(&b[2]))
        .map_or(0.0, |v| v[0] - tlo[0]);
    // A rockered blank: the room between its curves at each X, with the
    // board centred along it and raised to balance the room over and under.
    let blank = job.stock.as_ref().filter(|b| b.rocker.is_some()).map(|b| {
        let sx = b.length / 2.0 - (tlo[0] + thi[0]) / 2.0;
        vertical_room(turned, sx, b)
    });
    let fit = Fit {
        block,
        side_room,
        at_top,
        blank,
    };
    let short = shortfalls(&fit, size, need, job, pitch);
    if short.is_empty() {
        Ok(fit)
    } else {
        Err(CamError::Fit(short.join("; ")))
    }
}

/// What the stock lacks for a board of `size` that needs `need` at each
/// end and side, each in the shop's units.
fn shortfalls(
    f: &Fit,
    size: [f64; 3],
    [end_need, side_need]: [f64; 2],
    job: &Job,
    pitch: f64,
) -> Vec<String> {
    let block = &f.block;
    let side_room = f.side_room;
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
    if let Some(f) = &f.blank
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
    } else if f.blank.is_none() && block.thickness < need_t {
        short.push(format!(
            "thickness: the block is {} thick, the board tilted {pitch:.1}° needs {} with {} skin ({} short), tightest {} from the nose",
            both(block.thickness),
            both(need_t),
            mm_text(job.skin),
            both(need_t - block.thickness),
            both(f.at_top)
        ));
    }
    short
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

/// Room for a board in a rockered blank.
pub(super) struct Room {
    /// Least of (deck − point) over the board before lifting, and its X.
    pub over: (f64, f64),
    /// Least of (point − bottom) before lifting, and its X.
    pub under: (f64, f64),
    /// The lift that balances the two.
    pub lift: f64,
    /// The foam left over and under after the lift.
    pub margin: f64,
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
