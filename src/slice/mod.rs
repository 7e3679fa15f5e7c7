//! Plane sections and waterlines, and their drawings and tables.

pub mod contours;
pub mod plane;
