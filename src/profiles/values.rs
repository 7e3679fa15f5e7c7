//! Values as the profiles write them (feeds with their units, stepovers as
//! a share or a length), read through the located reader
//! (`description::located`) every input file shares: every length to
//! millimetres and every feed to millimetres per minute, a rule broken said
//! at its line and column.

use std::fmt;

use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use serde_saphyr::Spanned;

use crate::description::DescriptionError;
use crate::description::located::Reader;
use crate::description::values::LengthValue;
use crate::units::{self, Unit};

/// A feed rate as written: a bare number (per minute in the file's unit) or
/// `6000mm/min`, `240in/min`, `100mm/s`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FeedValue {
    /// A number in the file's unit per minute.
    Bare(f64),
    /// Already in mm/min.
    MmPerMin(f64),
}

impl FeedValue {
    /// Millimetres per minute, reading a bare number in `unit` per minute.
    pub fn mm_per_min(self, unit: Unit) -> f64 {
        match self {
            FeedValue::Bare(v) => v * unit.mm(),
            FeedValue::MmPerMin(v) => v,
        }
    }
}

/// Reads `6000mm/min`, `240 in/min`, `100mm/s`, `6m/min`, `240ipm`.
pub fn parse_feed(text: &str) -> Result<FeedValue, String> {
    let t = text.trim().to_ascii_lowercase().replace(' ', "");
    let table: [(&str, f64); 7] = [
        ("mm/min", 1.0),
        ("mm/s", 60.0),
        ("m/min", 1000.0),
        ("in/min", units::MM_PER_INCH),
        ("ipm", units::MM_PER_INCH),
        ("in/s", 60.0 * units::MM_PER_INCH),
        ("ft/min", units::MM_PER_FOOT),
    ];
    for (suffix, k) in table {
        if let Some(n) = t.strip_suffix(suffix) {
            return match n.parse::<f64>() {
                Ok(v) if v.is_finite() => Ok(FeedValue::MmPerMin(v * k)),
                _ => Err(format!("`{text}`: `{n}` is not a number")),
            };
        }
    }
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(FeedValue::Bare(v)),
        _ => Err(format!(
            "`{text}` is not a feed; write e.g. 6000mm/min, 240in/min or 100mm/s"
        )),
    }
}

struct FeedVisitor;

impl<'de> Visitor<'de> for FeedVisitor {
    type Value = FeedValue;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a feed such as 6000mm/min, 240in/min or 100mm/s")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<FeedValue, E> {
        if v.is_finite() {
            Ok(FeedValue::Bare(v))
        } else {
            Err(E::custom("a feed must be a finite number"))
        }
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<FeedValue, E> {
        Ok(FeedValue::Bare(v as f64))
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<FeedValue, E> {
        Ok(FeedValue::Bare(v as f64))
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<FeedValue, E> {
        parse_feed(v).map_err(E::custom)
    }
}

impl<'de> Deserialize<'de> for FeedValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(FeedVisitor)
    }
}

/// A stepover: a length, or a share of the tool diameter (`40%`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StepoverValue {
    /// A length.
    Length(LengthValue),
    /// A fraction of the tool diameter.
    Share(f64),
}

struct StepoverVisitor;

impl<'de> Visitor<'de> for StepoverVisitor {
    type Value = StepoverValue;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a length such as 8mm or 5/16, or a share of the tool diameter such as 40%")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<StepoverValue, E> {
        if v.is_finite() {
            Ok(StepoverValue::Length(LengthValue(units::Length::Bare(v))))
        } else {
            Err(E::custom("a stepover must be a finite number"))
        }
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<StepoverValue, E> {
        self.visit_f64(v as f64)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<StepoverValue, E> {
        self.visit_f64(v as f64)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<StepoverValue, E> {
        if let Some(p) = v.trim().strip_suffix('%') {
            return match p.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(StepoverValue::Share(x / 100.0)),
                _ => Err(E::custom(format!("`{v}` is not a percentage"))),
            };
        }
        units::parse_length(v)
            .map(|l| StepoverValue::Length(LengthValue(l)))
            .map_err(E::custom)
    }
}

impl<'de> Deserialize<'de> for StepoverValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(StepoverVisitor)
    }
}

/// A feed in (0, hi] mm/min.
pub fn feed(
    r: &Reader,
    v: &Spanned<FeedValue>,
    field: &str,
    hi: f64,
    hint: &str,
) -> Result<f64, DescriptionError> {
    let x = v.value.mm_per_min(r.unit);
    if x > 0.0 && x <= hi {
        return Ok(x);
    }
    r.fail(
        &v.referenced,
        field,
        format!(
            "is {x:.0} mm/min ({:.1} in/min); it must be more than 0 and at most {hi:.0} mm/min",
            x / units::MM_PER_INCH
        ),
        hint,
    )
}

/// `12.70 mm (1/2")`.
pub fn mm_text(mm: f64) -> String {
    units::exact(mm)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn feeds_read_in_their_units() {
        // 1 in = 25.4 mm exactly (NIST SP 811, appendix B).
        assert_eq!(
            parse_feed("240in/min").unwrap().mm_per_min(Unit::Mm),
            240.0 * 25.4
        );
        assert_eq!(parse_feed("100 mm/s").unwrap().mm_per_min(Unit::In), 6000.0);
        assert_eq!(parse_feed("6000").unwrap().mm_per_min(Unit::Mm), 6000.0);
        assert!(parse_feed("fast").is_err());
    }
}
