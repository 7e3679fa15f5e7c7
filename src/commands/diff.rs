//! `diff`: two boards side by side.

use super::*;
use crate::output;
use crate::slice::plane::Axis;
use crate::volume::tail_pull::{self, Pull, TailPull, Water};
use std::path::{Path, PathBuf};

/// Measurements of two designs side by side, and the overlay written.
pub struct Diff {
    /// Names.
    pub names: [String; 2],
    /// Rows: from the nose, then (width, thickness, bottom, deck) of each, mm.
    pub rows: Vec<(f64, [[f64; 4]; 2])>,
    /// Volumes, litres.
    pub litres: [f64; 2],
    /// Lengths, mm.
    pub lengths: [f64; 2],
    /// Tail pull estimates (descriptions only: an STL has no rocker).
    pub pulls: [Option<TailPull>; 2],
    /// Tail stations the pulls' chords run over, mm.
    pub tip_stations: [f64; 2],
    /// Files written.
    pub written: Vec<PathBuf>,
}

/// Compares two designs (descriptions or closed STL) station by station.
pub fn diff(a: &Path, b: &Path, dir: &Path, water: &Water) -> Result<Diff, JobError> {
    let tol = crate::meshing::mesher::DEFAULT_TOLERANCE;
    if let Some(angle) = water.angle_deg {
        return Err(JobError::Flag(format!(
            "--exit-angle {angle}: `diff` compares the two boards' own exit angles; try an angle with `blanksmith report BOARD --exit-angle {angle}`"
        )));
    }
    let designs = [load_design(a)?, load_design(b)?];
    let mut pulls = [None, None];
    let mut tip_stations = [crate::units::MM_PER_FOOT; 2];
    for (i, (d, path)) in designs.iter().zip([a, b]).enumerate() {
        if let Design::Board(board) = d {
            tip_stations[i] = board.tip_station;
            pulls[i] =
                Some(
                    tail_pull::estimate(board, water).map_err(|source| JobError::WaterFor {
                        board: path.display().to_string(),
                        source,
                    })?,
                );
        }
    }
    output::ready(dir)?;
    let meshes = [designs[0].mesh(tol)?, designs[1].mesh(tol)?];
    let names = [designs[0].name().to_string(), designs[1].name().to_string()];
    let lengths = [0, 1].map(|i| {
        meshes[i]
            .bounding_box()
            .map_or(0.0, |(lo, hi)| hi[0] - lo[0])
    });
    let step = 6.0 * crate::units::MM_PER_INCH;
    let longest = lengths[0].max(lengths[1]);
    let xs: Vec<f64> = (1..)
        .map(|i| i as f64 * step)
        .take_while(|&x| x < longest)
        .collect();
    // Each design measured the same way: the extents of its sections.
    let measure = |i: usize| -> Vec<[f64; 4]> {
        let lo = meshes[i].bounding_box().map_or(0.0, |(lo, _)| lo[0]);
        let at: Vec<f64> = xs.iter().map(|x| lo + x).collect();
        crate::slice::plane::slice_many(&meshes[i], Axis::X, &at)
            .iter()
            .map(|s| {
                let (mut w, mut zb, mut zd) = (0.0f64, f64::INFINITY, f64::NEG_INFINITY);
                for q in s.loops.iter().flatten() {
                    w = w.max(q[0].abs());
                    zb = zb.min(q[1]);
                    zd = zd.max(q[1]);
                }
                if zb.is_finite() {
                    [2.0 * w, zd - zb, zb, zd]
                } else {
                    [0.0, 0.0, f64::NAN, f64::NAN]
                }
            })
            .collect()
    };
    let (ma, mb) = (measure(0), measure(1));
    let rows = xs
        .iter()
        .zip(ma.iter().zip(&mb))
        .map(|(&x, (p, q))| (x, [*p, *q]))
        .collect();
    let litres = [0, 1].map(|i| crate::volume::measure::volume(&meshes[i]) * 1e-6);
    let svg = crate::resize::overlay::svg(
        &format!("{} against {}", names[1], names[0]),
        &crate::resize::overlay::curves(&names[0], &meshes[0], 200),
        &crate::resize::overlay::curves(&names[1], &meshes[1], 200),
    );
    let files = [(
        dir.join(format!("{}-vs-{}.overlay.svg", names[1], names[0])),
        svg.into_bytes(),
    )];
    let written = write_all(&files, &exactly(&files), &[a, b])?;
    Ok(Diff {
        names,
        rows,
        litres,
        lengths,
        pulls,
        tip_stations,
        written,
    })
}

/// The diff as `diff` prints it: every 6 in, both units.
pub fn diff_text(d: &super::Diff) -> String {
    use crate::units::{Both, feet_inches, inches};
    use std::fmt::Write as _;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "A = {}, B = {}  (section extents: width, thickness, bottom and deck heights; mm and inches)",
        d.names[0], d.names[1]
    );
    let _ = writeln!(
        s,
        "length: A {}, B {}",
        Both(d.lengths[0]),
        Both(d.lengths[1])
    );
    let _ = writeln!(
        s,
        "{:>16}  {:>17} {:>17} {:>9}  {:>17} {:>17} {:>9}",
        "from nose", "width A", "width B", "B − A", "thickness A", "thickness B", "B − A"
    );
    for (x, [a, b]) in &d.rows {
        let cell = |v: f64| format!("{v:.1} {}", inches(v));
        let _ = writeln!(
            s,
            "{:>16}  {:>17} {:>17} {:>+9.1}  {:>17} {:>17} {:>+9.1}",
            format!("{:.0} mm {}", x, feet_inches(*x)),
            cell(a[0]),
            cell(b[0]),
            b[0] - a[0],
            cell(a[1]),
            cell(b[1]),
            b[1] - a[1]
        );
    }
    let _ = writeln!(
        s,
        "volume: A {:.2} L, B {:.2} L, B − A {:+.2} L",
        d.litres[0],
        d.litres[1],
        d.litres[1] - d.litres[0]
    );
    s.push_str(&pull_text(d));
    for p in &d.written {
        let _ = writeln!(s, "wrote {}", p.display());
    }
    s
}

/// The two tail pulls side by side, or why there are none.
fn pull_text(d: &super::Diff) -> String {
    use std::fmt::Write as _;
    let [Some(a), Some(b)] = &d.pulls else {
        return "tail pull: not estimated (an STL has no rocker description; diff two descriptions for it)\n".into();
    };
    let mut s = format!(
        "tail pull (a rough momentum estimate, not a flow simulation): at {:.1} m/s, water {:.1} cm deep, A {:.1} cm wide, B {:.1} cm wide, {:.0} kg/m³\n",
        a.speed_m_s,
        a.water_depth_mm / 10.0,
        a.water_width_mm / 10.0,
        b.water_width_mm / 10.0,
        a.density_kg_m3
    );
    let row = |s: &mut String, what: &str, p: &Pull, q: &Pull| {
        let change = if p.down_n.abs() > 1e-9 {
            format!(" ({:+.0} %)", 100.0 * (q.down_n / p.down_n - 1.0))
        } else {
            String::new()
        };
        let _ = writeln!(
            s,
            "  {what}: A {:.1}° down {:.1} N ({:.2} kg), B {:.1}° down {:.1} N ({:.2} kg); B − A {:+.1} N{change}, drag {:+.2} N",
            p.angle_deg,
            p.down_n,
            p.down_kg,
            q.angle_deg,
            q.down_n,
            q.down_kg,
            q.down_n - p.down_n,
            q.drag_n - p.drag_n
        );
    };
    row(&mut s, "tangent at the tail tip", &a.at_tip, &b.at_tip);
    let over = if (d.tip_stations[0] - d.tip_stations[1]).abs() < 1e-9 {
        crate::units::tip_station_words(d.tip_stations[0])
    } else {
        "tail station".into()
    };
    row(
        &mut s,
        &format!("chord over the last {over}"),
        &a.over_tail_station,
        &b.over_tail_station,
    );
    s
}
