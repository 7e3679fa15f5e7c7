//! Turns the continuous board into a watertight triangle mesh.
//!
//! The surface is sampled on a grid: stations along the length, and a fixed
//! list of points around each half-section. Both are refined by bisection
//! until every sampled curve stays within `tolerance` of its chords (checked
//! at the quarter points), so points crowd where curvature is high: rails,
//! nose, tail, notch. Neighbouring stations are joined by strips; the nose
//! and tail close with a fan to a tip point or with a flat end cap; a swallow
//! tail splits into two tubes at the notch apex, where the two notch walls
//! meet along the stringer.

use std::collections::BTreeSet;

use rayon::prelude::*;

use crate::model::board::{Board, RailProfile, Station};
use crate::model::mesh::Mesh;

/// Default chord tolerance in mm: puts the demo boards' mesh volume within
/// 0.01 L of the converged volume (measured; see the mesher tests).
pub const DEFAULT_TOLERANCE: f64 = 0.01;
/// Smallest tolerance accepted, mm.
pub const MIN_TOLERANCE: f64 = 0.001;
/// Largest tolerance accepted, mm.
pub const MAX_TOLERANCE: f64 = 5.0;
/// Most triangles a mesh may have before it is refused.
pub const MAX_TRIANGLES: usize = 40_000_000;

/// Why a board could not be meshed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum MeshError {
    /// The tolerance is out of range (or NaN).
    #[error(
        "tolerance {0} mm is outside {MIN_TOLERANCE}..{MAX_TOLERANCE} mm; the default is {DEFAULT_TOLERANCE} mm"
    )]
    Tolerance(f64),
    /// The mesh would be too large to build.
    #[error(
        "the mesh would need more than {limit} triangles at this tolerance (at least {estimate} so far); use a larger tolerance"
    )]
    TooLarge { estimate: usize, limit: usize },
}

/// Levels of the dyadic grid used for ring parameters: shared refinements
/// from different stations land on exactly the same values.
const LEVELS: u32 = 40;
const FULL: u64 = 1 << LEVELS;

/// Points around the half-section, as parameters in [0, 1].
struct Ring {
    /// Parameters of the bottom points, from the stringer (or notch edge)
    /// out; the deck uses the same list so that a cap pairs them vertically.
    params: Vec<f64>,
    profile: RailProfile,
}

/// Where a rounded section's break (the bottom edge, the roll line) sits on
/// the ring: every station puts it at this parameter, so the refinement
/// that a break needs is shared by all stations instead of repeated at a
/// slightly different place for each.
const BREAK: f64 = 0.5;

impl Ring {
    /// Fraction of the half-width at ring parameter `p`, for a curve whose
    /// break is at `at` out from the stringer: the stringer (or notch edge)
    /// to the break over [0, BREAK], the break to the apex over [BREAK, 1],
    /// points crowding towards the apex.
    fn u(&self, st: &Station, p: f64, at: f64) -> f64 {
        let u0 = st.u_start();
        if self.profile == RailProfile::Square || st.half_width <= 0.0 {
            return u0 + (1.0 - u0) * p;
        }
        // The break stays strictly inside the span, so no two points meet.
        let f = ((at / st.half_width - u0) / (1.0 - u0)).clamp(0.05, 0.98);
        let t = if p <= BREAK {
            f * p / BREAK
        } else {
            let q = (p - BREAK) / (1.0 - BREAK);
            f + (1.0 - f) * (1.0 - (1.0 - q) * (1.0 - q))
        };
        u0 + (1.0 - u0) * t
    }

    /// Points of the + half: bottom out, apex (rounded), deck back in.
    fn points(&self, st: &Station) -> Vec<[f64; 2]> {
        let mut pts = Vec::with_capacity(2 * self.params.len() + 1);
        for &p in &self.params {
            pts.push(self.low_point(st, p));
        }
        if self.profile == RailProfile::Rounded {
            pts.push(st.apex_point());
        }
        for &p in self.params.iter().rev() {
            pts.push(self.up_point(st, p));
        }
        pts
    }

    fn low_point(&self, st: &Station, p: f64) -> [f64; 2] {
        if self.profile == RailProfile::Square && p >= 1.0 {
            st.square_corners().0
        } else {
            st.lower(self.u(st, p, st.edge_y()))
        }
    }

    fn up_point(&self, st: &Station, p: f64) -> [f64; 2] {
        if self.profile == RailProfile::Square && p >= 1.0 {
            st.square_corners().1
        } else {
            st.upper(self.u(st, p, st.half_width - st.rail.roll))
        }
    }

    /// Number of bottom points (also deck points).
    fn side(&self) -> usize {
        self.params.len()
    }

    fn len(&self) -> usize {
        2 * self.side() + usize::from(self.profile == RailProfile::Rounded)
    }
}

/// Distance from `p` to the segment `a`–`b` in the section plane.
fn off_chord(p: [f64; 2], a: [f64; 2], b: [f64; 2]) -> f64 {
    let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
    let len2 = dx * dx + dy * dy;
    let t = if len2 > 0.0 {
        (((p[0] - a[0]) * dx + (p[1] - a[1]) * dy) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    ((p[0] - a[0] - t * dx).powi(2) + (p[1] - a[1] - t * dy).powi(2)).sqrt()
}

/// Chooses the ring parameters: bisect each curve (bottom and deck) at a
/// spread of stations until it is within `tolerance` of its chords.
fn ring_params(board: &Board, tolerance: f64) -> Ring {
    let profile = board.rails.profile;
    let probe = Ring {
        params: vec![],
        profile,
    };
    let base: BTreeSet<u64> = (0..=8).map(|k| k * FULL / 8).collect();
    let l = board.length;
    let mut xs: Vec<f64> = (1..40).map(|i| l * i as f64 / 40.0).collect();
    xs.extend(board.breaks().into_iter().map(|x| x.clamp(0.002 * l, l)));
    // Each station refines the base grid on its own; the union is the same
    // whatever order the stations are done in.
    let sets: Vec<BTreeSet<u64>> = xs
        .par_iter()
        .map(|&x| {
            let mut set = base.clone();
            let st = board.station(x);
            if st.half_width <= 0.0 {
                return set;
            }
            for deck in [false, true] {
                let at = |k: u64| {
                    let p = k as f64 / FULL as f64;
                    if deck {
                        probe.up_point(&st, p)
                    } else {
                        probe.low_point(&st, p)
                    }
                };
                let mut stack: Vec<(u64, u64)> = base
                    .iter()
                    .copied()
                    .zip(base.iter().copied().skip(1))
                    .collect();
                while let Some((a, b)) = stack.pop() {
                    let (pa, pb) = (at(a), at(b));
                    let quarter = (b - a) / 4;
                    let worst = [a + quarter, a + 2 * quarter, b - quarter]
                        .into_iter()
                        .map(|k| off_chord(at(k), pa, pb))
                        .fold(0.0, f64::max);
                    if worst > tolerance && b - a >= 8 {
                        let m = a + (b - a) / 2;
                        set.insert(m);
                        stack.push((a, m));
                        stack.push((m, b));
                    }
                }
            }
            set
        })
        .collect();
    let set: BTreeSet<u64> = sets.into_iter().flatten().collect();
    let mut params: Vec<f64> = set.into_iter().map(|k| k as f64 / FULL as f64).collect();
    if profile == RailProfile::Rounded {
        // The apex is its own point; the bottom and deck lists stop short of it.
        params.pop();
    }
    Ring { params, profile }
}

/// A sampled station: its distance from the nose and its + half points.
struct Sample {
    x: f64,
    points: Vec<[f64; 2]>,
}

/// Largest distance between the points of `mid` and the midpoints of `a`–`b`.
fn ring_deviation(mid: &[[f64; 2]], a: &[[f64; 2]], b: &[[f64; 2]], t: f64) -> f64 {
    mid.iter()
        .zip(a.iter().zip(b))
        .map(|(m, (p, q))| {
            let ix = p[0] + t * (q[0] - p[0]);
            let iz = p[1] + t * (q[1] - p[1]);
            ((m[0] - ix).powi(2) + (m[1] - iz).powi(2)).sqrt()
        })
        .fold(0.0, f64::max)
}

/// Stations along the length, refined until the surface between them stays
/// within `tolerance` of the straight lines joining them.
fn stations(board: &Board, ring: &Ring, tolerance: f64) -> Result<Vec<Sample>, MeshError> {
    let sample = |x: f64| {
        let st = board.station(x);
        Sample {
            x,
            points: ring.points(&st),
        }
    };
    let breaks = board.breaks();
    let max_step = 50.0;
    let min_step = 0.01;
    let limit_stations = MAX_TRIANGLES / (2 * ring.len()).max(1);
    let too_many = std::sync::atomic::AtomicBool::new(false);
    // Each interval between breaks is refined on its own (in parallel); the
    // samples are joined in order, so the result does not depend on threads.
    let parts: Vec<Vec<Sample>> = breaks
        .par_windows(2)
        .map(|w| {
            let mut out: Vec<Sample> = vec![sample(w[0])];
            let pieces = ((w[1] - w[0]) / max_step).ceil().max(1.0) as usize;
            for i in 1..=pieces {
                let x1 = if i == pieces {
                    w[1]
                } else {
                    w[0] + (w[1] - w[0]) * i as f64 / pieces as f64
                };
                // Depth-first bisection of [last, x1], emitting samples in order.
                let mut pending = vec![sample(x1)];
                while let Some(right) = pending.pop() {
                    let left = out.last().expect("first station pushed above");
                    let dx = right.x - left.x;
                    let refine = dx > min_step && {
                        let mid = sample(left.x + 0.5 * dx);
                        let mut worst =
                            ring_deviation(&mid.points, &left.points, &right.points, 0.5);
                        if worst <= tolerance {
                            for t in [0.25, 0.75] {
                                let q = sample(left.x + t * dx);
                                worst = worst.max(ring_deviation(
                                    &q.points,
                                    &left.points,
                                    &right.points,
                                    t,
                                ));
                            }
                        }
                        worst > tolerance
                    };
                    if refine {
                        let mid = sample(0.5 * (left.x + right.x));
                        pending.push(right);
                        pending.push(mid);
                    } else {
                        out.push(right);
                        if out.len() > limit_stations
                            || too_many.load(std::sync::atomic::Ordering::Relaxed)
                        {
                            too_many.store(true, std::sync::atomic::Ordering::Relaxed);
                            return out;
                        }
                    }
                }
            }
            out
        })
        .collect();
    let mut out: Vec<Sample> = Vec::new();
    for part in parts {
        let skip = usize::from(!out.is_empty());
        out.extend(part.into_iter().skip(skip));
    }
    if too_many.into_inner() || out.len() > limit_stations {
        return Err(MeshError::TooLarge {
            estimate: out.len() * 2 * ring.len(),
            limit: MAX_TRIANGLES,
        });
    }
    Ok(out)
}

/// Vertex ids of one station.
enum Verts {
    /// The section has shrunk to the tip point.
    Tip(u32),
    /// The plus half and its mirror, point by point; when the halves meet
    /// on the stringer the first and last ids are shared.
    Halves {
        plus: Vec<u32>,
        minus: Vec<u32>,
        joined: bool,
    },
}

struct Builder {
    mesh: Mesh,
}

impl Builder {
    fn vertex(&mut self, p: [f64; 3]) -> u32 {
        self.mesh.vertices.push(p);
        (self.mesh.vertices.len() - 1) as u32
    }

    fn tri(&mut self, a: u32, b: u32, c: u32) {
        self.mesh.triangles.push([a, b, c]);
    }

    fn dist2(&self, a: u32, b: u32) -> f64 {
        let (p, q) = (
            self.mesh.vertices[a as usize],
            self.mesh.vertices[b as usize],
        );
        (p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)
    }

    /// Joins two closed loops of equal length, split along the shorter diagonal.
    fn strip(&mut self, a: &[u32], b: &[u32]) {
        let m = a.len();
        for j in 0..m {
            let k = (j + 1) % m;
            if self.dist2(a[j], b[k]) <= self.dist2(a[k], b[j]) {
                self.tri(a[j], a[k], b[k]);
                self.tri(a[j], b[k], b[j]);
            } else {
                self.tri(a[j], a[k], b[j]);
                self.tri(a[k], b[k], b[j]);
            }
        }
    }

    /// Fan from a tip to a loop; `tip_first` when the tip is at the nose.
    fn fan(&mut self, tip: u32, ring: &[u32], tip_first: bool) {
        let m = ring.len();
        for j in 0..m {
            let k = (j + 1) % m;
            if tip_first {
                self.tri(tip, ring[k], ring[j]);
            } else {
                self.tri(ring[j], ring[k], tip);
            }
        }
    }

    /// Caps one half-section face: vertical pairs of bottom and deck points
    /// joined into trapezoids, and the apex triangle. `facing_tail` for the
    /// tail end; `mirrored` for the − half (its orientation flips).
    fn cap_half(
        &mut self,
        half: &[u32],
        side: usize,
        rounded: bool,
        facing_tail: bool,
        mirrored: bool,
    ) {
        let m = half.len();
        let low = |j: usize| half[j];
        let up = |j: usize| half[m - 1 - j];
        let forward = facing_tail != mirrored;
        let emit = |b: &mut Self, p: u32, q: u32, r: u32| {
            if forward {
                b.tri(p, q, r)
            } else {
                b.tri(p, r, q)
            }
        };
        for j in 0..side - 1 {
            emit(self, low(j), low(j + 1), up(j + 1));
            emit(self, low(j), up(j + 1), up(j));
        }
        if rounded {
            emit(self, low(side - 1), half[side], up(side - 1));
        }
    }
}

fn single_loop(plus: &[u32], minus: &[u32]) -> Vec<u32> {
    let m = plus.len();
    let mut ids = plus.to_vec();
    ids.extend(minus[1..m - 1].iter().rev());
    ids
}

fn minus_loop(minus: &[u32]) -> Vec<u32> {
    minus.iter().rev().copied().collect()
}

/// Where the mesh samples the board: stations along the length and the
/// ring parameters around each half-section.
pub struct Sampling {
    ring: Ring,
    stations: Vec<f64>,
}

impl Sampling {
    /// Number of stations along the length.
    pub fn station_count(&self) -> usize {
        self.stations.len()
    }

    /// The stations, mm from the nose.
    pub fn stations(&self) -> &[f64] {
        &self.stations
    }

    /// Points around one full cross-section.
    pub fn ring_len(&self) -> usize {
        2 * self.ring.len() - 2
    }

    /// The same grid with every other station and ring point dropped (the
    /// ends and the board's breaks kept): each interval of the plan is
    /// merged with its neighbour, so chord sags grow about fourfold. The
    /// certificate meshes this to estimate the error of the fine mesh.
    pub fn coarsened(&self, board: &Board) -> Sampling {
        let breaks = board.breaks();
        let n = self.stations.len();
        let stations = self
            .stations
            .iter()
            .enumerate()
            .filter(|&(i, x)| {
                i % 2 == 0 || i == n - 1 || breaks.iter().any(|b| (b - x).abs() < 1e-9)
            })
            .map(|(_, &x)| x)
            .collect();
        let p = &self.ring.params;
        let params = p
            .iter()
            .enumerate()
            .filter(|&(i, _)| {
                i % 2 == 0 || (self.ring.profile == RailProfile::Square && i == p.len() - 1)
            })
            .map(|(_, &u)| u)
            .collect();
        Sampling {
            ring: Ring {
                params,
                profile: self.ring.profile,
            },
            stations,
        }
    }
}

/// Refuses a chord tolerance outside the accepted range (or NaN).
pub fn check_tolerance(tolerance: f64) -> Result<(), MeshError> {
    if (MIN_TOLERANCE..=MAX_TOLERANCE).contains(&tolerance) {
        Ok(())
    } else {
        Err(MeshError::Tolerance(tolerance))
    }
}

/// Plans the sampling of `board` so that every sampled curve is within
/// `tolerance` mm of its chords.
pub fn sample(board: &Board, tolerance: f64) -> Result<Sampling, MeshError> {
    check_tolerance(tolerance)?;
    let ring = ring_params(board, tolerance);
    let stations = stations(board, &ring, tolerance)?
        .into_iter()
        .map(|s| s.x)
        .collect();
    Ok(Sampling { ring, stations })
}

/// Meshes `board` so that every sampled curve is within `tolerance` mm of
/// the surface.
pub fn mesh_board(board: &Board, tolerance: f64) -> Result<Mesh, MeshError> {
    Ok(build(board, &sample(board, tolerance)?))
}

/// Builds the mesh on a planned sampling.
pub fn build(board: &Board, sampling: &Sampling) -> Mesh {
    let ring = &sampling.ring;
    let side = ring.side();
    let rounded = ring.profile == RailProfile::Rounded;
    let mut b = Builder {
        mesh: Mesh::default(),
    };
    let point_eps = 1e-9;
    let mut verts: Vec<Verts> = Vec::with_capacity(sampling.stations.len());
    for &x in &sampling.stations {
        let st = board.station(x);
        let points = ring.points(&st);
        let spread = points
            .iter()
            .map(|p| (p[0] - points[0][0]).abs().max((p[1] - points[0][1]).abs()))
            .fold(0.0, f64::max);
        if spread <= point_eps {
            verts.push(Verts::Tip(b.vertex([x, 0.0, points[0][1]])));
            continue;
        }
        let joined = st.inner <= 0.0;
        let m = points.len();
        let plus: Vec<u32> = points.iter().map(|p| b.vertex([x, p[0], p[1]])).collect();
        let minus: Vec<u32> = (0..m)
            .map(|j| {
                if joined && (j == 0 || j == m - 1) {
                    plus[j]
                } else {
                    b.vertex([x, -points[j][0], points[j][1]])
                }
            })
            .collect();
        verts.push(Verts::Halves {
            plus,
            minus,
            joined,
        });
    }
    for w in verts.windows(2) {
        match (&w[0], &w[1]) {
            (Verts::Tip(t), Verts::Halves { plus, minus, .. }) => {
                b.fan(*t, &single_loop(plus, minus), true);
            }
            (Verts::Halves { plus, minus, .. }, Verts::Tip(t)) => {
                b.fan(*t, &single_loop(plus, minus), false);
            }
            (
                Verts::Halves {
                    plus: pa,
                    minus: ma,
                    ..
                },
                Verts::Halves {
                    plus: pb,
                    minus: mb,
                    joined: true,
                },
            ) => {
                b.strip(&single_loop(pa, ma), &single_loop(pb, mb));
            }
            (
                Verts::Halves {
                    plus: pa,
                    minus: ma,
                    ..
                },
                Verts::Halves {
                    plus: pb,
                    minus: mb,
                    joined: false,
                },
            ) => {
                b.strip(pa, pb);
                b.strip(&minus_loop(ma), &minus_loop(mb));
            }
            (Verts::Tip(_), Verts::Tip(_)) => {}
        }
    }
    for (end, facing_tail) in [(verts.first(), false), (verts.last(), true)] {
        if let Some(Verts::Halves { plus, minus, .. }) = end {
            b.cap_half(plus, side, rounded, facing_tail, false);
            b.cap_half(minus, side, rounded, facing_tail, true);
        }
    }
    b.mesh
}
