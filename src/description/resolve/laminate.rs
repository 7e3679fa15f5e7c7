//! The laminate (glassing schedule, cloth weights in oz or g/m²) and the
//! customer's order fields resolved.

use serde_saphyr::Spanned;

use super::fittings::number_in;
use super::{Ctx, Res, show};
use crate::description::BoardFile;
use crate::description::fittings::StringerWidth;
use crate::model::laminate::Laminate;
use crate::model::order::Order;
use crate::units::MM_PER_INCH;

/// The laminate schedule, each field within a sane range.
pub(super) fn laminate(cx: &Ctx, raw: &BoardFile) -> Res<Laminate> {
    let mut l = Laminate::default();
    let Some(s) = &raw.laminate else {
        return Ok(l);
    };
    for (v, field, out) in [
        (&s.deck, "laminate.deck", &mut l.deck),
        (&s.bottom, "laminate.bottom", &mut l.bottom),
    ] {
        if let Some(layers) = v {
            if layers.value.len() > 6 {
                return cx.fail(
                    &layers.referenced,
                    field,
                    format!("holds {} layers; at most 6", layers.value.len()),
                    "list each layer's cloth weight, e.g. [6oz, 4oz]",
                );
            }
            if let Some(w) = layers
                .value
                .iter()
                .find(|w| !(50.0..=1000.0).contains(&w.0))
            {
                return cx.fail(
                    &layers.referenced,
                    field,
                    format!("a layer of {:.0} g/m² is outside 50 to 1000 g/m²", w.0),
                    "cloth weights are e.g. 4oz (136 g/m²) or 6oz (203 g/m²)",
                );
            }
            *out = layers.value.iter().map(|w| w.0).collect();
        }
    }
    if let Some(lap) = &s.lap {
        l.lap = cx.length_in(
            lap,
            "laminate.lap",
            0.0,
            6.0 * MM_PER_INCH,
            true,
            "how far each layer laps round the rail, e.g. 2",
        )?;
    }
    l.resin_ratio = number_in(
        cx,
        &s.resin_ratio,
        "laminate.resin_ratio",
        l.resin_ratio,
        0.3,
        3.0,
        "laminating resin per cloth by weight, e.g. 1.0",
    )?;
    l.hot_coat = number_in(
        cx,
        &s.hot_coat,
        "laminate.hot_coat",
        l.hot_coat,
        0.0,
        1000.0,
        "hot coat resin per side in g/m², e.g. 250",
    )?;
    l.foam_density = number_in(
        cx,
        &s.foam_density,
        "laminate.foam_density",
        l.foam_density,
        10.0,
        300.0,
        "the blank's foam in kg/m³, e.g. 45 (polyurethane) or 24 (EPS)",
    )?;
    let density = number_in(
        cx,
        &s.stringer_density,
        "laminate.stringer_density",
        l.stringer.map_or(420.0, |s| s.1),
        50.0,
        1200.0,
        "the stringer's wood in kg/m³, e.g. 420 (basswood)",
    )?;
    l.stringer = match &s.stringer_width {
        None => l.stringer.map(|(w, _)| (w, density)),
        Some(w) => match w.value {
            StringerWidth::None => None,
            StringerWidth::Width(v) => {
                let mm = v.0.to_mm(cx.unit);
                if !(mm > 0.0 && mm <= 25.4) {
                    return cx.fail(
                        &w.referenced,
                        "laminate.stringer_width",
                        format!("is {}; it must be more than 0 and at most 1 in", show(mm)),
                        "e.g. 1/8in, or `none`",
                    );
                }
                Some((mm, density))
            }
        },
    };
    l.box_mass = number_in(
        cx,
        &s.box_mass,
        "laminate.box_mass",
        l.box_mass,
        0.0,
        500.0,
        "each fin box in grams, e.g. 25",
    )?;
    l.plug_mass = number_in(
        cx,
        &s.plug_mass,
        "laminate.plug_mass",
        l.plug_mass,
        0.0,
        200.0,
        "the leash plug in grams, e.g. 10",
    )?;
    Ok(l)
}

/// The order's free text, each field at most 400 characters of text.
pub(super) fn order(cx: &Ctx, raw: &BoardFile) -> Res<Order> {
    let Some(o) = &raw.order else {
        return Ok(Order::default());
    };
    let text = |v: &Option<Spanned<String>>, field: &str| -> Res<Option<String>> {
        match v {
            None => Ok(None),
            Some(s) if s.value.chars().count() > 400 => cx.fail(
                &s.referenced,
                field,
                format!("holds {} characters; at most 400", s.value.chars().count()),
                "keep it to what fits on the order sheet",
            ),
            Some(s) if s.value.chars().any(|c| c.is_control() && c != '\n') => cx.fail(
                &s.referenced,
                field,
                "holds a control character",
                "plain text only",
            ),
            Some(s) if s.value.trim().is_empty() => Ok(None),
            Some(s) => Ok(Some(s.value.trim().to_string())),
        }
    };
    Ok(Order {
        customer: text(&o.customer, "order.customer")?,
        reference: text(&o.reference, "order.reference")?,
        due: text(&o.due, "order.due")?,
        colour: text(&o.colour, "order.colour")?,
        notes: text(&o.notes, "order.notes")?,
    })
}
