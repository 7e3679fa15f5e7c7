//! Full-size templates: drawings in millimetres, tiled onto paper, or
//! written whole as SVG and DXF.

pub mod drawing;
pub mod sections;
pub mod sheet;
pub mod print;
mod layout;
pub mod tiling;
pub mod order;
pub mod dxf;
