//! The machine's limits as checks on single moves and settings, shared by
//! the gates on our own programs' text and the verification of any program.

use crate::model::machine::Machine;

/// Where a program runs: the machine, and the block on its table (program
/// X0 Y0 at the block's front-left corner, Z0 `zero_height` above the
/// table top: on the block's top face, or on the table itself).
#[derive(Debug, Clone, Copy)]
pub struct Bed<'a> {
    /// The machine.
    pub machine: &'a Machine,
    /// Height of program Z0 above the table top (the table top is at Z
    /// −zero_height): the block's thickness when zero is on its top face.
    pub zero_height: f64,
    /// Machine X, Y of the block's front-left corner.
    pub table_position: [f64; 2],
}

/// How far a position written in a program may stand from the one planned:
/// half the last digit of a 4-decimal inch program (0.00005 in), more than
/// a 3-decimal millimetre one's. The limits allow it, so a position exactly
/// at a limit passes in either unit.
pub const ROUNDING: f64 = 0.00005 * 25.4;

impl Bed<'_> {
    /// Problems with a tip position: outside the travel, below the table
    /// top beyond the spoilboard allowance.
    pub fn position(&self, to: [f64; 3]) -> Vec<String> {
        let m = self.machine;
        let mach = [
            to[0] + self.table_position[0],
            to[1] + self.table_position[1],
            to[2] + self.zero_height + m.table_top,
        ];
        let mut out = Vec::new();
        for a in 0..3 {
            if mach[a] < -ROUNDING || mach[a] > m.travel[a] + ROUNDING {
                out.push(format!(
                    "machine {} {:.3} mm is outside the travel 0..{:.1} mm",
                    ["X", "Y", "Z"][a],
                    mach[a],
                    m.travel[a]
                ));
            }
        }
        if to[2] < -self.zero_height - m.spoilboard_allowance - ROUNDING {
            out.push(format!(
                "Z {:.3} mm is below the table top (the block's bottom is Z {:.3} mm, spoilboard allowance {:.1} mm)",
                to[2], -self.zero_height, m.spoilboard_allowance
            ));
        }
        out
    }

    /// Problems with a feed move: its feed, and the Z component of it.
    pub fn feed(&self, from: [f64; 3], to: [f64; 3], feed: f64) -> Vec<String> {
        let m = self.machine;
        let mut out = Vec::new();
        if feed > m.max_feed_xy + 1e-6 {
            out.push(format!(
                "feed {feed:.0} mm/min is beyond the machine's {:.0} mm/min",
                m.max_feed_xy
            ));
        }
        let d = [to[0] - from[0], to[1] - from[1], to[2] - from[2]];
        let len = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt();
        if len > 0.0 && feed * d[2].abs() / len > m.max_feed_z + 1e-3 {
            out.push(format!(
                "Z feed {:.0} mm/min is beyond the machine's {:.0} mm/min",
                feed * d[2].abs() / len,
                m.max_feed_z
            ));
        }
        out
    }

    /// A spindle speed outside the machine's range (0 is a stopped spindle).
    pub fn spindle(&self, rpm: f64) -> Option<String> {
        let m = self.machine;
        (rpm > 0.0 && (rpm < m.spindle_min || rpm > m.spindle_max)).then(|| {
            format!(
                "spindle {rpm:.0} rpm is outside the machine's {:.0}..{:.0} rpm",
                m.spindle_min, m.spindle_max
            )
        })
    }
}
