//! The reader moves as LinuxCNC does: every program of a hand-written
//! corpus (`tests/rs274/*.ngc`, one construct or combination each) and the
//! programs cut for fixture boards are run through LinuxCNC's reference
//! interpreter `rs274` (Debian's `linuxcnc-uspace`), and its canonical
//! machining calls are held against the project's reader, call by call:
//! rapids, straight feeds, arcs (centre, direction, end, helix), dwells,
//! feed rates and spindle states.
//!
//! `rs274` prints positions with four decimals, so positions agree to half
//! a unit in that place (0.00005 mm, or 0.00005 in = 0.00127 mm in inch
//! mode), not closer: that is the limit of what it shows.
//!
//! Where `rs274` is not installed the tests say so and pass, except under
//! CI (`CI` set), where they fail: `.ci/run` installs it first.

use std::path::{Path, PathBuf};
use std::process::Command;

use blanksmith::gcode::read::{self, Event, Motion, ReadOptions};
use blanksmith::model::machine::Controller;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// `rs274` if it runs here; in CI its absence is a failure.
fn rs274() -> Option<PathBuf> {
    let found = std::env::var_os("PATH").and_then(|paths| {
        std::env::split_paths(&paths)
            .map(|d| d.join("rs274"))
            .find(|p| p.is_file())
    });
    if found.is_none() {
        assert!(
            std::env::var_os("CI").is_none(),
            "rs274 (linuxcnc-uspace) is needed in CI: .ci/run installs it"
        );
        eprintln!("rs274 is not installed: the comparison with LinuxCNC is not run here");
    }
    found
}

/// One canonical step, in mm and mm/min.
#[derive(Debug, Clone, PartialEq)]
enum Op {
    Rapid {
        to: [f64; 3],
    },
    Feed {
        to: [f64; 3],
        feed: f64,
        rpm: f64,
        on: bool,
    },
    /// An arc: `turn` is rs274's rotation (negative clockwise, its size the
    /// number of turns begun); ours carries the points it was cut into.
    Arc {
        to: [f64; 3],
        centre: [f64; 2],
        turn: i32,
        points: Vec<[f64; 3]>,
        feed: f64,
        rpm: f64,
        on: bool,
    },
    Dwell(f64),
    End,
}

/// rs274's canonical calls as [`Op`]s. Feed rates are held in mm/min as
/// set: LinuxCNC keeps the feed in effect across G20/G21 ("feed rate ...
/// work[s] properly after switching units", `convert_length_units` in its
/// interpreter), so a feed set in mm/min stays that speed in inch mode.
fn canon(text: &str) -> Vec<Op> {
    let mut ops = vec![];
    let mut unit = 1.0;
    let (mut feed, mut rpm, mut on) = (0.0, 0.0, false);
    let mut pos = [0.0; 3];
    for line in text.lines() {
        // "   12 N..... CALL(args)", or "N00010" where the line is numbered.
        let mut parts = line.trim_start().splitn(3, ' ');
        let (Some(_), Some(n), Some(call)) = (parts.next(), parts.next(), parts.next()) else {
            continue;
        };
        if !n.starts_with('N') {
            continue;
        }
        let call = call.trim();
        if call.starts_with("COMMENT") || call.starts_with("MESSAGE") {
            continue;
        }
        let (name, args) = call.split_once('(').unwrap_or((call, ")"));
        let args: Vec<f64> = args
            .trim_end_matches(')')
            .split([',', ' '])
            .filter_map(|a| a.trim().parse().ok())
            .collect();
        let p = |a: &[f64]| [a[0] * unit, a[1] * unit, a[2] * unit];
        match name {
            "USE_LENGTH_UNITS" => {
                unit = if call.contains("INCHES") { 25.4 } else { 1.0 };
            }
            "SET_FEED_RATE" => feed = args[0] * unit,
            "SET_SPINDLE_SPEED" => rpm = args[1],
            "START_SPINDLE_CLOCKWISE" | "START_SPINDLE_COUNTERCLOCKWISE" => on = true,
            "STOP_SPINDLE_TURNING" => on = false,
            "STRAIGHT_TRAVERSE" => {
                pos = p(&args);
                ops.push(Op::Rapid { to: pos });
            }
            "STRAIGHT_FEED" => {
                pos = p(&args);
                ops.push(Op::Feed {
                    to: pos,
                    feed,
                    rpm,
                    on,
                });
            }
            "ARC_FEED" => {
                // first end, second end, first centre, second centre,
                // rotation, axis end (the XY plane: X, Y, Z).
                pos = [args[0] * unit, args[1] * unit, args[5] * unit];
                ops.push(Op::Arc {
                    to: pos,
                    centre: [args[2] * unit, args[3] * unit],
                    turn: args[4] as i32,
                    points: vec![],
                    feed,
                    rpm,
                    on,
                });
            }
            "DWELL" => ops.push(Op::Dwell(args[0])),
            "PROGRAM_END" => ops.push(Op::End),
            _ => {}
        }
    }
    let _ = pos;
    ops
}

/// The project's reader's events as [`Op`]s: an arc's pieces (one line's
/// run of arc moves) gathered into one.
fn ours(text: &str, controller: Controller) -> Vec<Op> {
    let mut ops: Vec<Op> = vec![];
    let mut arc_line = None;
    let options = ReadOptions {
        controller,
        ..ReadOptions::default()
    };
    read::read(text.as_bytes(), "program", options, |e| match e {
        Event::Move {
            line,
            motion,
            to,
            feed,
            spindle,
            spindle_on,
            ..
        } => {
            let (rpm, on) = (spindle, spindle_on);
            match motion {
                Motion::Rapid => ops.push(Op::Rapid { to }),
                Motion::Linear => ops.push(Op::Feed { to, feed, rpm, on }),
                Motion::Arc => {
                    if arc_line == Some(line)
                        && let Some(Op::Arc {
                            to: end, points, ..
                        }) = ops.last_mut()
                    {
                        *end = to;
                        points.push(to);
                    } else {
                        ops.push(Op::Arc {
                            to,
                            centre: [f64::NAN; 2],
                            turn: 0,
                            points: vec![to],
                            feed,
                            rpm,
                            on,
                        });
                    }
                }
            }
            arc_line = (motion == Motion::Arc).then_some(line);
        }
        Event::Dwell { seconds, .. } => {
            arc_line = None;
            ops.push(Op::Dwell(seconds));
        }
        Event::End { .. } => {
            arc_line = None;
            ops.push(Op::End);
        }
        _ => {}
    })
    .unwrap_or_else(|e| panic!("the reader refused a program rs274 accepts: {e}"));
    ops
}

fn close3(a: [f64; 3], b: [f64; 3], tol: f64) -> bool {
    (0..3).all(|i| (a[i] - b[i]).abs() <= tol)
}

/// The angle swept from `a` to `b` about `c` in the direction of `turn`,
/// with its extra whole turns (rs274's rotation: ±1 under one turn).
fn sweep(a: [f64; 3], b: [f64; 3], c: [f64; 2], turn: i32) -> f64 {
    use std::f64::consts::TAU;
    let a0 = (a[1] - c[1]).atan2(a[0] - c[0]);
    let a1 = (b[1] - c[1]).atan2(b[0] - c[0]);
    let mut s = if turn < 0 { a0 - a1 } else { a1 - a0 };
    while s <= 1e-9 {
        s += TAU;
    }
    while s > TAU + 1e-9 {
        s -= TAU;
    }
    s += (turn.unsigned_abs() as f64 - 1.0) * TAU;
    if turn < 0 { -s } else { s }
}

/// Holds our ops against rs274's, naming the first difference.
fn compare(name: &str, ours: &[Op], theirs: &[Op]) -> Result<(), String> {
    // Half a unit in rs274's fourth decimal, in inches where any inch
    // position is printed; a hair more for the arithmetic.
    let tol = 0.00005 * 25.4 + 1e-9;
    let mut pos = [0.0; 3];
    for (k, (a, b)) in ours.iter().zip(theirs).enumerate() {
        let at = format!("{name}, canonical step {}: ours {a:?}, rs274 {b:?}", k + 1);
        let spindle = |(ra, oa): (f64, bool), (rb, ob): (f64, bool)| {
            oa == ob && (!oa || (ra - rb).abs() < 1e-3)
        };
        let ok = match (a, b) {
            (Op::Rapid { to: x }, Op::Rapid { to: y }) => close3(*x, *y, tol),
            (
                Op::Feed {
                    to: x,
                    feed: fa,
                    rpm: ra,
                    on: oa,
                },
                Op::Feed {
                    to: y,
                    feed: fb,
                    rpm: rb,
                    on: ob,
                },
            ) => {
                close3(*x, *y, tol)
                    && (fa - fb).abs() <= 1e-6 * fb.max(1.0)
                    && spindle((*ra, *oa), (*rb, *ob))
            }
            (
                Op::Arc {
                    to: x,
                    points,
                    feed: fa,
                    rpm: ra,
                    on: oa,
                    ..
                },
                Op::Arc {
                    to: y,
                    centre,
                    turn,
                    feed: fb,
                    rpm: rb,
                    on: ob,
                    ..
                },
            ) => {
                if !(close3(*x, *y, tol)
                    && (fa - fb).abs() <= 1e-6 * fb.max(1.0)
                    && spindle((*ra, *oa), (*rb, *ob)))
                {
                    return Err(at);
                }
                // Every point of ours on rs274's helix: at its radius, on
                // the same side of the turn, at the height the angle swept
                // so far gives.
                let r = ((pos[0] - centre[0]).powi(2) + (pos[1] - centre[1]).powi(2)).sqrt();
                let total = sweep(pos, *y, *centre, *turn);
                let mut swept = 0.0;
                let mut prev = pos;
                for p in points {
                    let rp = ((p[0] - centre[0]).powi(2) + (p[1] - centre[1]).powi(2)).sqrt();
                    let step = sweep(prev, *p, *centre, turn.signum());
                    // A piece is under half a turn: take the short way.
                    let step = if step.abs() > std::f64::consts::PI && *p != *y {
                        return Err(format!("{at}: a piece sweeps {step} rad"));
                    } else {
                        step
                    };
                    swept += step;
                    let z = pos[2] + (y[2] - pos[2]) * (swept / total);
                    if (rp - r).abs() > 2.0 * tol || (p[2] - z).abs() > 2.0 * tol {
                        return Err(format!(
                            "{at}: point {p:?} is {rp} from the centre (rs274's radius {r}), \
                             z {} against {z}",
                            p[2]
                        ));
                    }
                    prev = *p;
                }
                // The whole sweep: a piece's angle is good to the radius'
                // rounding over the radius.
                if (swept - total).abs() > 1e-3_f64.max(4.0 * tol / r.max(1e-9)) {
                    return Err(format!("{at}: ours sweeps {swept} rad, rs274 {total} rad"));
                }
                true
            }
            (Op::Dwell(x), Op::Dwell(y)) => (x - y).abs() <= 1e-4,
            (Op::End, Op::End) => true,
            _ => false,
        };
        if !ok {
            return Err(at);
        }
        pos = match b {
            Op::Rapid { to } | Op::Feed { to, .. } | Op::Arc { to, .. } => *to,
            _ => pos,
        };
    }
    if ours.len() != theirs.len() {
        let k = ours.len().min(theirs.len());
        return Err(format!(
            "{name}: ours has {} canonical steps, rs274 {} (first unmatched: ours {:?}, rs274 {:?})",
            ours.len(),
            theirs.len(),
            ours.get(k),
            theirs.get(k)
        ));
    }
    Ok(())
}

/// Runs rs274 on `program` and returns its canonical calls.
fn run_rs274(rs274: &Path, program: &Path, work: &Path) -> String {
    let table = work.join("tool.tbl");
    if !table.exists() {
        // The shipped router's tools (fixtures/machine-gantry-3000.yaml).
        std::fs::write(
            &table,
            "T1 P1 D19.05 Z0 ;\nT2 P2 D50.8 Z0 ;\nT3 P3 D12.7 Z0 ;\nT4 P4 D6.35 Z0 ;\n",
        )
        .unwrap();
    }
    let out = work.join("canon.txt");
    let o = Command::new(rs274)
        .arg("-t")
        .arg(&table)
        .arg("-g")
        .arg(program)
        .arg(&out)
        .output()
        .expect("rs274 runs");
    let log = String::from_utf8_lossy(&o.stdout).into_owned() + &String::from_utf8_lossy(&o.stderr);
    assert!(
        o.status.success() && !log.contains("error"),
        "rs274 refused {}:\n{log}",
        program.display()
    );
    std::fs::read_to_string(&out).unwrap()
}

fn check(
    rs274: &Path,
    program: &Path,
    controller: Controller,
    work: &Path,
) -> Result<usize, String> {
    let text = std::fs::read_to_string(program).unwrap();
    let theirs = canon(&run_rs274(rs274, program, work));
    let ours = ours(&text, controller);
    compare(&program.display().to_string(), &ours, &theirs)?;
    Ok(theirs.len())
}

/// Every hand-written program of the corpus, each covering one construct
/// (see the comment on its first line): the same canonical steps.
#[test]
fn the_corpus_moves_as_rs274_moves() {
    let Some(rs274) = rs274() else { return };
    let work = tempfile::tempdir().unwrap();
    let mut programs: Vec<PathBuf> = std::fs::read_dir(root().join("tests/rs274"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "ngc"))
        .collect();
    programs.sort();
    assert!(programs.len() >= 30, "the corpus holds {}", programs.len());
    let mut failures = vec![];
    for p in &programs {
        if let Err(e) = check(&rs274, p, Controller::LinuxCnc, work.path()) {
            failures.push(e);
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The comparison can fail: a program read one way and run another (a
/// dwell's axis word dropped, an arc the other way round, a spindle left
/// turning through a tool change) is caught.
#[test]
fn a_different_motion_is_caught() {
    let base = "G21 G90\nG0 X10 Y10 Z50\nM3 S1000\nG4 P1 Z-40\nG1 X20 F300\nG2 X30 Y10 I5 J0\nT2 M6\nG1 X40\nM30\n";
    // What rs274 would print for `base`: our reading, with the arc's
    // centre and direction as rs274 gives them.
    let mut theirs = ours(base, Controller::LinuxCnc);
    for op in theirs.iter_mut() {
        if let Op::Arc { centre, turn, .. } = op {
            *centre = [25.0, 10.0];
            *turn = -1;
        }
    }
    compare("same", &ours(base, Controller::LinuxCnc), &theirs).unwrap();
    let mut dropped = theirs.clone();
    dropped.remove(2);
    assert!(compare("dropped", &ours(base, Controller::LinuxCnc), &dropped).is_err());
    for (from, to) in [
        ("G2 X30", "G3 X30"),
        ("G4 P1", "G4 P2"),
        ("T2 M6", "T2 M6 M3"),
        ("G4 P1 Z-40", "G4 P1"),
    ] {
        let changed = ours(&base.replace(from, to), Controller::LinuxCnc);
        assert!(
            compare(from, &changed, &theirs).is_err(),
            "{from} -> {to} was not caught"
        );
    }
}

/// Every program cut for fixture boards: those `.ci/rs274-check` cut
/// (named in `BLANKSMITH_RS274_PROGRAMS`, a folder of `<dialect>-…`
/// folders), or else the check box and the fish cut here in LinuxCNC's
/// dialect.
#[test]
fn fixture_programs_move_as_rs274_moves() {
    let Some(rs274) = rs274() else { return };
    let work = tempfile::tempdir().unwrap();
    let mut programs: Vec<(PathBuf, Controller)> = vec![];
    if let Some(dir) = std::env::var_os("BLANKSMITH_RS274_PROGRAMS") {
        for d in std::fs::read_dir(dir).unwrap() {
            let d = d.unwrap().path();
            let Some(name) = d.file_name().and_then(|n| n.to_str()) else {
                continue;
            };
            let controller = match name.split('-').next() {
                Some("linuxcnc") => Controller::LinuxCnc,
                Some("grbl") => Controller::Grbl,
                Some("mach") => Controller::Mach,
                _ => continue,
            };
            for p in std::fs::read_dir(&d).unwrap() {
                let p = p.unwrap().path();
                if p.extension().is_some_and(|e| e == "nc") {
                    programs.push((p, controller));
                }
            }
        }
    } else {
        for board in ["check-box", "fish"] {
            let out = work.path().join(board);
            let o = Command::new(env!("CARGO_BIN_EXE_blanksmith"))
                .args([
                    "cut",
                    &format!("fixtures/{board}.yaml"),
                    "--machine",
                    "fixtures/machine-gantry-3000.yaml",
                    "-o",
                ])
                .arg(&out)
                .arg("--quiet")
                .current_dir(root())
                .output()
                .unwrap();
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            for p in std::fs::read_dir(&out).unwrap() {
                let p = p.unwrap().path();
                if p.extension().is_some_and(|e| e == "nc") {
                    programs.push((p, Controller::LinuxCnc));
                }
            }
        }
    }
    programs.sort_by(|a, b| a.0.cmp(&b.0));
    assert!(!programs.is_empty());
    let mut steps = 0;
    for (p, c) in &programs {
        steps += check(&rs274, p, *c, work.path()).unwrap_or_else(|e| panic!("{e}"));
    }
    eprintln!(
        "{} programs, {steps} canonical steps, as rs274 reads them",
        programs.len()
    );
}
