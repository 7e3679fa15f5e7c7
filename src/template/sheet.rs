//! The shaping sheet: the measurements at stations as a table with units,
//! the volume certificate, and how to print.

use crate::units;
use crate::volume::report::Report;

/// The shaping sheet's lines: measurements at stations, the volume
/// certificate, and how to print.
pub fn sheet(report: &Report) -> Vec<String> {
    let mut lines = vec![
        format!("{}: shaping sheet", report.name),
        String::new(),
        format!(
            "length {} (flat); width {}; thickness {}",
            units::Both(report.length_mm),
            units::Both(report.width_mm),
            units::Both(report.thickness_mm)
        ),
        format!(
            "nose width {} and tail width {}, {} from the tips; tail {}",
            units::Both(report.nose_width_mm),
            units::Both(report.tail_width_mm),
            units::Both(report.tip_station_mm),
            report.tail
        ),
        format!(
            "volume {:.2} L (mesh {:.4} L, shape integral {:.4} L, error estimate {:.4} L{})",
            report.volume_litres,
            report.volume_litres,
            report.volume_litres_surface,
            report.volume_error_estimate_litres,
            if report.certified {
                ", certified"
            } else {
                ", NOT CERTIFIED"
            }
        ),
        String::new(),
    ];
    // One column a measurement, millimetres and inches in each cell, the
    // unit on every number; laid out for a fixed-pitch face.
    let cell = |v: f64| format!("{:>7.1} mm {:<9}", v, units::inches(v));
    let head = |t: &str| format!("{t:<20}");
    lines.push(format!(
        "{:<18}| {}| {}| {}| {}| {}",
        "from nose",
        head("width"),
        head("thickness"),
        head("bottom (rocker)"),
        head("deck"),
        head("rail apex")
    ));
    lines.push(format!(
        "{}{}",
        "-".repeat(18),
        "+---------------------".repeat(5)
    ));
    for r in &report.stations {
        lines.push(format!(
            "{:<18}| {}| {}| {}| {}| {}",
            format!(
                "{:>6.0} mm {}",
                r.from_nose_mm,
                units::feet_inches(r.from_nose_mm)
            ),
            cell(r.width_mm),
            cell(r.thickness_mm),
            cell(r.bottom_mm),
            cell(r.deck_mm),
            cell(r.apex_mm)
        ));
    }
    lines.extend([
        String::new(),
        "Heights are above the flat the board rests on, at the stringer.".into(),
        "Printing: print at 100 % (actual size, no fit-to-page); measure the 100 mm and 4 in bars"
            .into(),
        "on every page before cutting anything. Trim each tile on its dashed cut lines, lay the"
            .into(),
        "tiles by the assembly map, match the alignment crosses, and tape.".into(),
    ]);
    lines
}
