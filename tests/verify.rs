//! The simulation against elementary geometry, and hand-written programs
//! that break the rules, each caught with its line.

use std::f64::consts::PI;
use std::path::{Path, PathBuf};
use std::process::Command;

use blanksmith::model::job::Block;
use blanksmith::model::machine::Cutter;
use blanksmith::model::mesh::Mesh;
use blanksmith::profiles::machine as profile;
use blanksmith::toolpath::setup::Side;
use blanksmith::verify::report::Verification;
use blanksmith::verify::setting::{ProgramSource, Setting, VerifyOptions};
use blanksmith::verify::simulate as verify;

fn run(
    programs: &[&str],
    block: Block,
    tool: Cutter,
    design: Option<&Mesh>,
    cell: f64,
) -> Verification {
    let m = profile::generic_machine();
    let sources = programs
        .iter()
        .enumerate()
        .map(|(k, t)| ProgramSource {
            name: format!("p{k}.nc"),
            side: if k == 0 { Side::Deck } else { Side::Bottom },
            reader: Box::new(t.as_bytes()),
            loaded: None,
        })
        .collect();
    let setting = Setting {
        // Hand-written programs zeroed on the turned block's top.
        table_zero_after_flip: false,
        machine: &m,
        block,
        table_position: [0.0, 0.0],
        default_tool: Some(tool),
        design,
        keep: vec![],
        floor: None,
        pockets: vec![],
        prepared: [None, None],
    };
    verify::verify(
        sources,
        &setting,
        VerifyOptions {
            cell,
            ..Default::default()
        },
        &|_| {},
    )
    .unwrap()
}

const HEAD: &str = "G21 G90 G17 G94\nG0 Z10\nS18000 M3\nG4 P2\n";
const TAIL: &str = "G0 Z10\nM5\nM30\n";

fn block() -> Block {
    Block::flat(300.0, 200.0, 50.0)
}

#[test]
fn flat_pocket_removes_its_area_times_depth() {
    // A 10 mm flat end mill zig-zags its centre over [50, 250] x [50, 150]
    // at 4 mm stepover, 6 mm deep: it clears the rectangle grown by the
    // radius with round corners, area (200 + 10)(100 + 10) − (4 − π)·5²
    // (elementary geometry), times the depth.
    let (d, r) = (6.0, 5.0);
    let mut p = String::from(HEAD);
    p.push_str("G0 X50 Y50\nG1 Z-6 F1000\n");
    let mut y = 50.0;
    let mut forward = true;
    while y <= 150.0 + 1e-9 {
        p.push_str(&format!(
            "G1 X{} Y{y} F3000\n",
            if forward { 250 } else { 50 }
        ));
        forward = !forward;
        if y + 4.0 <= 150.0 + 1e-9 {
            p.push_str(&format!("G1 Y{}\n", y + 4.0));
        }
        y += 4.0;
    }
    p.push_str(TAIL);
    let v = run(&[&p], block(), Cutter::flat(10.0), None, 0.25);
    let area = 210.0 * 110.0 - (4.0 - PI) * r * r;
    let want = area * d / 1e6;
    // Grid error: at most half a cell of the boundary strip, perimeter 640 mm.
    let bound = 640.0 * 0.125 * d / 1e6;
    assert!(
        (v.removed_volume_litres - want).abs() <= bound,
        "{} vs {want} ± {bound}",
        v.removed_volume_litres
    );
    assert!(
        v.collisions.is_empty() && v.spindle_off_cuts.is_empty() && v.out_of_envelope.is_empty()
    );
}

#[test]
fn ball_slot_removes_half_cylinder_and_hemisphere() {
    // Ball radius R plunged to depth R and moved L: πR²L/2 + (2/3)πR³
    // (a half-cylinder and a quarter-sphere at each end; geometry).
    let (r, l) = (6.35, 150.0);
    let p = format!(
        "{HEAD}G0 X75 Y100\nG1 Z-{r} F500\nG1 X{} F2000\n{TAIL}",
        75.0 + l
    );
    let v = run(&[&p], block(), Cutter::ball(2.0 * r), None, 0.25);
    let want = (PI * r * r * l / 2.0 + 2.0 / 3.0 * PI * r.powi(3)) / 1e6;
    assert!(
        (v.removed_volume_litres - want).abs() / want < 0.01,
        "{} vs {want}",
        v.removed_volume_litres
    );
}

#[test]
fn g2_semicircle_cuts_a_half_annulus_with_end_caps() {
    // Flat radius r along a semicircle of radius ρ: a half-annulus
    // π((ρ+r)² − (ρ−r)²)/2 plus a half-disc cap at each end, πr² in all.
    let (rho, r, d) = (50.0, 5.0, 4.0);
    let p = format!("{HEAD}G0 X200 Y100\nG1 Z-{d} F500\nG2 X100 Y100 I-50 J0 F2000\n{TAIL}");
    let v = run(&[&p], block(), Cutter::flat(2.0 * r), None, 0.25);
    let area = PI * ((rho + r).powi(2) - (rho - r).powi(2)) / 2.0 + PI * r * r;
    let want = area * d / 1e6;
    assert!(
        (v.removed_volume_litres - want).abs() / want < 0.01,
        "{} vs {want}",
        v.removed_volume_litres
    );
}

#[test]
fn a_rapid_through_stock_is_a_collision_on_its_line() {
    let p = format!("{HEAD}G0 X50 Y50\nG0 Z-3\nG0 X150\n{TAIL}");
    let v = run(&[&p], block(), Cutter::flat(10.0), None, 0.5);
    assert!(v.has_findings());
    assert_eq!(v.collisions[0].line, 6, "{:?}", v.collisions);
}

/// A clean verdict says what it covers: without a design there is no
/// gouge figure, so it does not claim there is no gouge.
#[test]
fn a_clean_verdict_without_a_design_does_not_claim_no_gouge() {
    let p = format!("{HEAD}G0 X50 Y50\nG1 Z-3 F500\nG1 X150\n{TAIL}");
    let v = run(&[&p], block(), Cutter::flat(10.0), None, 0.5);
    assert!(!v.has_findings(), "{}", v.text());
    assert!(v.gouge_max_mm.is_none());
    assert!(v.text().contains("gouges not checked"), "{}", v.text());
    assert!(
        !v.text().contains("no gouge beyond tolerance"),
        "{}",
        v.text()
    );
}

/// As LinuxCNC's `rs274` runs them (its canonical output, checked by
/// hand: `../shared/linuxcnc/README.md`): `G4 P1 Z-40` dwells, then moves
/// in the modal G0; `M3` with no S starts the spindle at 0.
#[test]
fn constructs_move_as_linuxcnc_moves_them() {
    // The rapid 40 mm into the 50 mm block is made, and caught on its line.
    let p = format!("{HEAD}G0 X50 Y50\nG4 P1 Z-40\n{TAIL}");
    let v = run(&[&p], block(), Cutter::flat(10.0), None, 0.5);
    assert!(v.collisions.iter().any(|f| f.line == 6), "{}", v.text());
    // M3 with no S: a cut at speed 0 is a cut with the spindle stopped.
    let p =
        "G21 G90 G17 G94\nG0 Z10\nM3\nG4 P2\nG0 X50 Y50\nG1 Z-20 F500\nG1 X100\nG0 Z10\nM5\nM30\n";
    let v = run(&[p], block(), Cutter::flat(10.0), None, 0.5);
    assert!(
        v.spindle_off_cuts.iter().any(|f| f.line == 6),
        "{}",
        v.text()
    );
}

/// A program with no end (a file cut short) or no moves is not clean.
#[test]
fn a_program_without_its_end_or_moves_is_a_finding() {
    let p = format!("{HEAD}G0 X50 Y50\nG1 Z-3 F500\nG1 X150\n");
    let v = run(&[&p], block(), Cutter::flat(10.0), None, 0.5);
    assert!(
        v.has_findings() && v.text().contains("no M2/M30 end"),
        "{}",
        v.text()
    );
    let v = run(&["(nothing)\n"], block(), Cutter::flat(10.0), None, 0.5);
    assert!(
        v.has_findings() && v.text().contains("makes no move"),
        "{}",
        v.text()
    );
}

#[test]
fn cutting_with_the_spindle_off_is_caught_on_its_line() {
    let p = "G21 G90\nG0 Z10\nG0 X50 Y50\nG1 Z-2 F500\nG1 X100\nM30\n";
    let v = run(&[p], block(), Cutter::flat(10.0), None, 0.5);
    assert_eq!(v.spindle_off_cuts[0].line, 4);
}

#[test]
fn leaving_the_envelope_is_caught_on_its_line() {
    let p = format!("{HEAD}G0 X3500 Y50\n{TAIL}");
    let v = run(&[&p], block(), Cutter::flat(10.0), None, 0.5);
    assert_eq!(v.out_of_envelope[0].line, 5);
    // Below the table top (block 50 mm, spoilboard allowance 4 mm).
    let p = format!("{HEAD}G0 X10 Y10\nG1 Z-60 F500\n{TAIL}");
    let v = run(&[&p], block(), Cutter::flat(10.0), None, 0.5);
    assert!(
        v.out_of_envelope
            .iter()
            .any(|f| f.line == 6 && f.what.contains("table")),
        "{:?}",
        v.out_of_envelope
    );
}

#[test]
fn a_gouge_into_the_design_is_measured_where_it_is() {
    // The design: a 100 x 100 x 20 mm block whose top is 10 mm under the
    // stock top. A flat tool cuts 2 mm into it over X 100..150: a gouge of 2 mm.
    let design = Mesh::cuboid([100.0, 50.0, -30.0], [100.0, 100.0, 20.0]);
    let p = format!("{HEAD}G0 X0 Y100\nG1 Z-12 F500\nG1 X150 F2000\n{TAIL}");
    let v = run(&[&p], block(), Cutter::flat(10.0), Some(&design), 0.5);
    let g = v.gouge_max_mm.unwrap();
    assert!((g - 2.0).abs() < 1e-4, "{g}");
    let at = v.gouge_at.unwrap();
    assert!(
        at[0] >= 100.0 && at[0] <= 155.0 && (at[1] - 100.0).abs() <= 5.0,
        "{at:?}"
    );
    assert!(v.has_findings());
    // Leftover: elsewhere 10 mm of stock over the design top.
    assert!((v.leftover_max_mm.unwrap() - 10.0).abs() < 1e-4);
}

#[test]
fn the_flip_turns_the_block_over_about_x() {
    // Setup 1 cuts a 5 mm slot near the front edge; after the flip, setup 2
    // cuts through at the same X near the back edge (Y' = W − Y). Between
    // them they remove both slots and nothing is cut twice.
    let p1 = format!("{HEAD}G0 X50 Y20\nG1 Z-5 F500\nG1 X250 F2000\n{TAIL}");
    let p2 = format!("{HEAD}G0 X50 Y20\nG1 Z-5 F500\nG1 X250 F2000\n{TAIL}");
    let v = run(&[&p1, &p2], block(), Cutter::flat(10.0), None, 0.25);
    let one = (200.0 * 10.0 + PI * 25.0) * 5.0 / 1e6;
    assert!(
        (v.removed_volume_litres - 2.0 * one).abs() / one < 0.01,
        "{} vs {}",
        v.removed_volume_litres,
        2.0 * one
    );
    assert_eq!(v.programs[1].setup, 2);
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn blanksmith(args: &[&str], cwd: &Path) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_blanksmith"))
        .args(args)
        .current_dir(cwd)
        .output()
        .unwrap()
}

#[test]
fn verify_command_exit_codes_and_json_keys() {
    let dir = tempfile::tempdir().unwrap();
    let machine = root().join("fixtures/machine-gantry-3000.yaml");
    let ok = dir.path().join("ok.nc");
    std::fs::write(
        &ok,
        format!("{HEAD}G0 X50 Y50\nG1 Z-3 F500\nG1 X100 F2000\n{TAIL}"),
    )
    .unwrap();
    let bad = dir.path().join("bad.nc");
    std::fs::write(&bad, format!("{HEAD}G0 X50 Y50\nG0 Z-3\nG0 X150\n{TAIL}")).unwrap();
    let broken = dir.path().join("broken.nc");
    std::fs::write(&broken, "G21\nG1 X10\n").unwrap();
    let m = machine.to_str().unwrap();
    let o = blanksmith(
        &[
            "verify",
            "ok.nc",
            "--machine",
            m,
            "--stock",
            "300x200x50mm",
            "--tool",
            "flat:10mm",
            "--json",
        ],
        dir.path(),
    );
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for k in [
        "collisions",
        "out_of_envelope",
        "spindle_off_cuts",
        "gouge_max_mm",
        "leftover_max_mm",
        "leftover_p95_mm",
        "removed_volume_litres",
        "time_estimate_s",
        "programs",
    ] {
        assert!(j.get(k).is_some(), "{k}");
    }
    let o = blanksmith(
        &[
            "verify",
            "bad.nc",
            "--machine",
            m,
            "--stock",
            "300x200x50mm",
            "--tool",
            "flat:10mm",
        ],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(1));
    assert!(
        String::from_utf8_lossy(&o.stdout).contains("bad.nc:6: rapid"),
        "{}",
        String::from_utf8_lossy(&o.stdout)
    );
    let o = blanksmith(
        &[
            "verify",
            "broken.nc",
            "--machine",
            m,
            "--stock",
            "300x200x50mm",
            "--tool",
            "flat:10mm",
        ],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(2));
    let e = String::from_utf8_lossy(&o.stderr);
    assert!(
        e.contains("broken.nc:2:") && e.contains("feed") && !e.contains("panicked"),
        "{e}"
    );
    let o = blanksmith(
        &["verify", "ok.nc", "--machine", m, "--stock", "300x200x50mm"],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(2), "no tool known");
}

/// Reach: a ball of radius R = 6.35 mm run in parallel passes 1 mm apart
/// over a block with a groove 6 mm wide and 5 mm deep cannot reach the
/// groove's floor. Resting on the groove's two edges, 3 mm either side of
/// its centre, its tip stays R - √(R² - 3²) below the tops (Pythagoras),
/// so 5 - (R - √(R² - 9)) = 4.25 mm is left on the floor, out of the
/// ball's reach; on the tops the passes leave cusps of
/// R - √(R² - 0.5²) = 0.020 mm (standard scallop geometry).
#[test]
fn a_groove_narrower_than_the_ball_is_reported_out_of_reach() {
    let r: f64 = 6.35;
    // Tops at the block's top face (Z 0), the groove's floor at Z -5.
    let mut design = Mesh::cuboid([10.0, 15.0, -35.0], [80.0, 30.0, 30.0]);
    for y0 in [15.0, 33.0] {
        let c = Mesh::cuboid([10.0, y0, -5.5], [80.0, 12.0, 5.5]);
        let base = design.vertices.len() as u32;
        design.vertices.extend(c.vertices);
        design
            .triangles
            .extend(c.triangles.iter().map(|t| t.map(|v| v + base)));
    }
    // The passes' heights from the drop-cutter (its own tests hold it to
    // the geometry); the design is the same all along X.
    let dc = blanksmith::geom::dropcutter::DropCutter::new(&[&design], Cutter::ball(2.0 * r));
    let mut g = String::from(HEAD);
    for k in 0..=30 {
        let y = 15.0 + k as f64;
        let z = dc.drop(50.0, y).unwrap();
        g.push_str(&format!(
            "G0 X10 Y{y:.3}\nG0 Z{:.3}\nG1 Z{z:.3} F1000\nG1 X90 F2000\nG0 Z10\n",
            z + 2.0
        ));
    }
    g.push_str(TAIL);
    let block = Block::flat(100.0, 60.0, 40.0);
    let v = run(&[&g], block, Cutter::ball(2.0 * r), Some(&design), 0.25);
    assert!(!v.has_findings(), "{}", v.text());
    // On the groove's centre line, under the pass that rests on both edges.
    let want = 5.0 - (r - (r * r - 9.0).sqrt());
    let m = &v.maps[0];
    let k = ((30.0 / m.cell[1]) as usize) * m.dims[0] + (50.0 / m.cell[0]) as usize;
    let got = m.deviation[k] as f64;
    assert!((got - want).abs() < 0.01, "{got} vs {want}");
    assert!(m.unreachable[k]);
    // Towards the walls the ball's flank stays higher still, up to the
    // groove's depth.
    let worst = v.unreachable_max_mm.unwrap();
    assert!(worst > want && worst <= 5.0, "{worst}");
    let at = v.unreachable_at.unwrap();
    assert!((at[1] - 30.0).abs() <= 3.0, "{at:?}");
    // The groove's floor, 80 mm x 6 mm, within a cell at its walls.
    let area = v.unreachable_mm2;
    assert!((400.0..=530.0).contains(&area), "{area}");
    let reach = v.leftover_reachable_max_mm.unwrap();
    assert!(reach <= 0.021, "{}", v.text());
    assert!(v.text().contains("cannot reach"), "{}", v.text());
}

/// Words LinuxCNC reads as something the reader does not do are refused
/// at their line and column, never dropped: P on G2/G3 (helix turns, which
/// `rs274` runs as extra turns), P on G1, I/J/R on a straight move.
#[test]
fn unsupported_words_are_refused_where_they_stand() {
    use blanksmith::gcode::read::{self, ReadOptions};
    for (body, line, column, what) in [
        ("G2 X20 Y0 I10 J0 P2 F500\n", 5, 18, "P on G2/G3"),
        ("G1 X20 P2 F500\n", 5, 8, "P outside G4"),
        ("G1 X20 I5 F500\n", 5, 8, "I, J or R"),
    ] {
        let text = format!("G21 G90 G17 G94\nG0 Z10\nS18000 M3\nG0 X0 Y0\n{body}M30\n");
        let e = read::read(text.as_bytes(), "t.nc", ReadOptions::default(), |_| {}).unwrap_err();
        assert_eq!((e.line, e.column), (line, column), "{body}: {e:?}");
        assert!(e.message.contains(what), "{body}: {}", e.message);
    }
}

/// The project's programs verified with no job: their header records the
/// block, where the design sits in it, the tabs and setup 2's zero, so the
/// fish's programs give the gouge, the stock left and the foam removed that
/// the same programs give verified with the job (the figures the job's
/// placement gives, to the last printed digit). Without the header's
/// placement the design would sit where its own coordinates put it (the
/// 136 mm gouge of the issue); programs cut from a shaped blank, whose
/// shape is not in the header, are refused with the way out.
#[test]
fn programs_verify_from_their_own_headers_as_with_the_job() {
    let dir = tempfile::tempdir().unwrap();
    let m = root().join("fixtures/machine-gantry-3000.yaml");
    let m = m.to_str().unwrap();
    let fish = root().join("fixtures/fish.yaml");
    let fish = fish.to_str().unwrap();
    let o = blanksmith(
        &["cut", fish, "--machine", m, "-o", "cut", "--quiet"],
        dir.path(),
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let mut programs: Vec<String> = std::fs::read_dir(dir.path().join("cut"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "nc"))
        .map(|p| p.display().to_string())
        .collect();
    programs.sort();
    let with_job: serde_json::Value = serde_json::from_slice(
        &std::fs::read(dir.path().join("cut/saltgrass-fish-5-6.verify.json")).unwrap(),
    )
    .unwrap();
    let verify = |extra: &[&str], progs: &[String]| {
        let mut args = vec!["verify", "--machine", m, "--json", "--quiet"];
        args.extend_from_slice(extra);
        args.extend(progs.iter().map(String::as_str));
        blanksmith(&args, dir.path())
    };
    let o = verify(&["--design", fish], &programs);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let alone: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    // The header rounds positions to 0.0001 mm: the design stands within
    // that of where the job put it, so the depths agree to 0.001 mm.
    for (key, tol) in [
        ("gouge_max_mm", 1e-3),
        ("leftover_max_mm", 1e-3),
        ("leftover_p95_mm", 1e-3),
        ("removed_volume_litres", 1e-9),
        ("path_length_mm", 1e-9),
    ] {
        let (a, b) = (
            alone[key].as_f64().unwrap(),
            with_job[key].as_f64().unwrap(),
        );
        assert!((a - b).abs() <= tol, "{key}: {a} alone, {b} with the job");
    }
    assert!(
        alone["basis"].as_str().unwrap().contains("header"),
        "{alone}"
    );

    // The header's placement taken out: the design sits in its own
    // coordinates, far from the cut, and the verdict says where it came from.
    let stripped: Vec<String> = programs
        .iter()
        .map(|p| {
            let text = std::fs::read_to_string(p).unwrap();
            let text: String = text
                .lines()
                .filter(|l| !l.starts_with("(placement:"))
                .map(|l| format!("{l}\n"))
                .collect();
            let to = format!("{p}.bare.nc");
            std::fs::write(&to, text).unwrap();
            to
        })
        .collect();
    let o = verify(&["--design", fish], &stripped);
    let bare: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(bare["gouge_max_mm"].as_f64().unwrap() > 10.0, "{bare}");
    assert!(
        bare["basis"].as_str().unwrap().contains("as given"),
        "{bare}"
    );

    // From a shaped blank: refused, naming the way out.
    let short = root().join("fixtures/shortboard.yaml");
    let cradle = root().join("fixtures/job-cradle.yaml");
    let o = blanksmith(
        &[
            "cut",
            short.to_str().unwrap(),
            "--machine",
            m,
            "--job",
            cradle.to_str().unwrap(),
            "-o",
            "cradle",
            "--quiet",
        ],
        dir.path(),
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let first = std::fs::read_dir(dir.path().join("cradle"))
        .unwrap()
        .map(|e| e.unwrap().path().display().to_string())
        .find(|p| p.ends_with("-1-deck-T1.nc"))
        .unwrap();
    let o = verify(&[], &[first]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("shaped blank") && err.contains("--job"),
        "{err}"
    );
}

/// The header lines read back as written, also when GRBL's short lines
/// wrap them.
#[test]
fn header_placement_reads_back_as_written() {
    use blanksmith::gcode::program::{header_text, kept_line, pose_line, read_kept, read_pose};
    use blanksmith::toolpath::setup::Pose;
    let pose = Pose {
        pitch: -2.5,
        centre: [838.0, 0.0, 58.9526],
        centre_at: [945.0692, 340.0, -27.1107],
    };
    let kept = vec![
        [[15.7974, 298.6], [137.6474, 381.4]],
        [[1752.35, 298.6], [1874.2, 381.4]],
    ];
    let program = format!(
        "(blanksmith program p.nc)\n({})\n({})\nG21\n",
        pose_line(&pose).replace(['(', ')'], "-"),
        kept_line(&kept).replace(['(', ')'], "-")
    );
    let head = header_text(&program);
    assert_eq!(read_pose(&head), Some(pose));
    assert_eq!(read_kept(&head), Some(kept.clone()));
    // Wrapped at spaces into comments of at most 70 characters.
    let mut wrapped = String::new();
    for line in program.lines().take(3) {
        let inner = line.trim_start_matches('(').trim_end_matches(')');
        let mut cur = String::new();
        for w in inner.split(' ') {
            if !cur.is_empty() && cur.len() + 1 + w.len() > 68 {
                wrapped += &format!("({cur})\n");
                cur.clear();
            }
            if !cur.is_empty() {
                cur.push(' ');
            }
            cur += w;
        }
        wrapped += &format!("({cur})\n");
    }
    wrapped += "G21\n";
    let head = header_text(&wrapped);
    assert_eq!(read_pose(&head), Some(pose));
    assert_eq!(read_kept(&head), Some(kept));
}

/// A 10 mm flat tool's program (setup 1's or setup 2's words) that follows
/// the rectangle `x0..x1` × `y0..y1` at depth `z`.
fn ring(x0: f64, y0: f64, x1: f64, y1: f64, z: f64) -> String {
    format!("G0 X{x0} Y{y0}\nG1 Z{z} F500\nG1 X{x1} F2000\nG1 Y{y1}\nG1 X{x0}\nG1 Y{y0}\nG0 Z10\n")
}

/// Where the rail is steep, what is left is measured as the true distance
/// to the design, not along the vertical scaled by the normal's Z (which
/// reads low on a curved face). A design cylinder of radius 30 mm lying
/// along X, its axis 40 mm under the untouched stock top: at a cell `dy`
/// from the axis the stock top is √(dy² + 40²) − 30 from the cylinder
/// (elementary geometry), where the old reading gave the vertical gap
/// times √(1 − (dy/30)²). The cylinder is 720 facets round (0.0003 mm off
/// the circle).
#[test]
fn leftover_on_a_steep_face_is_the_true_distance() {
    let (r, zc, n) = (30.0f64, -40.0f64, 720usize);
    let mut design = Mesh {
        vertices: vec![],
        triangles: vec![],
    };
    for k in 0..n {
        let a = 2.0 * PI * k as f64 / n as f64;
        let (y, z) = (100.0 + r * a.cos(), zc + r * a.sin());
        design.vertices.push([50.0, y, z]);
        design.vertices.push([250.0, y, z]);
    }
    design.vertices.push([50.0, 100.0, zc]);
    design.vertices.push([250.0, 100.0, zc]);
    let (c0, c1) = (2 * n as u32, 2 * n as u32 + 1);
    for k in 0..n as u32 {
        let j = (k + 1) % n as u32;
        let (a0, a1, b0, b1) = (2 * k, 2 * k + 1, 2 * j, 2 * j + 1);
        design.triangles.push([a0, b0, b1]);
        design.triangles.push([a0, b1, a1]);
        design.triangles.push([c0, b0, a0]);
        design.triangles.push([c1, a1, b1]);
    }
    // One cut far from the cylinder; the stock over it is untouched.
    let p = format!("{HEAD}{}{TAIL}", ring(270.0, 20.0, 290.0, 180.0, -5.0));
    let v = run(
        &[&p],
        Block::flat(300.0, 200.0, 80.0),
        Cutter::flat(10.0),
        Some(&design),
        0.5,
    );
    let m = &v.maps[0];
    for dy in [5.0f64, 20.0, 27.0, 29.0] {
        let j = ((100.0 + dy) / m.cell[1]) as usize;
        let i = (150.0 / m.cell[0]) as usize;
        let y = m.origin[1] + (j as f64 + 0.5) * m.cell[1] - 100.0;
        let want = (y * y + zc * zc).sqrt() - r;
        let got = m.deviation[j * m.dims[0] + i] as f64;
        let normal = (0.0 - (zc + (r * r - y * y).sqrt())) * (1.0 - (y / r).powi(2)).sqrt();
        // Flat enough (dy = 5) the two agree to 0.3 mm on this tall a gap;
        // on the steep face the true distance is read.
        let tolerance = if dy < 10.0 { 0.3 } else { 0.01 };
        assert!(
            (got - want).abs() < tolerance,
            "dy {y}: {got} vs {want} (normal reading {normal})"
        );
        if dy > 25.0 {
            assert!(want - normal > 2.0, "dy {y}: {want} vs {normal}");
        }
    }
}

/// Foam left outside the design's plan but joined to it is reported as
/// the parting line's fin, measured as its true distance to the design,
/// and the stock beyond the outline's cut is not. A design box 100 × 100
/// × 20 mm, its top 10 mm under the stock's; setup 1 faces the stock down
/// to the box's top and cuts a slot round it 3 mm out from its sides, to
/// 45 mm deep; setup 2 cuts the same slot from below, 10 mm deep, so the
/// slot goes through. Left: a ring 3 mm wide round the box, from the
/// box's top down to the block's bottom, 20 mm below the box. Its area
/// 106² − 100² = 1236 mm²; each column is farthest from the box at its
/// foot, √(s² + 20²) at s out from a side, √(2s² + 20²) at a corner: at
/// most 20.37 mm for the outermost cells (s = 2.75 mm).
#[test]
fn the_fin_outside_the_plan_is_reported_at_its_true_distance() {
    let design = Mesh::cuboid([100.0, 50.0, -30.0], [100.0, 100.0, 20.0]);
    let mut p1 = String::from(HEAD);
    let mut y = 0.0;
    while y <= 200.0 {
        p1.push_str(&format!(
            "G0 X0 Y{y}\nG1 Z-10 F500\nG1 X300 F2000\nG0 Z10\n"
        ));
        y += 5.0;
    }
    p1.push_str(&ring(92.0, 42.0, 208.0, 158.0, -45.0));
    p1.push_str(TAIL);
    // Setup 2 sees the block turned about X: Y' = 200 − Y.
    let p2 = format!("{HEAD}{}{TAIL}", ring(92.0, 42.0, 208.0, 158.0, -10.0));
    let v = run(
        &[&p1, &p2],
        Block::flat(300.0, 200.0, 50.0),
        Cutter::flat(10.0),
        Some(&design),
        0.5,
    );
    assert!(!v.has_findings(), "{}", v.text());
    let fin = v.parting_line.as_ref().expect("a fin");
    assert!(
        (1150.0..=1300.0).contains(&fin.area_mm2),
        "{} mm²: the stock beyond the slot is not the board's",
        fin.area_mm2
    );
    let most = (2.0 * 2.75f64.powi(2) + 400.0).sqrt();
    assert!((fin.max_mm - most).abs() < 0.05, "{} vs {most}", fin.max_mm);
    assert!((20.0..=20.2).contains(&fin.median_mm), "{}", fin.median_mm);
    assert!(
        v.text().contains("the fin along the parting line"),
        "{}",
        v.text()
    );
    assert!(v.tab_zones.is_none());
}
