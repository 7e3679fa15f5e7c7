//! The side view's rules: rocker and foil (thickness) from their main
//! measurements or tables, and the tips.

use super::*;
use crate::description::BoardFile;
use crate::description::values::LengthValue;
use crate::model::curve::Curve;
use serde_saphyr::Spanned;

pub(super) fn rocker(cx: &Ctx, raw: &BoardFile) -> Res<Curve> {
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
    let pt = exponent(&r.tail_curve, "rocker.tail_curve", 3.0)?;
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

pub(super) fn foil(cx: &Ctx, raw: &BoardFile, d12: f64) -> Res<Curve> {
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
