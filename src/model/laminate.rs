//! The glassing schedule and the materials a finished board weighs: what
//! the weight estimate rests on, each value with where it came from.

/// 1 oz/yd² in g/m²: 28.349523125 g over 0.83612736 m² (both exact by
/// definition, NIST SP 811).
pub const G_PER_M2_PER_OZ_YD2: f64 = 28.349_523_125 / 0.836_127_36;

/// A cloth and resin schedule, and the materials under it.
#[derive(Debug, Clone, PartialEq)]
pub struct Laminate {
    /// Cloth layers on the deck, each its weight in g/m².
    pub deck: Vec<f64>,
    /// Cloth layers on the bottom, g/m².
    pub bottom: Vec<f64>,
    /// How far each layer laps round the rail onto the other side, mm.
    pub lap: f64,
    /// Laminating resin per cloth, by weight.
    pub resin_ratio: f64,
    /// Hot (fill) coat resin per area, each side, g/m².
    pub hot_coat: f64,
    /// Foam density, kg/m³.
    pub foam_density: f64,
    /// Stringer: width (mm) and density (kg/m³), when there is one.
    pub stringer: Option<(f64, f64)>,
    /// Each fin box, g.
    pub box_mass: f64,
    /// The leash plug, g.
    pub plug_mass: f64,
}

impl Default for Laminate {
    /// A common shortboard schedule (common practice, from memory): two
    /// layers of 6 oz cloth on the deck, one on the bottom, laps of 2 in,
    /// as much laminating resin as cloth by weight (hand lay-up), a hot
    /// coat of 250 g/m² a side; a polyurethane blank of 45 kg/m³ with a
    /// 1/8 in basswood stringer of 420 kg/m³; boxes 25 g, plug 10 g.
    fn default() -> Self {
        let six = 6.0 * G_PER_M2_PER_OZ_YD2;
        Laminate {
            deck: vec![six, six],
            bottom: vec![six],
            lap: 50.8,
            resin_ratio: 1.0,
            hot_coat: 250.0,
            foam_density: 45.0,
            stringer: Some((3.175, 420.0)),
            box_mass: 25.0,
            plug_mass: 10.0,
        }
    }
}
