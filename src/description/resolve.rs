//! From the raw fields of a description to a checked, continuous board.
//!
//! Each rule names the field it is about, with the line and column the YAML
//! reader recorded for it, so a shaper sees exactly which number to change.

use serde_saphyr::{Location, Spanned};

use super::values::{Blend, LengthValue, Position};
use super::{BoardFile, DescriptionError, NoseShape, RailProfileSpec};
use crate::model::board::{
    Board, Closing, Contour, ContourKind, Outline, PlanCurve, RailProfile, Rails, TailEnd,
    TailShape,
};
use crate::model::curve::{Curve, End};
use crate::units::{self, Unit};

/// Shortest board accepted, mm.
pub const MIN_LENGTH: f64 = 300.0;
/// Longest board accepted, mm (20 ft is past any surfboard or paddle board).
pub const MAX_LENGTH: f64 = 6096.0;

struct Ctx<'a> {
    text: &'a str,
    file: &'a str,
    unit: Unit,
    length: f64,
}

type Res<T> = Result<T, DescriptionError>;

impl Ctx<'_> {
    fn fail<T>(
        &self,
        at: &Location,
        field: &str,
        rule: impl Into<String>,
        hint: impl Into<String>,
    ) -> Res<T> {
        Err(super::rule_error(
            self.text, self.file, at, field, rule, hint,
        ))
    }

    fn mm(&self, v: &Spanned<LengthValue>) -> f64 {
        v.value.0.to_mm(self.unit)
    }

    fn at(&self, p: &Spanned<Position>) -> f64 {
        p.value.from_nose(self.length, self.unit)
    }

    /// A length that must lie in (lo, hi) — or [lo, hi) when `zero_ok`.
    fn length_in(
        &self,
        v: &Spanned<LengthValue>,
        field: &str,
        lo: f64,
        hi: f64,
        zero_ok: bool,
        hint: &str,
    ) -> Res<f64> {
        let x = self.mm(v);
        let ok = if zero_ok { x >= lo } else { x > lo } && x <= hi;
        if !ok {
            let lower = if zero_ok { "at least" } else { "more than" };
            return self.fail(
                &v.referenced,
                field,
                format!(
                    "is {}; it must be {lower} {} and at most {}",
                    units::exact(x),
                    units::exact(lo),
                    units::exact(hi)
                ),
                hint,
            );
        }
        Ok(x)
    }

    fn required<'v, T>(
        &self,
        v: &'v Option<Spanned<T>>,
        near: &Location,
        field: &str,
        hint: &str,
    ) -> Res<&'v Spanned<T>> {
        match v {
            Some(s) => Ok(s),
            None => self.fail(near, field, "is missing", hint),
        }
    }

    fn forbid<T>(&self, v: &Option<Spanned<T>>, field: &str, why: &str) -> Res<()> {
        match v {
            Some(s) => self.fail(
                &s.referenced,
                field,
                format!("does not apply: {why}"),
                "remove the field",
            ),
            None => Ok(()),
        }
    }

    fn blend(
        &self,
        v: &Option<Spanned<Blend>>,
        default: Blend,
        field: &str,
        lo: f64,
        hi: f64,
    ) -> Res<Curve> {
        let b = v.as_ref().map(|s| s.value).unwrap_or(default);
        if let Some(s) = v {
            for (part, x) in [("nose", b.nose), ("middle", b.middle), ("tail", b.tail)] {
                if !(lo..=hi).contains(&x) {
                    return self.fail(
                        &s.referenced,
                        field,
                        format!("{part} value {x} is outside {lo}..{hi}"),
                        "rail values are fractions: apex 0.5 is 50/50, 0.4 is 60/40; softness and tuck run 0..1",
                    );
                }
            }
        }
        let l = self.length;
        let pts = if b.nose == b.middle && b.middle == b.tail {
            vec![(0.0, b.nose), (l, b.nose)]
        } else {
            vec![(0.0, b.nose), (0.5 * l, b.middle), (l, b.tail)]
        };
        Ok(Curve::new(&pts).expect("three increasing stations"))
    }
}

/// A length for messages: `304.8 mm (1' 0")`.
fn show(mm: f64) -> String {
    units::Both(mm).to_string()
}

/// Checks a description's shape rules and builds the board.
pub fn resolve(raw: &BoardFile, text: &str, file: &str) -> Result<Board, DescriptionError> {
    let mut cx = Ctx {
        text,
        file,
        unit: raw.units.value,
        length: 0.0,
    };
    let name = &raw.name;
    let valid_name = !name.value.is_empty()
        && name.value.len() <= 64
        && name
            .value
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_');
    if !valid_name {
        return cx.fail(
            &name.referenced,
            "name",
            format!("`{}` is not a usable name", name.value),
            "use 1 to 64 letters, digits, `-` or `_` (it names the output files), e.g. `shortboard-6-2`",
        );
    }
    let o = &raw.outline;
    cx.length = cx.length_in(
        &o.length,
        "outline.length",
        MIN_LENGTH,
        MAX_LENGTH,
        true,
        "give the flat (projected) length, e.g. 6'2\" or 1880mm",
    )?;
    let l = cx.length;
    // Shops quote N12/T12 a foot from the tips; metric shops use 300 mm.
    let d12 = match cx.unit {
        Unit::In => units::MM_PER_FOOT,
        Unit::Mm => 300.0,
    };
    let outline = outline(&cx, raw, d12)?;
    let rocker = rocker(&cx, raw)?;
    let foil = foil(&cx, raw, d12)?;
    let t_max = foil.max_station().1;

    let near = &raw
        .thickness
        .max
        .as_ref()
        .map(|m| m.referenced)
        .unwrap_or(o.length.referenced);
    let hw0 = outline.half_width(0.0, l);
    let hw_l = outline.half_width(l, l);
    for (hw, t, end, field) in [
        (hw0, foil.eval(0.0), "nose", "thickness.nose_tip"),
        (hw_l, foil.eval(l), "tail", "thickness.tail_tip"),
    ] {
        if hw > 0.0 && t <= 0.0 {
            return cx.fail(
                near,
                field,
                format!(
                    "the {end} ends in a flat face {} wide but with no thickness",
                    show(2.0 * hw)
                ),
                format!("give the {end} end some thickness, or let its width run to zero"),
            );
        }
    }
    let rounding = |v: &Option<Spanned<LengthValue>>, field: &str, hw: f64, t: f64| -> Res<f64> {
        match v {
            Some(r) if hw > 0.0 => cx.fail(
                &r.referenced,
                field,
                "does not apply: this end has width in plan, so it ends in a flat face",
                "remove the field",
            ),
            Some(r) => cx.length_in(
                r,
                field,
                0.0,
                0.25 * l,
                true,
                "how far from the tip the profile rounds over, e.g. 3/4in",
            ),
            None if hw <= 0.0 => Ok(0.5 * t),
            None => Ok(0.0),
        }
    };
    let closing = Closing {
        nose: rounding(
            &raw.thickness.nose_rounding,
            "thickness.nose_rounding",
            hw0,
            foil.eval(0.0),
        )?,
        tail: rounding(
            &raw.thickness.tail_rounding,
            "thickness.tail_rounding",
            hw_l,
            foil.eval(l),
        )?,
    };

    let dome = match &raw.deck.dome {
        Some(d) => cx.length_in(
            d,
            "deck.dome",
            0.0,
            0.5 * t_max,
            true,
            "the dome is how far the stringer rises above the deck's edge; it must stay under half the thickness or the deck would cross the bottom",
        )?,
        None => 0.0,
    };
    let rails = rails(&cx, raw)?;
    let bottom = bottom(&cx, raw)?;
    let board = Board {
        name: name.value.clone(),
        length: l,
        outline,
        rocker,
        foil,
        closing,
        dome,
        rails,
        bottom,
        tip_station: d12,
    };
    check_sections(&cx, raw, &board)?;
    Ok(board)
}

fn outline(cx: &Ctx, raw: &BoardFile, d12: f64) -> Res<Outline> {
    let o = &raw.outline;
    let l = cx.length;
    let shape = o.tail.value;
    let near = o.length.referenced;
    let tail_ref = o.tail.referenced;
    let name = shape.name();
    if !shape.has_block() {
        cx.forbid(
            &o.tail_block,
            "outline.tail_block",
            &format!("a {name} tail has no block"),
        )?;
    }
    if shape != TailShape::Squash {
        cx.forbid(
            &o.corner_radius,
            "outline.corner_radius",
            "only squash tails have rounded corners",
        )?;
        cx.forbid(
            &o.corner_length,
            "outline.corner_length",
            "only squash tails have rounded corners",
        )?;
    }
    if shape != TailShape::Swallow {
        cx.forbid(
            &o.notch_depth,
            "outline.notch_depth",
            "only swallow tails have a notch",
        )?;
    }
    if shape != TailShape::Diamond {
        cx.forbid(
            &o.point_length,
            "outline.point_length",
            "only diamond tails have a point",
        )?;
    }
    if !matches!(shape, TailShape::Swallow | TailShape::Diamond) {
        cx.forbid(
            &o.tip_width,
            "outline.tip_width",
            "only swallow and diamond tails have tips",
        )?;
    }
    let half_block = if shape.has_block() {
        let b = cx.required(
            &o.tail_block,
            &tail_ref,
            "outline.tail_block",
            &format!("a {name} tail needs the width of its tail block"),
        )?;
        let w = cx.length_in(
            b,
            "outline.tail_block",
            0.0,
            l,
            false,
            "the tail block is the width across the tail's end",
        )?;
        Some((0.5 * w, b))
    } else {
        None
    };
    let tip = match &o.tip_width {
        Some(t) => cx.length_in(
            t,
            "outline.tip_width",
            0.0,
            0.5 * l,
            false,
            "the blunt end of each point, e.g. 1/2in",
        )?,
        None => 12.7, // half an inch: blunt enough to glass (common practice, no source)
    };
    let tip_at = o.tip_width.as_ref().map(|t| t.referenced);
    let (tail_end, x_end) = match shape {
        TailShape::Round | TailShape::Pin | TailShape::RoundedPin => (TailEnd::Point, l),
        TailShape::Square => (
            TailEnd::Block {
                half_block: half_block.unwrap().0,
                corner: (0.0, 0.0),
            },
            l,
        ),
        TailShape::Squash => {
            let (e, _) = half_block.unwrap();
            let r = match &o.corner_radius {
                Some(r) => cx.length_in(
                    r,
                    "outline.corner_radius",
                    0.0,
                    e,
                    true,
                    "the corner radius must leave part of the tail block flat",
                )?,
                None => (25.4_f64).min(0.5 * e), // 1 in (common practice, no source)
            };
            // Along the board the corner may run longer than across it (a
            // board stretched in length keeps its corners in proportion).
            let along = match &o.corner_length {
                Some(c) => cx.length_in(
                    c,
                    "outline.corner_length",
                    0.0,
                    0.9 * d12,
                    true,
                    "how far up the rail the squash corner runs; it must stay behind the tail-width station",
                )?,
                None => r,
            };
            (
                TailEnd::Block {
                    half_block: e,
                    corner: (along, r),
                },
                l,
            )
        }
        TailShape::Diamond => {
            let (e, b) = half_block.unwrap();
            if tip >= 2.0 * e {
                return cx.fail(
                    &tip_at.unwrap_or(b.referenced),
                    "outline.tip_width",
                    format!("the tip {} is as wide as the tail block", show(tip)),
                    "make the tip narrower than the tail block",
                );
            }
            let p = match &o.point_length {
                Some(p) => cx.length_in(
                    p,
                    "outline.point_length",
                    0.0,
                    0.9 * d12,
                    false,
                    "the diamond's point must start behind the tail-width station",
                )?,
                None => 0.4 * 2.0 * e,
            };
            (
                TailEnd::Diamond {
                    half_block: e,
                    point_length: p,
                    half_tip: 0.5 * tip,
                },
                l - p,
            )
        }
        TailShape::Swallow => {
            let (e, b) = half_block.unwrap();
            if tip >= e {
                return cx.fail(
                    &tip_at.unwrap_or(b.referenced),
                    "outline.tip_width",
                    format!(
                        "points {} wide leave no notch in a {} tail block",
                        show(tip),
                        show(2.0 * e)
                    ),
                    "make the tips narrower than half the tail block",
                );
            }
            let n = cx.required(
                &o.notch_depth,
                &tail_ref,
                "outline.notch_depth",
                "a swallow tail needs the depth of its notch, e.g. 4in",
            )?;
            let depth = cx.length_in(n, "outline.notch_depth", 0.0, d12, false, "the notch runs from the tail to its apex on the stringer and must end behind the tail-width station (12 in, or 300 mm, from the tail), deeper than that the tail allows no notch")?;
            (
                TailEnd::Swallow {
                    half_block: e,
                    notch_depth: depth,
                    tip,
                },
                l,
            )
        }
    };
    let end_half = match tail_end {
        TailEnd::Point => 0.0,
        TailEnd::Block { half_block, .. }
        | TailEnd::Diamond { half_block, .. }
        | TailEnd::Swallow { half_block, .. } => half_block,
    };
    let nose_power = match o.nose {
        NoseShape::Round => 2.0,
        NoseShape::Pointed => 1.0,
    };
    // The tail side is interpolated in half_width^power: 2 closes round, 1 to a point.
    let tail_power = match shape {
        TailShape::Round => 2.0,
        TailShape::RoundedPin => 1.5,
        _ => 1.0,
    };

    let (wide, nose_pts, tail_pts) = if o.stations.is_empty() {
        let hint_key =
            "give width, wide_point, nose_width and tail_width, or a table of widths at stations";
        let w = cx.required(&o.width, &near, "outline.width", hint_key)?;
        let width = cx.length_in(
            w,
            "outline.width",
            0.0,
            l,
            false,
            "the width at the wide point",
        )?;
        let wp = cx.required(
            &o.wide_point,
            &near,
            "outline.wide_point",
            "where the wide point is, e.g. `1 behind` (centre) or `centre`",
        )?;
        let xw = cx.at(wp);
        if !(xw > d12 && xw < l - d12) {
            return cx.fail(
                &wp.referenced,
                "outline.wide_point",
                format!("is {} from the nose, off the part of the board between the nose- and tail-width stations ({} from each tip)", show(xw), show(d12)),
                "put the wide point near the middle, e.g. `1 behind` or `centre`",
            );
        }
        let n = cx.required(
            &o.nose_width,
            &near,
            "outline.nose_width",
            "the width 12 in from the nose (N12)",
        )?;
        let nose_width = cx.mm(n);
        if !(nose_width > 0.0 && nose_width < width) {
            return cx.fail(
                &n.referenced,
                "outline.nose_width",
                format!(
                    "is {}; it must be more than zero and less than the width {}",
                    show(nose_width),
                    show(width)
                ),
                "N12 is measured 12 in from the nose and is always narrower than the wide point",
            );
        }
        let t = cx.required(
            &o.tail_width,
            &near,
            "outline.tail_width",
            "the width 12 in from the tail (T12)",
        )?;
        let tail_width = cx.mm(t);
        if !(tail_width > 0.0 && tail_width < width) {
            return cx.fail(
                &t.referenced,
                "outline.tail_width",
                format!(
                    "is {}; it must be more than zero and less than the width {}",
                    show(tail_width),
                    show(width)
                ),
                "T12 is measured 12 in from the tail and is always narrower than the wide point",
            );
        }
        if let Some((e, b)) = half_block
            && 2.0 * e >= tail_width
        {
            return cx.fail(&b.referenced, "outline.tail_block", format!("is {}, not narrower than the tail width {}", show(2.0 * e), show(tail_width)), "the tail narrows from T12 to the tail block: make the block narrower than tail_width");
        }
        let nose_pts = vec![(0.0, 0.0), (d12, 0.5 * nose_width), (xw, 0.5 * width)];
        let tail_pts = vec![
            (xw, 0.5 * width),
            (l - d12, 0.5 * tail_width),
            (x_end, end_half),
        ];
        (xw, nose_pts, tail_pts)
    } else {
        for (field, v) in [
            ("outline.width", &o.width),
            ("outline.nose_width", &o.nose_width),
            ("outline.tail_width", &o.tail_width),
        ] {
            cx.forbid(v, field, "outline.stations is given and rules the widths")?;
        }
        cx.forbid(
            &o.wide_point,
            "outline.wide_point",
            "outline.stations is given; the widest station is the wide point",
        )?;
        let mut pts: Vec<(f64, f64)> = Vec::with_capacity(o.stations.len() + 2);
        for (i, s) in o.stations.iter().enumerate() {
            let x = cx.at(&s.at);
            let field = format!("outline.stations[{i}]");
            if !(0.0..=x_end).contains(&x) {
                return cx.fail(
                    &s.at.referenced,
                    &format!("{field}.at"),
                    format!(
                        "is {} from the nose, off the board (0 to {})",
                        show(x),
                        show(x_end)
                    ),
                    "stations are distances from the nose along the stringer",
                );
            }
            if let Some(&(prev, _)) = pts.last()
                && x <= prev
            {
                return cx.fail(
                    &s.at.referenced,
                    &format!("{field}.at"),
                    format!(
                        "is {} from the nose, not after the station before it ({})",
                        show(x),
                        show(prev)
                    ),
                    "list stations from the nose to the tail",
                );
            }
            let w = cx.mm(&s.width);
            if !(0.0..=l).contains(&w) {
                return cx.fail(
                    &s.width.referenced,
                    &format!("{field}.width"),
                    format!("is {}; widths run from zero to the board's length", show(w)),
                    "give the full width at the station",
                );
            }
            pts.push((x, 0.5 * w));
        }
        if pts[0].0 > 0.0 {
            pts.insert(0, (0.0, 0.0));
        }
        if pts.last().unwrap().0 < x_end {
            pts.push((x_end, end_half));
        } else if let (Some(&(_, w)), Some(s)) = (pts.last(), o.stations.last())
            && (w - end_half).abs() > 0.005
        {
            // The tail's end is set by the tail shape (its block): a station
            // there must agree, or one of the two would be silently ignored.
            return cx.fail(
                &s.width.referenced,
                &format!("outline.stations[{}].width", o.stations.len() - 1),
                format!(
                    "is {} at the tail's end, where the {name} tail makes the board {} wide (outline.tail_block)",
                    show(2.0 * w),
                    show(2.0 * end_half)
                ),
                "leave the tail's end out of the table (the tail shape closes it), or make the two agree",
            );
        }
        let max = pts.iter().map(|p| p.1).fold(0.0, f64::max);
        if max <= 0.0 {
            return cx.fail(
                &o.stations[0].width.referenced,
                "outline.stations",
                "every station has zero width: the board would have no plan shape",
                "give the full width at each station, e.g. 19 1/2 at the wide point",
            );
        }
        let interior: Vec<usize> = (1..pts.len() - 1).filter(|&i| pts[i].1 == max).collect();
        let Some(&iw) = interior.iter().min_by(|&&a, &&b| {
            (pts[a].0 - 0.5 * l)
                .abs()
                .total_cmp(&(pts[b].0 - 0.5 * l).abs())
        }) else {
            return cx.fail(
                &o.stations[0].at.referenced,
                "outline.stations",
                "the widest station is at a tip",
                "a board is widest between its tips: add the wide point to the table",
            );
        };
        (pts[iw].0, pts[..=iw].to_vec(), pts[iw..].to_vec())
    };
    let plan = |pts: &[(f64, f64)], power: f64, start: End, end: End| -> PlanCurve {
        let raised: Vec<(f64, f64)> = pts.iter().map(|&(x, w)| (x, w.powf(power))).collect();
        PlanCurve {
            curve: Curve::with_ends(&raised, start, end).expect("stations checked increasing"),
            power,
        }
    };
    let outline = Outline {
        wide_point: wide,
        nose: plan(&nose_pts, nose_power, End::Free, End::Slope(0.0)),
        tail: plan(&tail_pts, tail_power, End::Slope(0.0), End::Free),
        tail_end,
        tail_shape: shape,
    };
    if let TailEnd::Swallow { notch_depth, .. } = outline.tail_end {
        let start = l - notch_depth;
        let n = o.notch_depth.as_ref().unwrap();
        if start <= wide {
            return cx.fail(
                &n.referenced,
                "outline.notch_depth",
                format!(
                    "reaches {} from the nose, ahead of the wide point",
                    show(start)
                ),
                "make the notch shallower",
            );
        }
        for i in 1..=200 {
            let x = start + notch_depth * i as f64 / 200.0;
            let (outer, inner) = (outline.half_width(x, l), outline.inner(x, l));
            if outer - inner < 0.5 * tip.min(2.0) {
                return cx.fail(
                    &n.referenced,
                    "outline.notch_depth",
                    format!("the notch cuts through the outline {} from the nose, deeper than the tail allows", show(x)),
                    "make the notch shallower or the tail block wider",
                );
            }
        }
    }
    Ok(outline)
}

fn rocker(cx: &Ctx, raw: &BoardFile) -> Res<Curve> {
    let r = &raw.rocker;
    let l = cx.length;
    let hint = "rocker is the height of the tip above a flat surface the board rests on";
    let nose = cx.length_in(&r.nose, "rocker.nose", 0.0, 0.5 * l, true, hint)?;
    let tail = cx.length_in(&r.tail, "rocker.tail", 0.0, 0.5 * l, true, hint)?;
    if !r.stations.is_empty() {
        cx.forbid(
            &r.low_point,
            "rocker.low_point",
            "rocker.stations is given and rules the curve",
        )?;
        cx.forbid(
            &r.nose_curve,
            "rocker.nose_curve",
            "rocker.stations is given and rules the curve",
        )?;
        cx.forbid(
            &r.tail_curve,
            "rocker.tail_curve",
            "rocker.stations is given and rules the curve",
        )?;
        let mut pts = vec![(0.0, nose)];
        for (i, s) in r.stations.iter().enumerate() {
            let x = cx.at(&s.at);
            let field = format!("rocker.stations[{i}]");
            let prev = pts.last().unwrap().0;
            if !(x > prev && x < l) {
                return cx.fail(&s.at.referenced, &format!("{field}.at"), format!("is {} from the nose; stations must lie between the tips, each after the one before", show(x)), "rocker.nose and rocker.tail give the tips; list the stations between them from nose to tail");
            }
            let h = cx.length_in(
                &s.height,
                &format!("{field}.height"),
                0.0,
                0.5 * l,
                true,
                hint,
            )?;
            pts.push((x, h));
        }
        pts.push((l, tail));
        return Ok(Curve::new(&pts).expect("stations checked increasing"));
    }
    let lp = cx.required(
        &r.low_point,
        &r.nose.referenced,
        "rocker.low_point",
        "where the bottom touches the flat, e.g. `4 behind` (centre)",
    )?;
    let x_low = cx.at(lp);
    if !(x_low > 0.1 * l && x_low < 0.9 * l) {
        return cx.fail(
            &lp.referenced,
            "rocker.low_point",
            format!("is {} from the nose, too near a tip", show(x_low)),
            "the low point sits near the middle of the board",
        );
    }
    let exponent = |v: &Option<Spanned<f64>>, field: &str, default: f64| -> Res<f64> {
        match v {
            Some(s) if !(1.5..=6.0).contains(&s.value) => cx.fail(
                &s.referenced,
                field,
                format!("is {}; it must be 1.5 to 6", s.value),
                "2 is a parabola; larger puts more of the lift near the tip",
            ),
            Some(s) => Ok(s.value),
            None => Ok(default),
        }
    };
    // Default exponents: a continuous rocker with more lift near the tips
    // (common practice, no source).
    let pn = exponent(&r.nose_curve, "rocker.nose_curve", 2.6)?;
    let pt = exponent(&r.tail_curve, "rocker.tail_curve", 2.2)?;
    let steps = 32;
    let mut pts = Vec::with_capacity(2 * steps + 1);
    for i in 0..steps {
        let s = i as f64 / steps as f64;
        pts.push((x_low * s, nose * (1.0 - s).powf(pn)));
    }
    for i in 0..=steps {
        let s = i as f64 / steps as f64;
        pts.push((x_low + (l - x_low) * s, tail * s.powf(pt)));
    }
    Ok(Curve::new(&pts).expect("increasing by construction"))
}

fn foil(cx: &Ctx, raw: &BoardFile, d12: f64) -> Res<Curve> {
    let t = &raw.thickness;
    let l = cx.length;
    let near = raw.rocker.nose.referenced;
    let tip = |v: &Option<Spanned<LengthValue>>, field: &str, next: f64| -> Res<f64> {
        match v {
            Some(s) => cx.length_in(
                s,
                field,
                0.0,
                next + 1e-9,
                true,
                "the tip thickness before the profile rounds over; at most the thickness 12 in in",
            ),
            // Half the 12-in thickness (common practice, no source).
            None => Ok(0.5 * next),
        }
    };
    if !t.stations.is_empty() {
        for (field, v) in [
            ("thickness.max", &t.max),
            ("thickness.nose", &t.nose),
            ("thickness.tail", &t.tail),
        ] {
            cx.forbid(v, field, "thickness.stations is given and rules the foil")?;
        }
        cx.forbid(
            &t.at,
            "thickness.at",
            "thickness.stations is given and rules the foil",
        )?;
        let mut pts: Vec<(f64, f64)> = vec![];
        for (i, s) in t.stations.iter().enumerate() {
            let x = cx.at(&s.at);
            let field = format!("thickness.stations[{i}]");
            if !(0.0..=l).contains(&x) || pts.last().is_some_and(|p: &(f64, f64)| x <= p.0) {
                return cx.fail(&s.at.referenced, &format!("{field}.at"), format!("is {} from the nose; stations must lie on the board, each after the one before", show(x)), "list stations from the nose to the tail");
            }
            let interior = x > 0.0 && x < l;
            let v = cx.length_in(
                &s.thickness,
                &format!("{field}.thickness"),
                0.0,
                500.0,
                !interior,
                "thickness at the stringer",
            )?;
            pts.push((x, v));
        }
        if pts[0].0 > 0.0 {
            pts.insert(0, (0.0, tip(&t.nose_tip, "thickness.nose_tip", pts[0].1)?));
        } else {
            cx.forbid(
                &t.nose_tip,
                "thickness.nose_tip",
                "the table has a station at the nose",
            )?;
        }
        if pts.last().unwrap().0 < l {
            let last = pts.last().unwrap().1;
            pts.push((l, tip(&t.tail_tip, "thickness.tail_tip", last)?));
        } else {
            cx.forbid(
                &t.tail_tip,
                "thickness.tail_tip",
                "the table has a station at the tail",
            )?;
        }
        return Ok(Curve::new(&pts).expect("stations checked increasing"));
    }
    let hint = "give max, at, nose and tail, or a table of thicknesses at stations";
    let m = cx.required(&t.max, &near, "thickness.max", hint)?;
    let max = cx.length_in(
        m,
        "thickness.max",
        0.0,
        500.0,
        false,
        "the greatest thickness, e.g. 2 1/2",
    )?;
    let a = cx.required(
        &t.at,
        &m.referenced,
        "thickness.at",
        "where the board is thickest, e.g. `1 ahead` (of centre)",
    )?;
    let xt = cx.at(a);
    if !(xt > d12 && xt < l - d12) {
        return cx.fail(
            &a.referenced,
            "thickness.at",
            format!("is {} from the nose, outside the 12 in stations", show(xt)),
            "boards are thickest near the middle, e.g. `centre`",
        );
    }
    let n = cx.required(
        &t.nose,
        &m.referenced,
        "thickness.nose",
        "the thickness 12 in from the nose",
    )?;
    let nose = cx.length_in(
        n,
        "thickness.nose",
        0.0,
        max + 1e-9,
        false,
        "12 in from the nose the board is thinner than at its thickest",
    )?;
    let tl = cx.required(
        &t.tail,
        &m.referenced,
        "thickness.tail",
        "the thickness 12 in from the tail",
    )?;
    let tail = cx.length_in(
        tl,
        "thickness.tail",
        0.0,
        max + 1e-9,
        false,
        "12 in from the tail the board is thinner than at its thickest",
    )?;
    let nose_tip = tip(&t.nose_tip, "thickness.nose_tip", nose)?;
    let tail_tip = tip(&t.tail_tip, "thickness.tail_tip", tail)?;
    let pts = [
        (0.0, nose_tip),
        (d12, nose),
        (xt, max),
        (l - d12, tail),
        (l, tail_tip),
    ];
    Ok(Curve::new(&pts).expect("increasing: checked above"))
}

fn rails(cx: &Ctx, raw: &BoardFile) -> Res<Rails> {
    let r = &raw.rails;
    let profile = match r.profile {
        RailProfileSpec::Rounded => RailProfile::Rounded,
        RailProfileSpec::Square => {
            cx.forbid(
                &r.softness,
                "rails.softness",
                "square rails have no softness",
            )?;
            cx.forbid(&r.tuck, "rails.tuck", "square rails have no tuck")?;
            RailProfile::Square
        }
    };
    // Defaults: a little fuller and lower-apexed towards the tail, softer in
    // the nose (common practice, no source).
    let apex = cx.blend(
        &r.apex,
        Blend {
            nose: 0.5,
            middle: 0.45,
            tail: 0.38,
        },
        "rails.apex",
        0.05,
        0.95,
    )?;
    let softness = cx.blend(
        &r.softness,
        Blend {
            nose: 0.8,
            middle: 0.6,
            tail: 0.45,
        },
        "rails.softness",
        0.0,
        1.0,
    )?;
    let tuck = cx.blend(
        &r.tuck,
        Blend {
            nose: 0.3,
            middle: 0.55,
            tail: 0.85,
        },
        "rails.tuck",
        0.0,
        1.0,
    )?;
    Ok(Rails {
        profile,
        apex,
        softness,
        tuck,
    })
}

fn bottom(cx: &Ctx, raw: &BoardFile) -> Res<Vec<Contour>> {
    let l = cx.length;
    let mut out = vec![];
    for (i, z) in raw.bottom.iter().enumerate() {
        let field = format!("bottom[{i}]");
        let kind = z.contour.value;
        let (from, to) = (cx.at(&z.from), cx.at(&z.to));
        if !(from >= 0.0 && from < l) {
            return cx.fail(
                &z.from.referenced,
                &format!("{field}.from"),
                format!("is {} from the nose, off the board", show(from)),
                "zones run between the tips",
            );
        }
        if !(to > from && to <= l) {
            return cx.fail(
                &z.to.referenced,
                &format!("{field}.to"),
                format!(
                    "is {} from the nose; it must come after `from` ({}) and not past the tail",
                    show(to),
                    show(from)
                ),
                "e.g. from: 12, to: 4 from tail",
            );
        }
        let depth = match (&z.depth, kind) {
            (None, ContourKind::Flat) => 0.0,
            (Some(d), _) => cx.length_in(
                d,
                &format!("{field}.depth"),
                0.0,
                50.0,
                kind == ContourKind::Flat,
                "contour depths are a few millimetres, e.g. 1/8in",
            )?,
            (None, _) => {
                return cx.fail(
                    &z.contour.referenced,
                    &format!("{field}.depth"),
                    "is missing",
                    "give the contour's depth, e.g. 1/8in",
                );
            }
        };
        let half = 0.5 * (to - from);
        let blend = match &z.blend {
            Some(b) => cx.length_in(
                b,
                &format!("{field}.blend"),
                0.0,
                half + 1e-9,
                true,
                "the blend fades the contour in and out; at most half the zone's length",
            )?,
            None => 152.4_f64.min(half), // 6 in (common practice, no source)
        };
        let default_span = match kind {
            ContourKind::Vee => 1.0,
            ContourKind::DoubleConcave => 0.75,
            _ => 0.8,
        };
        let span = match &z.span {
            Some(s) if !(s.value > 0.1 && s.value <= 1.0) => {
                return cx.fail(
                    &s.referenced,
                    &format!("{field}.span"),
                    format!("is {}; it must be over 0.1 and at most 1", s.value),
                    "the fraction of the half-width the contour covers from the stringer",
                );
            }
            Some(s) => s.value,
            None => default_span,
        };
        out.push(Contour {
            kind,
            from,
            to,
            depth,
            blend,
            span,
        });
    }
    Ok(out)
}

/// Samples the finished board: the contours must stay below the rail apex.
fn check_sections(cx: &Ctx, raw: &BoardFile, board: &Board) -> Res<()> {
    let l = board.length;
    let mut xs: Vec<f64> = (1..400).map(|i| l * i as f64 / 400.0).collect();
    xs.extend(board.breaks());
    for x in xs {
        if x <= 0.0 || x >= l {
            continue;
        }
        let st = board.station(x);
        let below_apex = st.apex * st.rail_band();
        let lift = st.contour_lift();
        // Only a contour can carry the bottom across the rail; a board thin
        // here with a flat bottom has nothing to cross (its thickness has
        // its own rules).
        if lift > 0.0 && lift >= below_apex - 0.5 {
            // Blame the zone that lifts the bottom most here.
            let Some((i, z)) = raw
                .bottom
                .iter()
                .enumerate()
                .filter(|(_, z)| {
                    cx.at(&z.from) < x && x < cx.at(&z.to) && z.contour.value != ContourKind::Flat
                })
                .max_by(|a, b| {
                    let d = |z: &super::ZoneSpec| z.depth.as_ref().map(|d| cx.mm(d)).unwrap_or(0.0);
                    d(a.1).total_cmp(&d(b.1))
                })
                .or_else(|| {
                    let mut zones = raw.bottom.iter().enumerate();
                    zones.find(|(_, z)| z.contour.value != ContourKind::Flat)
                })
            else {
                continue;
            };
            let at = z
                .depth
                .as_ref()
                .map(|d| d.referenced)
                .unwrap_or(z.contour.referenced);
            return cx.fail(
                &at,
                &format!("bottom[{i}].depth"),
                format!(
                    "{} from the nose the contours lift the bottom {:.2} mm, but the rail reaches only {:.2} mm below its apex there: the bottom would cross the rail",
                    show(x),
                    lift,
                    below_apex
                ),
                "make the contour shallower, end the zone sooner, or raise the rail apex",
            );
        }
    }
    Ok(())
}
