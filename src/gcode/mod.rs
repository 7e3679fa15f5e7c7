//! G-code (RS-274/NGC subset): reading any program, writing our own.

pub mod read;
pub mod write;
