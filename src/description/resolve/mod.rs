//! From the raw fields of a description to a checked, continuous board.
//!
//! Each rule names the field it is about, with the line and column the YAML
//! reader recorded for it, so a shaper sees exactly which number to change.

mod fittings;
mod laminate;
mod outline;
mod section;
mod side;

use super::located::Reader;
use super::values::{LengthValue, Position};
use super::{BoardFile, DescriptionError};
use crate::model::board::{Board, Closing, RailProfile, Station};
use crate::model::contour::ContourKind;
use crate::model::curve::{Curve, End};
use crate::units;
use outline::outline;
use section::{Anchors, bottom, rails};
use serde_saphyr::{Location, Spanned};
use side::{foil, rocker};

/// Shortest board accepted, mm.
pub const MIN_LENGTH: f64 = 300.0;

/// Longest board accepted, mm (20 ft is past any surfboard or paddle board).
pub const MAX_LENGTH: f64 = 6096.0;

/// The located reader, and the board's length once it is known (for
/// positions given from the tail).
pub(super) struct Ctx<'a> {
    r: Reader<'a>,
    length: f64,
}

pub(super) type Res<T> = Result<T, DescriptionError>;

impl<'a> std::ops::Deref for Ctx<'a> {
    type Target = Reader<'a>;

    fn deref(&self) -> &Reader<'a> {
        &self.r
    }
}

impl Ctx<'_> {
    pub(super) fn at(&self, p: &Spanned<Position>) -> f64 {
        p.value.from_nose(self.length, self.r.unit)
    }

    /// A length that must lie in (lo, hi] — or [lo, hi] when `zero_ok`.
    pub(super) fn length_in(
        &self,
        v: &Spanned<LengthValue>,
        field: &str,
        lo: f64,
        hi: f64,
        zero_ok: bool,
        hint: &str,
    ) -> Res<f64> {
        if zero_ok {
            self.r.length_or_zero(v, field, lo, hi, hint)
        } else {
            self.r.length(v, field, lo, hi, hint)
        }
    }
}

/// A length for messages: `304.8 mm (1' 0")`.
pub(super) fn show(mm: f64) -> String {
    units::Both(mm).to_string()
}

/// Checks a description's shape rules and builds the board.
pub fn resolve(raw: &BoardFile, text: &str, file: &str) -> Result<Board, DescriptionError> {
    let mut cx = Ctx {
        r: Reader {
            text,
            file,
            unit: raw.units.value,
        },
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
    // Shops quote N12/T12 a foot from the tips, in inches or millimetres;
    // a description may say otherwise.
    let d12 = match &raw.tip_station {
        Some(d) => cx.length_in(
            d,
            "tip_station",
            0.05 * l,
            0.4 * l,
            false,
            "where nose and tail widths and thicknesses are measured from each tip: 12 in unless the shop says otherwise, e.g. 300mm",
        )?,
        None => units::MM_PER_FOOT,
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
            "the dome is how far the stringer stands above the deck where it starts to roll into the rail; it must stay under half the thickness",
        )?,
        // A box has a flat deck; a board a slight crown, 3/16 in on a 2 1/2 in
        // board (common practice, from memory), in proportion on others.
        None if raw.rails.profile == super::RailProfileSpec::Square => 0.0,
        None => (0.1875 * units::MM_PER_INCH).min(0.075 * t_max),
    };
    let anchors = Anchors([d12, outline.wide_point, l - d12]);
    let rails = rails(&cx, raw, &anchors, &foil)?;
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
        unit: cx.unit,
        fittings: Default::default(),
        laminate: laminate::laminate(&cx, raw)?,
        order: laminate::order(&cx, raw)?,
    };
    check_sections(&cx, raw, &board)?;
    let stringer = board.laminate.stringer.map(|s| s.0);
    let mut board = board;
    board.fittings = fittings::fittings(&cx, raw, &board, stringer)?;
    Ok(board)
}

/// Samples the finished board: the bottom must stay below the deck
/// everywhere, and between the nose- and tail-width stations, where the
/// rail values are the shaper's own, each must fit the board as given.
pub(super) fn check_sections(cx: &Ctx, raw: &BoardFile, board: &Board) -> Res<()> {
    let l = board.length;
    let mut xs: Vec<f64> = (1..400).map(|i| l * i as f64 / 400.0).collect();
    xs.extend(board.breaks());
    for &x in &xs {
        if x <= 0.0 || x >= l {
            continue;
        }
        let st = board.station(x);
        check_contours(cx, raw, &st)?;
        if board.rails.profile == RailProfile::Rounded
            && x >= board.tip_station - 1e-9
            && x <= l - board.tip_station + 1e-9
        {
            check_rail(cx, raw, board, &st)?;
        }
    }
    Ok(())
}

/// The contours must leave the board some thickness at every point across.
fn check_contours(cx: &Ctx, raw: &BoardFile, st: &Station) -> Res<()> {
    let lift = st.contour_lift();
    if lift <= 0.0 || st.half_width <= 0.0 {
        return Ok(());
    }
    // Out to the rail's gauge: beyond it the rail itself closes the section.
    let reach = if st.square {
        st.half_width
    } else {
        st.half_width - st.rail.gauge
    };
    let steps = 128;
    let thinnest = (0..=steps)
        .map(|i| {
            let y = reach * i as f64 / steps as f64;
            st.deck_rise(y) - st.bottom_rise(y)
        })
        .fold(f64::INFINITY, f64::min);
    if thinnest >= 1.0 {
        return Ok(());
    }
    let x = st.x;
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
    else {
        return Ok(());
    };
    let at = z
        .depth
        .as_ref()
        .map(|d| d.referenced)
        .unwrap_or(z.contour.referenced);
    cx.fail(
        &at,
        &format!("bottom[{i}].depth"),
        format!(
            "{} from the nose the contours lift the bottom {:.2} mm and leave the board {:.2} mm thick at its thinnest: the bottom would meet the deck",
            show(x),
            lift,
            thinnest.max(0.0)
        ),
        "make the contour shallower or end the zone sooner",
    )
}

/// The rail values at one station must fit it: roll and tuck inside the
/// half-width, the apex leaving the deck room to roll, the thickness one the
/// roll can reach.
fn check_rail(cx: &Ctx, raw: &BoardFile, board: &Board, st: &Station) -> Res<()> {
    let r = &raw.rails;
    let x = st.x;
    let fallback = raw.outline.length.referenced;
    let near = |v: Option<Location>| v.unwrap_or(fallback);
    let given = |set: bool| {
        if set {
            "make it smaller".to_string()
        } else {
            "the default does not fit this board: set it in `rails:`".to_string()
        }
    };
    let want_roll = board.rails.roll.eval(x);
    if want_roll > 0.8 * st.half_width + 1e-6 {
        return cx.fail(
            &near(r.roll.as_ref().map(|v| v.referenced)),
            "rails.roll",
            format!(
                "is {} at {} from the nose, where the board is {} wide; the roll must stay within 80 % of the half-width",
                show(want_roll),
                show(x),
                show(2.0 * st.half_width)
            ),
            given(r.roll.is_some()),
        );
    }
    let want_tuck = board.rails.tuck.eval(x);
    let most_tuck = (0.8 * want_roll).min(0.3 * st.half_width);
    if want_tuck > most_tuck + 1e-6 {
        return cx.fail(
            &near(r.tuck.as_ref().map(|v| v.referenced)),
            "rails.tuck",
            format!(
                "is {} at {} from the nose; the edge can sit at most {} in under the rail there (80 % of the roll, 30 % of the half-width)",
                show(want_tuck),
                show(x),
                show(most_tuck)
            ),
            given(r.tuck.is_some()),
        );
    }
    let want_apex = board.rails.apex.eval(x) * st.thickness;
    if want_apex > st.rail.apex + 1e-6 {
        return cx.fail(
            &near(r.apex.as_ref().map(|v| v.referenced)),
            "rails.apex",
            format!(
                "is {} at {} from the nose, where the board is {} thick: the apex may take at most half the rail's height ({})",
                show(want_apex),
                show(x),
                show(st.thickness),
                show(st.rail.apex)
            ),
            given(r.apex.is_some()),
        );
    }
    let got = st.thickness_at(st.rail.gauge);
    let want = st.rail.thickness;
    if (got - want).abs() > 0.05 {
        let (thin, thick) = st.rail_thickness_range();
        return cx.fail(
            &near(r.thickness.as_ref().map(|v| v.referenced)),
            "rails.thickness",
            format!(
                "asks for {} at {} from the nose, {} in from the edge, where the roll from {} in can make it only {} to {}",
                show(want),
                show(x),
                show(st.rail.gauge),
                show(st.rail.roll),
                show(thin),
                show(thick)
            ),
            "a thinner rail needs a wider roll (rails.roll) or a higher apex; a fuller one a narrower roll",
        );
    }
    Ok(())
}
