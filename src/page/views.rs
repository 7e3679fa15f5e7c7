//! Drawings made for the screen (the full-size templates shrunk to a page
//! width would carry labels a pixel or two tall): the whole outline in
//! plan with the widths a shaper quotes, the side view and the thickness
//! along the stringer with their heights exaggerated by a stated factor.
//! Each is an inline SVG 1000 units wide, its labels 13 units tall.

use std::fmt::Write as _;

use crate::model::board::Board;
use crate::template::drawing::{self, BORDER, Curves, Item, Role};
use crate::units::{self, MM_PER_INCH};

/// Width of every view, SVG units (pixels at full width).
const W: f64 = 1000.0;
/// Left and right margin, SVG units.
const PAD: f64 = 40.0;
/// Label size, SVG units.
const FONT: f64 = 13.0;
/// How much heights are stretched in the side and thickness views.
pub const EXAGGERATION: f64 = 4.0;

fn path(points: &[[f64; 2]], closed: bool, style: &str) -> String {
    let mut d = String::new();
    for (i, p) in points.iter().enumerate() {
        let _ = write!(
            d,
            "{}{:.1},{:.1}",
            if i == 0 { "M" } else { " L" },
            p[0],
            p[1]
        );
    }
    if closed {
        d.push_str(" Z");
    }
    format!("<path d=\"{d}\" {style}/>")
}

fn text(at: [f64; 2], anchor: &str, words: &str) -> String {
    format!(
        "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"{FONT}\" text-anchor=\"{anchor}\">{}</text>",
        at[0],
        at[1],
        words
            .replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('"', "&quot;")
    )
}

fn open(height: f64) -> String {
    format!(
        "<svg class=\"fig\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {W:.0} {height:.0}\" width=\"{W:.0}\" height=\"{height:.0}\" font-family=\"sans-serif\">"
    )
}

/// Both units, as a shop reads them.
fn both(mm: f64) -> String {
    format!("{mm:.0} mm ({})", units::inches(mm))
}

/// The whole outline in plan (nose left), the half template mirrored at
/// the stringer, with the width at 12 in from each tip and at the wide
/// point, the fin boxes and the leash plug.
pub fn plan_view(board: &Board) -> String {
    let side = drawing::curves_of(board);
    let l = side.length();
    let s = (W - 2.0 * PAD) / l;
    let half = side.half_width.iter().fold(0.0f64, |m, &v| m.max(v));
    let h = 2.0 * half * s + 110.0;
    let cy = 50.0 + half * s;
    let at = |x: f64, y: f64| [PAD + x * s, cy - y * s];
    // The template's cut line without its return along the stringer.
    let template = drawing::outline(&side);
    let Some(Item::Line { points, .. }) = template.items.iter().find(|i| {
        matches!(
            i,
            Item::Line {
                role: Role::Cut,
                ..
            }
        )
    }) else {
        return String::new();
    };
    let half_line: Vec<[f64; 2]> = points[..points.len().saturating_sub(1)]
        .iter()
        .map(|p| [p[0] - BORDER, p[1] - BORDER])
        .collect();
    let mut whole: Vec<[f64; 2]> = half_line.iter().map(|p| at(p[0], p[1])).collect();
    whole.extend(half_line.iter().rev().map(|p| at(p[0], -p[1])));
    let mut svg = open(h);
    svg.push_str(&path(
        &whole,
        true,
        "fill=\"#efe6cf\" stroke=\"#222\" stroke-width=\"1.5\"",
    ));
    svg.push_str(&path(
        &[at(-10.0, 0.0), at(l + 10.0, 0.0)],
        false,
        "stroke=\"#999\" stroke-dasharray=\"6 4\" fill=\"none\"",
    ));
    for bx in board.fin_boxes() {
        let pts: Vec<[f64; 2]> = bx.outline(0.0, 6).iter().map(|p| at(p[0], p[1])).collect();
        svg.push_str(&path(&pts, true, "fill=\"#8a30a0\" stroke=\"none\""));
    }
    if let Some(p) = board.plug_at() {
        let c = at(p[0], p[1]);
        let _ = write!(
            svg,
            "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"{:.1}\" fill=\"#8a30a0\"/>",
            c[0],
            c[1],
            (board.fittings.plug.as_ref().map_or(20.0, |p| p.diameter) / 2.0 * s).max(2.0)
        );
    }
    let tip = 12.0 * MM_PER_INCH;
    let wide = side.wide_point();
    for (x, name, row) in [
        (tip, "12 in from the nose", 36.0),
        (wide, "wide point", 18.0),
        (l - tip, "12 in from the tail", 36.0),
    ] {
        let w = side.at(x)[0];
        svg.push_str(&path(
            &[at(x, w), at(x, -w)],
            false,
            "stroke=\"#2060c0\" stroke-width=\"1\" fill=\"none\"",
        ));
        let anchor = if x < l * 0.2 {
            "start"
        } else if x > l * 0.8 {
            "end"
        } else {
            "middle"
        };
        let _ = write!(
            svg,
            "{}{}",
            text(
                [at(x, 0.0)[0], row],
                anchor,
                &format!("{name}: {}", both(2.0 * w))
            ),
            text(
                [at(x, 0.0)[0], h - 40.0],
                anchor,
                &format!("{} from the nose", units::feet_inches(x))
            )
        );
    }
    let _ = write!(
        svg,
        "{}</svg>",
        text(
            [PAD, h - 12.0],
            "start",
            &format!(
                "{} long, {} wide; drawn to scale (1 px = {:.1} mm); fin boxes and plug in purple",
                both(l),
                both(2.0 * half),
                1.0 / s
            )
        )
    );
    svg
}

/// A profile along the board with heights stretched: `lines` (colour,
/// heights at `side.x`), labelled every foot in the board's units.
fn profile(
    side: &Curves,
    lines: &[(&str, Vec<f64>)],
    caption: &str,
    marks: &[(f64, String)],
) -> String {
    let l = side.length();
    let s = (W - 2.0 * PAD) / l;
    let k = s * EXAGGERATION;
    let lo = lines
        .iter()
        .flat_map(|(_, v)| v.iter().copied())
        .fold(0.0f64, f64::min);
    let hi = lines
        .iter()
        .flat_map(|(_, v)| v.iter().copied())
        .fold(0.0f64, f64::max);
    let h = (hi - lo) * k + 126.0;
    let base = 56.0 + hi * k;
    let at = |x: f64, z: f64| [PAD + x * s, base - z * k];
    let mut svg = open(h);
    svg.push_str(&path(
        &[at(0.0, 0.0), at(l, 0.0)],
        false,
        "stroke=\"#999\" stroke-dasharray=\"6 4\" fill=\"none\"",
    ));
    for (colour, v) in lines {
        let pts: Vec<[f64; 2]> = side.x.iter().zip(v).map(|(&x, &z)| at(x, z)).collect();
        svg.push_str(&path(
            &pts,
            false,
            &format!("stroke=\"{colour}\" stroke-width=\"2\" fill=\"none\""),
        ));
    }
    for (k, (x, words)) in marks.iter().enumerate() {
        // Every other label a line higher, so neighbours do not collide.
        let lift = if k % 2 == 1 { 0.0 } else { 16.0 };
        // Above every line within 40 mm either side.
        let top = lines
            .iter()
            .flat_map(|(_, v)| {
                side.x
                    .iter()
                    .zip(v)
                    .filter(|(p, _)| (**p - *x).abs() <= 40.0)
                    .map(|(_, z)| *z)
            })
            .fold(f64::NEG_INFINITY, f64::max);
        let p = at(*x, top);
        let anchor = if *x < l * 0.15 {
            "start"
        } else if *x > l * 0.85 {
            "end"
        } else {
            "middle"
        };
        svg.push_str(&path(
            &[[p[0], p[1] - 4.0], [p[0], p[1] - 14.0 - lift]],
            false,
            "stroke=\"#555\" fill=\"none\"",
        ));
        svg.push_str(&text([p[0], p[1] - 18.0 - lift], anchor, words));
    }
    let _ = write!(svg, "{}</svg>", text([PAD, h - 12.0], "start", caption));
    svg
}

/// The board from the side, nose left: the bottom (rocker) and the deck at
/// the stringer over the flat it rests on, heights ×[`EXAGGERATION`].
pub fn side_view(board: &Board) -> String {
    let side = drawing::curves_of(board);
    let l = side.length();
    let tip = 12.0 * MM_PER_INCH;
    let marks = vec![
        (0.0, format!("nose rocker {}", both(side.bottom[0]))),
        (
            tip,
            format!("rocker 12 in from the nose: {}", both(side.at(tip)[1])),
        ),
        (
            l - tip,
            format!("rocker 12 in from the tail: {}", both(side.at(l - tip)[1])),
        ),
        (
            l,
            format!("tail rocker {}", both(*side.bottom.last().unwrap_or(&0.0))),
        ),
    ];
    profile(
        &side,
        &[
            ("#c07020", side.bottom.clone()),
            ("#2060c0", side.deck.clone()),
        ],
        &format!(
            "Side view: bottom (orange) and deck (blue) at the stringer; heights x{EXAGGERATION:.0}, lengths to scale (1 px = {:.1} mm)",
            l / (W - 2.0 * PAD)
        ),
        &marks,
    )
}

/// The thickness at the stringer along the board (the foil, laid flat),
/// heights ×[`EXAGGERATION`], with the thickest point and the thickness
/// 12 in from each tip.
pub fn thickness_view(board: &Board) -> String {
    let side = drawing::curves_of(board);
    let l = side.length();
    let t: Vec<f64> = side
        .deck
        .iter()
        .zip(&side.bottom)
        .map(|(d, b)| d - b)
        .collect();
    let (mut xmax, mut tmax) = (0.0, 0.0);
    for (&x, &v) in side.x.iter().zip(&t) {
        if v > tmax {
            (xmax, tmax) = (x, v);
        }
    }
    let tip = 12.0 * MM_PER_INCH;
    let at = |x: f64| {
        let i = side.x.partition_point(|&p| p < x).min(t.len() - 1);
        t[i]
    };
    let marks = vec![
        (tip, format!("12 in from the nose: {}", both(at(tip)))),
        (
            xmax,
            format!(
                "thickest {} at {} from the nose",
                both(tmax),
                units::feet_inches(xmax)
            ),
        ),
        (
            l - tip,
            format!("12 in from the tail: {}", both(at(l - tip))),
        ),
    ];
    profile(
        &side,
        &[("#2a9a50", t)],
        &format!("Thickness at the stringer (the foil laid flat); heights x{EXAGGERATION:.0}"),
        &marks,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo() -> Board {
        crate::description::board_from_str(crate::description::demo::DEMO, "demo").unwrap()
    }

    /// The plan view's outline spans the drawing's width less its margins
    /// (the board's length to scale) and is symmetric about the stringer.
    #[test]
    fn the_plan_view_is_the_whole_outline_to_scale() {
        let svg = plan_view(&demo());
        let d = svg
            .split("<path d=\"")
            .nth(1)
            .unwrap()
            .split('"')
            .next()
            .unwrap();
        let pts: Vec<[f64; 2]> = d
            .split(['M', 'L', 'Z'])
            .map(str::trim)
            .filter(|p| !p.is_empty())
            .map(|p| {
                let (x, y) = p.split_once(',').unwrap();
                [x.parse().unwrap(), y.parse().unwrap()]
            })
            .collect();
        let (xmin, xmax) = pts
            .iter()
            .fold((f64::MAX, f64::MIN), |m, p| (m.0.min(p[0]), m.1.max(p[0])));
        assert!(
            (xmin - PAD).abs() < 0.2 && (xmax - (W - PAD)).abs() < 0.2,
            "{xmin} {xmax}"
        );
        let (ymin, ymax) = pts
            .iter()
            .fold((f64::MAX, f64::MIN), |m, p| (m.0.min(p[1]), m.1.max(p[1])));
        let cy = (ymin + ymax) / 2.0;
        for p in &pts {
            assert!(
                pts.iter()
                    .any(|q| (q[0] - p[0]).abs() < 0.11 && (q[1] - (2.0 * cy - p[1])).abs() < 0.11)
            );
        }
        // 19 1/2 in wide at 1 px = 1879.6 / 920 mm.
        let width_px = ymax - ymin;
        assert!(
            (width_px - 495.3 * 920.0 / 1879.6).abs() < 0.3,
            "{width_px}"
        );
    }

    /// The side view states its exaggeration and draws the heights 4 times
    /// their length scale: the nose rocker's height in px is 4 × its mm
    /// times the length scale.
    #[test]
    fn the_side_view_stretches_heights_by_what_it_says() {
        let b = demo();
        let svg = side_view(&b);
        assert!(svg.contains("heights x4"));
        let s = 920.0 / b.length;
        let bottom = svg
            .split("<path d=\"")
            .nth(2)
            .unwrap()
            .split('"')
            .next()
            .unwrap();
        // The first point of a path's `d` ("Mx,y L…").
        let start = |d: &str| -> Vec<f64> {
            d[1..]
                .split(" L")
                .next()
                .unwrap()
                .split(',')
                .map(|v| v.trim().parse().unwrap())
                .collect()
        };
        let first = start(bottom);
        let flat = start(svg.split("<path d=\"").nth(1).unwrap());
        let rise = flat[1] - first[1];
        let want = b.rocker.eval(0.0) * s * EXAGGERATION;
        assert!((rise - want).abs() < 0.15, "{rise} px for {want}");
    }
}
