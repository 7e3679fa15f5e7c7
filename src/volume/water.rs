//! The water a board floats in and moves through: densities and gravity.

/// Fresh water, kg/m³ (= g/L): the trade's usual figure (pure water at
/// 25 °C is 997.05 kg/m³, CRC Handbook of Chemistry and Physics).
pub const FRESH_WATER: f64 = 997.0;
/// Sea water, kg/m³: the trade's usual figure (about 1025 kg/m³ for
/// salinity 35 at 15 °C, UNESCO 1981 equation of state).
pub const SALT_WATER: f64 = 1024.0;
/// Standard gravity, m/s² (3rd CGPM, 1901): newtons to the kilograms they
/// would weigh.
pub const STANDARD_GRAVITY: f64 = 9.80665;
