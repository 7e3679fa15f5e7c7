//! The watertight mesh: the board sampled and triangulated, soups welded,
//! and the edge topology that says whether a mesh is closed.

pub mod mesher;
pub mod topology;
pub mod weld;
