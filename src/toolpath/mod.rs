//! Toolpaths: the board placed in its stock, then each setup's holes,
//! roughing, outline and finishing; the cradles the stock lies in, and
//! the pick of the blank from the shop's stock list.

pub mod cradle;
pub mod paths;
pub mod pick;
pub mod pockets;
pub mod setup;
