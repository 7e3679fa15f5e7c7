//! G-code (RS-274/NGC subset): reading any program, writing our own, and
//! the programs of a cut (paths to text, gates, setup sheet) and their run
//! time.

pub mod program;
pub mod read;
pub mod timing;
pub mod write;
