//! The tail's pull: a rough momentum estimate of the force on a board from
//! the water its bottom turns up at the tail.
//!
//! Water that follows the bottom leaves the tail deflected upwards at the
//! tail's exit angle θ. Taking a layer of water `depth` thick across
//! `width` of bottom at the board's speed `v`, the mass flow is
//! ṁ = ρ · depth · width · v; if it leaves at θ with its speed unchanged,
//! the momentum equation for a control volume round the tail (any fluid
//! mechanics text) gives a force on the board of ṁ · v · sin θ downwards
//! and ṁ · v · (1 − cos θ) backwards (extra drag).
//!
//! This is not a flow simulation: the layer's depth and width are
//! assumptions, the flow is taken as attached, and lift, planing pressure,
//! spray and the fins are left out. It answers the shaper's question "how
//! much more does this tail hold down than that one" in the right units
//! and proportions, no more.

use serde::Serialize;

use crate::model::board::Board;
use crate::volume::water::{SALT_WATER, STANDARD_GRAVITY};

/// Default board speed, m/s (about 14 km/h: trimming on a small wave;
/// our assumption, no source).
pub const DEFAULT_SPEED: f64 = 4.0;
/// Default thickness of the water layer the bottom turns, mm (our
/// assumption, no source).
pub const DEFAULT_DEPTH: f64 = 20.0;
/// Default share of the width 12 in from the tail that turns the water
/// (the wetted part of the tail; our assumption, no source).
pub const DEFAULT_WIDTH_SHARE: f64 = 0.5;

/// Fastest board speed taken, m/s (big-wave riding is reported near
/// 15 m/s; from memory).
pub const MAX_SPEED: f64 = 30.0;
/// Steepest exit angle taken, degrees: beyond this the water would not
/// follow the bottom, and the estimate means nothing.
pub const MAX_ANGLE: f64 = 45.0;

/// How wide a strip of bottom turns the water.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum WaterWidth {
    /// This share (0 to 1) of the board's width at its tail station (12 in
    /// from the tail unless the description says otherwise).
    ShareOfTail(f64),
    /// This width, mm.
    Mm(f64),
}

/// What the estimate assumes: the board's speed and the water it turns.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Water {
    /// Board speed through the water, m/s.
    pub speed_m_s: f64,
    /// Thickness of the water layer the bottom turns, mm.
    pub depth_mm: f64,
    /// The width of bottom that turns it.
    pub width: WaterWidth,
    /// Water density, kg/m³.
    pub density_kg_m3: f64,
    /// An exit angle to use instead of the board's own, degrees.
    pub angle_deg: Option<f64>,
}

impl Default for Water {
    fn default() -> Water {
        Water {
            speed_m_s: DEFAULT_SPEED,
            depth_mm: DEFAULT_DEPTH,
            width: WaterWidth::ShareOfTail(DEFAULT_WIDTH_SHARE),
            density_kg_m3: SALT_WATER,
            angle_deg: None,
        }
    }
}

/// An input the estimate cannot take: the option, its value and the rule.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{option} {value}: {rule}")]
pub struct WaterError {
    /// The command-line option (e.g. `--speed`).
    pub option: &'static str,
    /// The value as given, with its unit.
    pub value: String,
    /// The rule it broke, and what to give instead.
    pub rule: String,
}

/// The force of water leaving at one angle.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Pull {
    /// The angle the water leaves at, degrees above the board's flat.
    pub angle_deg: f64,
    /// Force pushing the tail down, N (negative: pushing it up).
    pub down_n: f64,
    /// What `down_n` would weigh, kg.
    pub down_kg: f64,
    /// Force holding the board back, N.
    pub drag_n: f64,
}

/// The tail pull estimate of one board.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TailPull {
    /// What this is and is not.
    pub note: &'static str,
    /// Board speed, m/s.
    pub speed_m_s: f64,
    /// Thickness of the water layer, mm.
    pub water_depth_mm: f64,
    /// Width of bottom turning it, mm.
    pub water_width_mm: f64,
    /// How that width was chosen.
    pub water_width_rule: String,
    /// Water density, kg/m³.
    pub density_kg_m3: f64,
    /// Water turned each second, kg/s.
    pub mass_flow_kg_s: f64,
    /// Water leaving along the bottom's tangent at the tail tip.
    pub at_tip: Pull,
    /// Water leaving along the rocker's chord over the last tail station
    /// (12 in).
    pub over_tail_station: Pull,
    /// Set when an angle was given instead of the board's own: the force
    /// at that angle.
    pub at_given_angle: Option<Pull>,
}

/// ṁ = ρ · depth · width · v, kg/s (SI inputs).
pub fn mass_flow(density: f64, depth_m: f64, width_m: f64, speed: f64) -> f64 {
    density * depth_m * width_m * speed
}

/// The momentum balance for water of `mass_flow` kg/s at `speed` m/s
/// turned through `angle_deg`: (down force, drag), N.
pub fn turn(mass_flow: f64, speed: f64, angle_deg: f64) -> Pull {
    let t = angle_deg.to_radians();
    let down = mass_flow * speed * t.sin();
    Pull {
        angle_deg,
        down_n: down,
        down_kg: down / STANDARD_GRAVITY,
        drag_n: mass_flow * speed * (1.0 - t.cos()),
    }
}

/// The angles the report quotes: the bottom's tangent at the tail tip and
/// the rocker's chord over the last tail station, degrees.
pub fn exit_angles(board: &Board) -> (f64, f64) {
    let l = board.length;
    let d = board.tip_station;
    let tangent = board.rocker.slope(l).atan().to_degrees();
    let chord = ((board.rocker.eval(l) - board.rocker.eval(l - d)) / d)
        .atan()
        .to_degrees();
    (tangent, chord)
}

fn refuse(option: &'static str, value: String, rule: impl Into<String>) -> WaterError {
    WaterError {
        option,
        value,
        rule: rule.into(),
    }
}

/// Checks `water` against `board` and estimates its tail pull.
pub fn estimate(board: &Board, water: &Water) -> Result<TailPull, WaterError> {
    let v = water.speed_m_s;
    if !(v.is_finite() && v > 0.0 && v <= MAX_SPEED) {
        return Err(refuse(
            "--speed",
            format!("{v} m/s"),
            format!(
                "a board's speed must be above 0 and at most {MAX_SPEED} m/s; give it in m/s, km/h, mph or kn (e.g. 4, 15km/h, 9mph, 8kn)"
            ),
        ));
    }
    let depth = water.depth_mm;
    if !(depth.is_finite() && depth > 0.0 && depth < board.length) {
        return Err(refuse(
            "--water-depth",
            format!("{depth} mm"),
            format!(
                "the water layer must be thicker than 0 and thinner than the board is long ({:.0} mm); a few centimetres is usual (e.g. 2cm)",
                board.length
            ),
        ));
    }
    let tail_width = 2.0 * board.half_width(board.length - board.tip_station);
    let widest = 2.0 * board.half_width(board.outline.wide_point);
    let (width, rule) = match water.width {
        WaterWidth::ShareOfTail(s) => {
            if !(s.is_finite() && s > 0.0 && s <= 1.0) {
                return Err(refuse(
                    "--water-width",
                    format!("{:.0}%", s * 100.0),
                    "a share of the tail's width must be above 0% and at most 100% (or give a width, e.g. 20cm)",
                ));
            }
            (
                s * tail_width,
                format!(
                    "{:.0}% of the width {} from the tail, {tail_width:.0} mm",
                    s * 100.0,
                    crate::units::tip_station_words(board.tip_station)
                ),
            )
        }
        WaterWidth::Mm(w) => {
            if !(w.is_finite() && w > 0.0 && w <= widest + 1e-9) {
                return Err(refuse(
                    "--water-width",
                    format!("{w} mm"),
                    format!(
                        "the width that turns the water must be above 0 and at most the board's width ({widest:.0} mm)"
                    ),
                ));
            }
            (w, "as given".to_string())
        }
    };
    let rho = water.density_kg_m3;
    if !(rho.is_finite() && (900.0..=1300.0).contains(&rho)) {
        return Err(refuse(
            "--water",
            format!("{rho} kg/m³"),
            "use fresh, salt, or a density in kg/m³ (900 to 1300)",
        ));
    }
    if let Some(a) = water.angle_deg
        && !(a.is_finite() && (0.0..=MAX_ANGLE).contains(&a))
    {
        return Err(refuse(
            "--exit-angle",
            format!("{a}°"),
            format!(
                "an exit angle must be 0 to {MAX_ANGLE}° (water does not follow a bottom turned further)"
            ),
        ));
    }
    let m = mass_flow(rho, depth * 1e-3, width * 1e-3, v);
    let (tangent, chord) = exit_angles(board);
    Ok(TailPull {
        note: "rough momentum estimate (water turned at the tail's exit angle, speed unchanged), not a flow simulation",
        speed_m_s: v,
        water_depth_mm: depth,
        water_width_mm: width,
        water_width_rule: rule,
        density_kg_m3: rho,
        mass_flow_kg_s: m,
        at_tip: turn(m, v, tangent),
        over_tail_station: turn(m, v, chord),
        at_given_angle: water.angle_deg.map(|a| turn(m, v, a)),
    })
}

/// A board speed as written: `4` or `4m/s`, `15km/h`, `9mph`, `8kn`; m/s.
pub fn parse_speed(text: &str) -> Result<f64, WaterError> {
    let t = text.trim().to_ascii_lowercase();
    let (number, factor) = if let Some(n) = t.strip_suffix("km/h") {
        (n, 1.0 / 3.6)
    } else if let Some(n) = t.strip_suffix("kn").or_else(|| t.strip_suffix("kt")) {
        // 1 international knot = 1852 m per hour, exactly.
        (n, 1852.0 / 3600.0)
    } else if let Some(n) = t.strip_suffix("mph") {
        // 1 mile = 1609.344 m exactly (international yard, 1959).
        (n, 1609.344 / 3600.0)
    } else if let Some(n) = t.strip_suffix("m/s") {
        (n, 1.0)
    } else {
        (t.as_str(), 1.0)
    };
    number
        .trim()
        .parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .map(|v| v * factor)
        .ok_or_else(|| {
            refuse(
                "--speed",
                format!("`{text}`"),
                "not a speed; write e.g. 4 (m/s), 4m/s, 15km/h, 9mph or 8kn",
            )
        })
}

impl TailPull {
    /// The estimate in words, for the terminal (lines indented by two).
    pub fn text(&self, tip_station: &str) -> String {
        let mut s = format!(
            "  tail pull    a rough momentum estimate, not a flow simulation: {:.1} kg/s of water\n               ({:.1} cm deep × {:.1} cm wide: {}; at {:.1} m/s; {:.0} kg/m³) turned up by the tail\n",
            self.mass_flow_kg_s,
            self.water_depth_mm / 10.0,
            self.water_width_mm / 10.0,
            self.water_width_rule,
            self.speed_m_s,
            self.density_kg_m3
        );
        let mut line = |p: &Pull, how: &str| {
            s.push_str(&format!(
                "               turned {:.1}° ({how}): down {:.1} N ({:.2} kg), drag {:.2} N\n",
                p.angle_deg, p.down_n, p.down_kg, p.drag_n
            ));
        };
        line(&self.at_tip, "the bottom's tangent at the tail tip");
        line(
            &self.over_tail_station,
            &format!("the rocker's chord over the last {tip_station}"),
        );
        if let Some(p) = &self.at_given_angle {
            line(p, "the angle given");
        }
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The worked example of the momentum balance, by hand: ρ = 1024 kg/m³,
    /// 2 cm × 20 cm of water at 4 m/s: ṁ = 1024 · 0.02 · 0.2 · 4 =
    /// 16.384 kg/s; at 10°, down = 16.384 · 4 · sin 10° = 11.38 N
    /// (1.160 kg), drag = 16.384 · 4 · (1 − cos 10°) = 0.9956 N.
    #[test]
    fn worked_example() {
        let m = mass_flow(1024.0, 0.02, 0.2, 4.0);
        assert!((m - 16.384).abs() < 1e-12);
        let p = turn(m, 4.0, 10.0);
        assert!((p.down_n - 11.380).abs() < 0.001, "{}", p.down_n);
        assert!((p.down_kg - 1.1605).abs() < 0.001, "{}", p.down_kg);
        assert!((p.drag_n - 0.9956).abs() < 0.001, "{}", p.drag_n);
    }

    /// θ = 0 turns nothing; the force grows with sin θ and with v²
    /// (ṁ ∝ v, times v); fresh water gives 997/1024 of salt's.
    #[test]
    fn proportions() {
        let at = |rho: f64, v: f64, a: f64| turn(mass_flow(rho, 0.02, 0.2, v), v, a);
        let zero = at(1024.0, 4.0, 0.0);
        assert_eq!((zero.down_n, zero.drag_n), (0.0, 0.0));
        let (a, b) = (at(1024.0, 4.0, 5.0), at(1024.0, 4.0, 15.0));
        let sines = 15f64.to_radians().sin() / 5f64.to_radians().sin();
        assert!((b.down_n / a.down_n - sines).abs() < 1e-12);
        let fast = at(1024.0, 8.0, 10.0);
        assert!((fast.down_n / at(1024.0, 4.0, 10.0).down_n - 4.0).abs() < 1e-12);
        let fresh = at(997.0, 4.0, 10.0);
        assert!((fresh.down_n / at(1024.0, 4.0, 10.0).down_n - 997.0 / 1024.0).abs() < 1e-12);
    }

    #[test]
    fn speeds_in_shop_units() {
        assert_eq!(parse_speed("4").unwrap(), 4.0);
        assert_eq!(parse_speed("4 m/s").unwrap(), 4.0);
        assert!((parse_speed("36km/h").unwrap() - 10.0).abs() < 1e-12);
        // 1 kn = 1852 m/h (international nautical mile, exact).
        assert!((parse_speed("1kn").unwrap() - 0.514_444).abs() < 1e-6);
        assert!((parse_speed("10mph").unwrap() - 4.4704).abs() < 1e-12);
        assert_eq!(parse_speed("fast").unwrap_err().option, "--speed");
    }
}
