//! Meshes from elsewhere: inspected before foam is spent on them, and
//! compared with their design.

pub mod check;
pub mod compare;
