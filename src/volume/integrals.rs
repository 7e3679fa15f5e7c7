//! Integrals of the continuous shape, independent of any mesh: volume as
//! the integral of cross-section areas along the length, its first moment,
//! litres along the board, and the planform area.
//!
//! One adaptive Gauss-Kronrod pass (volume and moment together) runs over
//! the pieces between the shape's breaks, where a formula changes, and the
//! foot and 300 mm marks, so litres per foot are sums of whole pieces. The
//! section areas are themselves integrated from the continuous section
//! curves. Pieces are integrated in parallel and summed in order along the
//! board, so the result does not depend on the number of threads.

use rayon::prelude::*;

use crate::geom::quadrature::{self, Piece};
use crate::model::board::Board;
use crate::units::MM_PER_FOOT;

/// Relative accuracy asked of the shape integrals.
pub const RELATIVE_ACCURACY: f64 = 1e-9;

/// Cross-section area at x, mm².
pub fn section_area(board: &Board, x: f64) -> f64 {
    board.station(x).area()
}

/// Volume along the board: pieces of ∫A dx and ∫x·A dx.
#[derive(Debug, Clone, PartialEq)]
pub struct AreaIntegrals {
    pieces: Vec<Piece<2>>,
}

/// Length × width × thickness, mm³: a scale to turn relative accuracy into absolute.
fn volume_scale(board: &Board) -> f64 {
    let w = 2.0 * board.half_width(board.outline.wide_point);
    board.length * w * board.foil.max_station().1
}

/// Every break of the shape plus the marks at each foot and each 300 mm.
fn marks(board: &Board) -> Vec<f64> {
    let l = board.length;
    let mut b = board.breaks();
    for step in [MM_PER_FOOT, 300.0] {
        b.extend((1..).map(|i| i as f64 * step).take_while(|&x| x < l));
    }
    b.sort_by(f64::total_cmp);
    b.dedup_by(|a, b| (*a - *b).abs() < 1e-9);
    b
}

/// Integrates the section areas along `board`.
pub fn area_integrals(board: &Board) -> AreaIntegrals {
    let breaks = marks(board);
    let l = board.length;
    let tolerance = RELATIVE_ACCURACY * volume_scale(board);
    let pieces = breaks
        .par_windows(2)
        .flat_map_iter(|w| {
            let share = tolerance * (w[1] - w[0]) / l;
            quadrature::integrate_pieces(
                |x| {
                    let a = section_area(board, x);
                    [a, x * a]
                },
                w,
                share,
                400,
            )
        })
        .collect();
    AreaIntegrals { pieces }
}

impl AreaIntegrals {
    /// Volume, mm³.
    pub fn volume(&self) -> f64 {
        self.pieces.iter().map(|p| p.value[0]).sum()
    }

    /// Quadrature error estimate of the volume, mm³.
    pub fn error(&self) -> f64 {
        self.pieces.iter().map(|p| p.error).sum()
    }

    /// Distance of the centre of volume from the nose, mm.
    pub fn centre_of_volume(&self) -> f64 {
        self.pieces.iter().map(|p| p.value[1]).sum::<f64>() / self.volume()
    }

    /// Volume between `a` and `b` mm from the nose, mm³; exact sums of pieces
    /// when `a` and `b` are marks (tips, feet, multiples of 300 mm).
    pub fn volume_between(&self, a: f64, b: f64) -> f64 {
        self.pieces
            .iter()
            .filter(|p| p.a >= a - 1e-9 && p.b <= b + 1e-9)
            .map(|p| p.value[0])
            .sum()
    }

    /// Litres in each successive `step` mm from the nose (a foot or 300 mm;
    /// the last piece may be shorter): (start mm, end mm, litres).
    pub fn litres_along(&self, length: f64, step: f64) -> Vec<(f64, f64, f64)> {
        let mut out = vec![];
        let mut i = 0;
        loop {
            let a = i as f64 * step;
            if a >= length - 1e-9 {
                break;
            }
            let b = ((i + 1) as f64 * step).min(length);
            out.push((a, b, self.volume_between(a, b) * 1e-6));
            i += 1;
        }
        out
    }
}

/// Plan-view area, mm² (the swallow's notch excluded).
pub fn planform_area(board: &Board) -> f64 {
    let scale = board.length * board.half_width(board.outline.wide_point);
    quadrature::integrate(
        |x| {
            let st = board.station(x);
            2.0 * (st.half_width - st.inner).max(0.0)
        },
        &board.breaks(),
        RELATIVE_ACCURACY * scale,
        4000,
    )
    .value
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn litres_along_add_up_to_the_volume() {
        let b = crate::description::board_from_str(crate::description::demo::DEMO, "demo").unwrap();
        let p = area_integrals(&b);
        for step in [MM_PER_FOOT, 300.0] {
            let sum: f64 = p.litres_along(b.length, step).iter().map(|x| x.2).sum();
            assert!((sum - p.volume() * 1e-6).abs() < 1e-9, "{step}: {sum}");
        }
        let c = p.centre_of_volume();
        assert!(c > 0.3 * b.length && c < 0.7 * b.length);
    }
}
