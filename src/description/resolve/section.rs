//! The cross-section's rules: rails (thickness, apex, tuck, edge, roll) and
//! the bottom contours.

use super::*;
use crate::description::values::{Along, Edge, RailSize};
use crate::description::{BoardFile, RailProfileSpec};
use crate::model::board::{RailProfile, Rails};
use crate::model::contour::{Contour, ContourKind};

/// Where a rail value's nose, middle and tail parts hold: the nose-width
/// station, the wide point and the tail-width station.
pub(super) struct Anchors(pub [f64; 3]);

impl Anchors {
    fn curve(&self, v: [f64; 3]) -> Curve {
        let pts: Vec<(f64, f64)> = self.0.iter().copied().zip(v).collect();
        Curve::with_ends(&pts, End::Slope(0.0), End::Slope(0.0))
            .expect("anchors checked increasing")
    }
}

/// Rail defaults for a modern shortboard (common practice, no source; the
/// numbers are from memory): a rail about 55 % of the stringer thickness an
/// inch in from the edge at the wide point, its apex 5/16 in above a
/// half-hard edge tucked 1/2 in under it, the deck rolling from 3 1/2 in in;
/// a softer, higher rail at the nose; a hard edge at the bottom through the
/// last foot.
const DEFAULT_THICKNESS: [f64; 3] = [0.60, 0.55, 0.60];
const DEFAULT_APEX_IN: [f64; 3] = [0.375, 0.3125, 0.0];
const DEFAULT_TUCK_IN: [f64; 3] = [0.625, 0.5, 0.0];
const DEFAULT_EDGE: [f64; 3] = [0.0, 0.5, 1.0];
const DEFAULT_ROLL_IN: [f64; 3] = [3.0, 3.5, 2.5];

pub(super) fn rails(cx: &Ctx, raw: &BoardFile, at: &Anchors, foil: &Curve) -> Res<Rails> {
    let r = &raw.rails;
    let profile = match r.profile {
        RailProfileSpec::Rounded => RailProfile::Rounded,
        RailProfileSpec::Square => {
            let why = "square rails are vertical walls with sharp edges";
            cx.forbid(&r.thickness, "rails.thickness", why)?;
            cx.forbid(&r.measured_at, "rails.measured_at", why)?;
            cx.forbid(&r.apex, "rails.apex", why)?;
            cx.forbid(&r.tuck, "rails.tuck", why)?;
            cx.forbid(&r.edge, "rails.edge", why)?;
            cx.forbid(&r.roll, "rails.roll", why)?;
            RailProfile::Square
        }
    };
    let inches = |v: [f64; 3]| v.map(|x| x * units::MM_PER_INCH);
    let lengths = |v: &Option<Spanned<Along<LengthValue>>>,
                   default: [f64; 3],
                   field: &str,
                   hi: f64,
                   hint: &str|
     -> Res<Curve> {
        let Some(s) = v else {
            return Ok(at.curve(default));
        };
        let mut out = [0.0; 3];
        for (k, (part, x)) in s.value.parts().into_iter().enumerate() {
            let mm = x.0.to_mm(cx.unit);
            if !(0.0..=hi).contains(&mm) {
                return cx.fail(
                    &s.referenced,
                    field,
                    format!("the {part} value {} is outside 0 to {}", show(mm), show(hi)),
                    hint,
                );
            }
            out[k] = mm;
        }
        Ok(at.curve(out))
    };
    // The apex is held as a share of the stringer thickness, so that it
    // comes down with the thickness towards the tips.
    let apex = lengths(
        &r.apex,
        inches(DEFAULT_APEX_IN),
        "rails.apex",
        50.0,
        "the height of the rail's outermost point above the bottom edge: 1/4 to 3/8 in on a tucked rail, 0 for a hard edge at the bottom",
    )?;
    let apex = at.curve([0, 1, 2].map(|k| {
        let t = foil.eval(at.0[k]);
        if t > 0.0 { apex.eval(at.0[k]) / t } else { 0.0 }
    }));
    let tuck = lengths(
        &r.tuck,
        inches(DEFAULT_TUCK_IN),
        "rails.tuck",
        80.0,
        "how far in under the rail's outermost point the bottom edge sits, e.g. 1/2 in; 0 with a hard edge at the bottom",
    )?;
    let roll = lengths(
        &r.roll,
        inches(DEFAULT_ROLL_IN),
        "rails.roll",
        300.0,
        "how far in from the edge the deck starts to roll down into the rail, e.g. 3 in",
    )?;
    let gauge = match &r.measured_at {
        Some(g) => cx.length_in(
            g,
            "rails.measured_at",
            0.0,
            150.0,
            false,
            "how far in from the edge the rail thickness is measured, usually 1 in",
        )?,
        None => units::MM_PER_INCH,
    };
    let edge = match &r.edge {
        Some(s) => {
            let mut out = [0.0; 3];
            for (k, (part, Edge(x))) in s.value.parts().into_iter().enumerate() {
                if !(0.0..=1.0).contains(&x) {
                    return cx.fail(
                        &s.referenced,
                        "rails.edge",
                        format!("the {part} value {x} is outside 0 (soft) to 1 (hard)"),
                        "write `soft`, `hard` or a number between, e.g. {nose: soft, middle: 0.5, tail: hard}",
                    );
                }
                out[k] = x;
            }
            at.curve(out)
        }
        None => at.curve(DEFAULT_EDGE),
    };
    let thickness = match &r.thickness {
        Some(s) => {
            let mut out = [0.0; 3];
            for (k, (part, size)) in s.value.parts().into_iter().enumerate() {
                let stringer = foil.eval(at.0[k]);
                let share = match size {
                    RailSize::Share(f) => f,
                    RailSize::Length(l) => l.to_mm(cx.unit) / stringer,
                };
                if !(0.2..=0.95).contains(&share) {
                    return cx.fail(
                        &s.referenced,
                        "rails.thickness",
                        format!(
                            "the {part} value is {:.0} % of the stringer thickness there ({}); rails run from 20 % to 95 %",
                            100.0 * share,
                            show(stringer)
                        ),
                        "an inch in from the edge a performance rail is about half the stringer thickness, a full rail two thirds; write e.g. 55% or 1 1/4",
                    );
                }
                out[k] = share;
            }
            at.curve(out)
        }
        None => at.curve(DEFAULT_THICKNESS),
    };
    Ok(Rails {
        profile,
        thickness,
        apex,
        tuck,
        edge,
        roll,
        gauge,
    })
}

pub(super) fn bottom(cx: &Ctx, raw: &BoardFile) -> Res<Vec<Contour>> {
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
            ContourKind::Vee | ContourKind::Belly => 1.0,
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
