//! A toolpath: one strategy's steps with one tool, tip positions in setup
//! coordinates (mm).

use crate::model::job::Pass;

/// One step of a toolpath, tip positions in setup coordinates (mm).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Step {
    /// G0 to a point.
    Rapid([f64; 3]),
    /// G1 down (or in) at the plunge feed.
    Plunge([f64; 3]),
    /// G1 at the cutting feed.
    Cut([f64; 3]),
    /// G2/G3 about a centre (X, Y), Z may change (a helix).
    Arc {
        /// End.
        to: [f64; 3],
        /// Centre.
        centre: [f64; 2],
        /// Clockwise (G2).
        cw: bool,
    },
}

/// A strategy's path with one tool.
#[derive(Debug, Clone)]
pub struct Toolpath {
    /// What it does: `registration holes`, `roughing`, `outline`, `finishing`.
    pub label: &'static str,
    /// Tool, feeds and speeds.
    pub pass: Pass,
    /// Steps in order.
    pub steps: Vec<Step>,
}
