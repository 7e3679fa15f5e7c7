//! What a board holds and measures: the mesh volume, the shape integrals,
//! the certificate that compares them, the report of measurements, and the
//! tail's pull in the water.

pub mod certificate;
pub mod integrals;
pub mod measure;
pub mod report;
pub mod tail_pull;
pub mod water;
pub mod weight;
