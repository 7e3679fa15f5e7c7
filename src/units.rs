//! Lengths as shops write them, read into millimetres and written back out.
//!
//! Internally every length is millimetres in `f64`; conversion happens only
//! here, at the edges. 1 in = 25.4 mm exactly (international yard and pound
//! agreement, 1959; NIST SP 811, appendix B).

use std::fmt;

/// Millimetres in one inch, exactly.
pub const MM_PER_INCH: f64 = 25.4;
/// Millimetres in one foot, exactly.
pub const MM_PER_FOOT: f64 = 304.8;

/// The unit a bare number in a board description is read in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Deserialize, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Unit {
    /// Inches (bare numbers; feet may still be written `6'2"`).
    In,
    /// Millimetres.
    Mm,
}

impl Unit {
    /// Millimetres in one of this unit.
    pub fn mm(self) -> f64 {
        match self {
            Unit::In => MM_PER_INCH,
            Unit::Mm => 1.0,
        }
    }
}

/// A length as written in a description: either a bare number, whose unit
/// is the file's default, or a number that carried its own unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Length {
    /// A number without a unit; multiply by the file's unit.
    Bare(f64),
    /// Already in millimetres.
    Mm(f64),
}

impl Length {
    /// Millimetres, reading a bare number in `unit`.
    pub fn to_mm(self, unit: Unit) -> f64 {
        match self {
            Length::Bare(v) => v * unit.mm(),
            Length::Mm(v) => v,
        }
    }
}

/// Why a length could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("`{text}` is not a length: {why}; write e.g. 6'2\", 74in, 20 1/2, 20.5in, 188cm or 1880mm")]
pub struct LengthError {
    /// The text as written.
    pub text: String,
    /// The rule it broke.
    pub why: &'static str,
}

/// Reads a length the way shops write it.
///
/// Accepted: `6'2"`, `6' 2 1/2"`, `6'`, `74in`, `74 in`, `74"`, `20 1/2`,
/// `5/8`, `20.5in`, `188cm`, `1880mm`, `1.88m`, `2ft`, and a leading minus.
/// A number with no unit is [`Length::Bare`]; feet always bring inches with
/// them (`6'2` is six feet two inches whatever the file's unit).
pub fn parse_length(text: &str) -> Result<Length, LengthError> {
    let err = |why| LengthError {
        text: text.to_string(),
        why,
    };
    let s = text.trim();
    if s.is_empty() {
        return Err(err("it is empty"));
    }
    let (sign, s) = match s.strip_prefix('-') {
        Some(rest) => (-1.0, rest.trim_start()),
        None => (1.0, s),
    };
    if s.starts_with('-') || s.starts_with('+') {
        return Err(err("it has more than one sign"));
    }
    // Feet first: everything before a single quote (or "ft") is feet.
    let (feet, rest) = match split_feet(s) {
        Some((f, r)) => (
            Some(parse_magnitude(f).ok_or_else(|| err("the feet are not a number"))?),
            r,
        ),
        None => (None, s),
    };
    let rest = rest.trim();
    if rest.is_empty() {
        return match feet {
            Some(f) => Ok(Length::Mm(sign * f * MM_PER_FOOT)),
            None => Err(err("it has no number")),
        };
    }
    let (number, unit) = split_unit(rest);
    let value = parse_magnitude(number.trim()).ok_or_else(|| err("the number is not readable"))?;
    let mm_per_unit = match (unit, feet) {
        (Some(u), _) => u,
        // After feet, a bare number is inches.
        (None, Some(_)) => MM_PER_INCH,
        (None, None) => {
            check_finite(value).map_err(err)?;
            return Ok(Length::Bare(sign * value));
        }
    };
    if feet.is_some() && mm_per_unit != MM_PER_INCH {
        return Err(err("after feet only inches may follow"));
    }
    let mm = feet.unwrap_or(0.0) * MM_PER_FOOT + value * mm_per_unit;
    check_finite(mm).map_err(err)?;
    Ok(Length::Mm(sign * mm))
}

fn check_finite(v: f64) -> Result<(), &'static str> {
    if v.is_finite() {
        Ok(())
    } else {
        Err("it is not a finite number")
    }
}

/// Splits `6'2"` into (`6`, `2"`) and `2ft 3in` into (`2`, `3in`).
fn split_feet(s: &str) -> Option<(&str, &str)> {
    if let Some(i) = s.find('\'') {
        return Some((&s[..i], &s[i + 1..]));
    }
    let lower = s.to_ascii_lowercase();
    for tag in ["feet", "foot", "ft"] {
        if let Some(i) = lower.find(tag) {
            return Some((&s[..i], &s[i + tag.len()..]));
        }
    }
    None
}

/// Splits a trailing unit off: returns the number text and millimetres per unit.
fn split_unit(s: &str) -> (&str, Option<f64>) {
    let lower = s.to_ascii_lowercase();
    // Longest names first so `mm` is not read as `m`.
    const UNITS: [(&str, f64); 8] = [
        ("inches", MM_PER_INCH),
        ("inch", MM_PER_INCH),
        ("in", MM_PER_INCH),
        ("\"", MM_PER_INCH),
        ("mm", 1.0),
        ("cm", 10.0),
        ("m", 1000.0),
        ("″", MM_PER_INCH),
    ];
    for (name, mm) in UNITS {
        if lower.ends_with(name) {
            return (&s[..s.len() - name.len()], Some(mm));
        }
    }
    (s, None)
}

/// Reads `20`, `20.5`, `1/2`, `20 1/2` or `20-1/2` as a non-negative number.
fn parse_magnitude(s: &str) -> Option<f64> {
    let s = s.trim();
    if s.is_empty() {
        return None;
    }
    let parts: Vec<&str> = s
        .split(|c: char| c.is_whitespace() || c == '-')
        .filter(|p| !p.is_empty())
        .collect();
    match parts.as_slice() {
        [one] => parse_simple(one),
        [whole, frac] if frac.contains('/') && !whole.contains('/') => {
            Some(parse_decimal(whole)? + parse_fraction(frac)?)
        }
        _ => None,
    }
}

fn parse_simple(s: &str) -> Option<f64> {
    if s.contains('/') {
        parse_fraction(s)
    } else {
        parse_decimal(s)
    }
}

fn parse_decimal(s: &str) -> Option<f64> {
    // Only plain decimals: no exponents, signs, `inf` or `nan`.
    if s.is_empty() || !s.chars().all(|c| c.is_ascii_digit() || c == '.') || s == "." {
        return None;
    }
    s.parse::<f64>().ok()
}

fn parse_fraction(s: &str) -> Option<f64> {
    let (n, d) = s.split_once('/')?;
    let n = parse_decimal(n)?;
    let d = parse_decimal(d)?;
    (d > 0.0).then_some(n / d)
}

/// Writes millimetres as feet and inches to the nearest 1/16 in, the way
/// shops quote lengths: `6' 2 1/16"`. Lengths under a foot get inches only.
pub fn feet_inches(mm: f64) -> String {
    let sixteenths = (mm.abs() / MM_PER_INCH * 16.0).round() as i64;
    let sign = if mm < 0.0 && sixteenths > 0 { "-" } else { "" };
    let feet = sixteenths / (12 * 16);
    let rem = sixteenths % (12 * 16);
    let inches = inches_fraction(rem);
    if feet > 0 {
        format!("{sign}{feet}' {inches}\"")
    } else {
        format!("{sign}{inches}\"")
    }
}

/// Writes millimetres as inches with a fraction to the nearest 1/16 in:
/// `19 1/2"`, `2 5/8"`, `3/16"`.
pub fn inches(mm: f64) -> String {
    let sixteenths = (mm.abs() / MM_PER_INCH * 16.0).round() as i64;
    let sign = if mm < 0.0 && sixteenths > 0 { "-" } else { "" };
    format!("{sign}{}\"", inches_fraction(sixteenths))
}

fn inches_fraction(sixteenths: i64) -> String {
    let whole = sixteenths / 16;
    let mut num = sixteenths % 16;
    let mut den = 16;
    while num > 0 && num % 2 == 0 {
        num /= 2;
        den /= 2;
    }
    match (whole, num) {
        (w, 0) => format!("{w}"),
        (0, n) => format!("{n}/{den}"),
        (w, n) => format!("{w} {n}/{den}"),
    }
}

/// A length shown both ways: `1879.6 mm (6' 2")`.
pub struct Both(pub f64);

impl fmt::Display for Both {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // Shops quote widths and thicknesses in inches, lengths in feet and inches.
        if self.0.abs() >= 3.0 * MM_PER_FOOT {
            write!(f, "{:.1} mm ({})", self.0, feet_inches(self.0))
        } else {
            write!(f, "{:.1} mm ({})", self.0, inches(self.0))
        }
    }
}

/// A length as a limit is quoted: millimetres with every digit that
/// matters (up to a millionth), then inches, e.g. `300 mm (11 13/16")`;
/// a value too large to hold says so instead of printing `inf`.
pub fn exact(mm: f64) -> String {
    if !mm.is_finite() {
        return "a number too large to be a length".into();
    }
    let r = (mm * 1e6).round() / 1e6;
    let r = if r == 0.0 { 0.0 } else { r };
    // Below 1/16 in the fraction would read 0": decimal inches instead.
    let inch = if r != 0.0 && mm.abs() < 25.4 / 16.0 {
        format!("{:.4}\"", mm / 25.4)
    } else {
        inches(mm)
    };
    format!("{r} mm ({inch})")
}

/// The tail (or nose) station as the trade says it: `12 in`, or the
/// length in both units when a description moved it.
pub fn tip_station_words(mm: f64) -> String {
    if (mm - MM_PER_FOOT).abs() < 1e-9 {
        "12 in".to_string()
    } else {
        Both(mm).to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mm(s: &str) -> f64 {
        parse_length(s).unwrap().to_mm(Unit::Mm)
    }

    #[test]
    fn inch_is_exactly_25_4_mm() {
        // NIST SP 811 (2008), appendix B.8: 1 in = 2.54 cm exactly.
        assert_eq!(parse_length("1in").unwrap(), Length::Mm(25.4));
        assert_eq!(parse_length("1").unwrap().to_mm(Unit::In), 25.4);
        // 1 ft = 12 in = 304.8 mm exactly (same source).
        assert_eq!(mm("1'"), 304.8);
        assert_eq!(mm("1ft"), 304.8);
    }

    #[test]
    fn shop_spellings() {
        // 6'2" = 74 in = 1879.6 mm (arithmetic on the exact inch).
        let cases = [
            ("6'2\"", 74.0 * 25.4),
            ("6' 2\"", 74.0 * 25.4),
            ("6'2", 74.0 * 25.4),
            ("6'2 1/2\"", 74.5 * 25.4),
            ("74in", 74.0 * 25.4),
            ("74 in", 74.0 * 25.4),
            ("74\"", 74.0 * 25.4),
            ("20.5in", 20.5 * 25.4),
            ("20 1/2in", 20.5 * 25.4),
            ("2 5/8\"", 2.625 * 25.4),
            ("188cm", 1880.0),
            ("1880mm", 1880.0),
            ("1880 mm", 1880.0),
            ("1.88m", 1880.0),
            ("2ft 3in", 27.0 * 25.4),
            ("-1in", -25.4),
        ];
        for (text, want) in cases {
            let got = mm(text);
            assert!((got - want).abs() < 1e-9, "{text}: {got} != {want}");
        }
    }

    #[test]
    fn bare_numbers_take_the_file_unit() {
        assert_eq!(parse_length("20 1/2").unwrap(), Length::Bare(20.5));
        assert_eq!(parse_length("20-1/2").unwrap(), Length::Bare(20.5));
        assert_eq!(parse_length("5/8").unwrap(), Length::Bare(0.625));
        assert_eq!(parse_length("12").unwrap().to_mm(Unit::Mm), 12.0);
    }

    #[test]
    fn nonsense_is_refused() {
        for bad in [
            "",
            "abc",
            "6'2cm",
            "1/0",
            "1e3",
            "nan",
            "inf",
            "2 1/2 1/2",
            "--1",
            "1..2",
            "'",
            "in",
        ] {
            assert!(parse_length(bad).is_err(), "accepted {bad:?}");
        }
    }

    #[test]
    fn feet_and_inches_are_written_to_the_sixteenth() {
        assert_eq!(feet_inches(74.0 * 25.4), "6' 2\"");
        assert_eq!(feet_inches(74.5 * 25.4), "6' 2 1/2\"");
        assert_eq!(feet_inches(2.625 * 25.4), "2 5/8\"");
        assert_eq!(inches(19.5 * 25.4), "19 1/2\"");
        assert_eq!(inches(3.0 / 16.0 * 25.4), "3/16\"");
        assert_eq!(feet_inches(11.999 * 25.4), "1' 0\"");
    }

    #[test]
    fn round_trip_through_text() {
        for sixteenths in [1_i64, 7, 16, 33, 190, 1184, 1500] {
            let v = sixteenths as f64 / 16.0 * 25.4;
            let back = mm(&feet_inches(v));
            assert!(
                (back - v).abs() < 1e-9,
                "{v} -> {} -> {back}",
                feet_inches(v)
            );
        }
    }
}
