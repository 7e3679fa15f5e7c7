//! Router programs: checked against an independent G-code parser, against
//! the geometry they must respect, and by the simulation.

use std::sync::OnceLock;

use rayon::prelude::*;

use blanksmith::commands;
use blanksmith::gcode::program::{self, CutPlan, Program};
use blanksmith::model::job::Job;
use blanksmith::model::machine::Machine;
use blanksmith::model::toolpath::Step;
use blanksmith::profiles::job;
use blanksmith::profiles::machine as profile;
use blanksmith::toolpath::setup::{self, Side};

struct Case {
    plan: CutPlan,
    machine: Machine,
    job: Job,
}

fn case(file: &str) -> Case {
    case_on(file, profile::generic_machine())
}

fn case_on(file: &str, machine: Machine) -> Case {
    let job = job::default_job(&machine).unwrap();
    case_with(file, machine, job)
}

fn case_with(file: &str, machine: Machine, job: Job) -> Case {
    let path = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(file);
    let design = commands::load_design(&path).unwrap();
    let plan = commands::plan_design(&design, &machine, &job, &|_| {}).unwrap();
    Case { plan, machine, job }
}

fn rockered() -> &'static Case {
    static C: OnceLock<Case> = OnceLock::new();
    C.get_or_init(|| {
        let m = profile::generic_machine();
        let j = job::load_job(&fixture("job-rockered-blank.yaml"), &m).unwrap();
        case_with("shortboard.yaml", m, j)
    })
}

fn fixture(name: &str) -> std::path::PathBuf {
    std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
}

/// The roughing toolpath of setup `k` (0 or 1).
fn roughing_of(c: &Case, k: usize) -> &blanksmith::model::toolpath::Toolpath {
    c.plan.setups[k]
        .paths
        .iter()
        .find(|p| p.label == "roughing")
        .unwrap()
}

fn shortboard() -> &'static Case {
    static C: OnceLock<Case> = OnceLock::new();
    C.get_or_init(|| case("shortboard.yaml"))
}

/// Every line parses with the `gcode` crate (an independent parser from
/// crates.io), and the program keeps the order rules of a conservative
/// RS-274/NGC program (NIST IR 6556): units, absolute mode, plane and feed
/// mode before any motion; clearance height first; spindle on and a dwell
/// before the first feed move; a feed before the first G1; spindle stop
/// and program end last; only words of the subset.
#[test]
fn programs_parse_independently_and_keep_the_order_rules() {
    use gcode::{Code, Value};
    for p in &shortboard().plan.programs {
        let ast = gcode::parse(&p.text).unwrap_or_else(|e| panic!("{}: {e:?}", p.file_name));
        let lines_with_words = p.text.lines().filter(|l| !l.starts_with('(')).count();
        let blocks_with_words = ast
            .blocks
            .iter()
            .filter(|b| !b.codes.is_empty() || !b.word_addresses.is_empty())
            .count();
        assert_eq!(lines_with_words, blocks_with_words, "{}", p.file_name);
        let (mut units, mut absolute, mut plane, mut feed_mode) = (false, false, false, false);
        let (mut spindle, mut dwell, mut feed, mut moved) = (false, false, false, false);
        let mut mode = None;
        let mut codes: Vec<String> = Vec::new();
        for b in &ast.blocks {
            let mut words: Vec<(char, f32)> = b
                .word_addresses
                .iter()
                .filter_map(|w| match w.value {
                    Value::Literal(v) => Some((w.letter, v)),
                    _ => None,
                })
                .collect();
            for c in &b.codes {
                let (letter, n, args) = match c {
                    Code::General(g) => ('G', g.number.to_string(), &g.args),
                    Code::Miscellaneous(m) => ('M', m.number.to_string(), &m.args),
                    Code::ToolChange(t) => ('T', t.number.to_string(), &t.args),
                    other => panic!("{}: unexpected code {other:?}", p.file_name),
                };
                codes.push(format!("{letter}{n}"));
                for a in args {
                    if let Value::Literal(v) = a.value {
                        words.push((a.letter, v));
                    }
                }
                match (letter, n.as_str()) {
                    ('G', "20" | "21") => units = true,
                    ('G', "90") => absolute = true,
                    ('G', "17") => plane = true,
                    ('G', "94") => feed_mode = true,
                    ('G', "4") => dwell = spindle,
                    ('M', "3") => spindle = true,
                    ('G', m @ ("0" | "1" | "2" | "3")) => mode = Some(m.to_string()),
                    ('G', other) => panic!("{}: G{other} is outside the subset", p.file_name),
                    ('M', "5" | "30" | "6") | ('T', _) => {}
                    (l, other) => panic!("{}: {l}{other} is outside the subset", p.file_name),
                }
            }
            for (l, _) in &words {
                assert!("XYZIJFSP".contains(*l), "{}: word {l}", p.file_name);
            }
            if words.iter().any(|(l, _)| *l == 'F') {
                feed = true;
            }
            if words.iter().any(|(l, _)| "XYZ".contains(*l)) {
                assert!(
                    units && absolute && plane && feed_mode,
                    "{}: a move before the modes",
                    p.file_name
                );
                if !moved {
                    assert_eq!(
                        mode.as_deref(),
                        Some("0"),
                        "{}: first move is a rapid",
                        p.file_name
                    );
                    assert!(
                        words.iter().all(|(l, _)| *l == 'Z'),
                        "{}: first move goes straight up",
                        p.file_name
                    );
                    let z = words[0].1 as f64;
                    assert!(z >= 25.0 - 1e-3, "{}: first move to clearance", p.file_name);
                    moved = true;
                }
                if mode.as_deref() != Some("0") {
                    assert!(
                        spindle && dwell,
                        "{}: feed move before spindle and dwell",
                        p.file_name
                    );
                    assert!(feed, "{}: feed move before any F", p.file_name);
                }
            }
        }
        let n = codes.len();
        assert_eq!(&codes[n - 2..], ["M5", "M30"], "{}", p.file_name);
        // The cautions are in every program.
        for c in blanksmith::gcode::write::CAUTIONS {
            let cleaned = c.replace(['(', ')'], "-");
            assert!(
                p.text.contains(&cleaned),
                "{}: caution missing",
                p.file_name
            );
        }
    }
}

/// Every roughing tool position keeps the tool body at least the stock to
/// leave away from the board (sampled at the mesh vertices and every 2 mm
/// along every roughing move; the tool is a flat cylinder of its radius
/// from the tip up).
#[test]
fn roughing_leaves_at_least_the_stock_to_leave() {
    let c = shortboard();
    for (k, side) in [Side::Deck, Side::Bottom].into_iter().enumerate() {
        let part = &c.plan.placement.guard(side)[0];
        let rough = roughing_of(c, k);
        let r = rough.pass.tool.cutter.radius;
        let leave = rough.pass.leave;
        // Bucket the vertices in 10 mm squares.
        let cell = 10.0;
        let mut buckets: std::collections::HashMap<(i64, i64), Vec<[f64; 3]>> = Default::default();
        for v in &part.vertices {
            buckets
                .entry(((v[0] / cell).floor() as i64, (v[1] / cell).floor() as i64))
                .or_default()
                .push(*v);
        }
        let mut at = [0.0, 0.0, 25.0];
        let mut worst = f64::INFINITY;
        let mut checked = 0usize;
        for s in &rough.steps {
            let (to, cutting) = match *s {
                Step::Cut(p) | Step::Plunge(p) => (p, true),
                Step::Rapid(p) => (p, false),
                Step::Arc { to, .. } => (to, true),
            };
            if cutting {
                let len =
                    ((to[0] - at[0]).powi(2) + (to[1] - at[1]).powi(2) + (to[2] - at[2]).powi(2))
                        .sqrt();
                let n = (len / 2.0).ceil().max(1.0) as usize;
                for i in 0..=n {
                    let t = i as f64 / n as f64;
                    let q = [
                        at[0] + t * (to[0] - at[0]),
                        at[1] + t * (to[1] - at[1]),
                        at[2] + t * (to[2] - at[2]),
                    ];
                    let reach = ((r + leave) / cell).ceil() as i64 + 1;
                    let (bi, bj) = ((q[0] / cell).floor() as i64, (q[1] / cell).floor() as i64);
                    for di in -reach..=reach {
                        for dj in -reach..=reach {
                            for v in buckets.get(&(bi + di, bj + dj)).into_iter().flatten() {
                                let h = ((v[0] - q[0]).powi(2) + (v[1] - q[1]).powi(2)).sqrt();
                                let d = if v[2] >= q[2] {
                                    h - r
                                } else {
                                    ((h - r).max(0.0).powi(2) + (q[2] - v[2]).powi(2)).sqrt()
                                };
                                worst = worst.min(d);
                            }
                        }
                    }
                    checked += 1;
                }
            }
            at = to;
        }
        assert!(checked > 10_000, "{checked}");
        assert!(
            worst >= leave - 1e-9,
            "setup {}: tool within {worst:.3} mm of the board; leave is {leave}",
            k + 1
        );
    }
}

#[test]
fn roughing_enters_its_levels_no_steeper_than_the_ramp_angle() {
    // Every cut of the roughing that goes down is a ramp: its descent over
    // its run in plan is at most tan(ramp_angle) (trigonometry), and the
    // demo's levels 40 mm apart are entered at that angle, not shallower.
    let c = shortboard();
    let tan = c.job.roughing.ramp_angle.to_radians().tan();
    let mut steepest: f64 = 0.0;
    for k in 0..2 {
        let mut at = [0.0, 0.0, 25.0];
        for s in &roughing_of(c, k).steps {
            match *s {
                Step::Cut(p) => {
                    let run = (p[0] - at[0]).hypot(p[1] - at[1]);
                    let drop = at[2] - p[2];
                    if drop > 1e-9 {
                        assert!(
                            drop <= tan * run + 1e-6,
                            "setup {}: {drop} mm down over {run} mm",
                            k + 1
                        );
                        steepest = steepest.max(drop / run);
                    }
                    at = p;
                }
                Step::Rapid(p) | Step::Plunge(p) => at = p,
                Step::Arc { to, .. } => at = to,
            }
        }
    }
    assert!(
        steepest > 0.9 * tan,
        "steepest ramp {steepest} for tan {tan}"
    );
}

#[test]
fn the_registration_holes_map_onto_themselves_through_the_flip() {
    // A half turn about the block's X axis keeps points on its centre plane
    // in place (geometry); both holes are on it.
    let p = &shortboard().plan.placement;
    for h in &p.holes {
        let q = setup::flip([h[0], h[1], -10.0], &p.block);
        assert!((q[0] - h[0]).abs() < 1e-12 && (q[1] - h[1]).abs() < 1e-12);
    }
    // And the holes are drilled in setup 1 through the block into the spoilboard.
    let holes = shortboard().plan.setups[0]
        .paths
        .iter()
        .find(|p| p.label == "registration holes")
        .unwrap();
    let deepest = holes
        .steps
        .iter()
        .map(|s| match s {
            Step::Arc { to, .. } | Step::Cut(to) | Step::Plunge(to) | Step::Rapid(to) => to[2],
        })
        .fold(f64::INFINITY, f64::min);
    assert!((deepest - (-p.block.thickness - shortboard().job.pin_depth)).abs() < 1e-9);
}

#[test]
fn finishing_stepover_follows_the_slope_and_holds_the_scallop() {
    // Between two balls of radius r whose centres stand D apart the cusp
    // is r − √(r² − D²/4) above the face they rest on (circle geometry; on
    // a convex face less). The passes are spaced so that D, not the plan
    // spacing, is the scallop's stepover s = 2·√(2rh − h²): the full s
    // apart on the flat of the deck, closer where it rolls down to the rail.
    let c = shortboard();
    let fin = &c.job.finishing;
    let r = fin.pass.tool.cutter.radius;
    let s = blanksmith::toolpath::paths::scallop_stepover(r, fin.scallop);
    let p = c.plan.setups[0]
        .paths
        .iter()
        .find(|p| p.label == "finishing")
        .unwrap();
    let cuts: Vec<([f64; 3], [f64; 3])> = {
        let mut at = [0.0; 3];
        let mut v = Vec::new();
        for st in &p.steps {
            match *st {
                Step::Cut(q) => {
                    v.push((at, q));
                    at = q;
                }
                Step::Rapid(q) | Step::Plunge(q) => at = q,
                Step::Arc { to, .. } => at = to,
            }
        }
        v
    };
    let (x0, x1) = (c.plan.placement.x_range[0], c.plan.placement.x_range[1]);
    let (mut pairs, mut over, mut flat_gaps, mut narrowest) = (0, 0, Vec::new(), f64::INFINITY);
    let mut worst: f64 = 0.0;
    for n in 0..=60 {
        // Sections across the middle 60 % of the board.
        let x = x0 + (0.2 + 0.6 * n as f64 / 60.0) * (x1 - x0);
        let mut at: Vec<[f64; 2]> = cuts
            .iter()
            .filter(|(a, b)| (a[0] - x) * (b[0] - x) < 0.0)
            .map(|(a, b)| {
                let t = (x - a[0]) / (b[0] - a[0]);
                [a[1] + t * (b[1] - a[1]), a[2] + t * (b[2] - a[2])]
            })
            .collect();
        at.sort_by(|a, b| a[0].total_cmp(&b[0]));
        let centre = c.plan.placement.centre_y;
        for w in at.windows(2) {
            let (dy, dz) = (w[1][0] - w[0][0], w[1][1] - w[0][1]);
            if dy > 1.5 * s || dy < 0.5 {
                continue; // not neighbouring passes
            }
            pairs += 1;
            let d = dy.hypot(dz);
            let cusp = r - (r * r - d * d / 4.0).max(0.0).sqrt();
            worst = worst.max(cusp);
            // The chord tolerance along a pass may move a ball's height.
            if cusp > fin.scallop + 2.0 * fin.tolerance {
                over += 1;
            }
            narrowest = narrowest.min(dy);
            if (w[0][0] - centre).abs() < 60.0 && (w[1][0] - centre).abs() < 60.0 {
                flat_gaps.push(dy);
            }
        }
    }
    assert!(pairs > 1000, "{pairs}");
    // A few pairs where a pass bends at the end of its smoothing window.
    assert!(
        over * 100 <= pairs,
        "{over} of {pairs} over the scallop (worst {worst} mm)"
    );
    flat_gaps.sort_by(f64::total_cmp);
    let typical = flat_gaps[flat_gaps.len() / 2];
    assert!(
        (typical - s).abs() < 0.02 * s,
        "over the flat {typical} mm apart for s = {s}"
    );
    assert!(
        narrowest < 0.8 * s,
        "on the rolled rail the passes close up: {narrowest} for s = {s}"
    );
}

#[test]
fn rail_levels_hold_their_height() {
    // A Z-level pass runs at one height: every point of a level of the
    // rail band stands within 0.1 mm of the level (the crossings are found
    // to 0.01 mm; chords between them sag a little on the curved wall). A
    // crossing put at a grid node instead, up to 1 mm off, stood 0.4 mm
    // proud and dented the pass wherever it met a grid line at a slant.
    // The cuts are read in order and cut into stretches, each as long as
    // its points keep within 0.1 mm of its first: a level is a stretch of
    // 20 mm or more; the short ones are the links from one piece of a
    // level to the next (on the surface, at most three stepovers) or
    // dents. Over the floor (the rail's foot, the links along it are no
    // level) the short stretches are a small share of the way: on the
    // demo 1.4 m of 55.9 m. (Checked by hand: with the crossings moved to
    // the nearest grid node, 2.0 m of the way is left on levels.)
    let c = shortboard();
    let (mut level, mut other) = (0.0f64, 0.0f64);
    for k in 0..2 {
        let rails = c.plan.setups[k]
            .paths
            .iter()
            .find(|p| p.label == "rails")
            .unwrap();
        let floor = rails
            .steps
            .iter()
            .filter_map(|s| match s {
                Step::Cut(q) => Some(q[2]),
                _ => None,
            })
            .fold(f64::INFINITY, f64::min);
        // (height of the stretch's first point, its length in plan).
        let mut stretches: Vec<(f64, f64)> = Vec::new();
        let mut at: Option<[f64; 3]> = None;
        for st in &rails.steps {
            match *st {
                Step::Cut(q) => {
                    let step = at.map_or(0.0, |a| (q[0] - a[0]).hypot(q[1] - a[1]));
                    match stretches.last_mut() {
                        Some((z, len)) if at.is_some() && (q[2] - *z).abs() <= 0.1 => *len += step,
                        _ => stretches.push((q[2], 0.0)),
                    }
                    at = Some(q);
                }
                _ => at = None,
            }
        }
        for (z, len) in stretches {
            if z <= floor + 0.2 {
                continue;
            }
            if len >= 20.0 {
                level += len;
            } else {
                other += len;
            }
        }
    }
    assert!(level > 10_000.0, "{level} mm of levels");
    assert!(
        other <= 0.1 * (level + other),
        "{other:.0} mm of {:.0} mm of the rail passes off a level",
        level + other
    );
}

#[test]
fn same_input_same_programs() {
    let a = case("shortboard.yaml");
    let b = shortboard();
    for (p, q) in a.plan.programs.iter().zip(&b.plan.programs) {
        assert!(p.text == q.text, "{} differs between runs", p.file_name);
    }
    assert_eq!(a.plan.sheet, b.plan.sheet);
}

/// The project's own programs for every fixture board, simulated: no
/// collision, no move outside the machine, no cut with the spindle off, no
/// gouge beyond 0.05 mm, and the stock left within the scallop target
/// wherever the finishing ball can touch the design, down to the floor at
/// the foot of the rail. The rest is where a 12.7 mm ball cannot reach:
/// the fish's notch apex (a concave corner in plan, about 1 mm left) and
/// the squash corners (about 0.3 mm); the box, with no such corner, holds
/// the target everywhere. The longboard is longer than the shipped
/// machine, so it runs on the same machine with 4 m of X travel.
#[test]
fn own_programs_verify_clean_for_every_fixture() {
    // Every shipped board on the shipped machine: the longboard with its
    // shipped job (a bought block held in cradles; framed, it would run
    // past the machine's X travel).
    let longboard = {
        let m = profile::generic_machine();
        let j = job::load_job(&fixture("job-longboard.yaml"), &m).unwrap();
        case_with("longboard.yaml", m, j)
    };
    for (c, everywhere) in [
        (shortboard(), false),
        (&case("fish.yaml"), false),
        (&case("check-box.yaml"), true),
        (&longboard, false),
    ] {
        let v = commands::verify_plan(&c.plan, &c.machine, &c.job, &|_| {}).unwrap();
        assert!(!v.has_findings(), "{}", v.text());
        let g = v.gouge_max_mm.unwrap();
        assert!(g <= 0.05, "gouge {g}");
        // The shop's finish where the finishing balls reach (issue targets,
        // common practice, no source): 95 % under 0.25 mm and under the
        // scallop plus the chord tolerance (the cusps are sampled exactly at
        // cell centres, so no grid term), none over 0.5 mm.
        let target = c.job.finishing.scallop + c.job.finishing.tolerance;
        let p95 = v.leftover_p95_mm.unwrap();
        assert!(p95 <= target.min(0.25), "p95 {p95}");
        let reach = v.leftover_reachable_max_mm.unwrap();
        assert!(reach <= 0.5, "{}", v.text());
        if everywhere {
            assert!(v.leftover_max_mm.unwrap() <= target, "{}", v.text());
        }
        // What the ball cannot reach is told apart: the fish's swallow
        // notch is tighter than a 12.7 mm ball, and its apex is the most
        // stock left on that board.
        if c.plan.programs[0].file_name.contains("fish") {
            assert!(v.unreachable_mm2 > 0.0, "{}", v.text());
            assert_eq!(v.unreachable_at, v.leftover_at, "{}", v.text());
        }
        // The foam outside the outline is reported on its own, at its true
        // distance from the design: with the outline pass's side brought to
        // 0.1 mm of the rail's widest line, what is left along the parting
        // line is under 1 mm, a few strokes of a sanding block (common
        // practice, no source; the demo's is 0.67 mm at most, 0.40 mm at
        // the median, where the pass's margin left 1.62 mm and 0.77 mm); on
        // the fish the most is in the swallow's notch, at the stringer,
        // where the outline's cutter cannot enter the apex.
        // (The box leaves none at all.)
        let b = &c.plan.placement.block;
        if let Some(fin) = &v.parting_line {
            if c.plan.programs[0].file_name.contains("fish") {
                assert!((fin.at[1] - b.width / 2.0).abs() < 30.0, "{}", v.text());
            } else {
                assert!(fin.max_mm <= 1.0, "{}", v.text());
            }
        }
        let litres = b.length * b.width * b.thickness / 1e6;
        assert!(v.removed_volume_litres > 0.0 && v.removed_volume_litres < litres);
    }
}

/// No finishing move of the demo, the rail ball's included, stands below
/// its ball's drop-cutter height by more than 1.5 times the chord tolerance anywhere
/// along it (sampled every 0.25 mm): the drop-cutter height is where the
/// ball touches the part without cutting it, so a move below it digs in.
/// The bound is the planner's own: `refine` keeps each chord within half
/// the tolerance at its probes, then `simplify` may move it by the
/// tolerance. This covers the steps between passes as well as the passes
/// (before they were refined, one dug in 0.086 mm on the demo).
#[test]
fn no_finishing_move_digs_in() {
    use blanksmith::geom::dropcutter::DropCutter;
    let c = shortboard();
    let tol = c.job.finishing.tolerance;
    for (k, side) in [Side::Deck, Side::Bottom].into_iter().enumerate() {
        let guard = c.plan.placement.guard(side);
        let guard: Vec<_> = guard.iter().collect();
        let mut kinds = 0;
        for fin in c.plan.setups[k]
            .paths
            .iter()
            .filter(|p| matches!(p.label, "finishing" | "rails"))
        {
            kinds += 1;
            let dc = DropCutter::new(&guard, fin.pass.tool.cutter);
            let mut moves = Vec::new();
            let mut at = [0.0, 0.0, c.machine.clearance];
            for s in &fin.steps {
                let to = match *s {
                    Step::Rapid(p) | Step::Plunge(p) | Step::Cut(p) => p,
                    Step::Arc { to, .. } => to,
                };
                if let Step::Cut(_) = s {
                    moves.push((at, to));
                }
                at = to;
            }
            let worst = deepest(&dc, &moves);
            assert!(
                worst.0 <= 1.5 * tol,
                "setup {} {}: {worst:?}",
                k + 1,
                fin.label
            );
        }
        assert_eq!(kinds, 2);
    }
}

/// The most any of `moves` stands below `dc`'s drop height, sampled every
/// 0.25 mm, and where.
fn deepest(
    dc: &blanksmith::geom::dropcutter::DropCutter,
    moves: &[([f64; 3], [f64; 3])],
) -> (f64, [f64; 3]) {
    moves
        .par_iter()
        .map(|&(a, b)| {
            let len = ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt();
            let n = (len / 0.25).ceil().max(1.0) as usize;
            (0..=n)
                .filter_map(|i| {
                    let t = i as f64 / n as f64;
                    let q = [0, 1, 2].map(|c| a[c] + t * (b[c] - a[c]));
                    dc.drop(q[0], q[1]).map(|d| (d - q[2], q))
                })
                .fold(
                    (f64::NEG_INFINITY, [0.0; 3]),
                    |m, v| if v.0 > m.0 { v } else { m },
                )
        })
        .reduce(
            || (f64::NEG_INFINITY, [0.0; 3]),
            |m, v| if v.0 > m.0 { v } else { m },
        )
}

fn program_with(body: &str) -> Program {
    let p = &shortboard().plan.programs[0];
    let head: String = p
        .text
        .lines()
        .take_while(|l| !l.starts_with("G0 Z"))
        .map(|l| format!("{l}\n"))
        .collect();
    Program {
        text: format!("{head}G0 Z25.000\nT1\nS18000 M3\nG4 P5.0\n{body}G0 Z25.000\nM5\nM30\n"),
        ..p.clone()
    }
}

/// Each gate on the program text trips on a program that breaks it.
#[test]
fn each_safety_gate_trips() {
    let c = shortboard();
    let check = |body: &str| {
        let mut p = program_with(body);
        // A shorter tool, so the reach gate can trip inside the block.
        p.tool.reach = 100.0;
        program::check_text(&p, &c.machine, &c.plan.placement, &c.job)
    };
    assert!(
        check("G0 X10 Y10\nG1 Z-5 F2000\n").is_empty(),
        "a plain program passes: {:?}",
        check("G0 X10 Y10\nG1 Z-5 F2000\n")
    );
    let cases = [
        ("G0 X3100 Y10\n", "outside the travel"),
        ("G0 X10 Y10\nG1 Z-150 F2000\n", "below the table top"),
        ("G0 X10 Y10\nG1 Z-120 F2000\n", "reaches below its holder"),
        (
            "G0 X10 Y10\nG1 Z-5 F2000\nG1 X50 F20000\n",
            "beyond the machine",
        ),
        ("G0 X10 Y10\nG1 Z-5 F9000\n", "Z feed"),
        ("S30000 M3\nG0 X10 Y10\n", "spindle 30000"),
        ("M5\nG0 X10 Y10\nG1 Z-5 F2000\n", "spindle off"),
    ];
    for (body, what) in cases {
        let problems = check(body);
        assert!(
            problems.iter().any(|p| p.contains(what)),
            "{what}: {problems:?}"
        );
    }
    let mut p = program_with("G0 X10 Y10\n");
    p.text = p.text.replace("M30\n", "");
    assert!(
        program::check_text(&p, &c.machine, &c.plan.placement, &c.job)
            .iter()
            .any(|s| s.contains("M30"))
    );
}

#[test]
fn a_block_too_long_for_the_machine_is_refused_with_the_numbers() {
    let path = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("fixtures/longboard.yaml");
    let dir = tempfile::tempdir().unwrap();
    let e = commands::cut(
        &path,
        &commands::CutArgs {
            machine: None,
            job: None,
            stock_list: None,
        },
        dir.path(),
        &|_| {},
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("X travel is 3000.0 mm"), "{e}");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

#[test]
fn a_block_too_thin_is_refused_saying_by_how_much() {
    let m = profile::generic_machine();
    let j = job::job_from_str(
        "stock: {length: 2100, width: 650, thickness: 80}\n",
        "j.yaml",
        &m,
    )
    .unwrap();
    let c = shortboard();
    let e = setup::place(&c.plan.placement.part, None, &j)
        .unwrap_err()
        .to_string();
    assert!(e.contains("thickness") && e.contains("short"), "{e}");
}

/// The rockered blank's stations, as measured in the fixture (heights
/// above the table, lowest bottom point at 0): at each station the curves
/// are the measurements, so the board's points near a station must lie
/// between the measured bottom and deck, each at least the skin inside.
#[test]
fn a_rockered_blank_holds_the_board_between_its_measured_curves() {
    let c = rockered();
    let b = &c.plan.placement.block;
    let r = b.rocker.as_ref().expect("a rockered blank");
    assert_eq!(r.stations.len(), 11);
    // Fixture: highest deck 236 mm at the nose end, lowest bottom 0.
    assert!((b.thickness - 236.0).abs() < 1e-9);
    let skin = c.job.skin;
    let mut near = 0;
    for st in &r.stations {
        for v in &c.plan.placement.part.vertices {
            if (v[0] - st[0]).abs() > 0.5 {
                continue;
            }
            near += 1;
            // Setup-1 Z: table height minus the box's height.
            let (deck, bottom) = (st[2] - b.thickness, st[1] - b.thickness);
            assert!(
                v[2] <= deck - skin + 0.05,
                "over the deck at X {}: {v:?}",
                st[0]
            );
            assert!(
                v[2] >= bottom + skin - 0.05,
                "under the bottom at X {}: {v:?}",
                st[0]
            );
        }
    }
    assert!(near > 100, "{near}");
    // The reported least foam over and under is the same as found on
    // every point with the curves.
    let (mut over, mut under) = (f64::INFINITY, f64::INFINITY);
    for v in &c.plan.placement.part.vertices {
        let (d, u) = b.deck_bottom_z(v[0]);
        over = over.min(d - v[2]);
        under = under.min(v[2] - u);
    }
    let m = &c.plan.placement.margins;
    assert!((m.top.0 - over).abs() < 1e-9 && (m.bottom.0 - under).abs() < 1e-9);
    assert!(over >= skin && under >= skin);
}

/// Over a rockered blank the roughing tool crosses between cuts at the
/// clearance above the blank's own top beneath it, not above Z0: every
/// rapid across stands at least the clearance over the blank's top (with
/// its allowance), sampled here every millimetre under the tool's whole
/// width; and crossings over the low middle stand well below Z0 plus the
/// clearance, which is where the time goes. (The finishing balls link
/// lower still, over the stock as cut: the next test.)
#[test]
fn rockered_blank_rapids_clear_the_blank_beneath_them() {
    let c = rockered();
    let b = &c.plan.placement.block;
    let clear = c.machine.clearance;
    for (k, side) in [Side::Deck, Side::Bottom].into_iter().enumerate() {
        let (mut across, mut low) = (0, 0);
        for path in c.plan.setups[k]
            .paths
            .iter()
            .filter(|p| !matches!(p.label, "finishing" | "rails"))
        {
            let r = path.pass.tool.cutter.radius;
            let mut at = [0.0, 0.0, clear];
            for s in &path.steps {
                let to = match *s {
                    Step::Rapid(p) => {
                        if p[2] == at[2] && (p[0] != at[0] || p[1] != at[1]) {
                            across += 1;
                            let (x0, x1) = (at[0].min(p[0]) - r, at[0].max(p[0]) + r);
                            let n = (x1 - x0).ceil() as usize;
                            let top = (0..=n)
                                .map(|i| (x0 + i as f64).min(x1).clamp(0.0, b.length))
                                .map(|x| b.top_under(side == Side::Deck, x).0)
                                .fold(f64::NEG_INFINITY, f64::max)
                                + b.allowance();
                            assert!(
                                p[2] >= (top + clear).min(clear) - 1e-9,
                                "setup {} {}: rapid at Z {} over a top of {top}",
                                k + 1,
                                path.label,
                                p[2]
                            );
                            if p[2] < clear - 20.0 {
                                low += 1;
                            }
                        }
                        p
                    }
                    Step::Plunge(p) | Step::Cut(p) => p,
                    Step::Arc { to, .. } => to,
                };
                at = to;
            }
        }
        // Enough crossings to mean something (the bottom's roughing is
        // small where the ball takes the foam itself: 13 crossings).
        assert!(across > 10, "{across}");
        assert!(low * 2 > across, "setup {}: {low} of {across} low", k + 1);
    }
}

/// The finishing balls' links by rapid stay clear of the design: every
/// rapid across, sampled every half millimetre, stands at least
/// [`paths::LINK_CLEARANCE`] over the tool dropped on the board and its
/// tabs (drop-cutter, the planner's own kernel, which the simulation
/// checks independently); the simulation of the same programs finds no
/// rapid through stock (`own_programs_verify_clean_for_every_fixture`,
/// `rockered_blank_programs_verify_clean...`). Most links stay low: well
/// under the clearance plane, which is where the time was going.
#[test]
fn finishing_links_clear_the_design_and_stay_low() {
    use blanksmith::geom::dropcutter::DropCutter;
    use blanksmith::toolpath::paths;
    for c in [shortboard(), rockered()] {
        let clear = c.machine.clearance;
        for (k, side) in [Side::Deck, Side::Bottom].into_iter().enumerate() {
            let guard = c.plan.placement.guard(side);
            let (mut links, mut low) = (0, 0);
            for path in c.plan.setups[k]
                .paths
                .iter()
                .filter(|p| matches!(p.label, "finishing" | "rails"))
            {
                let dc = DropCutter::new(&guard.iter().collect::<Vec<_>>(), path.pass.tool.cutter);
                let mut at = [0.0, 0.0, clear];
                for s in &path.steps {
                    let to = match *s {
                        Step::Rapid(p) | Step::Plunge(p) | Step::Cut(p) => p,
                        Step::Arc { to, .. } => to,
                    };
                    if let Step::Rapid(p) = *s
                        && p[2] == at[2]
                        && (p[0] != at[0] || p[1] != at[1])
                    {
                        links += 1;
                        let len = (p[0] - at[0]).hypot(p[1] - at[1]);
                        let n = (len / 0.5).ceil() as usize;
                        for i in 0..=n {
                            let t = i as f64 / n as f64;
                            let (x, y) = (at[0] + t * (p[0] - at[0]), at[1] + t * (p[1] - at[1]));
                            if let Some(z) = dc.drop(x, y) {
                                assert!(
                                    p[2] >= z + paths::LINK_CLEARANCE - 1e-6,
                                    "setup {} {}: link at Z {} over the design at {z} (X {x} Y {y})",
                                    k + 1,
                                    path.label,
                                    p[2]
                                );
                            }
                        }
                        if p[2] < clear - 20.0 {
                            low += 1;
                        }
                    }
                    at = to;
                }
            }
            // Enough to mean something: passes up to 80 mm apart are
            // joined along the surface (`no_finishing_move_digs_in` checks
            // those ways), so a setup lifts a dozen times or so (13 on the
            // demo's deck, 19 on its bottom; over a hundred a side when
            // only passes three stepovers apart were).
            assert!(links > 5, "{links}");
            assert!(low * 2 > links, "setup {}: {low} of {links} low", k + 1);
        }
    }
}

/// Programs for a rockered blank simulate clean on that blank, the
/// roughing does not run its upper levels through the air over the
/// blank's low middle, and it leaves the foam over the middle, which the
/// finishing ball can take itself, to the ball.
#[test]
fn rockered_blank_programs_verify_clean_and_rough_only_where_there_is_foam() {
    let c = rockered();
    let v = commands::verify_plan(&c.plan, &c.machine, &c.job, &|_| {}).unwrap();
    assert!(!v.has_findings(), "{}", v.text());
    assert!(v.gouge_max_mm.unwrap() <= 0.05);
    let target = c.job.finishing.scallop + c.job.finishing.tolerance;
    assert!(
        v.leftover_p95_mm.unwrap() <= target.min(0.25),
        "{}",
        v.text()
    );
    assert!(v.leftover_reachable_max_mm.unwrap() <= 0.5, "{}", v.text());
    let b = &c.plan.placement.block;
    for (k, side) in [Side::Deck, Side::Bottom].into_iter().enumerate() {
        let rough = roughing_of(c, k);
        let r = rough.pass.tool.cutter.radius;
        let top = |x: f64| {
            [x - r, x, x + r]
                .iter()
                .map(|&x| b.top_under(side == Side::Deck, x).0 + b.allowance())
                .fold(f64::NEG_INFINITY, f64::max)
        };
        let mut at = [0.0, 0.0, 25.0];
        let (mut level_moves, mut in_air) = (0, 0);
        for s in &rough.steps {
            if let Step::Cut(p) = *s {
                // A move along a level (not the ramps, not the zero-length
                // step onto a piece's first point).
                if p[2] == at[2] && p != at {
                    level_moves += 1;
                    if top(at[0]) < p[2] && top(p[0]) < p[2] {
                        in_air += 1;
                    }
                }
                at = p;
            } else if let Step::Rapid(p) | Step::Plunge(p) = *s {
                at = p;
            }
        }
        // Enough moves to mean something (the bottom's roughing is small
        // where the ball takes the foam itself: 90 moves along a level
        // with the tool's full stepdown, 241 with 40 mm levels).
        assert!(level_moves > 50, "{level_moves}");
        assert_eq!(
            in_air,
            0,
            "setup {}: level moves wholly above the blank",
            k + 1
        );
    }
    // Over the board's middle the blank stands at most 81 + 5 - 63.5 =
    // 22.5 mm over the deck (the fixture's 81 mm tall middle, its 5 mm
    // allowance, the demo's 63.5 mm thickness): within the 2 in ball's
    // 25.4 mm radius, so the deck's roughing leaves that foam to the ball
    // and no roughing move comes within 100 mm of the middle.
    let (lo, hi) = c.plan.placement.part.bounding_box().unwrap();
    let mid = [(lo[0] + hi[0]) / 2.0, (lo[1] + hi[1]) / 2.0];
    let near_middle = roughing_of(c, 0)
        .steps
        .iter()
        .filter(|s| matches!(s, Step::Cut(p) if (p[0] - mid[0]).hypot(p[1] - mid[1]) < 100.0))
        .count();
    assert_eq!(
        near_middle, 0,
        "roughing over the middle, where the ball reaches"
    );
}

#[test]
fn a_rockered_blank_too_thin_is_refused_saying_by_how_much() {
    let m = profile::generic_machine();
    let j = job::load_job(&fixture("bad/job/rocker-too-little-room.yaml"), &m).unwrap();
    let e = setup::place(&shortboard().plan.placement.part, None, &j)
        .unwrap_err()
        .to_string();
    assert!(e.contains("rocker:") && e.contains("short"), "{e}");
}

/// Feed moves stay within the stock's height plus a small margin (2 mm
/// over the highest top within the tool's radius and a millimetre: the
/// outline starts 1 mm over the stock, and its last lap follows the parting
/// floor, which over a pre-rockered blank's concave stands about 1 mm clear
/// of the blank), so no
/// feed cuts air above the block and none rises to the rapid plane (the
/// outline spiral used to climb 25 mm over the block near the nose, where
/// the rocker lifts the floor); rapids across the stock clear its top (the
/// test above), so they pass over every feed.
#[test]
fn feeds_stay_in_the_stock() {
    for c in [shortboard(), rockered()] {
        let b = &c.plan.placement.block;
        for (k, side) in [Side::Deck, Side::Bottom].into_iter().enumerate() {
            for path in &c.plan.setups[k].paths {
                let reach = path.pass.tool.cutter.radius + 1.0;
                for s in &path.steps {
                    let p = match *s {
                        Step::Plunge(p) | Step::Cut(p) => p,
                        Step::Arc { to, .. } => to,
                        Step::Rapid(_) => continue,
                    };
                    let n = (2.0 * reach).ceil() as usize;
                    let top = (0..=n)
                        .map(|i| (p[0] - reach + i as f64).min(p[0] + reach))
                        .map(|x| b.top_under(side == Side::Deck, x.clamp(0.0, b.length)).0)
                        .fold(f64::NEG_INFINITY, f64::max)
                        + b.allowance();
                    assert!(
                        p[2] <= top + 2.0,
                        "setup {} {}: feed at Z {} over a stock top of {top} at X {}",
                        k + 1,
                        path.label,
                        p[2],
                        p[0]
                    );
                    assert!(p[2] < c.machine.clearance, "{}", path.label);
                }
            }
        }
    }
}

/// The shipped job spells out the defaults (its stock and table position
/// apart), and the fine preset differs from them only in its finish.
#[test]
fn shipped_jobs_are_the_defaults_and_the_fine_preset() {
    let m = profile::generic_machine();
    let default = job::default_job(&m).unwrap();
    let spelled = job::load_job(&fixture("job-shortboard.yaml"), &m).unwrap();
    assert_eq!(spelled.roughing, default.roughing);
    assert_eq!(spelled.outline, default.outline);
    assert_eq!(spelled.finishing, default.finishing);
    let fine = job::load_job(&fixture("job-fine.yaml"), &m).unwrap();
    assert_eq!(fine.roughing, default.roughing);
    assert_eq!(fine.finishing.scallop, 0.1);
    assert_eq!(fine.finishing.rails.as_ref().unwrap().scallop, 0.1);
    // The large ball on the deck and bottom, the small one on the rails.
    assert_eq!(default.finishing.pass.tool.cutter.radius, 25.4);
    assert_eq!(
        default
            .finishing
            .rails
            .as_ref()
            .unwrap()
            .pass
            .tool
            .cutter
            .radius,
        6.35
    );
}

/// The shipped job that spells out the defaults cuts the demo as the
/// defaults do: the block it names is the one the defaults size for the
/// demo, so the programs differ only by the table position's offset
/// (the same run time and path length, program by program). It once named
/// a thicker block, on which the 1/4 in end mill could not reach the fin
/// boxes, and the README's first job gave no programs.
#[test]
fn the_spelled_out_job_cuts_the_demo_as_the_defaults_do() {
    let m = profile::generic_machine();
    let spelled = job::load_job(&fixture("job-shortboard.yaml"), &m).unwrap();
    let c = case_with("shortboard.yaml", m, spelled);
    let d = shortboard();
    let (a, b) = (&c.plan.placement.block, &d.plan.placement.block);
    assert_eq!(
        [a.length, a.width, a.thickness],
        [b.length, b.width, b.thickness]
    );
    assert_eq!(c.plan.programs.len(), d.plan.programs.len());
    for (p, q) in c.plan.programs.iter().zip(&d.plan.programs) {
        assert_eq!(p.file_name, q.file_name);
        assert!((p.time_s - q.time_s).abs() < 1e-6, "{}", p.file_name);
        assert!((p.path_mm - q.path_mm).abs() < 1e-6, "{}", p.file_name);
    }
}

/// The setup sheet gives each program's time and their sum, so a shop can
/// book the machine: the sum is the programs' own times added (rounded to
/// the second once, at the end).
#[test]
fn the_setup_sheet_adds_up_the_programs_times() {
    let c = shortboard();
    for p in &c.plan.programs {
        let line = format!("{}: ", p.file_name);
        let row = c
            .plan
            .sheet
            .lines()
            .find(|l| l.trim_start().starts_with(&line));
        let row = row.unwrap_or_else(|| panic!("{} not listed", p.file_name));
        assert!(row.ends_with(&program::duration(p.time_s)), "{row}");
    }
    let total: f64 = c.plan.programs.iter().map(|p| p.time_s).sum();
    let want = format!("  in all: {} of cutting", program::duration(total));
    assert!(c.plan.sheet.contains(&want), "{want}\n{}", c.plan.sheet);
}

/// Finishing with a bull-nose (a 2 in cutter with a 1/4 in corner added to
/// the shipped router, the rails still the 1/2 in ball): the demo plans,
/// and the simulation of its programs (`verify`, its own height map, not
/// the planner's drop-cutter) finds nothing: no gouge beyond the
/// tolerance, 95 % of the stock left under the scallop plus the chord
/// tolerance. The drop-cutter's bull-nose is checked against brute force
/// and a closed form in `geom::dropcutter`, its stepover against closed
/// forms in `toolpath::paths`.
#[test]
fn a_bull_nose_finishes_the_demo_clean() {
    use blanksmith::model::machine::Cutter;
    let mut m = profile::generic_machine();
    let mut bull = m.tool(2).unwrap().clone();
    bull.id = 5;
    bull.cutter = Cutter::bull(50.8, 6.35);
    bull.label = "bull-nose for the flats".into();
    m.tools.push(bull.clone());
    let mut j = job::default_job(&m).unwrap();
    j.finishing.pass.tool = bull;
    let c = case_with("shortboard.yaml", m, j);
    let finishing = c.plan.setups[0]
        .paths
        .iter()
        .find(|p| p.label == "finishing")
        .unwrap();
    assert_eq!(finishing.pass.tool.id, 5);
    let v = commands::verify_plan(&c.plan, &c.machine, &c.job, &|_| {}).unwrap();
    assert!(!v.has_findings(), "{}", v.text());
    assert!(v.gouge_max_mm.unwrap() <= 0.05, "{}", v.text());
    let target = c.job.finishing.scallop + c.job.finishing.tolerance;
    assert!(
        v.leftover_p95_mm.unwrap() <= target.min(0.25),
        "{}",
        v.text()
    );
}
