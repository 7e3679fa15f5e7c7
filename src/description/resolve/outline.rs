//! The outline's rules: the plan shape from the widths (or a table of
//! them), nose and tail shapes, the tail's end, corners, notch and point.

use super::*;
use crate::description::{BoardFile, LengthValue, NoseShape, OutlineSpec};
use crate::model::board::{Outline, PlanCurve, TailEnd, TailShape};
use crate::model::curve::{Curve, End};

pub(super) fn outline(cx: &Ctx, raw: &BoardFile, d12: f64) -> Res<Outline> {
    let o = &raw.outline;
    let l = cx.length;
    let shape = o.tail.value;
    forbid_for_tail(cx, o, shape)?;
    let TailRule {
        tail_end,
        x_end,
        tip,
        half_end,
    } = tail_rule(cx, o, d12)?;
    let end_half = match tail_end {
        TailEnd::Point => 0.0,
        TailEnd::Block { half_end, .. }
        | TailEnd::Diamond { half_end, .. }
        | TailEnd::Swallow { half_end, .. } => half_end,
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
        from_widths(cx, o, d12, half_end, (x_end, end_half))?
    } else {
        from_table(cx, o, x_end, end_half)?
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
                    "make the notch shallower or the tail end wider",
                );
            }
        }
    }
    Ok(outline)
}

/// The fields a tail shape has no use for, refused by name.
fn forbid_for_tail(cx: &Ctx, o: &OutlineSpec, shape: TailShape) -> Res<()> {
    let name = shape.name();
    if !shape.has_end_width() {
        cx.forbid(
            &o.tail_end_width,
            "outline.tail_end_width",
            &format!("a {name} tail closes to a point and has no end width"),
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
    Ok(())
}

/// The tail's end as its shape rules it.
struct TailRule<'a> {
    tail_end: TailEnd,
    /// Where the outline closes (a diamond's point starts ahead of the tail).
    x_end: f64,
    /// The blunt end of each point (swallow, diamond), mm.
    tip: f64,
    /// Half the width across the tail's end, and the field it came from.
    half_end: Option<(f64, &'a Spanned<LengthValue>)>,
}

/// The tail's end from its shape and fields: its width, corners, point or
/// notch, each checked against the others.
fn tail_rule<'a>(cx: &Ctx, o: &'a OutlineSpec, d12: f64) -> Res<TailRule<'a>> {
    let l = cx.length;
    let shape = o.tail.value;
    let tail_ref = o.tail.referenced;
    let name = shape.name();
    let half_end = if shape.has_end_width() {
        let b = cx.required(
            &o.tail_end_width,
            &tail_ref,
            "outline.tail_end_width",
            &format!("a {name} tail needs the width across its end"),
        )?;
        let w = cx.length_in(
            b,
            "outline.tail_end_width",
            0.0,
            l,
            false,
            "the width across the tail's end",
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
                half_end: half_end.unwrap().0,
                corner: (0.0, 0.0),
            },
            l,
        ),
        TailShape::Squash => {
            let (e, _) = half_end.unwrap();
            let r = match &o.corner_radius {
                Some(r) => cx.length_in(
                    r,
                    "outline.corner_radius",
                    0.0,
                    e,
                    true,
                    "the corner radius must leave part of the tail's end flat",
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
                    half_end: e,
                    corner: (along, r),
                },
                l,
            )
        }
        TailShape::Diamond => {
            let (e, b) = half_end.unwrap();
            if tip >= 2.0 * e {
                return cx.fail(
                    &tip_at.unwrap_or(b.referenced),
                    "outline.tip_width",
                    format!("the tip {} is as wide as the tail's end", show(tip)),
                    "make the tip narrower than tail_end_width",
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
                    half_end: e,
                    point_length: p,
                    half_tip: 0.5 * tip,
                },
                l - p,
            )
        }
        TailShape::Swallow => {
            let (e, b) = half_end.unwrap();
            if tip >= e {
                return cx.fail(
                    &tip_at.unwrap_or(b.referenced),
                    "outline.tip_width",
                    format!(
                        "points {} wide leave no notch in a tail end {} wide",
                        show(tip),
                        show(2.0 * e)
                    ),
                    "make the tips narrower than half of tail_end_width",
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
                    half_end: e,
                    notch_depth: depth,
                    tip,
                },
                l,
            )
        }
    };
    Ok(TailRule {
        tail_end,
        x_end,
        tip,
        half_end,
    })
}

/// Nose, wide point and tail points.
type PlanPoints = (f64, Vec<(f64, f64)>, Vec<(f64, f64)>);

/// The plan's points from the trade's widths: N12, the wide point, T12,
/// fullness where given, the tail's end at `end` (x, half-width).
fn from_widths(
    cx: &Ctx,
    o: &OutlineSpec,
    d12: f64,
    half_end: Option<(f64, &Spanned<LengthValue>)>,
    (x_end, end_half): (f64, f64),
) -> Res<PlanPoints> {
    let l = cx.length;
    let shape = o.tail.value;
    let near = o.length.referenced;
    let name = shape.name();
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
    if let Some((e, b)) = half_end
        && 2.0 * e >= tail_width
    {
        return cx.fail(
            &b.referenced,
            "outline.tail_end_width",
            format!(
                "is {}, not narrower than the tail width {}",
                show(2.0 * e),
                show(tail_width)
            ),
            "the tail narrows from T12 to its end: make the tail end narrower than tail_width",
        );
    }
    let mut nose_pts = vec![(0.0, 0.0), (d12, 0.5 * nose_width), (xw, 0.5 * width)];
    // A pointed nose left to its own curve runs nearly straight to the
    // tip (about 0.56 of N12 wide 6 in back); noses are drawn fuller,
    // about 0.7 (common practice, from memory).
    let nose_full = match (&o.nose_fullness, o.nose) {
        (Some(f), _) => Some(fullness(cx, f, "outline.nose_fullness", "nose_width")?),
        (None, NoseShape::Pointed) => Some(0.7),
        (None, NoseShape::Round) => None,
    };
    if let Some(f) = nose_full {
        nose_pts.insert(1, (0.5 * d12, f * 0.5 * nose_width));
    }
    let mut tail_pts = vec![
        (xw, 0.5 * width),
        (l - d12, 0.5 * tail_width),
        (x_end, end_half),
    ];
    if let Some(f) = &o.tail_fullness {
        if shape.has_end_width() {
            return cx.fail(
                &f.referenced,
                "outline.tail_fullness",
                format!("does not apply: a {name} tail ends {} wide (tail_end_width)", show(2.0 * end_half)),
                "tail_fullness shapes tails that close to a point (round, pin, rounded pin); remove it",
            );
        }
        let f = fullness(cx, f, "outline.tail_fullness", "tail_width")?;
        tail_pts.insert(2, (l - 0.5 * d12, f * 0.5 * tail_width));
    }
    Ok((xw, nose_pts, tail_pts))
}

/// The plan's points from a table of widths at stations; the widest
/// station (nearest the middle) is the wide point.
fn from_table(cx: &Ctx, o: &OutlineSpec, x_end: f64, end_half: f64) -> Res<PlanPoints> {
    let l = cx.length;
    let name = o.tail.value.name();
    for (field, v) in [
        ("outline.nose_fullness", &o.nose_fullness),
        ("outline.tail_fullness", &o.tail_fullness),
    ] {
        cx.forbid(v, field, "outline.stations is given and rules the widths")?;
    }
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
                "is {} at the tail's end, where the {name} tail makes the board {} wide (outline.tail_end_width)",
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
    Ok((pts[iw].0, pts[..=iw].to_vec(), pts[iw..].to_vec()))
}

/// A fullness: the width halfway to a tip station as a share of the width
/// at the station.
fn fullness(cx: &Ctx, f: &Spanned<f64>, field: &str, of: &str) -> Res<f64> {
    if !(f.value > 0.3 && f.value < 1.0) {
        return cx.fail(
            &f.referenced,
            field,
            format!("is {}; it must be over 0.3 and under 1", f.value),
            format!("the width halfway from the tip to where {of} is measured, as a share of {of}: about 0.7 for a modern nose"),
        );
    }
    Ok(f.value)
}
