//! STL in and out, millimetres.
//!
//! Binary STL: an 80-byte header, a little-endian u32 facet count, then
//! 50 bytes a facet (normal and three vertices as f32, a u16 attribute);
//! ASCII: `solid … facet normal … outer loop … vertex … endloop endfacet …
//! endsolid`. STL carries no unit; every file this tool writes is in mm and
//! every file it reads is taken to be.

mod read;
mod write;

pub use read::{Soup, StlError, StlFormat, read, read_file};
pub use write::{write_ascii, write_binary};
