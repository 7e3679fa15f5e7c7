//! The report page's 3D view: what it draws, packed small for the screen.
//!
//! The board is a coarse mesh of the same description (0.5 mm chord
//! tolerance: about 12,000 triangles for a shortboard, against some
//! 400,000 in the certified mesh), placed in setup-1 coordinates as the
//! programs cut it, each vertex coloured by the simulated deviation that
//! setup's map holds under it (the deck by setup 1's, the bottom by setup
//! 2's, turned back with the block). The toolpaths are the cutting moves of
//! each setup and operation (setup 2's turned back into setup-1
//! coordinates, so they wrap the bottom), each run of cuts thinned to
//! within [`PATH_TOLERANCE`] of itself; the rapids are one more group.
//!
//! Everything goes into one little-endian buffer (f32 positions, u32
//! indices, u8 colours), compressed with zlib and written as base64 into
//! the page, with a JSON index of where each part lies. The page's own
//! script ([`VIEW_JS`]) unpacks it with the browser's
//! `DecompressionStream` and draws it with three.js (vendored in
//! `assets/three/`, MIT licence, compressed the same way): nothing is
//! fetched, the page opens from disk.

use std::fmt::Write as _;
use std::io::Write as _;
use std::sync::OnceLock;

use crate::gcode::program::CutPlan;
use crate::model::mesh::{Mesh, cross, sub};
use crate::model::toolpath::Step;
use crate::svg::diverging;
use crate::toolpath::setup::{Side, flip};
use crate::verify::picture::base64;
use crate::verify::report::Verification;

/// Chord tolerance of the board drawn in the view, mm.
pub const SCREEN_TOLERANCE: f64 = 0.5;

/// How far a thinned toolpath may stray from the program's, mm: under a
/// pixel on a full-page view of a board.
pub const PATH_TOLERANCE: f64 = 0.3;

/// three.js as released (r170, `build/three.module.min.js`).
const THREE_JS: &str = include_str!("../../assets/three/three.module.min.js");
/// three.js's orbit controls (`examples/jsm/controls/OrbitControls.js`).
const ORBIT_JS: &str = include_str!("../../assets/three/OrbitControls.js");
/// The page's own script: unpacks the libraries and the scene, draws it,
/// and wires the switches.
pub const VIEW_JS: &str = include_str!("../../assets/view.js");

/// Colour of the board where no deviation is known.
const BOARD_RGB: [u8; 3] = [236, 226, 200];
/// Colour of a routed pocket.
const POCKET_RGB: [u8; 3] = [120, 120, 120];

/// Colours of the toolpath groups, as on the setup sheet's drawings.
const PATH_COLOURS: [(&str, &str); 8] = [
    ("registration holes", "#000000"),
    ("roughing", "#c07020"),
    ("outline", "#aa0000"),
    ("finishing", "#2060c0"),
    ("rails", "#2a9a50"),
    ("fin boxes", "#8a30a0"),
    ("leash plug", "#8a30a0"),
    ("rapids", "#888888"),
];

/// The view's data, ready for the page.
pub struct Scene {
    /// Where each part lies in the buffer, what it is called, its colour.
    pub index: String,
    /// The buffer, zlib-compressed, in base64.
    pub data: String,
    /// Deviation drawn at full colour, mm.
    pub scale: f64,
}

/// zlib-compressed, base64: the form every blob in the page takes.
pub fn packed(bytes: &[u8]) -> String {
    let mut z = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::best());
    // Writing into memory cannot fail.
    let _ = z.write_all(bytes);
    base64(&z.finish().unwrap_or_default())
}

/// three.js and its orbit controls, packed (once per process).
pub fn libraries() -> &'static (String, String) {
    static PACKED: OnceLock<(String, String)> = OnceLock::new();
    PACKED.get_or_init(|| (packed(THREE_JS.as_bytes()), packed(ORBIT_JS.as_bytes())))
}

struct Buffer {
    bytes: Vec<u8>,
}

impl Buffer {
    /// Appends f32s, returns `[offset in bytes, count]`.
    fn floats(&mut self, v: impl IntoIterator<Item = f64>) -> [usize; 2] {
        let at = self.bytes.len();
        let mut n = 0;
        for x in v {
            self.bytes.extend_from_slice(&(x as f32).to_le_bytes());
            n += 1;
        }
        [at, n]
    }

    fn u32s(&mut self, v: impl IntoIterator<Item = u32>) -> [usize; 2] {
        self.align();
        let at = self.bytes.len();
        let mut n = 0;
        for x in v {
            self.bytes.extend_from_slice(&x.to_le_bytes());
            n += 1;
        }
        [at, n]
    }

    fn u8s(&mut self, v: &[u8]) -> [usize; 2] {
        let at = self.bytes.len();
        self.bytes.extend_from_slice(v);
        self.align();
        [at, v.len()]
    }

    /// Typed arrays start on a multiple of 4 bytes.
    fn align(&mut self) {
        while !self.bytes.len().is_multiple_of(4) {
            self.bytes.push(0);
        }
    }
}

/// The scene of a board: its screen mesh `board` in the design's own
/// coordinates, and when it was cut, the plan and the simulation.
/// `scale` is the deviation (mm) drawn at full colour, as in the maps.
pub fn scene(board: &Mesh, cut: Option<(&CutPlan, &Verification)>, scale: f64) -> Scene {
    let mut buf = Buffer { bytes: vec![] };
    let placed: Vec<[f64; 3]> = match cut {
        Some((plan, _)) => board
            .vertices
            .iter()
            .map(|&v| plan.placement.pose.apply(v))
            .collect(),
        None => board.vertices.clone(),
    };
    let colours = cut.map(|(plan, v)| {
        let normals = vertex_normals(&placed, &board.triangles);
        let mut rgb = Vec::with_capacity(placed.len() * 3);
        for (p, n) in placed.iter().zip(&normals) {
            rgb.extend_from_slice(&match deviation_at(*p, n[2], plan, v) {
                Some(Under::Deviation(d)) => colour(d / scale),
                Some(Under::Pocket) => POCKET_RGB,
                None => BOARD_RGB,
            });
        }
        rgb
    });
    let vertices = buf.floats(placed.iter().flatten().copied());
    let triangles = buf.u32s(board.triangles.iter().flatten().copied());
    let mut index = String::new();
    let _ = write!(
        index,
        "{{\"board\":{{\"vertices\":{vertices:?},\"triangles\":{triangles:?}"
    );
    if let Some(rgb) = colours {
        let c = buf.u8s(&rgb);
        let _ = write!(index, ",\"colours\":{c:?}");
    }
    index.push('}');
    let _ = write!(index, ",\"scale\":{scale:.3}");
    if let Some((plan, _)) = cut {
        let b = &plan.placement.block;
        let _ = write!(
            index,
            ",\"block\":[{:.1},{:.1},{:.1}]",
            b.length, b.width, b.thickness
        );
        index.push_str(",\"paths\":[");
        let mut first = true;
        for group in groups(plan) {
            let points = buf.floats(group.points.iter().flatten().copied());
            let starts = buf.u32s(group.starts.iter().copied());
            let _ = write!(
                index,
                "{}{{\"setup\":{},\"label\":\"{}\",\"colour\":\"{}\",\"points\":{points:?},\"starts\":{starts:?}}}",
                if first { "" } else { "," },
                group.setup,
                group.label,
                group.colour
            );
            first = false;
        }
        index.push(']');
    }
    index.push('}');
    Scene {
        index,
        data: packed(&buf.bytes),
        scale,
    }
}

/// How far round a vertex the maps are read, mm: the screen mesh's
/// vertices lie some millimetres apart, and one cell under each would
/// pick scallop crests and troughs at random.
const READ_RADIUS: f64 = 3.0;

/// What the maps hold under a placed vertex.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Under {
    /// The mean deviation round it, mm, or the deepest gouge there where
    /// one is deeper than the tolerance.
    Deviation(f64),
    /// A routed pocket (fin box, plug): cut below the surface on purpose.
    Pocket,
}

/// What the maps hold under a placed vertex: the deck's map for a vertex
/// facing up, the bottom's (turned with the block) for one facing down;
/// the other map where the first has nothing there.
fn deviation_at(p: [f64; 3], normal_z: f64, plan: &CutPlan, v: &Verification) -> Option<Under> {
    let block = &plan.placement.block;
    let look = |side: Side| -> Option<Under> {
        let m = v.maps.iter().find(|m| m.side == side)?;
        let q = match side {
            Side::Deck => p,
            Side::Bottom => flip(p, block),
        };
        let near_pocket = plan.pockets.iter().any(|z| {
            z.side == side
                && (z.contains([q[0], q[1]]) || z.edge_distance([q[0], q[1]]) < READ_RADIUS)
        });
        if near_pocket {
            return Some(Under::Pocket);
        }
        let ci = ((q[0] - m.origin[0]) / m.cell[0]).floor() as i64;
        let cj = ((q[1] - m.origin[1]) / m.cell[1]).floor() as i64;
        let (ki, kj) = (
            (READ_RADIUS / m.cell[0]).ceil() as i64,
            (READ_RADIUS / m.cell[1]).ceil() as i64,
        );
        let (mut sum, mut n, mut deepest) = (0.0, 0usize, 0.0f64);
        for j in cj - kj..=cj + kj {
            for i in ci - ki..=ci + ki {
                if i < 0 || j < 0 || i >= m.dims[0] as i64 || j >= m.dims[1] as i64 {
                    continue;
                }
                let d = f64::from(m.deviation[j as usize * m.dims[0] + i as usize]);
                if !d.is_nan() {
                    sum += d;
                    n += 1;
                    deepest = deepest.min(d);
                }
            }
        }
        (n > 0).then(|| {
            Under::Deviation(if deepest < -v.gouge_tolerance_mm {
                deepest
            } else {
                sum / n as f64
            })
        })
    };
    let (first, second) = if normal_z >= 0.0 {
        (Side::Deck, Side::Bottom)
    } else {
        (Side::Bottom, Side::Deck)
    };
    look(first).or_else(|| look(second))
}

/// The maps' colour for a deviation over the scale: blue for stock left,
/// red for a gouge, white between.
fn colour(t: f64) -> [u8; 3] {
    let hex = diverging(-t);
    let byte = |k: usize| u8::from_str_radix(&hex[k..k + 2], 16).unwrap_or(0);
    [byte(1), byte(3), byte(5)]
}

/// Area-weighted vertex normals.
fn vertex_normals(vertices: &[[f64; 3]], triangles: &[[u32; 3]]) -> Vec<[f64; 3]> {
    let mut n = vec![[0.0; 3]; vertices.len()];
    for t in triangles {
        let [a, b, c] = t.map(|k| vertices[k as usize]);
        let f = cross(sub(b, a), sub(c, a));
        for &k in t {
            for (x, y) in n[k as usize].iter_mut().zip(f) {
                *x += y;
            }
        }
    }
    n
}

/// One toggled group of lines: runs of points, each starting at `starts`.
struct Group {
    setup: u32,
    label: &'static str,
    colour: &'static str,
    points: Vec<[f64; 3]>,
    starts: Vec<u32>,
}

/// Every setup's cutting moves by operation, and its rapids, in setup-1
/// coordinates, thinned.
fn groups(plan: &CutPlan) -> Vec<Group> {
    let block = &plan.placement.block;
    let mut out: Vec<Group> = vec![];
    for sp in &plan.setups {
        let setup = sp.side.number();
        let turn = |q: [f64; 3]| match sp.side {
            Side::Bottom => flip(q, block),
            Side::Deck => q,
        };
        for p in &sp.paths {
            let (cuts, rapids) = runs(&p.steps);
            for (label, runs) in [(p.label, cuts), ("rapids", rapids)] {
                let colour = PATH_COLOURS
                    .iter()
                    .find(|c| c.0 == label)
                    .map_or("#444444", |c| c.1);
                let g = match out
                    .iter_mut()
                    .position(|g| g.setup == setup && g.label == label)
                {
                    Some(k) => &mut out[k],
                    None => {
                        out.push(Group {
                            setup,
                            label,
                            colour,
                            points: vec![],
                            starts: vec![],
                        });
                        let last = out.len() - 1;
                        &mut out[last]
                    }
                };
                for run in runs {
                    let thin = thinned(&run, PATH_TOLERANCE);
                    g.starts.push(g.points.len() as u32);
                    g.points.extend(thin.into_iter().map(turn));
                }
            }
        }
    }
    out
}

/// Polylines, mm.
type Runs = Vec<Vec<[f64; 3]>>;

/// The runs of cutting moves (arcs as chords every 10°) and of rapids.
fn runs(steps: &[Step]) -> (Runs, Runs) {
    let (mut cuts, mut rapids) = (vec![], vec![]);
    let mut cut: Vec<[f64; 3]> = vec![];
    let mut rapid: Vec<[f64; 3]> = vec![];
    let mut at: Option<[f64; 3]> = None;
    for st in steps {
        match *st {
            Step::Rapid(q) => {
                if cut.len() > 1 {
                    cuts.push(std::mem::take(&mut cut));
                }
                cut.clear();
                if rapid.is_empty()
                    && let Some(a) = at
                {
                    rapid.push(a);
                }
                rapid.push(q);
                at = Some(q);
            }
            Step::Plunge(q) | Step::Cut(q) => {
                close_rapid(&mut rapid, &mut rapids);
                start_cut(&mut cut, at);
                cut.push(q);
                at = Some(q);
            }
            Step::Arc { to, centre, cw } => {
                close_rapid(&mut rapid, &mut rapids);
                start_cut(&mut cut, at);
                if let Some(from) = at {
                    cut.extend(arc_points(from, to, centre, cw));
                } else {
                    cut.push(to);
                }
                at = Some(to);
            }
        }
    }
    if cut.len() > 1 {
        cuts.push(cut);
    }
    close_rapid(&mut rapid, &mut rapids);
    (cuts, rapids)
}

fn close_rapid(rapid: &mut Vec<[f64; 3]>, rapids: &mut Runs) {
    if rapid.len() > 1 {
        rapids.push(std::mem::take(rapid));
    }
    rapid.clear();
}

fn start_cut(cut: &mut Vec<[f64; 3]>, at: Option<[f64; 3]>) {
    if cut.is_empty()
        && let Some(a) = at
    {
        cut.push(a);
    }
}

/// Points along an arc in the XY plane from `from` to `to` round `centre`
/// (Z straight between), every 10° or less, ending at `to`. A full circle
/// when the ends meet.
fn arc_points(from: [f64; 3], to: [f64; 3], centre: [f64; 2], cw: bool) -> Vec<[f64; 3]> {
    use std::f64::consts::TAU;
    let a0 = (from[1] - centre[1]).atan2(from[0] - centre[0]);
    let a1 = (to[1] - centre[1]).atan2(to[0] - centre[0]);
    let r = (from[0] - centre[0]).hypot(from[1] - centre[1]);
    let mut sweep = if cw { a0 - a1 } else { a1 - a0 };
    sweep = sweep.rem_euclid(TAU);
    if sweep < 1e-9 {
        sweep = TAU;
    }
    let n = (sweep / 10f64.to_radians()).ceil().max(1.0) as usize;
    (1..=n)
        .map(|k| {
            let f = k as f64 / n as f64;
            if k == n {
                return to;
            }
            let a = if cw { a0 - sweep * f } else { a0 + sweep * f };
            [
                centre[0] + r * a.cos(),
                centre[1] + r * a.sin(),
                from[2] + (to[2] - from[2]) * f,
            ]
        })
        .collect()
}

/// A polyline thinned (Ramer–Douglas–Peucker, 3D): every dropped point lies
/// within `tol` of the line kept over it.
pub fn thinned(points: &[[f64; 3]], tol: f64) -> Vec<[f64; 3]> {
    if points.len() < 3 {
        return points.to_vec();
    }
    let mut keep = vec![false; points.len()];
    keep[0] = true;
    keep[points.len() - 1] = true;
    let mut stack = vec![(0, points.len() - 1)];
    while let Some((a, b)) = stack.pop() {
        let (mut worst, mut at) = (0.0, 0);
        for (k, p) in points.iter().enumerate().take(b).skip(a + 1) {
            let d = distance_to_segment(*p, points[a], points[b]);
            if d > worst {
                (worst, at) = (d, k);
            }
        }
        if worst > tol {
            keep[at] = true;
            stack.push((a, at));
            stack.push((at, b));
        }
    }
    points
        .iter()
        .zip(keep)
        .filter_map(|(p, k)| k.then_some(*p))
        .collect()
}

fn distance_to_segment(p: [f64; 3], a: [f64; 3], b: [f64; 3]) -> f64 {
    let ab = sub(b, a);
    let ap = sub(p, a);
    let len2 = crate::model::mesh::dot(ab, ab);
    let t = if len2 > 0.0 {
        (crate::model::mesh::dot(ap, ab) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let q = [a[0] + ab[0] * t, a[1] + ab[1] * t, a[2] + ab[2] * t];
    crate::model::mesh::norm(sub(p, q))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A straight line with points on it thins to its ends; a corner of
    /// 1 mm stays, one of 0.1 mm goes (tolerance 0.3 mm).
    #[test]
    fn thinning_keeps_what_strays_beyond_the_tolerance() {
        let line: Vec<[f64; 3]> = (0..=10).map(|k| [k as f64, 0.0, 0.0]).collect();
        assert_eq!(thinned(&line, 0.3), vec![[0.0; 3], [10.0, 0.0, 0.0]]);
        let bump = |h: f64| vec![[0.0; 3], [5.0, h, 0.0], [10.0, 0.0, 0.0]];
        assert_eq!(thinned(&bump(1.0), 0.3).len(), 3);
        assert_eq!(thinned(&bump(0.1), 0.3).len(), 2);
    }

    /// A quarter circle counter-clockwise of radius 10: every point on the
    /// circle, 9 chords of 10°, ending where it was told.
    #[test]
    fn arcs_are_drawn_as_chords_on_the_circle() {
        let pts = arc_points([10.0, 0.0, 0.0], [0.0, 10.0, -1.0], [0.0, 0.0], false);
        assert_eq!(pts.len(), 9);
        for p in &pts {
            assert!((p[0].hypot(p[1]) - 10.0).abs() < 1e-9);
        }
        assert_eq!(*pts.last().unwrap(), [0.0, 10.0, -1.0]);
        let full = arc_points([10.0, 0.0, 0.0], [10.0, 0.0, 0.0], [0.0, 0.0], true);
        assert_eq!(full.len(), 36);
    }
}
