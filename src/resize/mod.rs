//! The what-ifs: boards scaled to a size, a volume or other water, and two
//! boards drawn over each other.

pub mod overlay;
pub mod scale;
