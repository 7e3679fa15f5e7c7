//! Stock as shops buy it, and how it is held: margins against hand
//! arithmetic on the declared sizes, cradle holding simulated by the
//! project's verifier, the cradles' profiles against the job's stations.

use blanksmith::commands;
use blanksmith::model::job::Job;
use blanksmith::model::machine::Machine;
use blanksmith::profiles::job;
use blanksmith::profiles::machine as profile;
use blanksmith::profiles::stock;
use blanksmith::toolpath::cradle;
use blanksmith::toolpath::pick;
use blanksmith::toolpath::setup::{self, CamError};

fn fixture(name: &str) -> std::path::PathBuf {
    std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
}

fn box_mesh() -> blanksmith::model::mesh::Mesh {
    let design = commands::load_design(&fixture("check-box.yaml")).unwrap();
    design.mesh(0.05).unwrap()
}

fn job_text(text: &str, m: &Machine) -> Job {
    job::job_from_str(text, "job.yaml", m).unwrap()
}

#[test]
fn a_box_in_a_flat_block_has_the_margins_of_hand_arithmetic() {
    // The 1000 x 500 x 60 mm box centred in a 1100 x 600 x 70 mm block:
    // 50 mm at each end and side, 5 mm over and under (by hand).
    let m = profile::generic_machine();
    let j = job_text(
        "units: mm\nstock: {length: 1100, width: 600, thickness: 70}\nholding: cradle\n",
        &m,
    );
    let p = setup::place(&box_mesh(), None, &j).unwrap();
    let g = &p.margins;
    for (what, got, want) in [
        ("nose", g.nose, 50.0),
        ("tail", g.tail, 50.0),
        ("side", g.side.0, 50.0),
        ("top", g.top.0, 5.0),
        ("bottom", g.bottom.0, 5.0),
    ] {
        assert!((got - want).abs() < 1e-6, "{what}: {got}");
    }
    // 50 mm beyond each tip holds a 25.4 mm hole 5 mm off the tip with
    // 19.6 mm of foam to the block's end: on the centreline, at
    // 50 - 5 - 12.7 = 32.3 mm from each end.
    assert_eq!(p.holes.len(), 2);
    for (h, x) in p.holes.iter().zip([32.3, 1100.0 - 32.3]) {
        assert!(
            (h[0] - x).abs() < 1e-6 && (h[1] - 300.0).abs() < 1e-9,
            "{h:?}"
        );
    }
    assert!(p.tabs.is_empty(), "no tabs in a cradle");
}

#[test]
fn short_ends_put_the_holes_in_pairs_beside_the_board() {
    // 20 mm beyond each tip cannot hold a 25.4 mm hole with its 5 mm gap
    // and 5 mm wall (37.7 mm): a pair mirrored about the centreline, 17.7
    // mm from the end (radius + wall), 250 + 5 + 12.7 = 267.7 mm either
    // side of it (the box is full width at its ends).
    let m = profile::generic_machine();
    let j = job_text(
        "units: mm\nstock: {length: 1040, width: 700, thickness: 70}\nholding: cradle\n",
        &m,
    );
    let p = setup::place(&box_mesh(), None, &j).unwrap();
    let want = [
        [17.7, 350.0 - 267.7],
        [17.7, 350.0 + 267.7],
        [1040.0 - 17.7, 350.0 - 267.7],
        [1040.0 - 17.7, 350.0 + 267.7],
    ];
    assert_eq!(p.holes.len(), 4);
    for (h, w) in p.holes.iter().zip(want) {
        assert!(
            (h[0] - w[0]).abs() < 1e-6 && (h[1] - w[1]).abs() < 0.05,
            "{h:?} vs {w:?}"
        );
    }
    // Each hole's image through the flip is another hole (geometry).
    for h in &p.holes {
        let q = setup::flip([h[0], h[1], -10.0], &p.block);
        assert!(
            p.holes
                .iter()
                .any(|o| (o[0] - q[0]).abs() < 1e-9 && (o[1] - q[1]).abs() < 1e-9)
        );
    }
    // 560 mm wide leaves no room for the pair (280 + 267.7 + 12.7 + 5 =
    // 565.4 mm): refused, saying so.
    let narrow = job_text(
        "units: mm\nstock: {length: 1040, width: 560, thickness: 70}\nholding: cradle\n",
        &m,
    );
    match setup::place(&box_mesh(), None, &narrow) {
        Err(CamError::Fit(msg)) => assert!(msg.contains("registration holes"), "{msg}"),
        Err(e) => panic!("{e}"),
        Ok(_) => panic!("a 560 mm block was taken"),
    }
}

fn cradle_job(m: &Machine) -> Job {
    job::load_job(&fixture("job-cradle.yaml"), m).unwrap()
}

#[test]
fn the_demo_is_cut_from_a_blank_two_and_a_half_inches_wider_and_three_longer() {
    let m = profile::generic_machine();
    let j = cradle_job(&m);
    let design = commands::load_design(&fixture("shortboard.yaml")).unwrap();
    let plan = commands::plan_design(&design, &m, &j, &|_| {}).unwrap();
    let g = &plan.placement.margins;
    // 22 in blank, 19 1/2 in board: 1 1/4 in (31.75 mm) each side; 6'5"
    // blank, 6'2" board: 1 1/2 in (38.1 mm) each end (by hand).
    assert!((g.side.0 - 31.75).abs() < 0.05, "{}", g.side.0);
    assert!((g.nose - 38.1).abs() < 0.05 && (g.tail - 38.1).abs() < 0.05);
    let v = commands::verify_plan(&plan, &m, &j, &|_| {}).unwrap();
    assert!(!v.has_findings(), "{}", v.text());
    assert!(v.gouge_max_mm.unwrap() <= 0.05, "{}", v.text());
    assert!(v.leftover_reachable_max_mm.unwrap() <= 0.5, "{}", v.text());
    // The setup sheet has no tabs to remove and tells how the board is held.
    assert!(!plan.sheet.contains("Remove the tabs"), "{}", plan.sheet);
    assert!(plan.sheet.contains("deck cradle"), "{}", plan.sheet);

    // The same blank held by a frame is refused on its width: the board
    // needs 40 mm of band, 19.05 mm of tool and 5 mm of wall a side,
    // 495.3 + 2 x 64.05 = 623.4 mm against 558.8 mm (by hand).
    let framed = job::job_from_str(
        &std::fs::read_to_string(fixture("job-cradle.yaml"))
            .unwrap()
            .replace("holding: cradle", "holding: frame"),
        "job.yaml",
        &m,
    )
    .unwrap();
    let mesh = design.mesh(0.05).unwrap();
    match setup::place(&mesh, None, &framed) {
        Err(CamError::Fit(msg)) => assert!(msg.contains("64.6 mm"), "{msg}"),
        Err(e) => panic!("{e}"),
        Ok(_) => panic!("the framed job was taken"),
    }

    // The cradles: setup 1's top edge is the blank's bottom curve, so at
    // the job's stations it is the bottom height given there.
    let cradles = cradle::cradles(&plan.placement, &j, "demo");
    assert_eq!(cradles.iter().map(|c| c.0).collect::<Vec<_>>(), vec![1, 2]);
    let stations = &plan.placement.block.rocker.as_ref().unwrap().stations;
    let first = &cradles[0].1;
    let edge = first
        .items
        .iter()
        .find_map(|i| match i {
            blanksmith::template::drawing::Item::Line {
                points,
                closed: true,
                ..
            } => Some(points.clone()),
            _ => None,
        })
        .unwrap();
    let b = blanksmith::template::drawing::BORDER;
    for s in stations {
        // The top edge's point at the station (the closing corners down
        // to the spoilboard share the end stations' X).
        let p = edge
            .iter()
            .filter(|p| (p[0] - b - s[0]).abs() < 1e-6)
            .max_by(|a, c| a[1].total_cmp(&c[1]))
            .unwrap_or_else(|| panic!("no point at station {}", s[0]));
        assert!((p[1] - b - s[1]).abs() < 1e-6, "{p:?} vs {s:?}");
    }
}

#[test]
fn a_cradle_job_refuses_a_frame_or_tabs_at_their_line() {
    let m = profile::generic_machine();
    for (text, field) in [
        ("holding: cradle\nframe: 40\n", "frame"),
        ("holding: cradle\ntabs: {width: 30}\n", "tabs.width"),
    ] {
        let e = job::job_from_str(text, "job.yaml", &m)
            .unwrap_err()
            .to_string();
        assert!(e.contains(field) && e.contains("job.yaml:2"), "{e}");
    }
    let e = job::job_from_str("holding: vice\n", "job.yaml", &m)
        .unwrap_err()
        .to_string();
    assert!(e.contains("holding") && e.contains("job.yaml:1"), "{e}");
}

/// The box (exactly 30 L) tried in six flat blocks held in cradles, by
/// hand: the foam cut away is the block's volume less 30 L; the least
/// margin is (T - 60) / 2 over the deck where that is smallest.
#[test]
fn blanks_for_the_box_rank_as_by_hand() {
    let list = stock::stock_list_from_str(
        "units: mm
blanks:
  - {name: A, length: 1100, width: 600, thickness: 70}
  - {name: B, length: 1040, width: 560, thickness: 66}
  - {name: C, length: 1200, width: 700, thickness: 80}
  - {name: D, length: 1010, width: 600, thickness: 70}
  - {name: E, length: 990, width: 600, thickness: 70}
  - {name: F, length: 1100, width: 600, thickness: 64}
",
        "stock.yaml",
    )
    .unwrap();
    let m = profile::generic_machine();
    let j = job_text(
        "units: mm\ntable_position: {x: 100, y: 100}\nholding: cradle\n",
        &m,
    );
    let mesh = box_mesh();
    let litres = blanksmith::volume::measure::volume(&mesh) / 1e6;
    assert!((litres - 30.0).abs() < 1e-9, "{litres}");
    let tried = pick::rank(&mesh, None, litres, &j, &m, &list);
    let names: Vec<&str> = tried.iter().map(|t| t.entry.name.as_str()).collect();
    // D 42.42 - 30 = 12.42 L, A 46.2 - 30 = 16.2 L, C 67.2 - 30 = 37.2 L;
    // then B (no room for the hole pair: 280 + 267.7 + 17.7 > 560 mm),
    // E (990 mm < 1000 + 2 x 3 mm skin), F (64 mm < 60 + 2 x 3 mm).
    assert_eq!(names, ["D", "A", "C", "B", "E", "F"]);
    for (t, waste, least) in [
        (&tried[0], 12.42, 5.0),
        (&tried[1], 16.2, 5.0),
        (&tried[2], 37.2, 10.0),
    ] {
        let f = t.fit.as_ref().unwrap();
        assert!(
            (f.waste_litres - waste).abs() < 1e-6,
            "{}: {}",
            t.entry.name,
            f.waste_litres
        );
        assert!(
            (f.least.1 - least).abs() < 1e-6,
            "{}: {:?}",
            t.entry.name,
            f.least
        );
    }
    let why = |k: usize| tried[k].fit.as_ref().unwrap_err().clone();
    assert!(why(3).contains("registration holes"), "{}", why(3));
    assert!(
        why(4).contains("length") && why(4).contains("16.0 mm"),
        "{}",
        why(4)
    );
    assert!(
        why(5).contains("thickness") && why(5).contains("2.0 mm"),
        "{}",
        why(5)
    );
}

/// A tapered blank: the side margin is read at the plan shape's width
/// there. The box's 500 mm must stay 3 mm inside: a plan narrowing to
/// 500 mm at the ends does not fit, one at 506 mm fits with exactly 3 mm
/// at the ends (by hand), and its volume is the trapezoid's.
#[test]
fn a_plan_shape_sets_the_side_margin_and_the_volume() {
    let text = |end: f64| {
        format!(
            "units: mm
blanks:
  - name: T
    length: 1100
    width: 600
    thickness: 70
    plan: [{{at: 0, width: {end}}}, {{at: 550, width: 600}}, {{at: 1100, width: {end}}}]
"
        )
    };
    let m = profile::generic_machine();
    let j = job_text(
        "units: mm\ntable_position: {x: 100, y: 100}\nholding: cradle\n",
        &m,
    );
    let mesh = box_mesh();
    // The box runs from X 50 to 1050 of the blank: at X 50 the plan is
    // end + (600 - end) x 50 / 550 wide.
    let end_at_tip = |w: f64| w + (600.0 - w) * 50.0 / 550.0;
    let narrow = stock::stock_list_from_str(&text(490.0), "s.yaml").unwrap();
    let t = &pick::rank(&mesh, None, 30.0, &j, &m, &narrow)[0];
    assert!(
        t.fit.as_ref().unwrap_err().contains("plan shape"),
        "{:?}",
        t.fit
    );
    let w = 506.0 - (600.0 - 506.0) * 50.0 / 500.0; // end width giving 506 mm at the tip
    assert!((end_at_tip(w) - 506.0).abs() < 1e-9);
    let list = stock::stock_list_from_str(&text(w), "s.yaml").unwrap();
    let t = &pick::rank(&mesh, None, 30.0, &j, &m, &list)[0];
    let f = t.fit.as_ref().unwrap();
    assert!(
        (f.margins.side.0 - 3.0).abs() < 1e-6,
        "{:?}",
        f.margins.side
    );
    // Two trapezoids: 1100 x (w + 600) / 2 x 70 mm³.
    let vol = 1100.0 * (w + 600.0) / 2.0 * 70.0 / 1e6;
    assert!(
        (f.waste_litres - (vol - 30.0)).abs() < 1e-6,
        "{}",
        f.waste_litres
    );
}

#[test]
fn bad_stock_lists_are_refused_at_their_line() {
    for (text, at, field) in [
        (
            "blanks:\n  - {name: A, length: 1100, width: 600, thickness: 70}\n  - {name: A, length: 1100, width: 600, thickness: 70}\n",
            "s.yaml:3",
            "blanks[1].name",
        ),
        (
            "blanks:\n  - {name: A, length: 1100, width: 600, thickness: -70}\n",
            "s.yaml:2",
            "blanks[0].thickness",
        ),
        (
            "blanks:\n  - name: A\n    length: 1100\n    width: 600\n    thickness: 70\n    plan: [{at: 0, width: 500}, {at: 900, width: 500}]\n",
            "s.yaml:6",
            "blanks[0].plan",
        ),
        (
            "blanks:\n  - {name: A, length: 1100, width: 600, thickness: 70, colour: blue}\n",
            "s.yaml:2",
            "colour",
        ),
        ("blanks: []\n", "s.yaml:1", "blanks"),
    ] {
        let e = stock::stock_list_from_str(text, "s.yaml")
            .unwrap_err()
            .to_string();
        assert!(e.contains(at) && e.contains(field), "{e}");
    }
}

#[test]
fn the_blanks_command_ranks_the_shops_list_and_a_bad_list_writes_nothing() {
    let bin = env!("CARGO_BIN_EXE_blanksmith");
    let root = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let out = std::process::Command::new(bin)
        .current_dir(&root)
        .args([
            "blanks",
            "fixtures/shortboard.yaml",
            "--stock-list",
            "fixtures/stock-list.yaml",
            "--job",
            "fixtures/job-cradle.yaml",
            "--json",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let names: Vec<&str> = v
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["name"].as_str().unwrap())
        .collect();
    // The tapered 6'5" blank wastes least (its plan shape), then the
    // 6'4" rockered one, then the 7'0" flat block; the others do not fit.
    assert_eq!(
        names,
        [
            "PR 6'5\" x 22 tapered",
            "PR 6'4\" x 21",
            "FB 7'0\" x 24 x 6",
            "FB 6'8\" x 23 x 3 1/2",
            "PR 6'0\" x 21",
            "PR 6'6\" x 19"
        ]
    );
    let why: Vec<&str> = v.as_array().unwrap()[3..]
        .iter()
        .map(|r| r["why_not"].as_str().unwrap())
        .collect();
    assert!(why[0].contains("thickness"), "{}", why[0]);
    assert!(why[1].contains("length"), "{}", why[1]);
    assert!(why[2].contains("width"), "{}", why[2]);

    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("bad.yaml");
    std::fs::write(&bad, "blanks:\n  - {name: A, length: 1100, width: 600}\n").unwrap();
    let outdir = dir.path().join("out");
    let r = std::process::Command::new(bin)
        .current_dir(&root)
        .args(["make", "--stock-list"])
        .arg(&bad)
        .arg("-o")
        .arg(&outdir)
        .arg("--quiet")
        .output()
        .unwrap();
    assert_eq!(r.status.code(), Some(2));
    let e = String::from_utf8_lossy(&r.stderr);
    assert!(
        e.contains("blanks[0].thickness") && e.contains("bad.yaml:2"),
        "{e}"
    );
    assert!(!outdir.exists(), "nothing written");
}

/// Setup 2 is zeroed on the spoilboard, which the first setup's top rests
/// on after the flip: a block 2 mm thicker than declared still gives the
/// design's thickness. Simulated with the real (thicker) block: the design
/// stands where setup 1 put it, 2 mm further from the turned block's new
/// top than planned (zeroed on that top instead, the bottom would be cut
/// 2 mm into the board).
#[test]
fn a_block_thicker_than_declared_still_gives_the_design_thickness() {
    use blanksmith::verify::setting::{ProgramSource, Setting, VerifyOptions};
    use blanksmith::verify::simulate;
    let m = profile::generic_machine();
    let j = job::default_job(&m).unwrap();
    let design = commands::load_design(&fixture("check-box.yaml")).unwrap();
    let plan = commands::plan_design(&design, &m, &j, &|_| {}).unwrap();
    let declared = plan.placement.block.clone();
    let run = |extra: f64, table: bool| {
        let mut real = declared.clone();
        real.thickness += extra;
        let sources = plan
            .programs
            .iter()
            .map(|p| ProgramSource {
                name: p.file_name.clone(),
                side: p.side,
                reader: Box::new(p.text.as_bytes()),
                loaded: Some(p.tool.id),
            })
            .collect();
        let setting = Setting {
            table_zero_after_flip: table,
            machine: &m,
            block: real,
            table_position: j.table_position,
            default_tool: None,
            design: Some(&plan.placement.part),
            keep: blanksmith::toolpath::setup::tab_rectangles(&plan.placement, &j),
            floor: None,
            pockets: vec![],
            prepared: [None, None],
        };
        simulate::verify(sources, &setting, VerifyOptions::default(), &|_| {}).unwrap()
    };
    let v = run(2.0, true);
    assert!(!v.has_findings(), "{}", v.text());
    assert!(v.gouge_max_mm.unwrap() <= 0.05, "{}", v.text());
    let target = j.finishing.scallop + j.finishing.tolerance;
    assert!(v.leftover_p95_mm.unwrap() <= target, "{}", v.text());
}

/// A stringer down the block: the cutting feed is the job's share where
/// the tool touches it (tool centre within half its width plus the tool's
/// radius of the middle line), the full feed elsewhere, read back from the
/// programs by the project's G-code reader; the simulated run time grows;
/// holes and tabs stand beside it.
#[test]
fn a_stringer_slows_the_feed_over_it_and_keeps_holes_and_tabs_off_it() {
    use blanksmith::gcode::read::{self, Event, Motion, ReadOptions};
    let m = profile::generic_machine();
    let base = "units: mm\nstock: {length: 1250, width: 700, thickness: 80STRINGER}\ntable_position: {x: 100, y: 100}\nstringer_feed: 40%\n";
    let with = job_text(
        &base.replace("STRINGER", ", stringer: {width: 5, material: spruce}"),
        &m,
    );
    let without = job_text(&base.replace("STRINGER", ""), &m);
    let design = commands::load_design(&fixture("check-box.yaml")).unwrap();
    let plan = commands::plan_design(&design, &m, &with, &|_| {}).unwrap();
    let (c, half) = (350.0, 2.5);
    let mut slowed = 0;
    for p in &plan.programs {
        let r = p.tool.cutter.radius;
        let feeds = [
            with.roughing.feed,
            with.outline.feed,
            with.finishing.pass.feed,
            with.finishing.rail_tool().0.feed,
        ];
        read::read(
            p.text.as_bytes(),
            &p.file_name,
            ReadOptions::default(),
            |e| {
                if let Event::Move {
                    motion: Motion::Linear,
                    from,
                    to,
                    feed,
                    line,
                    ..
                } = e
                {
                    if (to[2] - from[2]).abs() > 1e-9 || from == to {
                        return; // plunges and ramps: their own feed or the Z rate
                    }
                    let inside = |y: f64| (y - c).abs() <= half + r + 1e-3;
                    let nominal = feeds
                        .iter()
                        .copied()
                        .find(|&f| (feed - f).abs() < 1.0 || (feed - 0.4 * f).abs() < 1.0);
                    let Some(f) = nominal else { return };
                    if inside(from[1]) && inside(to[1]) {
                        assert!(
                            (feed - 0.4 * f).abs() < 1.0,
                            "{}:{line}: F{feed} over the stringer",
                            p.file_name
                        );
                        slowed += 1;
                    } else if !inside(from[1])
                        && !inside(to[1])
                        && ((from[1] - c) * (to[1] - c)) > 0.0
                    {
                        assert!(
                            (feed - f).abs() < 1.0,
                            "{}:{line}: F{feed} off the stringer",
                            p.file_name
                        );
                    }
                }
            },
        )
        .unwrap();
    }
    assert!(slowed > 100, "{slowed} moves slowed");
    // Holes and tabs beside it: each hole's edge and each tab's side at
    // least 3 mm from the stringer's faces.
    let pl = &plan.placement;
    assert_eq!(pl.holes.len(), 4);
    for h in &pl.holes {
        assert!(
            (h[1] - c).abs() - with.hole_diameter / 2.0 >= half + 3.0 - 1e-9,
            "{h:?}"
        );
    }
    assert_eq!(pl.tabs.len(), 4);
    for t in &pl.tabs {
        let (lo, hi) = t.bounding_box().unwrap();
        assert!(
            lo[1] >= c + half + 3.0 - 1e-9 || hi[1] <= c - half - 3.0 + 1e-9,
            "{lo:?} {hi:?}"
        );
    }
    // Slower over the stringer, in the simulation's own run time, and clean.
    let v = commands::verify_plan(&plan, &m, &with, &|_| {}).unwrap();
    assert!(!v.has_findings(), "{}", v.text());
    let plain = commands::plan_design(&design, &m, &without, &|_| {}).unwrap();
    let w = commands::verify_plan(&plain, &m, &without, &|_| {}).unwrap();
    assert!(
        v.time_estimate_s > w.time_estimate_s + 1.0,
        "{} vs {}",
        v.time_estimate_s,
        w.time_estimate_s
    );
    assert!(
        plan.sheet.contains("stringer: 5.0 mm") && plan.sheet.contains("spruce"),
        "{}",
        plan.sheet
    );
}
