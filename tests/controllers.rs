//! Programs in each controller's dialect: what differs between them
//! (dwell units, tool changes, program markers, line length), each read
//! back by the project's reader in that dialect and simulated clean.
//! The dialect rules are from each controller's documentation as
//! remembered (not re-read here): LinuxCNC G4 P in seconds (LinuxCNC G-code
//! reference); GRBL 1.1 G4 P in seconds, no M6, the commands listed in its
//! wiki's "G-code commands"; Mach3/4 G4 P in seconds by default; Fanuc-style
//! G4 P in milliseconds, `%` tape marks and an O program number.

use blanksmith::commands;
use blanksmith::gcode::program::CutPlan;
use blanksmith::model::machine::Machine;
use blanksmith::profiles::job;
use blanksmith::profiles::machine as profile;

fn machine(extra: &str) -> Machine {
    profile::machine_from_str(&format!("{}{extra}", profile::GENERIC_MACHINE), "m.yaml").unwrap()
}

fn plan(m: &Machine) -> CutPlan {
    let path = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("fixtures/check-box.yaml");
    let design = commands::load_design(&path).unwrap();
    let j = job::default_job(m).unwrap();
    commands::plan_design(&design, m, &j, &|_| {}).unwrap()
}

fn verify_time(plan: &CutPlan, m: &Machine) -> f64 {
    let j = job::default_job(m).unwrap();
    let v = commands::verify_plan(plan, m, &j, &|_| {}).unwrap();
    assert!(!v.has_findings(), "{}: {}", m.controller.name(), v.text());
    v.time_estimate_s
}

#[test]
fn each_dialect_writes_its_own_dwell_markers_and_tool_words() {
    let base = machine("");
    let base_plan = plan(&base);
    let base_time = verify_time(&base_plan, &base);
    for (word, dwell, first, last, t_word) in [
        ("linuxcnc", "G4 P5.0", "(blanksmith program", "M30", true),
        ("grbl", "G4 P5.0", "(blanksmith program", "M30", false),
        ("mach", "G4 P5.0", "(blanksmith program", "M30", true),
        ("fanuc", "G4 P5000", "%", "%", true),
    ] {
        let m = machine(&format!("controller: {word}\n"));
        let p = plan(&m);
        for prog in &p.programs {
            let t = &prog.text;
            assert!(
                t.lines().any(|l| l == dwell),
                "{word}: no `{dwell}` in {}",
                prog.file_name
            );
            assert!(t.starts_with(first), "{word}: starts {:?}", &t[..20]);
            assert_eq!(t.lines().last(), Some(last), "{word}");
            let has_t = t.lines().any(|l| l.starts_with('T'));
            assert_eq!(has_t, t_word, "{word}: T words");
        }
        if word == "fanuc" {
            assert_eq!(p.programs[0].text.lines().nth(1), Some("O1000"));
        }
        // The same dwell in seconds, read in each dialect: the simulated
        // run time is the same as LinuxCNC's.
        let time = verify_time(&p, &m);
        assert!(
            (time - base_time).abs() < 1e-6,
            "{word}: {time} s vs {base_time} s"
        );
        assert!(
            p.sheet.contains(m.controller.name()),
            "{word}: the setup sheet names it"
        );
    }
}

/// GRBL 1.1: only the words its documentation lists as supported, and
/// every line within 80 characters (its line buffer, from memory).
#[test]
fn grbl_programs_use_only_its_commands_in_short_lines() {
    const SUPPORTED_G: [&str; 10] = [
        "G0", "G1", "G2", "G3", "G4", "G17", "G20", "G21", "G90", "G94",
    ];
    const SUPPORTED_M: [&str; 4] = ["M3", "M5", "M30", "M0"];
    let m = machine("controller: grbl\n");
    let p = plan(&m);
    for prog in &p.programs {
        for (n, l) in prog.text.lines().enumerate() {
            assert!(
                l.len() <= 80,
                "{}:{}: {} characters",
                prog.file_name,
                n + 1,
                l.len()
            );
            if l.starts_with('(') {
                continue;
            }
            for w in l.split_whitespace() {
                let letter = w.chars().next().unwrap();
                match letter {
                    'G' => assert!(
                        SUPPORTED_G.contains(&w),
                        "{}:{}: {w}",
                        prog.file_name,
                        n + 1
                    ),
                    'M' => assert!(
                        SUPPORTED_M.contains(&w),
                        "{}:{}: {w}",
                        prog.file_name,
                        n + 1
                    ),
                    'X' | 'Y' | 'Z' | 'I' | 'J' | 'F' | 'S' | 'P' => {}
                    _ => panic!(
                        "{}:{}: `{w}` is not a GRBL 1.1 word here",
                        prog.file_name,
                        n + 1
                    ),
                }
            }
        }
    }
    // GRBL has no tool change: a changer is refused at the controller line.
    let e = profile::machine_from_str(
        &format!(
            "{}controller: grbl\n",
            profile::GENERIC_MACHINE.replace("tool_changer: false", "tool_changer: true")
        ),
        "m.yaml",
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("controller") && e.contains("M6"), "{e}");
}

/// With a tool changer the setup sheet lists every tool each program
/// calls, in order, to load and measure.
#[test]
fn the_tool_changer_sheet_lists_every_tool_to_load() {
    let m = machine("").clone();
    let m = Machine {
        tool_changer: true,
        ..m
    };
    let p = plan(&m);
    assert!(
        p.sheet
            .contains("T1 flat 19.05 mm (3/4\"), long-reach roughing end mill, then T2 ball"),
        "{}",
        p.sheet
    );
    assert!(p.sheet.contains("measure each one's length"), "{}", p.sheet);
}

/// Inch output: positions rounded to 4 decimals of an inch stand up to
/// 0.00127 mm from those planned; the gates and the simulation allow that
/// rounding, so a hole planned exactly at the spoilboard allowance passes
/// (it was refused 0.00036 mm past it), and the programs simulate clean.
#[test]
fn inch_programs_pass_the_gates_and_simulate_clean() {
    let m = machine("").clone();
    let m = Machine {
        output: blanksmith::units::Unit::In,
        ..m
    };
    for board in ["check-box.yaml", "fish.yaml"] {
        let path = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("fixtures")
            .join(board);
        let design = commands::load_design(&path).unwrap();
        let j = job::default_job(&m).unwrap();
        let p = commands::plan_design(&design, &m, &j, &|_| {})
            .unwrap_or_else(|e| panic!("{board}: {e}"));
        assert!(p.programs.iter().all(|q| q.text.contains("G20")));
        let v = commands::verify_plan(&p, &m, &j, &|_| {}).unwrap();
        assert!(!v.has_findings(), "{board}: {}", v.text());
    }
}
