//! Templates read back with independent parsers: page sizes and bars from
//! the PDF (lopdf), tiles reassembled into the outline, the SVG outline
//! against the board (roxmltree).

use blanksmith::commands::{self as cmd, Design};
use blanksmith::template::drawing::{self as template, Item, Role};
use blanksmith::template::print::{self, CUT_WIDTH, PT_PER_MM};
use blanksmith::template::tiling;
use lopdf::{Document, Object, content::Content};

fn board() -> blanksmith::model::board::Board {
    let path = format!("{}/fixtures/shortboard.yaml", env!("CARGO_MANIFEST_DIR"));
    blanksmith::description::load(std::path::Path::new(&path)).unwrap()
}

fn num(o: &Object) -> f64 {
    match o {
        Object::Integer(i) => *i as f64,
        Object::Real(r) => *r as f64,
        _ => f64::NAN,
    }
}

struct PageData {
    media: [f64; 4],
    /// Horizontal segments drawn before any `cm` (page space), pt: (x0, x1, y).
    page_segments: Vec<(f64, f64, f64)>,
    /// Each tile: its clip window (page space), the translation after it,
    /// and the polylines stroked at the cut width inside it (drawing pt).
    windows: Vec<Window>,
}

struct Window {
    rect: [f64; 4],
    shift: [f64; 2],
    cut: Vec<Vec<[f64; 2]>>,
}

/// A page's MediaBox, points.
fn media_box(dict: &lopdf::Dictionary) -> Vec<f64> {
    dict.get(b"MediaBox")
        .unwrap()
        .as_array()
        .unwrap()
        .iter()
        .map(num)
        .collect()
}

fn read_pdf(bytes: &[u8]) -> Vec<PageData> {
    let doc = Document::load_mem(bytes).unwrap();
    let mut out = vec![];
    for (_, id) in doc.get_pages() {
        let dict = doc.get_object(id).unwrap().as_dict().unwrap();
        let mb = media_box(dict);
        let content = Content::decode(&doc.get_page_content(id)).unwrap();
        let mut p = PageData {
            media: [mb[0], mb[1], mb[2], mb[3]],
            page_segments: vec![],
            windows: vec![],
        };
        let (mut width, mut path, mut translated, mut rect) =
            (0.0, Vec::<[f64; 2]>::new(), false, None);
        for op in &content.operations {
            let a: Vec<f64> = op.operands.iter().map(num).collect();
            match op.operator.as_str() {
                "w" => width = a[0],
                "m" => path = vec![[a[0], a[1]]],
                "l" => path.push([a[0], a[1]]),
                "re" => rect = Some([a[0], a[1], a[2], a[3]]),
                "cm" => {
                    translated = true;
                    p.windows.push(Window {
                        rect: rect.unwrap(),
                        shift: [a[4], a[5]],
                        cut: vec![],
                    });
                }
                "Q" => translated = false,
                "S" | "s" => {
                    if !translated && path.len() == 2 && (path[0][1] - path[1][1]).abs() < 1e-3 {
                        p.page_segments.push((path[0][0], path[1][0], path[0][1]));
                    }
                    if translated && (width - CUT_WIDTH * PT_PER_MM).abs() < 1e-3 {
                        let w = p.windows.last_mut().unwrap();
                        w.cut.push(std::mem::take(&mut path));
                    }
                }
                _ => {}
            }
        }
        out.push(p);
    }
    out
}

fn templates_pdf(paper: print::Paper, only: &str) -> (Vec<u8>, Vec<template::Drawing>) {
    let dir = tempfile::tempdir().unwrap();
    let t = cmd::templates(
        &Design::Board(Box::new(board())),
        paper,
        &[only.to_string()],
        &[],
        dir.path(),
    )
    .unwrap();
    let pdf = std::fs::read(dir.path().join("saltgrass-shortboard-6-2.templates.pdf")).unwrap();
    (pdf, t.drawings)
}

#[test]
fn pages_have_exact_paper_sizes_and_both_calibration_bars() {
    // ISO 216 A4 = 210 × 297 mm = 595.28 × 841.89 pt; US Letter = 612 × 792 pt
    // (1 pt = 1/72 in, ISO 32000-1). The bars are 100 mm = 283.46 pt and
    // 4 in = 288 pt long.
    for (paper, size) in [
        (print::A4, [595.28, 841.89]),
        (print::LETTER, [612.0, 792.0]),
    ] {
        let (pdf, _) = templates_pdf(paper, "outline");
        let pages = read_pdf(&pdf);
        assert!(pages.len() > 2);
        for p in &pages {
            let (w, h) = (p.media[2] - p.media[0], p.media[3] - p.media[1]);
            let mut got = [w, h];
            got.sort_by(f64::total_cmp);
            assert!(
                (got[0] - size[0]).abs() < 0.01 && (got[1] - size[1]).abs() < 0.01,
                "{} page {w} × {h}",
                paper.name
            );
            for want in [100.0 * 72.0 / 25.4, 288.0] {
                assert!(
                    p.page_segments
                        .iter()
                        .any(|s| ((s.1 - s.0).abs() - want).abs() < 0.01),
                    "{}: no bar of {want} pt on a page",
                    paper.name
                );
            }
        }
    }
}

#[test]
fn tiles_reassemble_the_outline_and_lose_none_of_it() {
    let (pdf, drawings) = templates_pdf(print::A4, "outline");
    let outline = drawings.iter().find(|d| d.kind == "outline").unwrap();
    let Item::Line { points, .. } = outline
        .items
        .iter()
        .find(|i| {
            matches!(
                i,
                Item::Line {
                    role: Role::Cut,
                    ..
                }
            )
        })
        .unwrap()
    else {
        unreachable!()
    };
    let windows: Vec<Window> = read_pdf(&pdf).into_iter().flat_map(|p| p.windows).collect();
    assert!(!windows.is_empty());
    for w in &windows {
        // Each tile draws the cut line in drawing coordinates: it must be the
        // outline itself, point for point, to the PDF's number precision.
        assert_eq!(w.cut.len(), 1);
        for (a, b) in w.cut[0].iter().zip(points) {
            assert!((a[0] / PT_PER_MM - b[0]).abs() < 0.1 && (a[1] / PT_PER_MM - b[1]).abs() < 0.1);
        }
    }
    // Every point of the outline lies inside some tile's printable window
    // (undo each tile's shift): no part is lost in a margin.
    for q in points {
        let seen = windows.iter().any(|t| {
            let ([x, y, w, h], [tx, ty]) = (t.rect, t.shift);
            let (px, py) = (q[0] * PT_PER_MM + tx, q[1] * PT_PER_MM + ty);
            px >= x - 1e-6 && px <= x + w + 1e-6 && py >= y - 1e-6 && py <= y + h + 1e-6
        });
        assert!(seen, "outline point {q:?} falls in no tile");
    }
}

#[test]
fn svg_outline_matches_the_board_and_the_written_half_widths() {
    let b = board();
    let side = template::curves_of(&b);
    let svg = template::to_svg(&template::outline(&side));
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let root = doc.root_element();
    let height: f64 = root
        .attribute("height")
        .unwrap()
        .trim_end_matches("mm")
        .parse()
        .unwrap();
    assert!(root.attribute("width").unwrap().ends_with("mm"));
    let path = doc
        .descendants()
        .find(|n| n.has_tag_name("path") && n.attribute("stroke") == Some("black"))
        .unwrap();
    let d = path.attribute("d").unwrap();
    let mut checked = 0;
    for cmd in d
        .split(['M', 'L', 'Z'])
        .map(str::trim)
        .filter(|s| !s.is_empty())
    {
        let (x, y) = cmd.split_once(',').unwrap();
        let (x, y): (f64, f64) = (x.parse().unwrap(), y.parse().unwrap());
        let (bx, w) = (x - template::BORDER, height - y - template::BORDER);
        if w > 0.01 {
            // The SVG keeps 3 decimals: within 0.05 mm of the board's half-width.
            assert!(
                (w - b.half_width(bx)).abs() < 0.05,
                "at {bx}: {w} vs {}",
                b.half_width(bx)
            );
            checked += 1;
        }
    }
    assert!(checked > 100);
    // N12 is 12 1/4 in, so the half-width written 12 in from the nose is 6 1/8 in.
    let texts: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text().map(String::from))
        .collect();
    assert!(
        texts.iter().any(|t| t == "half 155.6 mm / 6 1/8\""),
        "{texts:?}"
    );
}

#[test]
fn roll_paper_is_as_wide_as_asked_and_tabloid_and_a3_are_exact() {
    // A roll 914 mm (36 in) wide; ISO 216 A3 = 297 × 420 mm = 841.89 × 1190.55 pt;
    // US Tabloid = 11 × 17 in = 792 × 1224 pt.
    let roll = print::paper("roll:36in").unwrap();
    assert!((roll.width - 914.4).abs() < 1e-9);
    for (paper, size) in [
        (print::A3, [841.89, 1190.55]),
        (print::TABLOID, [792.0, 1224.0]),
    ] {
        let (pdf, _) = templates_pdf(paper, "rocker");
        for p in read_pdf(&pdf) {
            let mut got = [p.media[2] - p.media[0], p.media[3] - p.media[1]];
            got.sort_by(f64::total_cmp);
            assert!(
                (got[0] - size[0]).abs() < 0.01 && (got[1] - size[1]).abs() < 0.01,
                "{}: {got:?}",
                paper.name
            );
        }
    }
    let (pdf, _) = templates_pdf(roll, "outline");
    let pages = read_pdf(&pdf);
    // The roll's width is one of each page's sides; the board's 6'2" fits along one page.
    assert!(
        pages
            .iter()
            .all(|p| ((p.media[2] - p.media[0]) - 914.4 * PT_PER_MM).abs() < 0.01)
    );
    assert!(
        pages.iter().map(|p| p.windows.len()).sum::<usize>() <= 6,
        "{} tiles",
        pages.len()
    );
    assert!(print::paper("roll:2cm").is_err() && print::paper("b5").is_err());
}

/// The outline template holds the planform of the board as meshed, for
/// every fixture and every tail shape: at stations every 10 mm, the
/// template's band across (from the stringer or the notch's edge out to the
/// rail) matches the mesh's section on that side (sliced by the project's
/// slicer; the mesh at 0.05 mm), within 0.5 mm (the template is straight
/// between its samples, which the mesher's own stations and every 5 mm
/// give). Before the notch was drawn, the fish's template ran straight to
/// the stringer at the tail: a square tail where the board has a notch.
#[test]
fn the_outline_template_holds_the_meshed_planform_for_every_tail() {
    use blanksmith::commands::{self, Design};
    use blanksmith::slice::plane::{Axis, slice_many};
    use blanksmith::template::drawing::{self, BORDER, Item, Role};
    let root = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("fixtures");
    let short = std::fs::read_to_string(root.join("shortboard.yaml")).unwrap();
    let mut cases: Vec<(String, String)> = ["shortboard", "fish", "longboard", "check-box"]
        .iter()
        .map(|f| {
            (
                f.to_string(),
                std::fs::read_to_string(root.join(format!("{f}.yaml"))).unwrap(),
            )
        })
        .collect();
    for tail in [
        "round",
        "pin",
        "rounded_pin",
        "square",
        "swallow",
        "diamond",
    ] {
        // The demo's fins are placed for its squash tail: other tails
        // would move the rail under them, so they are left out here.
        let bare = short.split("\n# Fins and plug").next().unwrap();
        let mut t = bare.replace(
            "tail: squash",
            &if tail == "swallow" {
                "tail: swallow\n  notch_depth: 4".to_string()
            } else {
                format!("tail: {tail}")
            },
        );
        if matches!(tail, "round" | "pin" | "rounded_pin") {
            t = t
                .lines()
                .filter(|l| {
                    !l.trim_start().starts_with("tail_end_width")
                        && !l.trim_start().starts_with("corner_radius")
                })
                .collect::<Vec<_>>()
                .join("\n");
        }
        if tail != "squash" {
            t = t
                .lines()
                .filter(|l| !l.trim_start().starts_with("corner_radius"))
                .collect::<Vec<_>>()
                .join("\n");
        }
        cases.push((format!("shortboard, {tail} tail"), t));
    }
    for (what, text) in cases {
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("b.yaml");
        std::fs::write(&f, &text).unwrap();
        let design = commands::load_design(&f).unwrap_or_else(|e| panic!("{what}: {e}"));
        let Design::Board(board) = &design else {
            panic!()
        };
        let mesh = design.mesh(0.05).unwrap();
        let d = drawing::outline(&drawing::curves_of(board));
        let poly: Vec<[f64; 2]> = d
            .items
            .iter()
            .find_map(|i| match i {
                Item::Line {
                    points,
                    closed: true,
                    role: Role::Cut,
                } => Some(points.clone()),
                _ => None,
            })
            .unwrap()
            .iter()
            .map(|p| [p[0] - BORDER, p[1] - BORDER])
            .collect();
        let (lo, _) = mesh.bounding_box().unwrap();
        let xs: Vec<f64> = (1..)
            .map(|k| 10.0 * k as f64 - 5.0)
            .take_while(|&x| x < board.length - 1.0)
            .collect();
        let slices = slice_many(
            &mesh,
            Axis::X,
            &xs.iter().map(|x| x + lo[0]).collect::<Vec<_>>(),
        );
        for (x, s) in xs.iter().zip(&slices) {
            // The template's band at x: where its edges cross the vertical.
            let mut ys: Vec<f64> = Vec::new();
            for k in 0..poly.len() {
                let (a, b) = (poly[k], poly[(k + 1) % poly.len()]);
                if (a[0] - x) * (b[0] - x) < 0.0 || (a[0] == *x && b[0] != *x) {
                    ys.push(a[1] + (b[1] - a[1]) * (x - a[0]) / (b[0] - a[0]));
                }
            }
            ys.sort_by(f64::total_cmp);
            let (t0, t1) = (ys[0], ys[ys.len() - 1]);
            // The mesh's section on the +Y side of the stringer.
            let pts: Vec<f64> = s
                .loops
                .iter()
                .flatten()
                .map(|q| q[0])
                .filter(|&y| y >= -1e-9)
                .collect();
            let m1 = pts.iter().copied().fold(0.0, f64::max);
            // A loop across the stringer starts the band at 0; a loop wholly
            // on the +Y side (a swallow's point) at its nearest point.
            let m0 = s
                .loops
                .iter()
                .filter(|l| l.iter().any(|q| q[0] > 1e-6))
                .map(|l| {
                    if l.iter().any(|q| q[0] < -1e-6) {
                        0.0
                    } else {
                        l.iter().map(|q| q[0]).fold(f64::INFINITY, f64::min)
                    }
                })
                .fold(f64::INFINITY, f64::min);
            assert!(
                (t1 - m1).abs() <= 0.5 && (t0 - m0).abs() <= 0.5,
                "{what} at {x} mm from the nose: template {t0:.2}..{t1:.2} mm, mesh {m0:.2}..{m1:.2} mm"
            );
        }
    }
}

/// Station labels speak the board's own units: the fish is written in
/// millimetres (ticks every 150 mm, labelled in mm), the shortboard in
/// inches (every 6 in); each section names its distance from both ends,
/// which add up to the board's length.
#[test]
fn labels_are_in_the_boards_units_and_sections_name_both_ends() {
    let root = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("fixtures");
    let texts = |d: &blanksmith::template::drawing::Drawing| -> Vec<String> {
        d.items
            .iter()
            .filter_map(|i| match i {
                Item::Text { text, .. } => Some(text.clone()),
                _ => None,
            })
            .collect()
    };
    let fish = blanksmith::description::load(&root.join("fish.yaml")).unwrap();
    let t = texts(&template::outline(&template::curves_of(&fish)));
    assert!(t.iter().any(|s| s == "150 mm from nose"), "{t:?}");
    assert!(!t.iter().any(|s| s.contains("\" from nose")), "{t:?}");
    let short = board();
    let t = texts(&template::outline(&template::curves_of(&short)));
    assert!(t.iter().any(|s| s == "6\" from nose"), "{t:?}");
    let design = cmd::load_design(&root.join("shortboard.yaml")).unwrap();
    let mesh = design.mesh(0.05).unwrap();
    let t = texts(&blanksmith::template::sections::sections(
        "s",
        &mesh,
        &[304.8],
    ));
    // 6'2" = 1879.6 mm; 1879.6 - 304.8 = 1574.8 mm from the tail.
    assert!(
        t.iter()
            .any(|s| s.contains("304.8 mm (12\") from nose, 1574.8 mm (5' 2\") from tail")),
        "{t:?}"
    );
}

/// The rocker template is a closed strip a shaper can cut out: the bottom
/// curve on top, square ends, a straight back 40 mm under the baseline;
/// the curve stands the description's rocker above the baseline (the
/// board's own rocker curve, within 0.05 mm); every station tick is named
/// by its distance from the nose, its height and the board's thickness
/// there (the description's foil).
#[test]
fn the_rocker_template_is_closed_and_labelled_at_its_stations() {
    let b = board();
    let side = template::curves_of(&b);
    let d = template::rocker(&side);
    let Some(Item::Line {
        points,
        closed,
        role: Role::Cut,
    }) = d.items.first()
    else {
        panic!("the rocker's cut line comes first");
    };
    assert!(*closed);
    let n = points.len();
    let (back_tail, back_nose) = (points[n - 2], points[n - 1]);
    assert!(
        (back_tail[1] - back_nose[1]).abs() < 1e-9,
        "the back is straight"
    );
    let base = back_nose[1] + template::BACK;
    // The curve's points against the description's rocker.
    for p in &points[..n - 2] {
        let x = p[0] - template::BORDER;
        let want = b.rocker.eval(x);
        assert!(
            (p[1] - base - want).abs() < 0.05,
            "at {x}: {} above the baseline, rocker {want}",
            p[1] - base
        );
    }
    // Ends square: the back's ends under the curve's ends.
    assert!((back_nose[0] - points[0][0]).abs() < 1e-9);
    assert!((back_tail[0] - points[n - 3][0]).abs() < 1e-9);
    let texts: Vec<&str> = d
        .items
        .iter()
        .filter_map(|i| match i {
            Item::Text { text, .. } => Some(text.as_str()),
            _ => None,
        })
        .collect();
    let stations = (b.length / (6.0 * 25.4)).floor() as usize;
    let named = texts.iter().filter(|t| t.ends_with("from nose")).count();
    assert!(
        named + 1 >= stations && named <= stations,
        "{named} of {stations}"
    );
    assert!(texts.iter().any(|t| t.starts_with("rocker ")));
    // The thickness at each station (6 in apart) is the description's foil
    // there, to the label's 0.1 mm.
    let thick: Vec<f64> = texts
        .iter()
        .filter_map(|t| t.strip_prefix("thick "))
        .map(|t| t.split(" mm").next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(thick.len(), named);
    for (k, t) in thick.iter().enumerate() {
        let x = (k + 1) as f64 * 6.0 * 25.4;
        let want = b.foil.eval(x);
        assert!(
            (t - want).abs() < 0.051,
            "at {x} mm: thick {t}, foil {want}"
        );
    }
}

/// The DXF of every template of every fixture, read back with the `dxf`
/// crate, holds the same lines as the SVG read back with roxmltree: the
/// same number of polylines on each layer (cut edges black in the SVG,
/// guides grey), the same points to the SVG's 3 decimals (y flipped: the
/// DXF keeps the drawing's y up, and the SVG's height is rounded
/// too: 0.0011 mm), the same closures, the same labels; and
/// the file says millimetres.
#[test]
fn dxf_templates_hold_the_svgs_lines_and_labels() {
    for fixture in ["shortboard", "fish", "longboard", "check-box"] {
        let path = format!("{}/fixtures/{fixture}.yaml", env!("CARGO_MANIFEST_DIR"));
        let b = blanksmith::description::load(std::path::Path::new(&path)).unwrap();
        let name = b.name.clone();
        let dir = tempfile::tempdir().unwrap();
        cmd::templates(
            &Design::Board(Box::new(b)),
            print::paper("a4").unwrap(),
            &["outline".into(), "rocker".into(), "sections".into()],
            &[],
            dir.path(),
        )
        .unwrap();
        for kind in ["outline", "rocker", "sections"] {
            let svg =
                std::fs::read_to_string(dir.path().join(format!("{name}.{kind}.svg"))).unwrap();
            let doc = roxmltree::Document::parse(&svg).unwrap();
            let height: f64 = doc
                .root_element()
                .attribute("height")
                .unwrap()
                .trim_end_matches("mm")
                .parse()
                .unwrap();
            let svg_lines: Vec<(&str, bool, Vec<[f64; 2]>)> = doc
                .descendants()
                .filter(|n| n.has_tag_name("path"))
                .map(|n| {
                    let d = n.attribute("d").unwrap();
                    let layer = if n.attribute("stroke") == Some("black") {
                        "CUT"
                    } else {
                        "GUIDE"
                    };
                    let points = d
                        .split(['M', 'L', 'Z'])
                        .map(str::trim)
                        .filter(|s| !s.is_empty())
                        .map(|p| {
                            let (x, y) = p.split_once(',').unwrap();
                            [x.parse().unwrap(), y.parse().unwrap()]
                        })
                        .collect();
                    (layer, d.ends_with('Z'), points)
                })
                .collect();
            let svg_texts: Vec<String> = doc
                .descendants()
                .filter(|n| n.has_tag_name("text"))
                .map(|n| n.text().unwrap_or("").to_string())
                .collect();

            let file = dir.path().join(format!("{name}.{kind}.dxf"));
            let drawing = dxf::Drawing::load_file(&file).unwrap();
            assert_eq!(
                drawing.header.default_drawing_units,
                dxf::enums::Units::Millimeters
            );
            let mut lines = vec![];
            let mut texts = vec![];
            for e in drawing.entities() {
                match &e.specific {
                    dxf::entities::EntityType::LwPolyline(p) => lines.push((
                        e.common.layer.clone(),
                        p.is_closed(),
                        p.vertices.iter().map(|v| [v.x, v.y]).collect::<Vec<_>>(),
                    )),
                    dxf::entities::EntityType::Text(t) => {
                        assert_eq!(e.common.layer, "TEXT");
                        texts.push(t.value.clone());
                    }
                    other => panic!("{kind}: unexpected entity {other:?}"),
                }
            }
            assert_eq!(lines.len(), svg_lines.len(), "{name} {kind}: polylines");
            assert!(
                lines.iter().any(|l| l.0 == "CUT"),
                "{name} {kind}: a cut edge"
            );
            for ((layer, closed, pts), (svg_layer, svg_closed, svg_pts)) in
                lines.iter().zip(&svg_lines)
            {
                assert_eq!(layer, svg_layer, "{name} {kind}");
                assert_eq!(closed, svg_closed, "{name} {kind}");
                assert_eq!(pts.len(), svg_pts.len(), "{name} {kind}");
                for (p, q) in pts.iter().zip(svg_pts) {
                    assert!(
                        (p[0] - q[0]).abs() <= 0.0006 && (height - p[1] - q[1]).abs() <= 0.0011,
                        "{name} {kind}: DXF {p:?} against SVG {q:?}"
                    );
                }
            }
            assert_eq!(texts, svg_texts, "{name} {kind}: labels");
        }
    }
}

/// Helvetica's advance widths per 1000 units of the font size, from
/// Adobe's Helvetica AFM (from memory; the standard 14 fonts' metrics);
/// a character not listed counts 1000 (wider than any).
fn helvetica(c: char) -> f64 {
    let w = match c {
        ' ' | '.' | ',' | ':' | ';' | '/' | '!' | 'f' | 't' | 'I' => 278,
        'i' | 'j' | 'l' => 222,
        'r' | '-' | '(' | ')' => 333,
        '\'' => 191,
        '"' => 355,
        '0'..='9'
        | 'a'
        | 'b'
        | 'd'
        | 'e'
        | 'g'
        | 'h'
        | 'n'
        | 'o'
        | 'p'
        | 'q'
        | 'u'
        | '?'
        | '#'
        | '_' => 556,
        'c' | 'k' | 's' | 'v' | 'x' | 'y' | 'z' | 'J' => 500,
        '+' | '=' => 584,
        'F' | 'T' | 'Z' => 611,
        'A' | 'B' | 'E' | 'K' | 'P' | 'S' | 'V' | 'X' | 'Y' | '&' => 667,
        'C' | 'D' | 'H' | 'N' | 'R' | 'U' | 'w' => 722,
        'G' | 'O' | 'Q' => 778,
        'L' => 556,
        'M' | 'm' => 833,
        '%' => 889,
        'W' => 944,
        _ => 1000,
    };
    f64::from(w) / 1000.0
}

/// Every page's own furniture (headings, instructions, bars, the tile's
/// frame) stays inside the printable area, 10 mm in from each edge, on A4,
/// Letter, A3, Tabloid and a 914 mm roll, for every template and the
/// shaping sheet: read back with lopdf, text measured with Helvetica's
/// widths (Courier's 0.6 em for the sheet). And no page is blank: each
/// tile shows part of its drawing.
#[test]
fn page_furniture_stays_inside_the_printable_area_on_every_paper() {
    let board = board();
    for paper in ["a4", "letter", "a3", "tabloid", "roll:914mm"] {
        let dir = tempfile::tempdir().unwrap();
        cmd::templates(
            &Design::Board(Box::new(board.clone())),
            print::paper(paper).unwrap(),
            &[],
            &[],
            dir.path(),
        )
        .unwrap();
        let pdf = std::fs::read(dir.path().join("saltgrass-shortboard-6-2.templates.pdf")).unwrap();
        let doc = Document::load_mem(&pdf).unwrap();
        for (n, (_, id)) in doc.get_pages().into_iter().enumerate() {
            let dict = doc.get_object(id).unwrap().as_dict().unwrap();
            let mb = media_box(dict);
            let (w, h) = (mb[2] / PT_PER_MM, mb[3] / PT_PER_MM);
            let inside = |x: f64, y: f64| {
                x >= print::MARGIN - 0.01
                    && x <= w - print::MARGIN + 0.01
                    && y >= print::MARGIN - 0.01
                    && y <= h - print::MARGIN + 0.01
            };
            let content = Content::decode(&doc.get_page_content(id)).unwrap();
            let (mut size, mut face, mut at, mut in_tile) = (0.0, Vec::new(), [0.0; 2], false);
            for op in &content.operations {
                let a: Vec<f64> = op.operands.iter().map(num).collect();
                match op.operator.as_str() {
                    "cm" => in_tile = true,
                    "Q" => in_tile = false,
                    "Tf" => {
                        face = op.operands[0].as_name().unwrap().to_vec();
                        size = a[1] / PT_PER_MM;
                    }
                    "Td" => at = [a[0] / PT_PER_MM, a[1] / PT_PER_MM],
                    "Tj" if !in_tile => {
                        let text =
                            String::from_utf8_lossy(op.operands[0].as_str().unwrap()).to_string();
                        let width: f64 = if face == b"F2" {
                            text.chars().count() as f64 * 0.6 * size
                        } else {
                            text.chars().map(helvetica).sum::<f64>() * size
                        };
                        // Baseline to cap height (0.72 em) and descender (0.21 em).
                        assert!(
                            inside(at[0], at[1] - 0.21 * size)
                                && inside(at[0] + width, at[1] + 0.72 * size),
                            "{paper} page {}: `{text}` at {at:?}, {width:.1} mm wide, page {w:.1} x {h:.1} mm",
                            n + 1
                        );
                    }
                    "m" | "l" if !in_tile => {
                        let (x, y) = (a[0] / PT_PER_MM, a[1] / PT_PER_MM);
                        assert!(
                            inside(x, y),
                            "{paper} page {}: a line at ({x:.1}, {y:.1}) mm",
                            n + 1
                        );
                    }
                    _ => {}
                }
            }
        }
        // No blank tile: each window holds a point of its drawing's lines
        // or crosses one of its segments.
        let t = cmd::templates(
            &Design::Board(Box::new(board.clone())),
            print::paper(paper).unwrap(),
            &["outline".into(), "rocker".into(), "sections".into()],
            &[],
            dir.path(),
        )
        .unwrap();
        for d in &t.drawings {
            for tile in tiling::tile(d, print::paper(paper).unwrap())
                .into_iter()
                .flat_map(|p| p.tiles)
            {
                let [x0, y0] = tile.origin;
                let [x1, y1] = [x0 + tile.window[0], y0 + tile.window[1]];
                let holds = d.items.iter().any(|i| match i {
                    Item::Line { points, .. } => points.windows(2).any(|s| {
                        // The segment's box meets the window, sampled finely.
                        (0..=20).any(|k| {
                            let f = f64::from(k) / 20.0;
                            let (x, y) = (
                                s[0][0] + (s[1][0] - s[0][0]) * f,
                                s[0][1] + (s[1][1] - s[0][1]) * f,
                            );
                            x >= x0 && x <= x1 && y >= y0 && y <= y1
                        })
                    }),
                    Item::Text { at, size, text } => {
                        let right = at[0] + text.chars().map(helvetica).sum::<f64>() * size * 1.4;
                        right >= x0 && at[0] <= x1 && at[1] + size >= y0 && at[1] <= y1
                    }
                });
                assert!(
                    holds,
                    "{paper} {}: tile c{} r{} is blank",
                    d.kind,
                    tile.column + 1,
                    tile.row + 1
                );
            }
        }
    }
}

/// A fixture's templates, all of them, on `paper`, written into a fresh
/// folder: the folder (kept while the caller needs it), the board's name
/// and what was made.
fn fixture_templates(fixture: &str, paper: &str) -> (tempfile::TempDir, String, cmd::Templates) {
    let path = format!("{}/fixtures/{fixture}.yaml", env!("CARGO_MANIFEST_DIR"));
    let b = blanksmith::description::load(std::path::Path::new(&path)).unwrap();
    let name = b.name.clone();
    let dir = tempfile::tempdir().unwrap();
    let made = cmd::templates(
        &Design::Board(Box::new(b)),
        print::paper(paper).unwrap(),
        &[],
        &[],
        dir.path(),
    )
    .unwrap();
    (dir, name, made)
}

/// Page counts on A4 (the demo 41 and the longboard 65 pages before blank
/// tiles were left out, the maps put on one page, short tiles packed
/// several to a page and the sections halved); on a roll, where each
/// template is one tile, there is no assembly page: the sheet and one page
/// a template.
#[test]
fn templates_take_few_pages() {
    let count = |fixture: &str, paper: &str| fixture_templates(fixture, paper).2.pages;
    // The targets set for these layouts: the demo on A4 in at most 24 pages,
    // the longboard in at most 40 (they take 22 and 33).
    assert!(
        count("shortboard", "a4") <= 24,
        "{}",
        count("shortboard", "a4")
    );
    assert!(
        count("longboard", "a4") <= 40,
        "{}",
        count("longboard", "a4")
    );
    assert_eq!(count("shortboard", "roll:914mm"), 4);
}

/// Tiles that share a page (short pieces of the rocker, the outline's
/// tips, the sections) sit one above the other without overlapping, all
/// inside the printable area, each on paper of its own: read back from
/// the PDF with lopdf, on A4 and Letter, for every fixture.
#[test]
fn tiles_sharing_a_page_do_not_overlap() {
    let mut shared = 0;
    for fixture in ["shortboard", "fish", "longboard"] {
        for paper in ["a4", "letter"] {
            let (dir, name, _) = fixture_templates(fixture, paper);
            let pdf = std::fs::read(dir.path().join(format!("{name}.templates.pdf"))).unwrap();
            for (n, p) in read_pdf(&pdf).iter().enumerate() {
                let m = print::MARGIN * PT_PER_MM;
                for w in &p.windows {
                    let [x, y, ww, wh] = w.rect;
                    assert!(
                        x >= m - 1e-3
                            && y >= m - 1e-3
                            && x + ww <= p.media[2] - m + 1e-3
                            && y + wh <= p.media[3] - m + 1e-3,
                        "{fixture} {paper} page {}: a tile outside the printable area",
                        n + 1
                    );
                }
                if p.windows.len() > 1 {
                    shared += 1;
                }
                for (i, a) in p.windows.iter().enumerate() {
                    for c in &p.windows[i + 1..] {
                        let apart = a.rect[1] >= c.rect[1] + c.rect[3] - 1e-3
                            || c.rect[1] >= a.rect[1] + a.rect[3] - 1e-3;
                        assert!(apart, "{fixture} {paper} page {}: tiles overlap", n + 1);
                    }
                }
            }
        }
    }
    assert!(shared > 0, "no page holds more than one tile");
}
