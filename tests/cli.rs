//! The real binary, run in temporary folders.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_blanksmith"))
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn run(args: &[&str], cwd: &Path) -> Output {
    bin()
        .args(args)
        .current_dir(cwd)
        .output()
        .expect("the binary runs")
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

fn files_under(dir: &Path) -> Vec<PathBuf> {
    let mut out = vec![];
    if let Ok(rd) = std::fs::read_dir(dir) {
        for e in rd.flatten() {
            let p = e.path();
            if p.is_dir() {
                out.extend(files_under(&p));
            } else {
                out.push(p);
            }
        }
    }
    out.sort();
    out
}

#[test]
fn make_runs_the_demo_into_out() {
    let dir = tempfile::tempdir().unwrap();
    let o = run(&["make"], dir.path());
    assert!(o.status.success(), "{}", text(&o.stderr));
    let stdout = text(&o.stdout);
    assert!(
        stdout.contains("certified: the two volumes agree"),
        "{stdout}"
    );
    assert!(stdout.contains(" L"), "volume in litres: {stdout}");
    let folder = dir.path().join("out/saltgrass-shortboard-6-2");
    let stl = folder.join("saltgrass-shortboard-6-2.stl");
    let json = folder.join("saltgrass-shortboard-6-2.report.json");
    assert!(folder.join("saltgrass-shortboard-6-2.report.txt").exists());
    assert!(
        folder
            .join("saltgrass-shortboard-6-2.templates.pdf")
            .exists()
    );
    assert!(folder.join("saltgrass-shortboard-6-2.outline.svg").exists());
    // Binary STL: 84 + 50·n bytes (format layout).
    let bytes = std::fs::read(&stl).unwrap();
    let n = u32::from_le_bytes(bytes[80..84].try_into().unwrap()) as usize;
    assert_eq!(bytes.len(), 84 + 50 * n);
    let report: serde_json::Value = serde_json::from_slice(&std::fs::read(&json).unwrap()).unwrap();
    for key in [
        "name",
        "length_mm",
        "width_mm",
        "thickness_mm",
        "volume_litres",
        "volume_litres_surface",
        "volume_error_estimate_litres",
        "triangles",
        "vertices",
        "watertight",
        "euler_characteristic",
        "stl",
    ] {
        assert!(report.get(key).is_some(), "report lacks {key}");
    }
    assert_eq!(report["triangles"].as_u64().unwrap() as usize, n);
    assert_eq!(report["watertight"], true);
    assert_eq!(report["stl_clean"], true);
    assert_eq!(report["euler_characteristic"], 2);
    // By file name: the report sits beside its STL wherever the folder goes.
    assert_eq!(report["stl"], "saltgrass-shortboard-6-2.stl");
    // 6'2" = 74 in = 1879.6 mm (1 in = 25.4 mm, NIST SP 811).
    assert!((report["length_mm"].as_f64().unwrap() - 1879.6).abs() < 1e-9);
}

#[test]
fn the_same_input_gives_byte_identical_files() {
    // One run makes the fish alone; the other makes it among a day's
    // orders with a board that fails: the fish's files must not differ,
    // the failure must not stop it, and the run must say so.
    let (a, b) = (tempfile::tempdir().unwrap(), tempfile::tempdir().unwrap());
    let board = root().join("fixtures/fish.yaml");
    let bad = root().join("fixtures/bad/zero-thickness.yaml");
    let o = run(&["make", board.to_str().unwrap()], a.path());
    assert!(o.status.success(), "{}", text(&o.stderr));
    let o = run(
        &[
            "make",
            board.to_str().unwrap(),
            bad.to_str().unwrap(),
            "--quiet",
        ],
        b.path(),
    );
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    let summary = text(&o.stdout);
    assert!(
        summary.contains("saltgrass-fish-5-6") && summary.contains("done"),
        "{summary}"
    );
    assert!(
        summary.contains("zero-thickness.yaml") && summary.contains("failed"),
        "{summary}"
    );
    assert!(
        text(&o.stderr).contains("thickness.max"),
        "{}",
        text(&o.stderr)
    );
    let run_index = std::fs::read_to_string(b.path().join("out/index.html")).unwrap();
    assert!(run_index.contains("saltgrass-fish-5-6/index.html") && run_index.contains("failed"));
    let (fa, fb) = (
        files_under(a.path()),
        files_under(&b.path().join("out/saltgrass-fish-5-6")),
    );
    // STL, JSON and text reports, the templates' PDF, three SVGs and three
    // DXFs; eight programs (roughing, finishing, rails and the pockets a
    // side), the setup sheet, the verification's JSON, text and two
    // pictures; the order sheet; the report page.
    assert_eq!(fa.len(), 25, "{fa:?}");
    assert_eq!(fb.len(), 25, "{fb:?}");
    for (x, y) in fa.iter().zip(&fb) {
        assert_eq!(x.file_name(), y.file_name());
        assert_eq!(
            std::fs::read(x).unwrap(),
            std::fs::read(y).unwrap(),
            "{} differs",
            x.display()
        );
    }
    // The page is self-contained: its scripts are inline (none names a
    // source), nothing is fetched from elsewhere.
    let page = std::fs::read_to_string(a.path().join("out/saltgrass-fish-5-6/index.html")).unwrap();
    assert!(page.contains("<p id=\"volume\""));
    // The half sections, and the rail close up after them.
    let sections = page.find("<h2>Half sections").expect("the sections");
    let rail = page
        .find("<h3>The rail, close up")
        .expect("the rail close up");
    assert!(rail > sections);
    for tag in page.split("<script").skip(1) {
        let open = &tag[..tag.find('>').unwrap()];
        assert!(!open.contains("src="), "<script{open}>");
    }
    assert!(!page.contains("fetch(") && !page.contains("XMLHttpRequest"));
    for attr in ["src=\"http", "href=\"http", "url(http"] {
        assert!(!page.contains(attr), "{attr}");
    }
}

#[test]
fn mesh_writes_ascii_on_request() {
    let dir = tempfile::tempdir().unwrap();
    let board = root().join("fixtures/check-box.yaml");
    let o = run(
        &["mesh", board.to_str().unwrap(), "-o", "here", "--ascii"],
        dir.path(),
    );
    assert!(o.status.success(), "{}", text(&o.stderr));
    let stl = std::fs::read(dir.path().join("here/check-box.stl")).unwrap();
    assert!(stl.starts_with(b"solid check-box\n"));
    // An independent reader (stl_io) reads it back.
    let mesh = stl_io::read_stl(&mut std::io::Cursor::new(&stl)).unwrap();
    assert!(!mesh.faces.is_empty());
    assert!(dir.path().join("here/check-box.report.json").exists());
}

#[test]
fn report_prints_json_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let board = root().join("fixtures/longboard.yaml");
    let o = run(&["report", board.to_str().unwrap(), "--json"], dir.path());
    assert!(o.status.success(), "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["name"], "saltgrass-longboard-9-4");
    assert!(v["stl"].is_null());
    // Stations every 6 in from the nose over 9'4" = 112 in: 19 rows, the
    // tail-width station (12 in from the tail, 100 in, not on the 6 in grid)
    // and the tail.
    assert_eq!(v["stations"].as_array().unwrap().len(), 21);
    assert!(files_under(dir.path()).is_empty());
    let o = run(&["report", board.to_str().unwrap()], dir.path());
    let out = text(&o.stdout);
    assert!(
        out.contains("measurements at stations") && out.contains("9' 4\""),
        "{out}"
    );
}

/// Each bad file, the field its message must name, and words it must say.
const BAD: &[(&str, &str, &str)] = &[
    (
        "field-twice.yaml",
        ":14:3:",
        "`nose` is given twice here; give each field once",
    ),
    (
        "hex-number.yaml",
        ":20:9:",
        "`0x1A` is a number in another base",
    ),
    (
        "latin1-notes.yaml",
        "line 5, column 21",
        "byte 0xB0 is not UTF-8 text",
    ),
    (
        "length-overflows.yaml",
        "outline.length",
        "a number too large to be a length; it must be at least 300 mm",
    ),
    (
        "tail-end-station-disagrees.yaml",
        "outline.stations[2].width",
        "at the tail's end, where the square tail makes the board 400.0 mm",
    ),
    (
        "two-documents.yaml",
        ":43:1:",
        "more than one YAML document",
    ),
    (
        "zero-width-stations.yaml",
        "outline.stations",
        "every station has zero width",
    ),
    ("bad-fraction.yaml", ":26:9:", "is not a length"),
    ("bad-name.yaml", "name:", "not a usable name"),
    ("bad-unit.yaml", ":7:11:", "`6 furlongs` is not a length"),
    (
        "contour-too-deep.yaml",
        "bottom[1].depth",
        "the bottom would meet the deck",
    ),
    (
        "deck-crosses-bottom.yaml",
        "deck.dome",
        "it must stay under half the thickness",
    ),
    ("empty-board.yaml", ":1:1:", "missing field `units`"),
    (
        "misspelled-field.yaml",
        ":9:3:",
        "unknown field `wide_piont`, expected one of",
    ),
    ("missing-field.yaml", "outline.tail_width", "is missing"),
    (
        "negative-thickness.yaml",
        "thickness.nose",
        "must be more than",
    ),
    (
        "nose-wider-than-board.yaml",
        "outline.nose_width",
        "less than the width",
    ),
    (
        "notch-too-deep.yaml",
        "outline.notch_depth",
        "deeper than that the tail allows no notch",
    ),
    (
        "tail-end-too-wide.yaml",
        "outline.tail_end_width",
        "not narrower than the tail width",
    ),
    (
        "tips-fill-the-notch.yaml",
        "outline.tip_width",
        "leave no notch",
    ),
    ("rail-too-thin.yaml", "rails.thickness", "can make it only"),
    (
        "roll-too-wide.yaml",
        "rails.roll",
        "within 80 % of the half-width",
    ),
    ("unclosed-list.yaml", ":18:3:", "invalid type: sequence"),
    (
        "unterminated-quote.yaml",
        ".yaml:",
        "did not find expected key",
    ),
    (
        "wide-point-off-board.yaml",
        "outline.wide_point",
        "off the part of the board",
    ),
    ("wrong-type.yaml", ":8:3:", "expected a length"),
    (
        "zero-thickness.yaml",
        "thickness.max",
        "must be more than 0 mm",
    ),
];

#[test]
fn every_bad_description_is_refused_clearly_and_writes_nothing() {
    let listed: Vec<String> = std::fs::read_dir(root().join("fixtures/bad"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".yaml"))
        .collect();
    assert_eq!(
        listed.len(),
        BAD.len(),
        "a bad fixture has no expected message: {listed:?}"
    );
    for (file, field, words) in BAD {
        let dir = tempfile::tempdir().unwrap();
        let path = root().join("fixtures/bad").join(file);
        for args in [
            vec!["mesh", path.to_str().unwrap(), "-o", "out"],
            vec!["make", path.to_str().unwrap()],
        ] {
            let o = run(&args, dir.path());
            let err = text(&o.stderr);
            assert_eq!(o.status.code(), Some(2), "{file}: {err}");
            assert!(err.starts_with("blanksmith: error: "), "{file}: {err}");
            assert!(
                err.contains(&format!("{file}:")),
                "{file}: message does not name the file: {err}"
            );
            assert!(
                err.contains(field),
                "{file}: message does not name {field}: {err}"
            );
            assert!(
                err.contains(words),
                "{file}: message does not say {words:?}: {err}"
            );
            assert!(!err.contains("panicked"), "{file}: {err}");
            assert!(
                files_under(dir.path()).is_empty(),
                "{file}: wrote {:?}",
                files_under(dir.path())
            );
        }
    }
}

#[test]
fn out_of_range_tolerances_and_missing_files_are_errors() {
    let dir = tempfile::tempdir().unwrap();
    let board = root().join("fixtures/shortboard.yaml");
    for tol in ["1e-9", "0", "-1", "NaN", "50"] {
        let flag = format!("--tolerance={tol}");
        for cmd in ["mesh", "make"] {
            let o = run(&[cmd, board.to_str().unwrap(), &flag], dir.path());
            let err = text(&o.stderr);
            assert_eq!(o.status.code(), Some(2), "{tol}: {err}");
            assert!(err.contains("tolerance"), "{tol}: {err}");
        }
    }
    let o = run(&["mesh", "no-such-board.yaml"], dir.path());
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("no-such-board.yaml: cannot read"));
    assert!(files_under(dir.path()).is_empty());
}

/// Each bad STL file and words its message must say (with its location).
const BAD_STL: &[(&str, &str)] = &[
    (
        "ascii-junk.stl",
        "line 9, column 1: expected `facet` or `endsolid`, found `this is not stl`",
    ),
    (
        "ascii-no-end.stl",
        "line 9, column 1: the file ends without `endsolid`",
    ),
    ("empty.stl", "not an STL file: the file is empty"),
    (
        "header-claims-more.stl",
        "the header says 1000000000 triangles",
    ),
    (
        "missing-endloop.stl",
        "line 7, column 2: expected `endloop`, found `endfacet`",
    ),
    (
        "nan-coordinate.stl",
        "facet 2: a coordinate is not a finite number",
    ),
    (
        "truncated.stl",
        "truncated binary STL: the header says 4 triangles (284 bytes) but the file has 254 bytes",
    ),
];

#[test]
fn every_bad_stl_is_refused_clearly() {
    let listed = std::fs::read_dir(root().join("fixtures/bad"))
        .unwrap()
        .filter(|e| {
            e.as_ref()
                .unwrap()
                .file_name()
                .to_string_lossy()
                .ends_with(".stl")
        })
        .count();
    assert_eq!(
        listed,
        BAD_STL.len(),
        "a bad STL fixture has no expected message"
    );
    for (file, words) in BAD_STL {
        let dir = tempfile::tempdir().unwrap();
        let path = root().join("fixtures/bad").join(file);
        for args in [
            vec!["check", path.to_str().unwrap()],
            vec!["slice", path.to_str().unwrap()],
        ] {
            let o = run(&args, dir.path());
            let err = text(&o.stderr);
            assert_eq!(o.status.code(), Some(2), "{file}: {err}");
            assert!(
                err.contains(&format!("{file}: ")) && err.contains(words),
                "{file}: {err}"
            );
            assert!(!err.contains("panicked"), "{file}: {err}");
            assert!(files_under(dir.path()).is_empty());
        }
    }
}

#[test]
fn check_passes_our_own_mesh_and_flags_an_open_one() {
    let dir = tempfile::tempdir().unwrap();
    let board = root().join("fixtures/fish.yaml");
    assert!(
        run(&["mesh", board.to_str().unwrap(), "-o", "."], dir.path())
            .status
            .success()
    );
    let o = run(&["check", "saltgrass-fish-5-6.stl", "--json"], dir.path());
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for key in [
        "triangles",
        "vertices",
        "open_edges",
        "holes",
        "non_manifold_edges",
        "inconsistent_edges",
        "degenerate_triangles",
        "duplicate_triangles",
        "components",
        "euler_characteristic",
        "watertight",
        "inside_out",
        "volume_litres",
        "bbox_mm",
        "surface_area_m2",
    ] {
        assert!(v.get(key).is_some(), "check JSON lacks {key}");
    }
    let report: serde_json::Value = serde_json::from_slice(
        &std::fs::read(dir.path().join("saltgrass-fish-5-6.report.json")).unwrap(),
    )
    .unwrap();
    // The STL is f32: its volume matches the f64 mesh to float precision.
    let (a, b) = (
        v["volume_litres"].as_f64().unwrap(),
        report["volume_litres"].as_f64().unwrap(),
    );
    assert!((a - b).abs() < 1e-4, "{a} vs {b}");
    // Cut the file short of its last facet's worth of triangles but keep the
    // header honest: drop 100 facets and fix the count, leaving holes.
    let mut bytes = std::fs::read(dir.path().join("saltgrass-fish-5-6.stl")).unwrap();
    let n = u32::from_le_bytes(bytes[80..84].try_into().unwrap()) - 100;
    bytes.truncate(84 + 50 * n as usize);
    bytes[80..84].copy_from_slice(&n.to_le_bytes());
    std::fs::write(dir.path().join("holed.stl"), &bytes).unwrap();
    let o = run(&["check", "holed.stl"], dir.path());
    assert_eq!(o.status.code(), Some(1));
    let out = text(&o.stdout);
    assert!(
        out.contains("open edges") && out.contains("volume       none"),
        "{out}"
    );
}

#[test]
fn slice_writes_true_scale_svg_and_csv() {
    let dir = tempfile::tempdir().unwrap();
    let board = root().join("fixtures/shortboard.yaml");
    let o = run(
        &[
            "slice",
            board.to_str().unwrap(),
            "--stations",
            "12in, centre, 12in from tail",
            "--z-step",
            "1in",
        ],
        dir.path(),
    );
    assert!(o.status.success(), "{}", text(&o.stderr));
    let out = text(&o.stdout);
    assert_eq!(
        out.lines().filter(|l| l.starts_with("section")).count(),
        3,
        "{out}"
    );
    assert!(out.lines().any(|l| l.starts_with("waterline")), "{out}");
    let svg = std::fs::read_to_string(dir.path().join("out/saltgrass-shortboard-6-2.sections.svg"))
        .unwrap();
    assert!(
        svg.contains("mm\" height=\"") && svg.contains("viewBox=\"0 0 "),
        "{}",
        &svg[..300]
    );
    let csv = std::fs::read_to_string(dir.path().join("out/saltgrass-shortboard-6-2.sections.csv"))
        .unwrap();
    assert!(csv.starts_with("slice,axis,at_mm,quoted_mm,contour,closed,point,u_mm,v_mm\n"));
    assert!(
        dir.path()
            .join("out/saltgrass-shortboard-6-2.waterlines.svg")
            .exists()
    );
    let o = run(
        &["slice", board.to_str().unwrap(), "--stations", "9ft"],
        dir.path(),
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("off the board"));
}

#[test]
fn resize_writes_a_description_the_other_commands_accept() {
    let dir = tempfile::tempdir().unwrap();
    let board = root().join("fixtures/shortboard.yaml");
    let o = run(
        &[
            "resize",
            board.to_str().unwrap(),
            "--length",
            "5'8\"",
            "--name",
            "short-5-8",
            "-o",
            "short.yaml",
        ],
        dir.path(),
    );
    assert!(o.status.success(), "{}", text(&o.stderr));
    let out = text(&o.stdout);
    // Both unit systems and litres, old against new.
    assert!(
        out.contains("5' 8\"") && out.contains("1727.2 mm") && out.contains(" L"),
        "{out}"
    );
    assert!(dir.path().join("short.overlay.svg").exists());
    let o = run(&["report", "short.yaml", "--json"], dir.path());
    assert!(o.status.success(), "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["name"], "short-5-8");
    // 5'8" = 68 in = 1727.2 mm (1 in = 25.4 mm, NIST SP 811).
    assert!((v["length_mm"].as_f64().unwrap() - 1727.2).abs() < 1e-9);
    // The diff quotes each board's volume as its own report does.
    let o = run(&["report", board.to_str().unwrap(), "--json"], dir.path());
    let a: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let a_litres = format!("volume: A {:.2} L", a["volume_litres"].as_f64().unwrap());
    let o = run(&["diff", board.to_str().unwrap(), "short.yaml"], dir.path());
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(
        text(&o.stdout).contains(&a_litres),
        "{a_litres}\n{}",
        text(&o.stdout)
    );
    for bad in [
        vec!["--keep", "colour"],
        vec!["--water", "lemonade"],
        vec!["--rider-kg", "80"],
        vec!["--length", "6 furlongs"],
    ] {
        let fresh = tempfile::tempdir().unwrap();
        let mut args = vec!["resize", board.to_str().unwrap()];
        args.extend(bad.iter().copied());
        let o = run(&args, fresh.path());
        assert_eq!(o.status.code(), Some(2), "{bad:?}: {}", text(&o.stderr));
        assert!(files_under(fresh.path()).is_empty());
    }
}

/// Bad machine and job profiles and bad programs: the file, the place or
/// field, the rule; exit 2; no panic; nothing written.
const BAD_PROFILES: &[(&str, &str, &str)] = &[
    (
        "machine/bull-without-corner.yaml",
        ":23:11: tools[1].corner_radius",
        "is missing",
    ),
    (
        "machine/duplicate-tool.yaml",
        ":22:9: tools[1].id",
        "listed twice",
    ),
    (
        "machine/feed-not-a-feed.yaml",
        ":9:16:",
        "`fast` is not a feed",
    ),
    (
        "machine/flutes-longer-than-reach.yaml",
        ":19:26: tools[0].length_below_holder",
        "shorter than the flutes",
    ),
    (
        "machine/negative-travel.yaml",
        ":6:13: travel.x",
        "must be more than 0 mm",
    ),
    (
        "machine/tool-id-negative.yaml",
        ":15:9:",
        "expected a whole number, 0 or more",
    ),
    (
        "machine/unknown-field.yaml",
        ":13:1:",
        "unknown field `spindel`",
    ),
    (
        "job/block-beyond-travel.yaml",
        "block-beyond-travel.yaml on",
        "X travel is 3000.0 mm",
    ),
    (
        "job/rocker-with-thickness.yaml",
        ":6:14: stock.thickness",
        "set by the rocker stations",
    ),
    (
        "job/rocker-stations-backwards.yaml",
        ":9:12: stock.rocker[2].at",
        "stations must increase along the blank",
    ),
    (
        "job/rocker-deck-below-bottom.yaml",
        ":8:36: stock.rocker[1].deck",
        "at least 10 mm thick",
    ),
    (
        "job/rocker-short-of-the-ends.yaml",
        ":7:5: stock.rocker",
        "it must run from 0 to the blank's length",
    ),
    (
        "job/rocker-too-little-room.yaml",
        "rocker-too-little-room.yaml on",
        "stands 5.9 mm (1/4\") out of the blank's curves",
    ),
    (
        "job/block-too-thin.yaml",
        "block-too-thin.yaml on",
        "41.8 mm (1 5/8\") short",
    ),
    (
        "job/feed-beyond-machine.yaml",
        ":2:9: outline.feed",
        "at most 15000 mm/min",
    ),
    (
        "job/finishing-flat-tool.yaml",
        ":2:9: finishing.tool",
        "needs a ball-end or bull-nose tool",
    ),
    (
        "job/pitch-word.yaml",
        ":2:10: placement.pitch",
        "must be `auto`",
    ),
    (
        "job/scallop-too-fine.yaml",
        "scallop-too-fine.yaml on",
        "about 76 million cutter positions a side; the limit is 40 million",
    ),
    (
        "job/spindle-beyond-machine.yaml",
        ":3:12: roughing.spindle",
        "between 6000 and 24000",
    ),
    (
        "job/stepdown-too-deep.yaml",
        ":2:13: roughing.stepdown",
        "allows at most 50 mm",
    ),
    (
        "job/stepdown-too-fine.yaml",
        ":2:13: roughing.stepdown",
        "is 0.001 mm (0.0000\"); it must be at least 0.5 mm (0.0197\")",
    ),
    (
        "job/stepover-too-fine.yaml",
        ":2:13: roughing.stepover",
        "is 0.000019 mm (0.0000\"); it must be at least 0.381 mm (0.0150\")",
    ),
    (
        "job/stepover-too-wide.yaml",
        ":2:13: roughing.stepover",
        "at most 90 % of the tool diameter",
    ),
    (
        "job/unknown-tool.yaml",
        ":2:9: roughing.tool",
        "T7 is not in the machine's tool list",
    ),
    ("gcode/absurd-number.nc", ":3:4:", "no exponent"),
    (
        "gcode/arc-endpoints.nc",
        ":7:1:",
        "the radius does not fit the end points",
    ),
    ("gcode/arc-radius.nc", ":7:12:", "too small for a chord"),
    ("gcode/binary.nc", ":1:1:", "binary data"),
    ("gcode/huge-number.nc", ":3:4:", "out of range"),
    ("gcode/long-line.nc", ":2:1:", "longer than 4096 characters"),
    ("gcode/no-feed.nc", ":6:1:", "before any feed"),
    ("gcode/no-units.nc", ":2:1:", "before the units are stated"),
    ("gcode/unclosed-comment.nc", ":1:9:", "not closed"),
    (
        "gcode/unknown-word.nc",
        ":2:1:",
        "`G54` is outside the supported subset",
    ),
];

#[test]
fn every_bad_profile_and_program_is_refused_clearly_and_writes_nothing() {
    let mut listed = vec![];
    for sub in ["machine", "job", "gcode"] {
        for e in std::fs::read_dir(root().join("fixtures/bad").join(sub)).unwrap() {
            listed.push(format!(
                "{sub}/{}",
                e.unwrap().file_name().to_string_lossy()
            ));
        }
    }
    listed.sort();
    let mut known: Vec<String> = BAD_PROFILES.iter().map(|b| b.0.to_string()).collect();
    known.sort();
    assert_eq!(listed, known, "every bad fixture has its expected message");
    let machine = root().join("fixtures/machine-gantry-3000.yaml");
    let board = root().join("fixtures/shortboard.yaml");
    for (file, place, words) in BAD_PROFILES {
        let dir = tempfile::tempdir().unwrap();
        let path = root().join("fixtures/bad").join(file);
        let (b, m, p) = (
            board.to_str().unwrap(),
            machine.to_str().unwrap(),
            path.to_str().unwrap(),
        );
        let args: Vec<&str> = if file.starts_with("machine/") {
            vec!["cut", b, "--machine", p, "-o", "out", "--quiet"]
        } else if file.starts_with("job/") {
            vec!["cut", b, "--machine", m, "--job", p, "-o", "out", "--quiet"]
        } else {
            vec![
                "verify",
                p,
                "--machine",
                m,
                "--stock",
                "300x200x50mm",
                "--tool",
                "flat:10mm",
                "-o",
                "out",
                "--quiet",
            ]
        };
        let o = run(&args, dir.path());
        let err = text(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{file}: {err}");
        assert!(err.starts_with("blanksmith: error: "), "{file}: {err}");
        let name = file.rsplit('/').next().unwrap();
        assert!(err.contains(name), "{file}: names the file: {err}");
        assert!(err.contains(place), "{file}: says where ({place}): {err}");
        assert!(err.contains(words), "{file}: says {words:?}: {err}");
        assert!(!err.contains("panicked"), "{file}: {err}");
        assert!(
            files_under(dir.path()).is_empty(),
            "{file}: wrote {:?}",
            files_under(dir.path())
        );
    }
}
