//! From the raw fields of a description to a checked, continuous board.
//!
//! Each rule names the field it is about, with the line and column the YAML
//! reader recorded for it, so a shaper sees exactly which number to change.

mod outline;
mod section;
mod side;

use super::values::{Blend, LengthValue, Position};
use super::{BoardFile, DescriptionError};
use crate::model::board::{Board, Closing, ContourKind};
use crate::model::curve::Curve;
use crate::units::{self, Unit};
use outline::outline;
use section::{bottom, rails};
use serde_saphyr::{Location, Spanned};
use side::{foil, rocker};

/// Shortest board accepted, mm.
pub const MIN_LENGTH: f64 = 300.0;

/// Longest board accepted, mm (20 ft is past any surfboard or paddle board).
pub const MAX_LENGTH: f64 = 6096.0;

pub(super) struct Ctx<'a> {
    text: &'a str,
    file: &'a str,
    unit: Unit,
    length: f64,
}

pub(super) type Res<T> = Result<T, DescriptionError>;

impl Ctx<'_> {
    pub(super) fn fail<T>(
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

    pub(super) fn mm(&self, v: &Spanned<LengthValue>) -> f64 {
        v.value.0.to_mm(self.unit)
    }

    pub(super) fn at(&self, p: &Spanned<Position>) -> f64 {
        p.value.from_nose(self.length, self.unit)
    }

    /// A length that must lie in (lo, hi) — or [lo, hi) when `zero_ok`.
    pub(super) fn length_in(
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

    pub(super) fn required<'v, T>(
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

    pub(super) fn forbid<T>(&self, v: &Option<Spanned<T>>, field: &str, why: &str) -> Res<()> {
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

    pub(super) fn blend(
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
pub(super) fn show(mm: f64) -> String {
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

/// Samples the finished board: the contours must stay below the rail apex.
pub(super) fn check_sections(cx: &Ctx, raw: &BoardFile, board: &Board) -> Res<()> {
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
