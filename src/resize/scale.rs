//! The design what-ifs: the same board scaled, stretched, or made to hold a
//! target volume; the volume that floats the same in other water; and the
//! buoyancy behind it.
//!
//! A board is resized as an affine map x → (kx·x, ky·y, kz·z) of its
//! resolved shape, so every station, curve, contour and rail scales with
//! it. A target volume is met by a bracketing root finder (the Illinois
//! variant of regula falsi; Dowell and Jarratt, BIT 11, 1971) on the
//! certified mesh volume.

use crate::meshing::mesher::{self, MeshError};
use crate::model::board::Board;
use crate::volume::measure as volume;

pub use crate::volume::water::{FRESH_WATER, SALT_WATER, STANDARD_GRAVITY};
/// How close the solver brings the mesh volume to a target, litres.
pub const VOLUME_TOLERANCE: f64 = 1e-4;

/// What a resize keeps unchanged.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Keep {
    /// Length.
    pub length: bool,
    /// Width (all widths).
    pub width: bool,
    /// Thickness (all heights: rocker, foil, dome, contours).
    pub thickness: bool,
}

/// A resize asked for. Lengths in mm, volume in litres.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Request {
    /// New length.
    pub length: Option<f64>,
    /// New width.
    pub width: Option<f64>,
    /// New thickness.
    pub thickness: Option<f64>,
    /// Target volume, litres, in the water the board is used in now.
    pub volume: Option<f64>,
    /// What stays as it is.
    pub keep: Keep,
    /// Water densities (now, then), kg/m³: the target floats the same in `then`.
    pub water: Option<(f64, f64)>,
}

/// Why a resize cannot be done.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ResizeError {
    /// A value is out of range.
    #[error("{0}")]
    Invalid(String),
    /// Meshing failed.
    #[error("{0}")]
    Mesh(#[from] MeshError),
    /// The solver could not bracket or meet the target.
    #[error("no scaling of {what} gives {target:.3} L (tried {low:.3}× to {high:.3}×)")]
    Unreachable {
        what: String,
        target: f64,
        low: f64,
        high: f64,
    },
}

/// A resized board and how it was made.
#[derive(Debug, Clone)]
pub struct Resized {
    /// The new board.
    pub board: Board,
    /// Factors along, across and up.
    pub factors: [f64; 3],
    /// The target volume met, litres (when one was asked for).
    pub target_litres: Option<f64>,
    /// What the solver adjusted, if anything.
    pub adjusted: Option<String>,
}

/// Volume of `board` meshed at `tolerance`, litres.
pub fn mesh_litres(board: &Board, tolerance: f64) -> Result<f64, MeshError> {
    Ok(volume::volume(&mesher::mesh_board(board, tolerance)?) * 1e-6)
}

fn positive(v: f64, what: &str) -> Result<f64, ResizeError> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        Err(ResizeError::Invalid(format!(
            "{what} must be a positive number, not {v}"
        )))
    }
}

/// Applies `request` to `board` (width and thickness measured as the report
/// does: at the wide point and the thickest point).
pub fn resize(
    board: &Board,
    request: &Request,
    width: f64,
    thickness: f64,
    tolerance: f64,
) -> Result<Resized, ResizeError> {
    let k = &request.keep;
    let mut f = [1.0, 1.0, 1.0];
    if let Some(l) = request.length {
        if k.length {
            return Err(ResizeError::Invalid(
                "--length given and length kept".into(),
            ));
        }
        f[0] = positive(l, "the length")? / board.length;
        // Proportional unless widths or thicknesses are kept or set.
        if !k.width && request.width.is_none() {
            f[1] = f[0];
        }
        if !k.thickness && request.thickness.is_none() {
            f[2] = f[0];
        }
    }
    if let Some(w) = request.width {
        if k.width {
            return Err(ResizeError::Invalid("--width given and width kept".into()));
        }
        f[1] = positive(w, "the width")? / width;
    }
    if let Some(t) = request.thickness {
        if k.thickness {
            return Err(ResizeError::Invalid(
                "--thickness given and thickness kept".into(),
            ));
        }
        f[2] = positive(t, "the thickness")? / thickness;
    }
    let scaled = board.scaled(f[0], f[1], f[2]);
    let target = match (request.volume, request.water) {
        (None, None) => {
            return Ok(Resized {
                board: scaled,
                factors: f,
                target_litres: None,
                adjusted: None,
            });
        }
        (v, water) => {
            let now = match v {
                Some(v) => positive(v, "the volume")?,
                None => mesh_litres(&scaled, tolerance)?,
            };
            let (from, to) = water.unwrap_or((1.0, 1.0));
            // Archimedes: the same buoyant force needs volume × (ρ_from / ρ_to).
            now * positive(from, "a water density")? / positive(to, "a water density")?
        }
    };
    // Adjust what is neither kept nor set: width and thickness together,
    // or the one left free, or the length when both are fixed.
    let free_w = !k.width && request.width.is_none();
    let free_t = !k.thickness && request.thickness.is_none();
    let free_l = !k.length && request.length.is_none();
    let (axes, what): (Vec<usize>, &str) = match (free_w, free_t) {
        (true, true) => (vec![1, 2], "width and thickness"),
        (true, false) => (vec![1], "width"),
        (false, true) => (vec![2], "thickness"),
        (false, false) if free_l => (vec![0], "length"),
        _ => {
            return Err(ResizeError::Invalid(
                "everything is kept or set: nothing is left to adjust for the volume".into(),
            ));
        }
    };
    let with = |s: f64| {
        let mut g = f;
        for &a in &axes {
            g[a] *= s;
        }
        g
    };
    let volume_at = |s: f64| -> Result<f64, ResizeError> {
        let g = with(s);
        Ok(mesh_litres(&board.scaled(g[0], g[1], g[2]), tolerance)? - target)
    };
    let v0 = volume_at(1.0)? + target;
    let guess = (target / v0).powf(1.0 / axes.len() as f64);
    let (mut a, mut b) = (guess * 0.97, guess * 1.03);
    let (mut fa, mut fb) = (volume_at(a)?, volume_at(b)?);
    let mut widen = 0;
    while fa * fb > 0.0 {
        widen += 1;
        if widen > 12 {
            return Err(ResizeError::Unreachable {
                what: what.into(),
                target,
                low: a,
                high: b,
            });
        }
        if fa > 0.0 {
            a *= 0.8;
            fa = volume_at(a)?;
        } else {
            b *= 1.25;
            fb = volume_at(b)?;
        }
    }
    let (mut s, mut fs) = if fa.abs() < fb.abs() {
        (a, fa)
    } else {
        (b, fb)
    };
    let mut side = 0i8;
    for _ in 0..60 {
        if fs.abs() <= VOLUME_TOLERANCE {
            break;
        }
        s = (a * fb - b * fa) / (fb - fa);
        fs = volume_at(s)?;
        if fs * fb > 0.0 {
            (b, fb) = (s, fs);
            if side == -1 {
                fa *= 0.5;
            }
            side = -1;
        } else {
            (a, fa) = (s, fs);
            if side == 1 {
                fb *= 0.5;
            }
            side = 1;
        }
    }
    if fs.abs() > VOLUME_TOLERANCE {
        return Err(ResizeError::Unreachable {
            what: what.into(),
            target,
            low: a,
            high: b,
        });
    }
    let g = with(s);
    Ok(Resized {
        board: board.scaled(g[0], g[1], g[2]),
        factors: g,
        target_litres: Some(target),
        adjusted: Some(what.to_string()),
    })
}

/// Buoyant force on `litres` fully under water of `density` kg/m³: newtons
/// and the mass it holds up, kg (Archimedes: F = ρ·g·V).
pub fn buoyancy(litres: f64, density: f64) -> (f64, f64) {
    let kg = density * litres * 1e-3;
    (kg * STANDARD_GRAVITY, kg)
}

/// The volume a rider's weight suggests at `litres_per_kg` (a rule of
/// thumb the rider or shop supplies; common practice, no source).
pub fn rider_volume(kg: f64, litres_per_kg: f64) -> f64 {
    kg * litres_per_kg
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn water_densities_and_archimedes() {
        // 30 L in salt water floats like 30 × 1024 / 997 = 30.81 L in fresh
        // (Archimedes' principle with the trade's densities).
        let fresh = 30.0 * SALT_WATER / FRESH_WATER;
        assert!((fresh - 30.81).abs() < 0.005, "{fresh}");
        // Fresh water carries about 2.6 % less (common practice; matches the
        // handbook densities).
        let less = 1.0 - FRESH_WATER / SALT_WATER;
        assert!((less - 0.026).abs() < 0.001, "{less}");
        // 1 L of fresh water weighs 0.997 kg: F = 0.997 × 9.80665 N.
        let (n, kg) = buoyancy(1.0, FRESH_WATER);
        assert!((kg - 0.997).abs() < 1e-12 && (n - 0.997 * 9.80665).abs() < 1e-12);
    }
}
