//! Router programs: machine and job profiles, the board's placement in the
//! stock, toolpaths for both setups, and their G-code.

pub mod dropcutter;
pub mod field;
pub mod job;
pub mod limits;
pub mod paths;
pub mod profile;
pub mod program;
pub mod setup;
