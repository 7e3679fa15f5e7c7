//! The cross-section's rules: rails (apex, softness, tuck) and the bottom
//! contours.

use super::*;
use crate::description::values::Blend;
use crate::description::{BoardFile, RailProfileSpec};
use crate::model::board::{Contour, ContourKind, RailProfile, Rails};

pub(super) fn rails(cx: &Ctx, raw: &BoardFile) -> Res<Rails> {
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
