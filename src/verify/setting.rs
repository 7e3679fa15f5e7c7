//! What a simulation runs: the programs in order, the machine, the stock
//! and where it sits, the design to measure against and what is left on
//! purpose (tabs, pockets), and the options.

use std::io::BufRead;
use std::sync::Arc;

use crate::geom::dropcutter::Prepared;
use crate::model::job::Block;
use crate::model::machine::{Cutter, Machine};
use crate::model::mesh::Mesh;
use crate::toolpath::pockets::PocketZone;
use crate::toolpath::setup::{Placement, Side};

/// A program to verify.
pub struct ProgramSource<'a> {
    /// Name in messages (the file).
    pub name: String,
    /// Which setup it runs in.
    pub side: Side,
    /// Its text, streamed.
    pub reader: Box<dyn BufRead + 'a>,
    /// The tool in the spindle when it starts (from the machine's list),
    /// for a controller whose programs name none (GRBL: one program per
    /// tool, loaded by hand as the setup sheet says).
    pub loaded: Option<u32>,
}

/// Where and with what the programs run.
pub struct Setting<'a> {
    /// The machine.
    pub machine: &'a Machine,
    /// The stock block, X 0..L, Y 0..W, Z -T..0 in program coordinates.
    pub block: Block,
    /// Machine X, Y of the block's front-left corner.
    pub table_position: [f64; 2],
    /// Tool for programs that do not name one in the machine's list.
    pub default_tool: Option<Cutter>,
    /// The design in setup-1 program coordinates, to measure against.
    pub design: Option<&'a Mesh>,
    /// Plan rectangles (min, max corners, setup-1 coordinates) left on
    /// purpose, e.g. the tabs: not counted as leftover.
    pub keep: Vec<[[f64; 2]; 2]>,
    /// Setup 2's program zero is on the spoilboard top (the table), not on
    /// the turned stock's new top: its Z are heights above the table, and
    /// the turned stock's top stands at its real thickness.
    pub table_zero_after_flip: bool,
    /// For programs planned here: the placement and the parting overlap,
    /// whose floor (the parting surface less the overlap) no tool tip goes
    /// below, so the rail just above the parting line is out of the ball's
    /// reach.
    pub floor: Option<(&'a Placement, f64)>,
    /// Pockets cut into the design on purpose (fin boxes, the plug): not
    /// counted as gouges; each measured instead.
    pub pockets: Vec<PocketZone>,
    /// For programs planned here: each setup's (deck, bottom) triangles
    /// as the planner prepared them, the design as that side sees it
    /// first (then the tabs, which the measure leaves out), so the design
    /// is not prepared again. Without it the measure prepares the design.
    pub prepared: [Option<Arc<Prepared>>; 2],
}

/// Verification options.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct VerifyOptions {
    /// Height-map cell, mm.
    pub cell: f64,
    /// Skip words outside the subset instead of refusing them.
    pub lenient: bool,
    /// Deepest gouge accepted, mm (normal to the surface).
    pub gouge_tolerance: f64,
}

impl Default for VerifyOptions {
    fn default() -> Self {
        VerifyOptions {
            cell: 0.5,
            lenient: false,
            gouge_tolerance: 0.05,
        }
    }
}
