//! The setup sheet: the steps in order (fixing and zeroing the stock,
//! each program with its tool, time and cautions, the flip).

use super::{Program, duration};
use crate::gcode::write::CAUTIONS;
use crate::model::job::{Block, Holding, Job};
use crate::model::machine::Machine;
use crate::toolpath::setup::{Placement, Side};
use crate::units::{self};

/// The setup sheet's numbered steps.
struct Steps {
    text: String,
    count: usize,
}

impl Steps {
    fn next(&mut self, step: String) {
        self.count += 1;
        self.text.push_str(&format!("{:>2}. {step}\n", self.count));
    }
}

/// The setup sheet: the steps in order, each program's tool, time and cautions.
pub fn setup_sheet(
    name: &str,
    litres: f64,
    place: &Placement,
    programs: &[Program],
    m: &Machine,
    job: &Job,
) -> String {
    let mut s = String::new();
    let both = |v: f64| units::Both(v).to_string();
    s.push_str(&format!(
        "SETUP SHEET: {name} ({litres:.2} L) on {}, a {} controller\n\n",
        m.name,
        m.controller.name()
    ));
    for c in CAUTIONS {
        s.push_str(c);
        s.push('\n');
    }
    s.push_str("\nFIT\n");
    for l in place.fit_lines() {
        s.push_str(&format!("  {l}\n"));
    }
    if let Some(st) = &place.block.stringer {
        s.push_str(&format!(
            "  stringer: {} {} down the middle (Y {:.1} mm); cutting feeds at {:.0} % where the tool touches it; holes{} beside it\n",
            both(st.width),
            st.material,
            place.block.width / 2.0,
            job.stringer_feed * 100.0,
            if job.holding == Holding::Frame { " and tabs" } else { "" }
        ));
    }
    let b = &place.block;
    let cradle = job.holding == Holding::Cradle;
    s.push_str("\nSTEPS\n");
    let mut st = Steps { text: s, count: 0 };
    fix_and_zero(&mut st, name, b, job);
    let mut flipped = false;
    for p in programs {
        if p.side == Side::Bottom && !flipped {
            flipped = true;
            flip(&mut st, name, place, job);
        }
        let load = if p.tools.len() > 1 {
            format!(
                "load {} in the changer and measure each one's length (the program calls them in that order with M6)",
                p.tools
                    .iter()
                    .map(|t| t.describe())
                    .collect::<Vec<_>>()
                    .join(", then ")
            )
        } else {
            format!("load {} and measure its length", p.tool.describe())
        };
        st.next(format!(
            "Setup {} ({} up): {load}; run {} ({}); about {}.",
            p.side.number(),
            p.side.name(),
            p.file_name,
            p.labels.join(", "),
            duration(p.time_s)
        ));
        if p.labels.contains(&"registration holes") {
            st.next("Leave the pins out until the flip; clean the chips out of the holes.".into());
        }
    }
    if !cradle {
        st.next(format!(
                "Remove the tabs: the board is held at nose and tail by tabs {} wide and {} high; cut them with a fine saw and sand them fair by hand.",
                both(job.tabs[0]),
                both(job.tabs[1])
            ));
    }
    st.next("Sand the scallops and the parting line at the rail apex by hand.".into());
    let mut s = st.text;
    s.push_str("\nPROGRAMS\n");
    for p in programs {
        s.push_str(&format!(
            "  {}: {}, {}, {}\n",
            p.file_name,
            p.tool.describe(),
            p.labels.join(" + "),
            duration(p.time_s)
        ));
    }
    s.push_str(&format!(
        "  in all: {} of cutting, by the estimate with the machine's accelerations; tool changes, the flip and setting zero come on top\n",
        duration(programs.iter().map(|p| p.time_s).sum())
    ));
    s
}

/// The steps that fix the stock for setup 1 and set its zero.
fn fix_and_zero(st: &mut Steps, name: &str, b: &Block, job: &Job) {
    let both = |v: f64| units::Both(v).to_string();
    let rockered = b.rocker.is_some();
    let cradle = job.holding == Holding::Cradle;
    let (what, hold) = if rockered {
        (
            format!(
                "the {} x {} rockered blank ({} high overall) bottom down in a cradle cut to its bottom curve (the job's stations: {name}.cradle-1.svg, full size in {name}.cradles.pdf), its lowest point on the spoilboard, its nose end and front side",
                both(b.length),
                both(b.width),
                both(b.thickness)
            ),
            "lift, rock or slide (clamps outside the cut band: between cuts the tool crosses the blank's low middle at the clearance above the blank's own top there, not above Z0, so nothing may stand above the blank over the cut band)",
        )
    } else {
        (
            format!(
                "the {} x {} x {} block flat on the spoilboard, its front-left corner",
                both(b.length),
                both(b.width),
                both(b.thickness)
            ),
            "lift or slide (clamps outside the cut band, or vacuum)",
        )
    };
    let hold = if cradle {
        "lift, rock or slide, by vacuum through the cradle or spoilboard: the programs cut away all the stock round the board, out past its edges, so no clamp may stand on it or beside it"
    } else {
        hold
    };
    st.next(format!(
            "Fix the blank: {what} at machine X {:.1} mm, Y {:.1} mm, long side along X. Hold it so it cannot {hold}.",
            job.table_position[0], job.table_position[1]
        ));
    if rockered {
        st.next(format!(
                "Set zero: X0 at the blank's nose end, Y0 on its front side, Z0 on the deck's highest point, at X {}, with each tool's tip. Check the tool length after every tool change.",
                both(b.zero_x(true))
            ));
    } else {
        st.next("Set zero: X0 Y0 on the block's front-left corner, Z0 on its top face with each tool's tip. Check the tool length after every tool change.".into());
    }
}

/// The steps that turn the stock over onto its pins and set setup 2's Z0
/// on the spoilboard.
fn flip(st: &mut Steps, name: &str, place: &Placement, job: &Job) {
    let both = |v: f64| units::Both(v).to_string();
    let b = &place.block;
    let rockered = b.rocker.is_some();
    let cradle = job.holding == Holding::Cradle;
    let holes = place
        .holes
        .iter()
        .map(|h| format!("X {:.1} mm Y {:.1} mm", h[0], h[1]))
        .collect::<Vec<_>>()
        .join(", ");
    let n_holes = place.holes.len();
    if cradle {
        st.next(format!(
                "Flip: lift the {stock} off, turn it over about its long (X) axis, and set it deck down in the deck cradle (cut to the board's deck as designed, which setup 1 cut: {name}.cradle-2.svg, full size in {name}.cradles.pdf), on pins in the {n_holes} registration holes ({holes}), through the stock and {:.1} mm into {under}: the pins stand at the same machine X, Y. Pins must not stand above the stock. The pins register the stock until the roughing clears the margin round the board; from then the board lies free in the cradle: hold it down by vacuum through the cradle or by the shop's own hold-downs away from the cut, never by hand.",
                job.pin_depth,
                stock = if rockered { "blank" } else { "block" },
                under = if rockered {
                    "the first cradle"
                } else {
                    "the spoilboard"
                },
            ));
    } else if rockered {
        st.next(format!(
                "Flip: lift the blank off, turn it over about its long (X) axis, and set it deck down in a second cradle cut to its deck curve ({name}.cradle-2.svg), on pins in the {n_holes} registration holes ({holes}), drilled through the blank and {:.1} mm into the first cradle: the second cradle's pin holes stand at the same machine X, Y. Pins must not stand above the blank.",
                job.pin_depth
            ));
    } else {
        st.next(format!(
                "Flip: lift the block off, turn it over about its long (X) axis, and set it back on pins in the {n_holes} registration holes ({holes}), through the block and {:.1} mm into the spoilboard. The front-left corner is again at the same machine X, Y. Pins must not stand above the block's top face.",
                job.pin_depth
            ));
    }
    st.next(format!(
            "Set Z0 on the spoilboard top (touch the tool tip off on the spoilboard beside the stock), not on the stock; X0 Y0 are unchanged. Setup 2 cuts from the table the first setup's top now rests on{}, so the board's thickness does not follow the stock's: a stock thicker or thinner than declared only moves its top (declared: {} above the spoilboard{}).",
            if cradle || rockered {
                " or is held to by its cradle"
            } else {
                ""
            },
            both(b.thickness),
            if rockered {
                format!(", at its highest point, X {}", both(b.zero_x(false)))
            } else {
                String::new()
            }
        ));
}
