//! Simulation before cutting: any program's moves taken out of the stock
//! height map, and what that reveals; deviation pictures.

pub mod setting;
pub mod simulate;
pub mod report;
mod outside;
mod measure;
pub mod picture;
