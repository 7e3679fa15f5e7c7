//! The types that cross stages: data and their invariants, no I/O.

pub mod board;
pub mod contour;
pub mod curve;
pub mod fittings;
pub mod job;
pub mod laminate;
pub mod limits;
pub mod machine;
pub mod mesh;
pub mod order;
pub mod toolpath;
