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

/// A rail value along the board: one value for the whole length, or
/// `{nose: .., middle: .., tail: ..}`, which a board holds at the nose-width
/// station, the wide point and the tail-width station and blends smoothly
/// between them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Along<T> {
    /// At the nose-width station (and on to the nose).
    pub nose: T,
    /// At the wide point.
    pub middle: T,
    /// At the tail-width station (and on to the tail).
    pub tail: T,
}

impl<T: Copy> Along<T> {
    /// The same value all along.
    pub fn all(v: T) -> Along<T> {
        Along {
            nose: v,
            middle: v,
            tail: v,
        }
    }

    /// The three values with their names.
    pub fn parts(&self) -> [(&'static str, T); 3] {
        [
            ("nose", self.nose),
            ("middle", self.middle),
            ("tail", self.tail),
        ]
    }
}

struct AlongVisitor<T>(std::marker::PhantomData<T>);

impl<'de, T: serde::Deserialize<'de> + Copy> Visitor<'de> for AlongVisitor<T> {
    type Value = Along<T>;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("one value for the whole board, or {nose: .., middle: .., tail: ..}")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Along<T>, E> {
        T::deserialize(de::value::F64Deserializer::<E>::new(v)).map(Along::all)
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Along<T>, E> {
        T::deserialize(de::value::I64Deserializer::<E>::new(v)).map(Along::all)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Along<T>, E> {
        T::deserialize(de::value::U64Deserializer::<E>::new(v)).map(Along::all)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Along<T>, E> {
        T::deserialize(de::value::StrDeserializer::<E>::new(v)).map(Along::all)
    }
    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Along<T>, A::Error> {
        let (mut nose, mut middle, mut tail) = (None, None, None);
        while let Some(key) = map.next_key::<String>()? {
            let slot = match key.as_str() {
                "nose" => &mut nose,
                "middle" => &mut middle,
                "tail" => &mut tail,
                other => {
                    return Err(de::Error::unknown_field(other, &["nose", "middle", "tail"]));
                }
            };
            let value: T = map.next_value()?;
            if slot.replace(value).is_some() {
                return Err(de::Error::custom(format!("`{key}` is given twice")));
            }
        }
        match (nose, middle, tail) {
            (Some(nose), Some(middle), Some(tail)) => Ok(Along { nose, middle, tail }),
            (None, _, _) => Err(de::Error::missing_field("nose")),
            (_, None, _) => Err(de::Error::missing_field("middle")),
            (_, _, None) => Err(de::Error::missing_field("tail")),
        }
    }
}

impl<'de, T: serde::Deserialize<'de> + Copy> serde::Deserialize<'de> for Along<T> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(AlongVisitor(std::marker::PhantomData))
    }
}

/// A rail thickness: a length (`1 1/8`, `28mm`) or a share of the
/// thickness at the stringer (`55%`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RailSize {
    /// A length.
    Length(Length),
    /// A fraction of the stringer thickness (`55%` is 0.55).
    Share(f64),
}

struct RailSizeVisitor;

impl<'de> Visitor<'de> for RailSizeVisitor {
    type Value = RailSize;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str(
            "a length such as 1 1/8 or 28mm, or a share of the stringer thickness such as 55%",
        )
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<RailSize, E> {
        LengthVisitor.visit_f64(v).map(RailSize::Length)
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<RailSize, E> {
        self.visit_f64(v as f64)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<RailSize, E> {
        self.visit_f64(v as f64)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<RailSize, E> {
        let t = v.trim();
        if let Some(p) = t.strip_suffix('%') {
            return match p.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(RailSize::Share(x / 100.0)),
                _ => Err(E::custom(format!("`{t}` is not a percentage like 55%"))),
            };
        }
        units::parse_length(t)
            .map(RailSize::Length)
            .map_err(E::custom)
    }
}

impl<'de> serde::Deserialize<'de> for RailSize {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(RailSizeVisitor)
    }
}

/// How hard the edge under a rail is: a number from 0 (soft: the bottom
/// rolls into the rail) to 1 (hard: a crisp edge), or `soft` or `hard`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Edge(pub f64);

struct EdgeVisitor;

impl<'de> Visitor<'de> for EdgeVisitor {
    type Value = Edge;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("`soft`, `hard` or a number from 0 (soft) to 1 (hard)")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<Edge, E> {
        if v.is_finite() {
            Ok(Edge(v))
        } else {
            Err(E::custom("must be a finite number"))
        }
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<Edge, E> {
        self.visit_f64(v as f64)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<Edge, E> {
        self.visit_f64(v as f64)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<Edge, E> {
        match v.trim().to_ascii_lowercase().as_str() {
            "soft" => Ok(Edge(0.0)),
            "hard" => Ok(Edge(1.0)),
            t => t
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .map(Edge)
                .ok_or_else(|| {
                    E::custom(format!(
                        "`{t}` is not `soft`, `hard` or a number from 0 to 1"
                    ))
                }),
        }
    }
}

impl<'de> serde::Deserialize<'de> for Edge {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(EdgeVisitor)
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
    fn rail_values() {
        let size = |t: &str| serde_saphyr::from_str::<RailSize>(t).unwrap();
        assert_eq!(size("55%"), RailSize::Share(0.55));
        assert_eq!(size("1 1/8"), RailSize::Length(Length::Bare(1.125)));
        let edge = |t: &str| serde_saphyr::from_str::<Edge>(t).map(|e| e.0);
        assert_eq!(edge("hard").unwrap(), 1.0);
        assert_eq!(edge("soft").unwrap(), 0.0);
        assert_eq!(edge("0.4").unwrap(), 0.4);
        assert!(edge("crisp").is_err());
        let along = |t: &str| serde_saphyr::from_str::<Along<Edge>>(t).map(|a| a.tail.0);
        assert_eq!(along("{nose: soft, middle: 0.5, tail: hard}").unwrap(), 1.0);
        assert_eq!(along("0.3").unwrap(), 0.3);
        assert!(along("{nose: soft, middle: 0.5}").is_err());
    }
}
