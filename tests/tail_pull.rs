//! The tail pull estimate through the real binary: the momentum balance's
//! worked example by hand, its proportions, and refusals that write nothing.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn run(args: &[&str], cwd: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_blanksmith"))
        .args(args)
        .current_dir(cwd)
        .output()
        .expect("the binary runs")
}

fn fixture(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
        .display()
        .to_string()
}

fn report(board: &str, extra: &[&str]) -> serde_json::Value {
    let dir = tempfile::tempdir().unwrap();
    let mut args = vec!["report", board, "--json"];
    args.extend_from_slice(extra);
    let o = run(&args, dir.path());
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    serde_json::from_slice(&o.stdout).unwrap()
}

fn num(v: &serde_json::Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("{v} is not a number"))
}

/// The worked example, by hand (control-volume momentum equation): salt
/// water 1024 kg/m³, 2 cm × 20 cm at 4 m/s is ṁ = 16.384 kg/s; turned 10°
/// it pushes down 16.384 · 4 · sin 10° = 11.38 N (1.160 kg at standard
/// gravity 9.80665 m/s²) and holds back 16.384 · 4 · (1 − cos 10°) =
/// 0.9956 N. The board's own angles obey the same formulas.
#[test]
fn the_worked_example_by_hand() {
    let v = report(
        &fixture("shortboard.yaml"),
        &[
            "--speed",
            "14.4km/h",
            "--water-depth",
            "2cm",
            "--water-width",
            "200mm",
            "--water",
            "salt",
            "--exit-angle",
            "10",
        ],
    );
    let p = &v["tail_pull"];
    assert!((num(&p["mass_flow_kg_s"]) - 16.384).abs() < 1e-9, "{p}");
    let given = &p["at_given_angle"];
    assert!((num(&given["down_n"]) - 11.380).abs() < 0.001, "{given}");
    assert!((num(&given["down_kg"]) - 1.1605).abs() < 0.001, "{given}");
    assert!((num(&given["drag_n"]) - 0.9956).abs() < 0.001, "{given}");
    let theta = num(&v["tail_exit_angle_deg"]).to_radians();
    let tip = &p["at_tip"];
    assert!((num(&tip["down_n"]) - 16.384 * 4.0 * theta.sin()).abs() < 1e-9);
    assert!((num(&tip["drag_n"]) - 16.384 * 4.0 * (1.0 - theta.cos())).abs() < 1e-9);
    let chord = num(&v["tail_exit_chord_deg"]).to_radians();
    assert!((num(&p["over_tail_station"]["down_n"]) - 16.384 * 4.0 * chord.sin()).abs() < 1e-9);
}

/// The force grows with v² (ṁ ∝ v, times v), fresh water gives 997/1024
/// of salt's (the densities `resize` uses), and θ = 0 gives nothing.
#[test]
fn proportions_through_the_command() {
    let board = fixture("fish.yaml");
    let down = |extra: &[&str]| num(&report(&board, extra)["tail_pull"]["at_tip"]["down_n"]);
    let slow = down(&["--speed", "3"]);
    let fast = down(&["--speed", "6"]);
    assert!((fast / slow - 4.0).abs() < 1e-9, "{slow} {fast}");
    let fresh = down(&["--water", "fresh"]);
    let salt = down(&[]);
    assert!((fresh / salt - 997.0 / 1024.0).abs() < 1e-9);
    let flat = report(&board, &["--exit-angle", "0"]);
    assert_eq!(num(&flat["tail_pull"]["at_given_angle"]["down_n"]), 0.0);
}

/// `diff` states how much more the second board pulls, as the two reports
/// would.
#[test]
fn diff_shows_the_change_in_pull() {
    let dir = tempfile::tempdir().unwrap();
    let (a, b) = (fixture("fish.yaml"), fixture("shortboard.yaml"));
    let o = run(&["diff", &a, &b, "-o", "d"], dir.path());
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let out = String::from_utf8_lossy(&o.stdout).into_owned();
    let [pa, pb] = [&a, &b].map(|f| num(&report(f, &[])["tail_pull"]["at_tip"]["down_n"]));
    let line = out
        .lines()
        .find(|l| l.contains("tangent at the tail tip"))
        .unwrap_or_else(|| panic!("{out}"));
    assert!(
        line.contains(&format!("B − A {:+.1} N", pb - pa)),
        "{line} ({pa} N, {pb} N)"
    );
}

/// Bad inputs: the option, the value and the rule; exit 2; nothing written.
#[test]
fn bad_inputs_are_refused_and_write_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let (a, b) = (fixture("fish.yaml"), fixture("shortboard.yaml"));
    for (flag, value, words) in [
        ("--speed", "-4", "above 0"),
        ("--speed", "fast", "not a speed"),
        ("--water-depth", "2m", "thinner than the board is long"),
        ("--water-width", "150%", "at most 100%"),
        ("--water-width", "1m", "at most the board's width"),
        ("--exit-angle", "10", "own exit angles"),
        ("--water", "mud", "fresh, salt"),
    ] {
        let o = run(&["diff", &a, &b, "-o", "d", flag, value], dir.path());
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{flag} {value}: {err}");
        assert!(
            err.contains(flag) && err.contains(words),
            "{flag} {value}: {err}"
        );
        assert!(!dir.path().join("d").exists(), "{flag} {value} wrote files");
        if flag == "--exit-angle" {
            continue;
        }
        let o = run(&["report", &a, flag, value], dir.path());
        assert_eq!(o.status.code(), Some(2), "{flag} {value}");
        assert!(o.stdout.is_empty());
    }
    let o = run(&["report", &a, "--exit-angle", "60"], dir.path());
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("--exit-angle 60°: an exit angle must be 0 to 45°"),
        "{err}"
    );
}
