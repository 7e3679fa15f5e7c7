//! Simulation before cutting: the stock as a height map, any program's
//! moves taken out of it, and what that reveals.

pub mod picture;
pub mod verify;
pub mod zmap;
