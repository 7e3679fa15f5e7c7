//! Full-size templates: drawings in millimetres, tiled onto paper.

pub mod cradle;
pub mod drawing;
pub mod tiling;
