//! The built-in demo board, compiled in so `make` runs with no input.

/// The demo board's description (the shop shortboard fixture).
pub const DEMO: &str = include_str!("../../fixtures/shortboard.yaml");

/// File name shown for the demo in messages.
pub const DEMO_NAME: &str = "<built-in demo: fixtures/shortboard.yaml>";
