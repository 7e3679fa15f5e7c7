//! `resize`: a board scaled, to a volume, for other water or a rider.

use super::*;
use crate::description::{self};
use crate::output;
use crate::volume::certificate::{self};
use crate::volume::report::Report;
use std::path::{Path, PathBuf};

/// `resize` as typed: lengths as text in the board's own unit unless they
/// carry one; water as `fresh`, `salt` or a density in kg/m³.
#[derive(Debug, Clone, Default)]
pub struct ResizeArgs {
    /// New length.
    pub length: Option<String>,
    /// New width.
    pub width: Option<String>,
    /// New thickness.
    pub thickness: Option<String>,
    /// Target volume, litres.
    pub volume: Option<f64>,
    /// Comma-separated: length, width, thickness.
    pub keep: Option<String>,
    /// Water the new board is for.
    pub water: Option<String>,
    /// Water the board (or the target volume) suits now.
    pub from_water: Option<String>,
    /// Rider's weight, kg.
    pub rider_kg: Option<f64>,
    /// Litres per kilogram the rider wants (a rule of thumb).
    pub litres_per_kg: Option<f64>,
    /// Name of the new board.
    pub name: Option<String>,
}

/// A resized board, its reports old and new, and the files written.
pub struct ResizeOutcome {
    /// The old board's report.
    pub old: Report,
    /// The new board's report.
    pub new: Report,
    /// Factors along, across, up.
    pub factors: [f64; 3],
    /// What the solver adjusted and the target it met.
    pub solved: Option<(String, f64)>,
    /// The water densities used (now, new), kg/m³.
    pub water: Option<(f64, f64)>,
    /// The rider's weight and the volume the rule of thumb gives.
    pub rider: Option<(f64, f64)>,
    /// Files written.
    pub written: Vec<PathBuf>,
}

pub(crate) fn water_density(text: &str) -> Result<f64, JobError> {
    match text.trim().to_ascii_lowercase().as_str() {
        "fresh" => Ok(crate::resize::scale::FRESH_WATER),
        "salt" | "sea" => Ok(crate::resize::scale::SALT_WATER),
        other => match other
            .trim_end_matches("kg/m3")
            .trim_end_matches("g/l")
            .trim()
            .parse::<f64>()
        {
            Ok(d) if (900.0..=1300.0).contains(&d) => Ok(d),
            _ => Err(JobError::Flag(format!(
                "water `{text}`: use fresh, salt, or a density in kg/m³ (900 to 1300, e.g. 1010)"
            ))),
        },
    }
}

/// Resizes the board in `path` and writes the new description to `out`
/// (and an overlay SVG beside it).
pub fn resize(
    path: &Path,
    args: &ResizeArgs,
    out: Option<&Path>,
) -> Result<ResizeOutcome, JobError> {
    let board = description::load(path)?;
    if let Some(dest) = out {
        output::ready(dest.parent().unwrap_or(Path::new("")))?;
    }
    let unit = description::write::unit_of(&board);
    let tol = crate::meshing::mesher::DEFAULT_TOLERANCE;
    let old_cert = certificate::certify(&board, tol)?;
    let old = Report::new(&board, &old_cert, None);
    let length = |name: &str, v: &Option<String>| -> Result<Option<f64>, JobError> {
        v.as_ref()
            .map(|t| {
                crate::units::parse_length(t)
                    .map(|l| l.to_mm(unit))
                    .map_err(|e| JobError::Flag(format!("--{name}: {e}")))
            })
            .transpose()
    };
    let mut keep = crate::resize::scale::Keep::default();
    for item in args
        .keep
        .iter()
        .flat_map(|k| k.split(','))
        .map(str::trim)
        .filter(|s| !s.is_empty())
    {
        match item {
            "length" => keep.length = true,
            "width" => keep.width = true,
            "thickness" => keep.thickness = true,
            other => {
                return Err(JobError::Flag(format!(
                    "--keep {other}: use length, width or thickness, separated by commas"
                )));
            }
        }
    }
    let water = match (&args.water, &args.from_water) {
        (None, None) => None,
        (to, from) => {
            let to = to
                .as_deref()
                .map(water_density)
                .transpose()?
                .unwrap_or(crate::resize::scale::SALT_WATER);
            let from = from
                .as_deref()
                .map(water_density)
                .transpose()?
                .unwrap_or(crate::resize::scale::SALT_WATER);
            Some((from, to))
        }
    };
    let rider = match (args.rider_kg, args.litres_per_kg) {
        (Some(kg), Some(r)) if kg > 0.0 && kg < 400.0 && r > 0.0 && r < 5.0 => {
            Some((kg, crate::resize::scale::rider_volume(kg, r)))
        }
        (None, None) => None,
        _ => {
            return Err(JobError::Flag(
                "give --rider-kg (0 to 400) and --litres-per-kg (0 to 5) together".into(),
            ));
        }
    };
    let request = crate::resize::scale::Request {
        length: length("length", &args.length)?,
        width: length("width", &args.width)?,
        thickness: length("thickness", &args.thickness)?,
        volume: args.volume.or(rider.map(|r| r.1)),
        keep,
        water,
    };
    let r = crate::resize::scale::resize(&board, &request, old.width_mm, old.thickness_mm, tol)?;
    let mut new_board = r.board;
    new_board.name = match &args.name {
        Some(n) => n.clone(),
        None => format!("{}-resized", board.name),
    };
    let new_cert = certificate::certify(&new_board, tol)?;
    let new = Report::new(&new_board, &new_cert, None);
    let dest = match out {
        Some(p) => p.to_path_buf(),
        None => PathBuf::from("out").join(format!("{}.yaml", new_board.name)),
    };
    let comment = format!(
        "Written by blanksmith resize from {}: x {:.6}, y {:.6}, z {:.6}.\nStation tables rule; edit them like any description.",
        path.display(),
        r.factors[0],
        r.factors[1],
        r.factors[2]
    );
    let yaml = description::write::to_yaml(&new_board, unit, &comment);
    // The file must read back as the same shape before it is written.
    let back = description::board_from_str(
        &yaml,
        &format!("{} (the resized board, not written)", dest.display()),
    )
    .map_err(|e| JobError::Resize(Box::new(e)))?;
    let back_litres = crate::volume::integrals::area_integrals(&back).volume() * 1e-6;
    if (back_litres - new.volume_litres_surface).abs() > 1e-6 {
        return Err(JobError::Internal(format!(
            "the written description holds {back_litres:.6} L, not {:.6} L; nothing written",
            new.volume_litres_surface
        )));
    }
    let overlay = crate::resize::overlay::svg(
        &format!("{} against {}", new_board.name, board.name),
        &crate::resize::overlay::curves(&board.name, &old_cert.mesh, 200),
        &crate::resize::overlay::curves(&new_board.name, &new_cert.mesh, 200),
    );
    let svg_path = dest.with_extension("overlay.svg");
    let files = [(dest, yaml.into_bytes()), (svg_path, overlay.into_bytes())];
    let written = write_all(&files, &exactly(&files), &[path])?;
    Ok(ResizeOutcome {
        old,
        new,
        factors: r.factors,
        solved: r.adjusted.zip(r.target_litres),
        water,
        rider,
        written,
    })
}

/// The resize as `resize` prints it: old against new, both units.
pub fn resize_text(r: &super::ResizeOutcome) -> String {
    use crate::units::Both;
    use std::fmt::Write as _;
    let mut s = String::new();
    let (o, n) = (&r.old, &r.new);
    let _ = writeln!(s, "{:<22}  {:<28}  {:<28}", "", o.name, n.name);
    let row = |s: &mut String, what: &str, a: String, b: String| {
        let _ = writeln!(s, "{what:<22}  {a:<28}  {b:<28}");
    };
    let lengths = [
        ("length", o.length_mm, n.length_mm),
        ("width", o.width_mm, n.width_mm),
        ("thickness", o.thickness_mm, n.thickness_mm),
        ("nose width (N12)", o.nose_width_mm, n.nose_width_mm),
        ("tail width (T12)", o.tail_width_mm, n.tail_width_mm),
    ];
    for (what, a, b) in lengths {
        row(&mut s, what, Both(a).to_string(), Both(b).to_string());
    }
    row(
        &mut s,
        "volume",
        format!("{:.2} L", o.volume_litres),
        format!(
            "{:.2} L ({:+.2} L)",
            n.volume_litres,
            n.volume_litres - o.volume_litres
        ),
    );
    row(
        &mut s,
        "centre of volume",
        Both(o.centre_of_volume_from_nose_mm).to_string(),
        Both(n.centre_of_volume_from_nose_mm).to_string(),
    );
    let per_foot = |r: &crate::volume::report::Report| {
        r.litres_per_foot
            .iter()
            .map(|p| format!("{:.1}", p.litres))
            .collect::<Vec<_>>()
            .join(" ")
    };
    row(&mut s, "litres per foot", per_foot(o), per_foot(n));
    let _ = writeln!(
        s,
        "scaled by {:.4} along, {:.4} across, {:.4} in height",
        r.factors[0], r.factors[1], r.factors[2]
    );
    if let Some((what, target)) = &r.solved {
        let _ = writeln!(s, "adjusted {what} to hold {target:.2} L");
    }
    if let Some((from, to)) = r.water {
        let _ = writeln!(
            s,
            "water: from {from} kg/m³ to {to} kg/m³ (Archimedes: volume × {:.4})",
            from / to
        );
    }
    let (fresh, salt) = (
        crate::resize::scale::FRESH_WATER,
        crate::resize::scale::SALT_WATER,
    );
    for (what, litres) in [("old", o.volume_litres), ("new", n.volume_litres)] {
        let (nf, kf) = crate::resize::scale::buoyancy(litres, fresh);
        let (ns, ks) = crate::resize::scale::buoyancy(litres, salt);
        let _ = writeln!(
            s,
            "{what} board fully under water holds up {kf:.1} kg ({nf:.0} N) in fresh, {ks:.1} kg ({ns:.0} N) in salt water ({:.1} % less in fresh)",
            100.0 * (1.0 - kf / ks)
        );
    }
    if let Some((kg, _)) = r.rider {
        // What the new board holds up beyond the rider, fully under water
        // (the board's own weight is not known here: subtract it).
        let (_, kf) = crate::resize::scale::buoyancy(n.volume_litres, fresh);
        let (_, ks) = crate::resize::scale::buoyancy(n.volume_litres, salt);
        let _ = writeln!(
            s,
            "rider {kg:.1} kg plus board: the new board fully under water holds up {:.1} kg more than the rider in fresh water, {:.1} kg in salt (less the board's own weight)",
            kf - kg,
            ks - kg
        );
    }
    if let Some((kg, litres)) = r.rider {
        let _ = writeln!(
            s,
            "rider {kg:.1} kg: the rule of thumb asked for gives {litres:.2} L (a rule of thumb, not a measurement)"
        );
    }
    for p in &r.written {
        let _ = writeln!(s, "wrote {}", p.display());
    }
    s
}
