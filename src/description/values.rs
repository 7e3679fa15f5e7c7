//! Values as shapers write them in a description: lengths with or without a
//! unit, positions along the board, and rail values that blend from nose to
//! tail. Each reads from a YAML number or string, so a bad one is reported
//! at its line and column by the YAML reader.

use std::fmt;

use serde::de::{self, Deserializer, MapAccess, Visitor};

use crate::units::{self, Length};

struct LengthVisitor;

impl<'de> Visitor<'de> for LengthVisitor {
    type Value = Length;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a length such as 6'2\", 74in, 20 1/2, 20.5in, 188cm or 1880mm")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Length, E> {
        if v.is_finite() {
            Ok(Length::Bare(v))
        } else {
            Err(E::custom("a length must be a finite number"))
        }
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Length, E> {
        Ok(Length::Bare(v as f64))
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Length, E> {
        Ok(Length::Bare(v as f64))
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Length, E> {
        units::parse_length(v).map_err(E::custom)
    }
}

/// A length field: a YAML number (in the file's unit) or a string with a unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LengthValue(pub Length);

impl<'de> serde::Deserialize<'de> for LengthValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(LengthVisitor).map(LengthValue)
    }
}

/// Where along the board a position is measured from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Reference {
    /// Distance from the nose tip.
    Nose,
    /// Distance from the tail.
    Tail,
    /// Distance ahead of centre (towards the nose); negative is behind.
    AheadOfCentre,
}

/// A position along the board: `30` (from the nose), `12 from tail`,
/// `1 behind` or `2in ahead` (of centre), `centre`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Position {
    /// What it is measured from.
    pub reference: Reference,
    /// How far.
    pub distance: Length,
}

impl Position {
    /// Distance from the nose in mm, for a board of `length` mm.
    pub fn from_nose(self, length: f64, unit: units::Unit) -> f64 {
        let d = self.distance.to_mm(unit);
        match self.reference {
            Reference::Nose => d,
            Reference::Tail => length - d,
            Reference::AheadOfCentre => 0.5 * length - d,
        }
    }
}

/// Reads a position as written on the command line or in a file.
pub fn parse_position(text: &str) -> Result<Position, String> {
    let t = text.trim();
    let lower = t.to_ascii_lowercase();
    if matches!(lower.as_str(), "centre" | "center" | "middle") {
        return Ok(Position {
            reference: Reference::AheadOfCentre,
            distance: Length::Mm(0.0),
        });
    }
    let suffixes: [(&str, Reference, f64); 8] = [
        ("from nose", Reference::Nose, 1.0),
        ("from the nose", Reference::Nose, 1.0),
        ("from tail", Reference::Tail, 1.0),
        ("from the tail", Reference::Tail, 1.0),
        ("ahead", Reference::AheadOfCentre, 1.0),
        ("forward", Reference::AheadOfCentre, 1.0),
        ("behind", Reference::AheadOfCentre, -1.0),
        ("back", Reference::AheadOfCentre, -1.0),
    ];
    for (suffix, reference, sign) in suffixes {
        if let Some(head) = lower.strip_suffix(suffix) {
            let length = units::parse_length(&t[..head.len()]).map_err(|e| e.to_string())?;
            let distance = match length {
                Length::Bare(v) => Length::Bare(sign * v),
                Length::Mm(v) => Length::Mm(sign * v),
            };
            return Ok(Position {
                reference,
                distance,
            });
        }
    }
    match units::parse_length(t) {
        Ok(distance) => Ok(Position {
            reference: Reference::Nose,
            distance,
        }),
        Err(e) => Err(format!(
            "`{t}` is not a position ({}); write a distance from the nose (30), `12 from tail`, `1 behind` or `2 ahead` (of centre), or `centre`",
            e.why
        )),
    }
}

struct PositionVisitor;

impl<'de> Visitor<'de> for PositionVisitor {
    type Value = Position;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a position such as 30 (from the nose), `12 from tail`, `1 behind` (centre) or `centre`")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Position, E> {
        LengthVisitor.visit_f64(v).map(|distance| Position {
            reference: Reference::Nose,
            distance,
        })
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Position, E> {
        self.visit_f64(v as f64)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Position, E> {
        self.visit_f64(v as f64)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Position, E> {
        parse_position(v).map_err(E::custom)
    }
}

impl<'de> serde::Deserialize<'de> for Position {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(PositionVisitor)
    }
}

/// A rail value along the board: one number for the whole length, or
/// `{nose: .., middle: .., tail: ..}` blended smoothly between them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Blend {
    /// At the nose tip.
    pub nose: f64,
    /// At the middle of the length.
    pub middle: f64,
    /// At the tail.
    pub tail: f64,
}

/// Reads `0.4`, or a rail split `60/40` (60 parts above the apex, 40 below:
/// the apex at 0.4 of the rail band).
fn blend_number(v: &str) -> Result<f64, String> {
    let t = v.trim();
    if let Some((above, below)) = t.split_once('/') {
        let a: f64 = above
            .trim()
            .parse()
            .map_err(|_| format!("`{t}` is not a rail split like 60/40"))?;
        let b: f64 = below
            .trim()
            .parse()
            .map_err(|_| format!("`{t}` is not a rail split like 60/40"))?;
        if a > 0.0 && b > 0.0 && a.is_finite() && b.is_finite() {
            return Ok(b / (a + b));
        }
        return Err(format!(
            "`{t}`: both parts of a rail split must be positive"
        ));
    }
    t.parse::<f64>()
        .ok()
        .filter(|x| x.is_finite())
        .ok_or_else(|| format!("`{t}` is not a number or a rail split like 60/40"))
}

struct BlendVisitor;

impl<'de> Visitor<'de> for BlendVisitor {
    type Value = Blend;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a number, a rail split like 60/40, or {nose: .., middle: .., tail: ..}")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Blend, E> {
        if !v.is_finite() {
            return Err(E::custom("must be a finite number"));
        }
        Ok(Blend {
            nose: v,
            middle: v,
            tail: v,
        })
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Blend, E> {
        self.visit_f64(v as f64)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Blend, E> {
        self.visit_f64(v as f64)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Blend, E> {
        let x = blend_number(v).map_err(E::custom)?;
        self.visit_f64(x)
    }
    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Blend, A::Error> {
        let (mut nose, mut middle, mut tail) = (None, None, None);
        while let Some(key) = map.next_key::<String>()? {
            let value: BlendScalar = map.next_value()?;
            let slot = match key.as_str() {
                "nose" => &mut nose,
                "middle" => &mut middle,
                "tail" => &mut tail,
                other => {
                    return Err(de::Error::unknown_field(other, &["nose", "middle", "tail"]));
                }
            };
            if slot.replace(value.0).is_some() {
                return Err(de::Error::custom(format!("`{key}` is given twice")));
            }
        }
        match (nose, middle, tail) {
            (Some(nose), Some(middle), Some(tail)) => Ok(Blend { nose, middle, tail }),
            (None, _, _) => Err(de::Error::missing_field("nose")),
            (_, None, _) => Err(de::Error::missing_field("middle")),
            (_, _, None) => Err(de::Error::missing_field("tail")),
        }
    }
}

impl<'de> serde::Deserialize<'de> for Blend {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(BlendVisitor)
    }
}

/// One number of a blend (a plain number or a rail split).
struct BlendScalar(f64);

impl<'de> serde::Deserialize<'de> for BlendScalar {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = f64;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a number or a rail split like 60/40")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<f64, E> {
                Ok(v)
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<f64, E> {
                Ok(v as f64)
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<f64, E> {
                Ok(v as f64)
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<f64, E> {
                blend_number(v).map_err(E::custom)
            }
        }
        d.deserialize_any(V).map(BlendScalar)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Unit;

    #[test]
    fn positions() {
        let l = 1880.0;
        let at = |s: &str| parse_position(s).unwrap().from_nose(l, Unit::In);
        let near = |a: f64, b: f64| (a - b).abs() < 1e-9;
        // 1 in = 25.4 mm exactly (NIST SP 811).
        assert!(near(at("12"), 304.8));
        assert!(near(at("12 from tail"), l - 304.8));
        assert!(near(at("1 behind"), 940.0 + 25.4));
        assert!(near(at("25mm ahead"), 915.0));
        assert!(near(at("centre"), 940.0));
        assert!(near(at("6'2\" from nose"), 1879.6));
        assert!(parse_position("behind").is_err());
        assert!(parse_position("2 sideways").is_err());
    }

    #[test]
    fn rail_splits() {
        assert_eq!(blend_number("60/40").unwrap(), 0.4);
        assert_eq!(blend_number("50/50").unwrap(), 0.5);
        assert_eq!(blend_number("0.35").unwrap(), 0.35);
        assert!(blend_number("60/-40").is_err());
        assert!(blend_number("x").is_err());
    }
}
