//! Geometry kernels more than one stage uses: quadrature, cross-sections
//! of the shape, closest points, the drop-cutter, grid fields and contours,
//! and the stock height map.

pub mod contact;
pub mod dropcutter;
pub mod field;
pub mod nearest;
pub mod quadrature;
pub mod section;
pub mod zmap;
