//! Fins, the leash plug, glassing and weight: the marks on the outline
//! template where the description puts them, the weight of the check box
//! by hand, the areas against the mesh's own, and bad fields refused at
//! their place with nothing written.

use std::path::Path;
use std::process::Command;

use blanksmith::description;
use blanksmith::model::board::Board;
use blanksmith::template::drawing::{self as template, BORDER, Item, Role};
use blanksmith::volume::{measure, weight};

fn fixture(name: &str) -> Board {
    let path = format!("{}/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    description::load(Path::new(&path)).unwrap()
}

fn mesh(board: &Board) -> blanksmith::model::mesh::Mesh {
    blanksmith::meshing::mesher::mesh_board(board, blanksmith::meshing::mesher::DEFAULT_TOLERANCE)
        .unwrap()
}

/// The half outline's edge (the template's cut line) at x, drawing mm.
fn template_edge(d: &template::Drawing, x: f64) -> f64 {
    let Some(Item::Line { points, .. }) = d.items.first() else {
        panic!("the outline comes first");
    };
    points
        .windows(2)
        .filter(|w| (w[0][0] - x) * (w[1][0] - x) <= 0.0 && w[0][0] != w[1][0])
        .map(|w| w[0][1] + (w[1][1] - w[0][1]) * (x - w[0][0]) / (w[1][0] - w[0][0]))
        .fold(f64::NEG_INFINITY, f64::max)
}

/// On the outline template, each fin's centreline (a guide run 30 mm past
/// the box at each end) starts `from_tail` from the template's tail end and
/// `from_rail` in from the template's own edge there, and is turned by the
/// toe; the plug's circle is centred `from_tail` from the tail on the
/// stringer. Within 0.1 mm (the check) of the description.
#[test]
fn fin_and_plug_marks_stand_where_the_description_puts_them() {
    for name in ["shortboard.yaml", "fish.yaml", "longboard.yaml"] {
        let b = fixture(name);
        let side = template::curves_of(&b);
        let mut d = template::outline(&side);
        let outline_items = d.items.len();
        let marks = template::fitting_marks(&b);
        d.items.extend(marks.clone());
        let fins = &b.fittings.fins;
        assert!(!fins.is_empty(), "{name}");
        // Each box's guide line, in order (side fins once: the +y half).
        let guides: Vec<&Vec<[f64; 2]>> = d.items[outline_items..]
            .iter()
            .filter_map(|i| match i {
                Item::Line {
                    points,
                    role: Role::Guide,
                    ..
                } if points.len() == 2 => Some(points),
                _ => None,
            })
            .collect();
        assert_eq!(guides.len(), fins.len(), "{name}");
        let tail_end = BORDER + b.length;
        for (fin, g) in fins.iter().zip(guides) {
            let (p, q) = (g[0], g[1]);
            let len = ((q[0] - p[0]).powi(2) + (q[1] - p[1]).powi(2)).sqrt();
            let dir = [(q[0] - p[0]) / len, (q[1] - p[1]) / len];
            let front = [p[0] + 30.0 * dir[0], p[1] + 30.0 * dir[1]];
            assert!(
                (tail_end - front[0] - fin.from_tail).abs() < 0.1,
                "{name} {}: {} from the tail, described {}",
                fin.role,
                tail_end - front[0],
                fin.from_tail
            );
            let from_rail = if fin.centre {
                front[1] - BORDER
            } else {
                template_edge(&d, front[0]) - front[1]
            };
            let want = if fin.centre { 0.0 } else { fin.from_rail };
            // The template's edge is a polyline through stations a few mm
            // apart: its chord stands within 0.05 mm of the curve.
            assert!(
                (from_rail - want).abs() < 0.1,
                "{name} {}: {from_rail} from the rail, described {want}",
                fin.role
            );
            let toe = dir[1].atan2(dir[0]).to_degrees();
            assert!(
                (toe - fin.toe).abs() < 1e-9,
                "{name} {}: toe {toe}, described {}",
                fin.role,
                fin.toe
            );
        }
        // The labels carry toe and cant as given.
        let texts: Vec<&str> = marks
            .iter()
            .filter_map(|i| match i {
                Item::Text { text, .. } => Some(text.as_str()),
                _ => None,
            })
            .collect();
        for fin in fins.iter().filter(|f| !f.centre) {
            let want = format!("toe {} deg in, cant {} deg out", fin.toe, fin.cant);
            assert!(texts.iter().any(|t| t.contains(&want)), "{name}: {want}");
        }
        let plug = b.fittings.plug.unwrap();
        let circle = marks
            .iter()
            .rev()
            .find_map(|i| match i {
                Item::Line {
                    points,
                    role: Role::Guide,
                    ..
                } if points.len() == 49 => Some(points),
                _ => None,
            })
            .unwrap();
        let n = (circle.len() - 1) as f64;
        let cx = circle[..circle.len() - 1].iter().map(|p| p[0]).sum::<f64>() / n;
        let cy = circle[..circle.len() - 1].iter().map(|p| p[1]).sum::<f64>() / n;
        assert!((tail_end - cx - plug.from_tail).abs() < 0.1, "{name}");
        assert!((cy - BORDER).abs() < 0.1, "{name}");
    }
}

/// The check box (1000 x 500 x 60 mm, one 200 g/m² layer a side, no laps,
/// no stringer, resin equal to the cloth, foam 40 kg/m³), by hand: deck and
/// bottom 0.5 m² each plus half the walls, 2 (1.0 + 0.5) x 0.06 / 2 =
/// 0.09 m², so 0.59 m² a side; cloth 2 x 0.59 x 200 = 236 g; resin 236 g;
/// foam 30 L x 40 kg/m³ = 1200 g; no fittings: 1672 g in all. Perimeter
/// 3 m.
#[test]
fn the_check_box_weighs_what_the_hand_sum_says() {
    let b = fixture("check-box.yaml");
    let m = mesh(&b);
    let v = measure::measure(&m).volume;
    let w = weight::estimate(&b, &m, v);
    assert!((w.deck_m2 - 0.59).abs() < 1e-9, "{}", w.deck_m2);
    assert!((w.bottom_m2 - 0.59).abs() < 1e-9, "{}", w.bottom_m2);
    assert!((w.perimeter_m - 3.0).abs() < 1e-9, "{}", w.perimeter_m);
    let line = |what: &str| w.lines.iter().find(|l| l.0 == what).unwrap().1;
    assert!((line("deck cloth") - 118.0).abs() < 1e-6);
    assert!((line("bottom cloth") - 118.0).abs() < 1e-6);
    assert!((line("laminating resin") - 236.0).abs() < 1e-6);
    assert!((line("foam") - 1200.0).abs() < 1e-6);
    assert!((w.total_g - 1672.0).abs() < 1e-6, "{}", w.total_g);
}

/// Deck plus bottom is the mesh's surface area (measured by `measure`) for
/// every fixture; and a stringer's volume is its width times the side
/// area, checked on the box (60 mm x 1000 mm x 3.175 mm = 0.1905 L).
#[test]
fn deck_and_bottom_make_the_whole_surface() {
    for name in [
        "shortboard.yaml",
        "fish.yaml",
        "longboard.yaml",
        "check-box.yaml",
    ] {
        let b = fixture(name);
        let m = mesh(&b);
        let (deck, bottom) = weight::deck_and_bottom(&m);
        let area = measure::measure(&m).area;
        assert!(
            ((deck + bottom) - area).abs() < 1e-9 * area,
            "{name}: {deck} + {bottom} vs {area}"
        );
        assert!(deck > 0.3 * area && bottom > 0.3 * area, "{name}");
    }
    let b = fixture("check-box.yaml");
    let v = weight::stringer_volume(&b, 3.175);
    assert!((v - 190_500.0).abs() < 1e-3, "{v}");
}

/// A common shortboard estimate lands where boards of its size weigh:
/// 2.3 to 3.6 kg for a 6'2" polyurethane thruster glassed 6+6 / 6 (common
/// practice, from memory).
#[test]
fn the_demo_weighs_like_a_shortboard() {
    let b = fixture("shortboard.yaml");
    let m = mesh(&b);
    let w = weight::estimate(&b, &m, measure::measure(&m).volume);
    assert!((2300.0..=3600.0).contains(&w.total_g), "{:?}", w.text());
    assert_eq!(
        w.lines.iter().find(|l| l.0 == "fin boxes").unwrap().1,
        3.0 * b.laminate.box_mass
    );
}

fn blanksmith(args: &[&str], cwd: &Path) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_blanksmith"))
        .args(args)
        .current_dir(cwd)
        .output()
        .unwrap()
}

/// Bad fin, plug, laminate and order fields: the file, line and column,
/// the field and the rule; exit 2; nothing written.
#[test]
fn bad_fittings_are_refused_at_their_place() {
    let base = std::fs::read_to_string(format!(
        "{}/fixtures/shortboard.yaml",
        env!("CARGO_MANIFEST_DIR")
    ))
    .unwrap();
    let cases = [
        (
            "  centre: {from_tail: 8 1/4}",
            "  centre: {from_tail: 8 1/4}\n  rear: {from_tail: 5}",
            "fins.rear",
            "does not apply",
        ),
        (
            "from_rail: 2 1/8",
            "from_rail: 1/4",
            "fins.side.from_rail",
            "break out through the rail",
        ),
        (
            "  centre: {from_tail: 8 1/4}",
            "  centre: {from_tail: 8 1/4, box: {depth: 1 1/4}}",
            "fins.centre.box.depth",
            "left under the deck",
        ),
        (
            "  centre: {from_tail: 8 1/4}",
            "  centre: {from_tail: 8 1/4, toe: 2}",
            "fins.centre.toe",
            "does not apply",
        ),
        (
            "from_rail: 2 1/8",
            "from_rail: 11",
            "fins.side.from_rail",
            "past the stringer",
        ),
        ("toe: 2,", "toe: 25,", "fins.side.toe", "between 0 and 10"),
        (
            "leash_plug: {from_tail: 4 1/2}",
            "leash_plug: {from_tail: 4 1/2, depth: 1 1/4}",
            "leash_plug.depth",
            "left under it",
        ),
        (
            "leash_plug: {from_tail: 4 1/2}",
            "leash_plug: {from_tail: 4 1/2}\nlaminate: {deck: [60oz]}",
            "laminate.deck",
            "outside 50 to 1000",
        ),
        (
            "  due: week 3",
            "  due: week 3\n  colour: [red]",
            "colour",
            "",
        ),
    ];
    let dir = tempfile::tempdir().unwrap();
    for (from, to, field, rule) in cases {
        assert!(base.contains(from), "{from}");
        let text = base.replacen(from, to, 1);
        let file = dir.path().join("bad.yaml");
        std::fs::write(&file, &text).unwrap();
        let out = dir.path().join("out");
        let o = blanksmith(
            &["make", "bad.yaml", "-o", "out", "--no-cut", "--quiet"],
            dir.path(),
        );
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{to}: {err}");
        assert!(err.contains("bad.yaml:"), "{to}: {err}");
        assert!(err.contains(field) && err.contains(rule), "{to}: {err}");
        // Line and column of the field named.
        let loc = err.split("bad.yaml:").nth(1).unwrap();
        let line: usize = loc.split(':').next().unwrap().parse().unwrap();
        assert!(line > 1, "{err}");
        assert!(!out.exists(), "{to}: something was written");
    }
}

/// `make` writes one order sheet per board: one page of the paper asked
/// for (A4 by default, Letter with `--paper letter`; sizes from ISO 216
/// and ANSI), read back with an independent PDF reader (lopdf), carrying
/// the customer, the fins, the glassing, the weight and the cut.
#[test]
fn make_writes_an_order_sheet_on_the_paper_asked_for() {
    let dir = tempfile::tempdir().unwrap();
    let board = format!("{}/fixtures/shortboard.yaml", env!("CARGO_MANIFEST_DIR"));
    for (paper, size_mm) in [("a4", [210.0, 297.0]), ("letter", [215.9, 279.4])] {
        let out = format!("out-{paper}");
        let o = blanksmith(
            &["make", &board, "-o", &out, "--paper", paper, "--quiet"],
            dir.path(),
        );
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let pdf = dir
            .path()
            .join(&out)
            .join("saltgrass-shortboard-6-2/saltgrass-shortboard-6-2.order.pdf");
        let doc = lopdf::Document::load(&pdf).unwrap();
        let pages = doc.get_pages();
        assert_eq!(pages.len(), 1, "{paper}");
        let (_, &id) = pages.iter().next().unwrap();
        let media = doc.get_dictionary(id).unwrap().get(b"MediaBox").unwrap();
        let m: Vec<f64> = media
            .as_array()
            .unwrap()
            .iter()
            .map(|o| {
                o.as_float()
                    .map(f64::from)
                    .unwrap_or_else(|_| o.as_i64().unwrap() as f64)
            })
            .collect();
        let pt = 72.0 / 25.4;
        assert!(
            (m[2] - size_mm[0] * pt).abs() < 0.01 && (m[3] - size_mm[1] * pt).abs() < 0.01,
            "{paper}: {m:?}"
        );
        let text = doc.extract_text(&[1]).unwrap();
        for want in [
            "Ada Quillfeather",
            "thruster",
            "leash plug",
            "glassing",
            "finished weight about",
            "on the router",
        ] {
            assert!(text.contains(want), "{paper}: no `{want}` in\n{text}");
        }
    }
}

/// The fin boxes and the plug routed on the shipped machine (its 1/4 in
/// end mill), simulated: each pocket's plan area against the box's own
/// geometry by hand (a 4 5/8 x 1/2 in slot with 1/4 in end radii: L W -
/// (4 - pi) r^2 = 1457.3 mm²; the 1 in plug pi d²/4 = 506.7 mm²), its depth
/// and volume against the description, and no gouge anywhere else.
#[test]
fn pockets_are_cut_to_the_box_geometry_and_nowhere_else() {
    use blanksmith::commands::{self as cmd, Design};
    let b = fixture("shortboard.yaml");
    let m = blanksmith::profiles::machine::generic_machine();
    let j = blanksmith::profiles::job::job_from_str("{}", "job.yaml", &m).unwrap();
    let plan = cmd::plan_design(&Design::Board(Box::new(b.clone())), &m, &j, &|_| {}).unwrap();
    let names: Vec<&str> = plan.programs.iter().map(|p| p.file_name.as_str()).collect();
    assert!(
        names.iter().any(|n| n.ends_with("-1-deck-T4.nc")),
        "{names:?}"
    );
    assert!(
        names.iter().any(|n| n.ends_with("-2-bottom-T4.nc")),
        "{names:?}"
    );
    let v = cmd::verify_plan(&plan, &m, &j, &|_| {}).unwrap();
    assert!(!v.has_findings(), "{}", v.text());
    assert!(
        v.gouge_max_mm.unwrap() <= v.gouge_tolerance_mm,
        "{}",
        v.text()
    );
    assert_eq!(v.pockets.len(), 4, "{}", v.text());
    let slot = 117.475 * 12.7 - (4.0 - std::f64::consts::PI) * 6.35 * 6.35;
    let plug = std::f64::consts::PI * 25.4 * 25.4 / 4.0;
    for p in &v.pockets {
        let want = if p.label == "leash plug" { plug } else { slot };
        assert!(
            (p.design_area_mm2 - want).abs() < 0.1,
            "{}: {}",
            p.label,
            p.design_area_mm2
        );
        // Cells of 0.5 mm along a wall of about 260 mm: within 3 %.
        assert!(
            (p.area_mm2 - want).abs() < 0.03 * want,
            "{}: {} mm² cut, {want} designed",
            p.label,
            p.area_mm2
        );
        // The floor follows the surface; a flat end mill on the rocker's
        // slope cuts up to r tan(slope) deeper at its low edge (0.4 mm at
        // 7°), and the depth is taken square to the design.
        assert!(
            p.depth_median_mm >= p.depth_mm - 0.1 && p.depth_median_mm <= p.depth_mm + 0.6,
            "{}: {} deep at the median, {} designed",
            p.label,
            p.depth_median_mm,
            p.depth_mm
        );
        assert!(p.depth_max_mm <= p.depth_mm + 1.0, "{}", p.label);
        let nominal = want * p.depth_mm / 1000.0;
        assert!(
            (p.volume_ml - nominal).abs() < 0.06 * nominal,
            "{}: {} ml, {nominal} by hand",
            p.label,
            p.volume_ml
        );
    }
    // Without a small enough flat end mill the pockets are left to the
    // shop, and the setup sheet says so.
    let mut small = m.clone();
    small.tools.retain(|t| t.id != 4);
    let plan = cmd::plan_design(&Design::Board(Box::new(b)), &small, &j, &|_| {}).unwrap();
    assert!(plan.pockets.is_empty());
    assert!(plan.sheet.contains("not routed"), "{}", plan.sheet);
}
