//! What a board holds and measures: the mesh volume, the shape integrals,
//! the certificate that compares them, and the report of measurements.

pub mod certificate;
pub mod integrals;
pub mod measure;
pub mod report;
