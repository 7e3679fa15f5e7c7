//! The cradles a board's stock lies in, drawn full size: profile boards
//! whose top edge is the support's height above the spoilboard along X,
//! set on edge under the centreline (the stringer's line).
//!
//! Heights follow from the setups (see [`crate::toolpath::setup`]): the
//! spoilboard is at Z −T in setup 1 (T the stock's overall height), and
//! the flip turns Z into −T − Z, so a surface at setup-1 height z rests
//! at −z above the spoilboard after the flip.
//! - Setup 1, a rockered blank: its bottom curve as the job's stations
//!   give it (0 where the blank touches the spoilboard).
//! - Setup 2, a frame: the blank's deck curve turned over, T − deck.
//! - Setup 2, a cradle (no frame): the board's own deck at the centreline
//!   as placed, −z, under the board's length only.

use crate::geom::dropcutter::DropCutter;
use crate::model::job::{Holding, Job};
use crate::model::machine::Cutter;
use crate::template::drawing::{BORDER, Drawing, Item, Role, label};
use crate::toolpath::setup::Placement;

/// Sampling step along X, mm.
const STEP: f64 = 5.0;

/// Station ticks every this many mm along the cradle.
const TICK: f64 = 150.0;

/// The cradles this job needs, each with its setup's number, as
/// full-size drawings: none for a flat block held by its frame (it lies on
/// the spoilboard both times).
pub fn cradles(place: &Placement, job: &Job, name: &str) -> Vec<(u32, Drawing)> {
    let b = &place.block;
    let mut out = Vec::new();
    if let Some(r) = &b.rocker {
        let first = r.stations.first().map_or(0.0, |s| s[0]);
        let last = r.stations.last().map_or(b.length, |s| s[0]);
        let at: Vec<f64> = r.stations.iter().map(|s| s[0]).collect();
        let profile = samples(first, last, &at, |x| b.deck_bottom_z(x).1 + b.thickness);
        out.push((
            1,
            drawing(
                name,
                1,
                "the blank's bottom curve (the job's stations); the blank lies bottom down on it",
                &profile,
            ),
        ));
    }
    match job.holding {
        Holding::Frame => {
            if let Some(r) = &b.rocker {
                let at: Vec<f64> = r.stations.iter().map(|s| s[0]).collect();
                let profile = samples(0.0, b.length, &at, |x| -b.deck_bottom_z(x).0);
                out.push((2, drawing(
                    name,
                    2,
                    "the blank's deck curve turned over; the blank lies deck down on it after the flip",
                    &profile,
                )));
            }
        }
        Holding::Cradle => {
            let ray = DropCutter::new(&[&place.part], Cutter::flat(0.0));
            let [x0, x1] = place.x_range;
            // 10 mm in from the tips, where the deck rolls down into the
            // rail and bears nothing.
            let profile: Vec<[f64; 2]> = samples(x0 + 10.0, x1 - 10.0, &[], |x| x)
                .into_iter()
                .filter_map(|[x, _]| ray.drop(x, place.centre_y).map(|z| [x, -z]))
                .collect();
            out.push((2, drawing(
                name,
                2,
                "the board's deck at the centreline as setup 1 cut it; the board lies deck down on it after the flip",
                &profile,
            )));
        }
    }
    out
}

/// (x, f(x)) from `x0` to `x1` every [`STEP`], both ends and the `at`
/// inside the span included, in order.
fn samples(x0: f64, x1: f64, at: &[f64], f: impl Fn(f64) -> f64) -> Vec<[f64; 2]> {
    let n = ((x1 - x0) / STEP).ceil().max(1.0) as usize;
    let mut xs: Vec<f64> = (0..=n)
        .map(|k| (x0 + k as f64 * STEP).min(x1))
        .chain(at.iter().copied().filter(|&x| x > x0 && x < x1))
        .collect();
    xs.sort_by(f64::total_cmp);
    xs.dedup_by(|a, b| (*a - *b).abs() < 1e-9);
    xs.into_iter().map(|x| [x, f(x)]).collect()
}

/// One cradle: the profile (X from the stock's nose end, height above the
/// spoilboard) closed down to the spoilboard, ticks with their heights,
/// and how to set it.
fn drawing(name: &str, setup: u32, what: &str, profile: &[[f64; 2]]) -> Drawing {
    let b = BORDER;
    let (Some(first), Some(last)) = (profile.first(), profile.last()) else {
        return Drawing {
            kind: "cradle",
            title: format!("{name}: cradle for setup {setup}: nothing to support"),
            width: 2.0 * b,
            height: 2.0 * b,
            items: vec![],
        };
    };
    let x0 = first[0];
    let top = profile.iter().fold(0.0f64, |m, p| m.max(p[1]));
    let at = |p: [f64; 2]| [b + p[0] - x0, b + p[1]];
    let mut edge: Vec<[f64; 2]> = vec![at([x0, 0.0])];
    edge.extend(profile.iter().map(|&p| at(p)));
    edge.push(at([last[0], 0.0]));
    let mut items = vec![Item::Line {
        points: edge,
        closed: true,
        role: Role::Cut,
    }];
    let mut x = (x0 / TICK).floor() * TICK + TICK;
    while x < last[0] - 1.0 {
        let h = height_at(profile, x);
        items.push(Item::Line {
            points: vec![at([x, 0.0]), at([x, h])],
            closed: false,
            role: Role::Guide,
        });
        items.push(Item::Text {
            at: at([x + 1.0, h + 3.0]),
            size: 3.0,
            text: format!("X {x:.0}: {}", label(h)),
        });
        x += TICK;
    }
    for (p, anchor) in [(*first, 0.0), (*last, -60.0)] {
        items.push(Item::Text {
            at: at([p[0] + anchor, p[1] + 9.0]),
            size: 3.0,
            text: format!("X {:.1}: {}", p[0], label(p[1])),
        });
    }
    items.push(Item::Text {
        at: [b, b + top + 28.0],
        size: 4.0,
        text: format!(
            "Top edge: {what}. X from the stock's nose end; bottom edge on the spoilboard."
        ),
    });
    items.push(Item::Text {
        at: [b, b + top + 22.0],
        size: 4.0,
        text: "Cut from sheet stock, set on edge along X under the centreline, its ends at the X shown; add more at the shop's usual spacing.".into(),
    });
    Drawing {
        kind: "cradle",
        title: format!("{name}: cradle for setup {setup}, full size"),
        width: last[0] - x0 + 2.0 * b,
        height: top + 2.0 * b + 34.0,
        items,
    }
}

/// The profile's height at X, linear between samples.
fn height_at(profile: &[[f64; 2]], x: f64) -> f64 {
    let k = profile
        .partition_point(|p| p[0] <= x)
        .clamp(1, profile.len() - 1);
    let (a, c) = (profile[k - 1], profile[k]);
    a[1] + (c[1] - a[1]) * (x - a[0]) / (c[0] - a[0]).max(1e-12)
}
