//! Toolpaths: the board placed in its stock, then each setup's holes,
//! roughing, outline and finishing.

pub mod paths;
pub mod setup;
