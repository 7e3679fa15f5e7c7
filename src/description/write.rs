//! Writes a board back out as a description. Every curve of a resolved
//! board runs through nodes, and a station table through the same nodes
//! resolves to the same curve, so reading the file back gives the same
//! board (to the last digit or two of the numbers written).

use std::fmt::Write as _;

use crate::model::board::{Board, RailProfile, TailEnd};
use crate::model::contour::ContourKind;
use crate::model::curve::Curve;
use crate::units::{MM_PER_FOOT, Unit};

/// The unit a board was described in.
pub fn unit_of(board: &Board) -> Unit {
    board.unit
}

struct Out {
    text: String,
    per_unit: f64,
}

impl Out {
    /// A length in the file's unit, with every digit an f64 needs.
    fn len(&self, mm: f64) -> String {
        let v = mm / self.per_unit;
        if v == 0.0 {
            "0".to_string()
        } else {
            format!("{v}")
        }
    }
}

/// A rail curve as written: its values at the nose-width station, the wide
/// point and the tail-width station.
fn along(board: &Board, c: &Curve, show: impl Fn(f64) -> String) -> String {
    along_at(board, &|x| c.eval(x), show)
}

/// A rail value as written, from its value at any point along the board.
fn along_at(board: &Board, f: &dyn Fn(f64) -> f64, show: impl Fn(f64) -> String) -> String {
    let l = board.length;
    let d = board.tip_station;
    let [n, m, t] = [d, board.outline.wide_point, l - d].map(|x| show(f(x)));
    if n == m && m == t {
        n
    } else {
        format!("{{nose: {n}, middle: {m}, tail: {t}}}")
    }
}

/// The description of `board` as YAML in `unit`, with `comment` lines at the top.
pub fn to_yaml(board: &Board, unit: Unit, comment: &str) -> String {
    let mut o = Out {
        text: String::new(),
        per_unit: unit.mm(),
    };
    for line in comment.lines() {
        let _ = writeln!(o.text, "# {line}");
    }
    let unit_name = match unit {
        Unit::In => "in",
        Unit::Mm => "mm",
    };
    let _ = writeln!(o.text, "name: {}\nunits: {unit_name}", board.name);
    if (board.tip_station - MM_PER_FOOT).abs() > 1e-9 {
        let _ = writeln!(o.text, "tip_station: {}", o.len(board.tip_station));
    }
    o.text.push('\n');
    let l = board.length;
    let ol = &board.outline;
    let _ = writeln!(o.text, "outline:\n  length: {}", o.len(l));
    let _ = writeln!(
        o.text,
        "  nose: {}",
        if ol.nose.power == 1.0 {
            "pointed"
        } else {
            "round"
        }
    );
    let tail = serde_json::to_value(ol.tail_shape)
        .expect("a tail shape")
        .as_str()
        .unwrap_or("round")
        .to_string();
    let _ = writeln!(o.text, "  tail: {tail}");
    match ol.tail_end {
        TailEnd::Point => {}
        TailEnd::Block { half_end, corner } => {
            let _ = writeln!(o.text, "  tail_end_width: {}", o.len(2.0 * half_end));
            if ol.tail_shape == crate::model::board::TailShape::Squash {
                let _ = writeln!(o.text, "  corner_radius: {}", o.len(corner.1));
                let _ = writeln!(o.text, "  corner_length: {}", o.len(corner.0));
            }
        }
        TailEnd::Diamond {
            half_end,
            point_length,
            half_tip,
        } => {
            let _ = writeln!(o.text, "  tail_end_width: {}", o.len(2.0 * half_end));
            let _ = writeln!(o.text, "  point_length: {}", o.len(point_length));
            let _ = writeln!(o.text, "  tip_width: {}", o.len(2.0 * half_tip));
        }
        TailEnd::Swallow {
            half_end,
            notch_depth,
            tip,
        } => {
            let _ = writeln!(o.text, "  tail_end_width: {}", o.len(2.0 * half_end));
            let _ = writeln!(o.text, "  notch_depth: {}", o.len(notch_depth));
            let _ = writeln!(o.text, "  tip_width: {}", o.len(tip));
        }
    }
    o.text.push_str("  stations:\n");
    let width_at = |x: f64, raised: f64, power: f64| (x, 2.0 * raised.max(0.0).powf(1.0 / power));
    let mut widths: Vec<(f64, f64)> = ol
        .nose
        .curve
        .stations()
        .map(|(x, g)| width_at(x, g, ol.nose.power))
        .collect();
    widths.extend(
        ol.tail
            .curve
            .stations()
            .skip(1)
            .map(|(x, g)| width_at(x, g, ol.tail.power)),
    );
    for (x, w) in widths {
        let _ = writeln!(o.text, "    - {{at: {}, width: {}}}", o.len(x), o.len(w));
    }
    let rocker: Vec<(f64, f64)> = board.rocker.stations().collect();
    let _ = writeln!(
        o.text,
        "\nrocker:\n  nose: {}\n  tail: {}\n  stations:",
        o.len(rocker[0].1),
        o.len(rocker[rocker.len() - 1].1)
    );
    for &(x, h) in &rocker[1..rocker.len() - 1] {
        let _ = writeln!(o.text, "    - {{at: {}, height: {}}}", o.len(x), o.len(h));
    }
    o.text.push_str("\nthickness:\n");
    for (field, r) in [
        ("nose_rounding", board.closing.nose),
        ("tail_rounding", board.closing.tail),
    ] {
        if r > 0.0 {
            let _ = writeln!(o.text, "  {field}: {}", o.len(r));
        }
    }
    o.text.push_str("  stations:\n");
    for (x, t) in board.foil.stations() {
        let _ = writeln!(
            o.text,
            "    - {{at: {}, thickness: {}}}",
            o.len(x),
            o.len(t)
        );
    }
    let _ = writeln!(o.text, "\ndeck:\n  dome: {}", o.len(board.dome));
    let r = &board.rails;
    match r.profile {
        RailProfile::Square => o.text.push_str("\nrails:\n  profile: square\n"),
        RailProfile::Rounded => {
            let len = |mm: f64| o.len(mm);
            let _ = writeln!(
                o.text,
                "\nrails:\n  thickness: {}\n  measured_at: {}\n  apex: {}\n  tuck: {}\n  edge: {}\n  roll: {}",
                along(board, &r.thickness, |f| format!("{}%", 100.0 * f)),
                o.len(r.gauge),
                along_at(board, &|x| r.apex.eval(x) * board.foil.eval(x), len),
                along(board, &r.tuck, len),
                along(board, &r.edge, |e| format!("{e}")),
                along(board, &r.roll, len),
            );
        }
    }
    if !board.bottom.is_empty() {
        o.text.push_str("\nbottom:\n");
        for c in &board.bottom {
            let kind = match c.kind {
                ContourKind::Flat => "flat",
                ContourKind::Vee => "vee",
                ContourKind::Belly => "belly",
                ContourKind::SingleConcave => "single_concave",
                ContourKind::DoubleConcave => "double_concave",
            };
            let _ = writeln!(
                o.text,
                "  - {{contour: {kind}, from: {}, to: {}, depth: {}, blend: {}, span: {}}}",
                o.len(c.from),
                o.len(c.to),
                o.len(c.depth),
                o.len(c.blend),
                c.span
            );
        }
    }
    write_fittings(board, &mut o);
    o.text
}

/// `fins:`, `leash_plug:`, `laminate:` and `order:`, every value written
/// out (no defaults left to the reader).
fn write_fittings(board: &Board, o: &mut Out) {
    let f = &board.fittings;
    if let Some(setup) = f.setup {
        let _ = writeln!(o.text, "\nfins:\n  setup: {}", setup.name());
        for fin in &f.fins {
            let p = &fin.pocket;
            let pocket = format!(
                "box: {{length: {}, width: {}, depth: {}, corner_radius: {}}}",
                o.len(p.length),
                o.len(p.width),
                o.len(p.depth),
                o.len(p.corner_radius)
            );
            if fin.centre {
                let _ = writeln!(
                    o.text,
                    "  {}: {{from_tail: {}, {pocket}}}",
                    fin.role,
                    o.len(fin.from_tail)
                );
            } else {
                let _ = writeln!(
                    o.text,
                    "  {}: {{from_tail: {}, from_rail: {}, toe: {}, cant: {}, {pocket}}}",
                    fin.role,
                    o.len(fin.from_tail),
                    o.len(fin.from_rail),
                    fin.toe,
                    fin.cant
                );
            }
        }
    }
    if let Some(p) = &f.plug {
        let _ = writeln!(
            o.text,
            "\nleash_plug: {{from_tail: {}, diameter: {}, depth: {}}}",
            o.len(p.from_tail),
            o.len(p.diameter),
            o.len(p.depth)
        );
    }
    let l = &board.laminate;
    if *l != crate::model::laminate::Laminate::default() {
        let cloth = |layers: &[f64]| {
            layers
                .iter()
                .map(|w| format!("{w}gsm"))
                .collect::<Vec<_>>()
                .join(", ")
        };
        let _ = writeln!(
            o.text,
            "\nlaminate:\n  deck: [{}]\n  bottom: [{}]\n  lap: {}\n  resin_ratio: {}\n  hot_coat: {}\n  foam_density: {}",
            cloth(&l.deck),
            cloth(&l.bottom),
            o.len(l.lap),
            l.resin_ratio,
            l.hot_coat,
            l.foam_density
        );
        match l.stringer {
            Some((w, d)) => {
                let _ = writeln!(
                    o.text,
                    "  stringer_width: {}\n  stringer_density: {d}",
                    o.len(w)
                );
            }
            None => o.text.push_str("  stringer_width: none\n"),
        }
        let _ = writeln!(
            o.text,
            "  box_mass: {}\n  plug_mass: {}",
            l.box_mass, l.plug_mass
        );
    }
    let r = &board.order;
    if !r.is_empty() {
        o.text.push_str("\norder:\n");
        for (name, v) in [
            ("customer", &r.customer),
            ("reference", &r.reference),
            ("due", &r.due),
            ("colour", &r.colour),
            ("notes", &r.notes),
        ] {
            if let Some(v) = v {
                // A JSON string is a YAML double-quoted scalar.
                let _ = writeln!(
                    o.text,
                    "  {name}: {}",
                    serde_json::to_string(v).unwrap_or_default()
                );
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::description;

    #[test]
    fn every_fixture_comes_back_the_same() {
        for name in [
            "shortboard.yaml",
            "fish.yaml",
            "longboard.yaml",
            "check-box.yaml",
        ] {
            let path = format!("{}/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
            let board = description::load(std::path::Path::new(&path)).unwrap();
            for unit in [Unit::In, Unit::Mm] {
                let text = to_yaml(&board, unit, "round trip");
                let back = description::board_from_str(&text, "written.yaml")
                    .unwrap_or_else(|e| panic!("{name}: {e}\n{text}"));
                assert_eq!(back.order, board.order, "{name}");
                assert_eq!(back.fittings.setup, board.fittings.setup, "{name}");
                assert_eq!(back.fittings.fins.len(), board.fittings.fins.len());
                for (a, b) in back.fittings.fins.iter().zip(&board.fittings.fins) {
                    assert!((a.from_tail - b.from_tail).abs() < 1e-9, "{name}");
                    assert!((a.from_rail - b.from_rail).abs() < 1e-9, "{name}");
                    assert!((a.pocket.depth - b.pocket.depth).abs() < 1e-9);
                    assert_eq!((a.toe, a.cant), (b.toe, b.cant), "{name}");
                }
                assert_eq!(back.fittings.plug.is_some(), board.fittings.plug.is_some());
                assert_eq!(back.laminate.stringer, board.laminate.stringer, "{name}");
                assert_eq!(back.laminate.deck.len(), board.laminate.deck.len());
                for i in 0..=400 {
                    let x = board.length * i as f64 / 400.0;
                    let (a, b) = (
                        board.station(x),
                        back.station(back.length * i as f64 / 400.0),
                    );
                    for (p, q) in [
                        (a.half_width, b.half_width),
                        (a.bottom, b.bottom),
                        (a.thickness, b.thickness),
                        (a.inner, b.inner),
                    ] {
                        // 10 µm: where a squash corner meets the tail its
                        // slope is infinite and the last digit of the length shows.
                        assert!((p - q).abs() < 1e-5, "{name} {unit:?} at {x}: {p} vs {q}");
                    }
                }
            }
        }
    }
}
