//! Run time as a controller moves the machine: a velocity plan over the
//! program's moves with the machine's accelerations.
//!
//! Each move runs a trapezoid (accelerate, cruise, decelerate) at most at
//! its own speed: the feed, or for a rapid the fastest the axes allow
//! together. Where two moves meet the machine keeps its speed as far as
//! the corner allows: a blend arc tangent to both moves within half of the
//! shorter one, taken at half the acceleration the axes allow in the
//! plane of the turn (v² = a·R/2), as a controller that blends corners for
//! the best speed does (more cautious than LinuxCNC's arcs, at √3/2 of it;
//! `benches/controller_time.sh` keeps the comparison); a
//! move that blends shares the acceleration with its neighbour (half each). A forward and a
//! backward pass over the whole program make every move's entry and exit
//! speeds reachable from its neighbours (the usual look-ahead of motion
//! planners: e.g. Sonja Macfarlane and Elizabeth Croft, IEEE Trans. Robot.
//! Autom. 19(1), 2003; the junction rule is the one of the open-source
//! GRBL and LinuxCNC planners in spirit, with the corner's blend radius as
//! the allowance). Time for one move of length L from rest to rest at
//! speed v and acceleration a: L/v + v/a when L ≥ v²/a, else 2√(L/a).

use crate::model::machine::Machine;
use crate::model::mesh::{cross, dot, norm};

/// One straight (or helical) move for the planner.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Move {
    /// Unit direction of travel (for a helix, of its axis-free chord).
    pub dir: [f64; 3],
    /// Length along the path, mm.
    pub length: f64,
    /// Top speed the program asks for, mm/s (a rapid asks for infinity).
    pub speed: f64,
    /// Radius of a helix (its speed is held to √(a·r)), or none.
    pub radius: Option<f64>,
}

/// What the machine can do, per axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limits {
    /// Top speed per axis, mm/s.
    pub speed: [f64; 3],
    /// Acceleration per axis, mm/s².
    pub accel: [f64; 3],
}

impl Limits {
    /// A machine's: its rapid rates as each axis's top speed (mm/min to
    /// mm/s) and its accelerations.
    pub fn of(m: &Machine) -> Limits {
        Limits {
            speed: [m.rapid_xy / 60.0, m.rapid_xy / 60.0, m.rapid_z / 60.0],
            accel: m.accel,
        }
    }

    /// The most a move along `dir` may reach: each axis's limit divided by
    /// that axis's share of the move.
    fn along(&self, dir: [f64; 3], per_axis: [f64; 3]) -> f64 {
        (0..3)
            .filter(|&k| dir[k].abs() > 1e-12)
            .map(|k| per_axis[k] / dir[k].abs())
            .fold(f64::INFINITY, f64::min)
    }

    /// The least acceleration of any axis: a helix turns in any direction.
    fn least_accel(&self) -> f64 {
        self.accel.iter().copied().fold(f64::INFINITY, f64::min)
    }

    /// The acceleration a corner from `a` to `b` (unit directions) may use
    /// in any direction of the plane it turns in: each axis's limit over
    /// its share of that plane, √(1 − n²) for the plane's normal n (an
    /// axis square to the plane does not move in the turn), the least of
    /// them; LinuxCNC bounds its blend arcs the same way (its trajectory
    /// planner's `calculateInscribedDiameter`, `src/emc/tp/blendmath.c`).
    /// A reversal, with no one plane, gets the least axis's.
    fn in_plane(&self, a: [f64; 3], b: [f64; 3]) -> f64 {
        let n = cross(a, b);
        let len = norm(n);
        if len < 1e-9 {
            return self.least_accel();
        }
        (0..3)
            .map(|k| {
                let share = (1.0 - (n[k] / len).powi(2)).max(0.0).sqrt();
                if share < 1e-9 {
                    f64::INFINITY
                } else {
                    self.accel[k] / share
                }
            })
            .fold(f64::INFINITY, f64::min)
    }
}

/// Time of one move of `length` entering at `v0`, leaving at `v1`, at most
/// `v`, accelerating at `a` (the trapezoid, or the triangle when it is too
/// short to reach `v`).
pub fn trapezoid(length: f64, v0: f64, v1: f64, v: f64, a: f64) -> f64 {
    if length <= 0.0 {
        return 0.0;
    }
    let (d_up, d_down) = ((v * v - v0 * v0) / (2.0 * a), (v * v - v1 * v1) / (2.0 * a));
    if d_up + d_down <= length {
        (v - v0) / a + (v - v1) / a + (length - d_up - d_down) / v
    } else {
        let peak = ((2.0 * a * length + v0 * v0 + v1 * v1) / 2.0).sqrt();
        (peak - v0).max(0.0) / a + (peak - v1).max(0.0) / a
    }
}

/// Seconds to run `moves` from rest to rest.
pub fn run_time(moves: &[Move], limits: &Limits) -> f64 {
    let n = moves.len();
    if n == 0 {
        return 0.0;
    }
    // Top speed and acceleration of each move.
    let top: Vec<f64> = moves
        .iter()
        .map(|m| {
            let mut v = m.speed.min(limits.along(m.dir, limits.speed));
            if let Some(r) = m.radius {
                v = v.min((limits.least_accel() * r).sqrt());
            }
            v
        })
        .collect();
    let mut acc: Vec<f64> = moves
        .iter()
        .map(|m| limits.along(m.dir, limits.accel))
        .collect();
    // The most each corner allows.
    let mut corner = vec![0.0; n + 1];
    let mut blends = vec![false; n];
    for i in 1..n {
        let (p, q) = (&moves[i - 1], &moves[i]);
        let cos = dot(p.dir, q.dir).clamp(-1.0, 1.0);
        let turn = cos.acos();
        let v = top[i - 1].min(top[i]);
        corner[i] = if turn < 1e-9 {
            v
        } else {
            let half = 0.5 * p.length.min(q.length);
            let radius = half / (0.5 * turn).tan();
            v.min((0.5 * limits.in_plane(p.dir, q.dir) * radius).sqrt())
        };
        if turn < 0.5 * std::f64::consts::PI {
            blends[i - 1] = true;
            blends[i] = true;
        }
    }
    // Moves that blend into a neighbour share the acceleration with it (a
    // blend accelerates along both at once), so each gets half, as
    // LinuxCNC's planner gives a blending segment.
    for (a, b) in acc.iter_mut().zip(&blends) {
        if *b {
            *a *= 0.5;
        }
    }
    // Backward: each move must be able to stop in time for what follows.
    for i in (0..n).rev() {
        let reach = (corner[i + 1] * corner[i + 1] + 2.0 * acc[i] * moves[i].length).sqrt();
        corner[i] = corner[i].min(reach);
    }
    // Forward: each move can only have reached what it accelerated to.
    for i in 0..n {
        let reach = (corner[i] * corner[i] + 2.0 * acc[i] * moves[i].length).sqrt();
        corner[i + 1] = corner[i + 1].min(reach);
    }
    (0..n)
        .map(|i| trapezoid(moves[i].length, corner[i], corner[i + 1], top[i], acc[i]))
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    const LIMITS: Limits = Limits {
        speed: [333.0, 333.0, 133.0],
        accel: [2000.0, 2000.0, 1000.0],
    };

    fn straight(length: f64, speed: f64) -> Move {
        Move {
            dir: [1.0, 0.0, 0.0],
            length,
            speed,
            radius: None,
        }
    }

    #[test]
    fn a_long_move_from_rest_to_rest_is_the_closed_form_trapezoid() {
        // L ≥ v²/a: t = L/v + v/a (kinematics of constant acceleration).
        let (l, v, a) = (500.0, 250.0, 2000.0);
        let t = run_time(&[straight(l, v)], &LIMITS);
        assert!((t - (l / v + v / a)).abs() < 1e-12, "{t}");
    }

    #[test]
    fn a_short_move_from_rest_to_rest_is_the_closed_form_triangle() {
        // L < v²/a: t = 2·√(L/a).
        let (l, v, a) = (10.0, 250.0, 2000.0);
        let t = run_time(&[straight(l, v)], &LIMITS);
        assert!((t - 2.0 * (l / a).sqrt()).abs() < 1e-12, "{t}");
    }

    #[test]
    fn moves_in_line_run_as_one_at_the_blending_acceleration() {
        // Fifty 10 mm moves in line blend into one another: one 500 mm
        // trapezoid at half the acceleration, L/v + v/(a/2).
        let split: Vec<Move> = (0..50).map(|_| straight(10.0, 250.0)).collect();
        let t = run_time(&split, &LIMITS);
        let want = 500.0 / 250.0 + 250.0 / 1000.0;
        assert!((t - want).abs() < 1e-9, "{t} vs {want}");
    }

    #[test]
    fn a_right_angle_slows_the_corner() {
        let across = Move {
            dir: [0.0, 1.0, 0.0],
            ..straight(100.0, 250.0)
        };
        let t = run_time(&[straight(100.0, 250.0), across], &LIMITS);
        let stop = 2.0 * run_time(&[straight(100.0, 250.0)], &LIMITS);
        let flowing = run_time(&[straight(200.0, 250.0)], &LIMITS);
        assert!(t > flowing && t < stop, "{flowing} < {t} < {stop}");
    }

    #[test]
    fn a_corner_takes_the_acceleration_of_its_plane() {
        // A turn in XY uses X's and Y's 2000 mm/s², not Z's 1000: Z does
        // not move in it. In XZ, Z's limit holds. A 45° diagonal plane
        // through Z: X over √(1 − ½) ≈ 2828 and Z's 1000 (Z is in it).
        // The rule is LinuxCNC's for its blend arcs (tp/blendmath.c); the
        // figures follow from it by hand.
        let (x, y, z) = ([1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]);
        assert_eq!(LIMITS.in_plane(x, y), 2000.0);
        assert_eq!(LIMITS.in_plane(x, z), 1000.0);
        assert_eq!(LIMITS.in_plane(x, [-1.0, 0.0, 0.0]), 1000.0);
        let r = std::f64::consts::FRAC_1_SQRT_2;
        assert!((LIMITS.in_plane([r, r, 0.0], z) - 1000.0).abs() < 1e-9);
        // v² = ½·a·R: a right angle between 100 mm moves (R = 50 mm) is
        // taken at √(½ · 2000 · 50) = 223.6 mm/s in XY.
        let a = straight(100.0, 250.0);
        let b = Move {
            dir: y,
            ..straight(100.0, 250.0)
        };
        let both = run_time(&[a, b], &LIMITS);
        let v: f64 = (0.5 * 2000.0 * 50.0_f64).sqrt();
        // A right angle is no blend (under 90° only): each move at the
        // whole 2000 mm/s², rest → 250 → v.
        let each = trapezoid(100.0, 0.0, v, 250.0, 2000.0);
        assert!((both - 2.0 * each).abs() < 1e-9, "{both} vs {}", 2.0 * each);
    }

    #[test]
    fn a_vertical_move_is_held_to_the_z_limits() {
        // Straight down at most 133 mm/s and 1000 mm/s².
        let down = Move {
            dir: [0.0, 0.0, -1.0],
            ..straight(100.0, f64::INFINITY)
        };
        let t = run_time(&[down], &LIMITS);
        assert!((t - (100.0 / 133.0 + 133.0 / 1000.0)).abs() < 1e-12, "{t}");
    }
}
