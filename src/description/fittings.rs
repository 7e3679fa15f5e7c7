//! The description's fields for what goes round the shape: `fins:`,
//! `leash_plug:`, `laminate:` and `order:`. None of them changes the
//! shape; [`super::resolve`] checks them against it.

use std::fmt;

use serde::Deserialize;
use serde::de::{self, Deserializer, Visitor};
use serde_saphyr::Spanned;

use super::values::LengthValue;
use crate::model::laminate::G_PER_M2_PER_OZ_YD2;

/// `fins:` fields.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FinsSpec {
    /// `single`, `twin`, `thruster`, `quad` or `two_plus_one`.
    pub setup: Spanned<SetupName>,
    /// The box every fin of the setup sits in unless its own says otherwise
    /// (the long centre box of a single or 2+1 has its own defaults).
    #[serde(rename = "box")]
    pub pocket: Option<PocketSpec>,
    /// The side fins (the front pair of a quad).
    pub side: Option<FinSpec>,
    /// The centre fin.
    pub centre: Option<FinSpec>,
    /// A quad's rear pair.
    pub rear: Option<FinSpec>,
}

/// The setups' names as a description writes them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SetupName {
    /// One centre fin.
    Single,
    /// Two side fins.
    Twin,
    /// Two side fins and a centre fin.
    Thruster,
    /// Two pairs of side fins.
    Quad,
    /// Two side fins and a centre fin in a long box.
    TwoPlusOne,
}

/// One fin's (or pair's) fields; each defaults from the setup.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FinSpec {
    /// From the tail to the box's front end.
    pub from_tail: Option<Spanned<LengthValue>>,
    /// From the rail in to the box's front end (side fins).
    pub from_rail: Option<Spanned<LengthValue>>,
    /// Toe-in, degrees (side fins).
    pub toe: Option<Spanned<f64>>,
    /// Cant, degrees (side fins).
    pub cant: Option<Spanned<f64>>,
    /// This fin's box.
    #[serde(rename = "box")]
    pub pocket: Option<PocketSpec>,
}

/// A box's pocket.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PocketSpec {
    /// Along the fin.
    pub length: Option<Spanned<LengthValue>>,
    /// Across.
    pub width: Option<Spanned<LengthValue>>,
    /// Into the foam.
    pub depth: Option<Spanned<LengthValue>>,
    /// Corner radius in plan.
    pub corner_radius: Option<Spanned<LengthValue>>,
}

/// `leash_plug:` fields.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlugSpec {
    /// From the tail to the plug's centre.
    pub from_tail: Option<Spanned<LengthValue>>,
    /// Pocket diameter.
    pub diameter: Option<Spanned<LengthValue>>,
    /// Pocket depth from the deck.
    pub depth: Option<Spanned<LengthValue>>,
}

/// `laminate:` fields.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LaminateSpec {
    /// Cloth layers on the deck: `[6oz, 4oz]`, `[200gsm]` (a bare number
    /// is oz/yd²).
    pub deck: Option<Spanned<Vec<ClothWeight>>>,
    /// Cloth layers on the bottom.
    pub bottom: Option<Spanned<Vec<ClothWeight>>>,
    /// How far each layer laps round the rail.
    pub lap: Option<Spanned<LengthValue>>,
    /// Laminating resin per cloth, by weight.
    pub resin_ratio: Option<Spanned<f64>>,
    /// Hot coat per side, g/m².
    pub hot_coat: Option<Spanned<f64>>,
    /// Foam density, kg/m³.
    pub foam_density: Option<Spanned<f64>>,
    /// Stringer width (`none` for a blank without one).
    pub stringer_width: Option<Spanned<StringerWidth>>,
    /// Stringer density, kg/m³.
    pub stringer_density: Option<Spanned<f64>>,
    /// Each fin box, g.
    pub box_mass: Option<Spanned<f64>>,
    /// The leash plug, g.
    pub plug_mass: Option<Spanned<f64>>,
}

/// `order:` fields: free text for the order sheet.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OrderSpec {
    /// The customer's name.
    pub customer: Option<Spanned<String>>,
    /// The shop's order number.
    pub reference: Option<Spanned<String>>,
    /// When it is wanted.
    pub due: Option<Spanned<String>>,
    /// Colour, tint, spray, logos.
    pub colour: Option<Spanned<String>>,
    /// Anything else.
    pub notes: Option<Spanned<String>>,
}

/// A cloth weight in g/m².
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ClothWeight(pub f64);

struct ClothVisitor;

impl Visitor<'_> for ClothVisitor {
    type Value = ClothWeight;
    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        f.write_str("a cloth weight such as 6oz, 4 oz or 200gsm (a bare number is oz/yd²)")
    }
    fn visit_f64<E: de::Error>(self, v: f64) -> Result<ClothWeight, E> {
        Ok(ClothWeight(v * G_PER_M2_PER_OZ_YD2))
    }
    fn visit_i64<E: de::Error>(self, v: i64) -> Result<ClothWeight, E> {
        self.visit_f64(v as f64)
    }
    fn visit_u64<E: de::Error>(self, v: u64) -> Result<ClothWeight, E> {
        self.visit_f64(v as f64)
    }
    fn visit_str<E: de::Error>(self, v: &str) -> Result<ClothWeight, E> {
        let t = v.trim().to_ascii_lowercase();
        let (num, per) = if let Some(n) = t.strip_suffix("oz") {
            (n, G_PER_M2_PER_OZ_YD2)
        } else if let Some(n) = ["gsm", "g/m2", "g/m²"]
            .iter()
            .find_map(|u| t.strip_suffix(u))
        {
            (n, 1.0)
        } else {
            (t.as_str(), G_PER_M2_PER_OZ_YD2)
        };
        num.trim()
            .parse::<f64>()
            .ok()
            .filter(|n| n.is_finite())
            .map(|n| ClothWeight(n * per))
            .ok_or_else(|| {
                E::custom(format!(
                    "`{v}` is not a cloth weight; write e.g. 6oz or 200gsm"
                ))
            })
    }
}

impl<'de> Deserialize<'de> for ClothWeight {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(ClothVisitor)
    }
}

/// A stringer's width, or `none`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StringerWidth {
    /// No stringer.
    None,
    /// This wide.
    Width(LengthValue),
}

impl<'de> Deserialize<'de> for StringerWidth {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl Visitor<'_> for V {
            type Value = StringerWidth;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a width such as 1/8in or 3mm, or `none`")
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<StringerWidth, E> {
                Ok(StringerWidth::Width(LengthValue(
                    crate::units::Length::Bare(v),
                )))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<StringerWidth, E> {
                self.visit_f64(v as f64)
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<StringerWidth, E> {
                self.visit_f64(v as f64)
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<StringerWidth, E> {
                if v.trim().eq_ignore_ascii_case("none") {
                    return Ok(StringerWidth::None);
                }
                crate::units::parse_length(v)
                    .map(|l| StringerWidth::Width(LengthValue(l)))
                    .map_err(E::custom)
            }
        }
        d.deserialize_any(V)
    }
}
