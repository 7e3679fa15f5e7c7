//! Toolpaths: the board placed in its stock, then each setup's holes,
//! roughing, outline and finishing, and the cradles the stock lies in.

pub mod cradle;
pub mod paths;
pub mod setup;
