//! Integrals of the continuous shape, independent of any mesh: volume as
//! the integral of cross-section areas along the length, its first moment,
//! the planform area, and litres along the board.
//!
//! Each is an adaptive Gauss-Kronrod quadrature over the pieces between the
//! shape's breaks (where a formula changes), of section areas that are
//! themselves integrated from the continuous section curves.

use crate::board::Board;
use crate::quadrature::{self, Integral};

/// Relative accuracy asked of the shape integrals.
pub const RELATIVE_ACCURACY: f64 = 1e-9;

/// Cross-section area at x, mm².
pub fn section_area(board: &Board, x: f64) -> f64 {
    board.station(x).area()
}

fn integrate_along(board: &Board, a: f64, b: f64, f: impl Fn(f64) -> f64, scale: f64) -> Integral {
    let mut breaks: Vec<f64> = board
        .breaks()
        .into_iter()
        .filter(|&x| x > a && x < b)
        .collect();
    breaks.insert(0, a);
    breaks.push(b);
    quadrature::integrate(f, &breaks, RELATIVE_ACCURACY * scale, 4000)
}

/// A rough scale of the board's volume (length × width × thickness), mm³,
/// to turn relative accuracy into absolute.
fn volume_scale(board: &Board) -> f64 {
    let w = 2.0 * board.half_width(board.outline.wide_point);
    board.length * w * board.foil.max_station().1
}

/// Volume of the continuous shape, mm³, with its quadrature error estimate.
pub fn volume(board: &Board) -> Integral {
    integrate_along(
        board,
        0.0,
        board.length,
        |x| section_area(board, x),
        volume_scale(board),
    )
}

/// Volume between `a` and `b` mm from the nose, mm³.
pub fn volume_between(board: &Board, a: f64, b: f64) -> f64 {
    integrate_along(board, a, b, |x| section_area(board, x), volume_scale(board)).value
}

/// Distance of the centre of volume from the nose, mm.
pub fn centre_of_volume(board: &Board) -> f64 {
    let scale = volume_scale(board) * board.length;
    let moment = integrate_along(
        board,
        0.0,
        board.length,
        |x| x * section_area(board, x),
        scale,
    );
    moment.value / volume(board).value
}

/// Plan-view area, mm² (the swallow's notch excluded).
pub fn planform_area(board: &Board) -> f64 {
    let scale = board.length * board.half_width(board.outline.wide_point);
    integrate_along(
        board,
        0.0,
        board.length,
        |x| {
            let st = board.station(x);
            2.0 * (st.half_width - st.inner).max(0.0)
        },
        scale,
    )
    .value
}

/// Litres in each successive `step` mm from the nose (the last piece may be
/// shorter): (start mm, end mm, litres).
pub fn litres_along(board: &Board, step: f64) -> Vec<(f64, f64, f64)> {
    let mut out = vec![];
    let mut a = 0.0;
    while a < board.length - 1e-9 {
        let b = (a + step).min(board.length);
        out.push((a, b, volume_between(board, a, b) * 1e-6));
        a = b;
    }
    out
}
