//! Full-size templates: drawings in millimetres, tiled onto paper.

pub mod drawing;
pub mod tiling;
pub mod order;
