//! The rules for fins and the leash plug, checked against the resolved
//! shape: a box must stay inside the rail and above the deck, a plug on
//! foam.

use serde_saphyr::{Location, Spanned};

use super::{Ctx, Res, show};
use crate::description::BoardFile;
use crate::description::fittings::{FinSpec, PocketSpec, SetupName};
use crate::description::values::LengthValue;
use crate::model::board::Board;
use crate::model::fittings::{Fin, FinSetup, Fittings, LeashPlug, PlacedBox, Pocket};
use crate::units::MM_PER_INCH;

/// Foam a box or plug must leave under the deck (or over the bottom), and
/// room a box must leave inside the rail: 1/4 in and 3/8 in (common
/// practice, no source).
pub const FOAM_LEFT: f64 = 6.35;
/// See [`FOAM_LEFT`].
pub const RAIL_ROOM: f64 = 9.525;

/// A role's defaults, inches and degrees (common practice, from memory:
/// README, "Fins and the leash plug").
struct RoleDefault {
    role: &'static str,
    centre: bool,
    from_tail: f64,
    from_rail: f64,
    toe: f64,
    cant: f64,
    long_box: bool,
}

const fn side(from_tail: f64, from_rail: f64, toe: f64, cant: f64) -> RoleDefault {
    RoleDefault {
        role: "side",
        centre: false,
        from_tail,
        from_rail,
        toe,
        cant,
        long_box: false,
    }
}

const fn centre(from_tail: f64, long_box: bool) -> RoleDefault {
    RoleDefault {
        role: "centre",
        centre: true,
        from_tail,
        from_rail: 0.0,
        toe: 0.0,
        cant: 0.0,
        long_box,
    }
}

fn roles(setup: FinSetup) -> Vec<RoleDefault> {
    match setup {
        FinSetup::Single => vec![centre(13.0, true)],
        FinSetup::Twin => vec![side(10.0, 1.25, 2.0, 6.0)],
        FinSetup::Thruster => vec![side(11.0, 1.25, 2.5, 6.0), centre(8.25, false)],
        FinSetup::Quad => vec![
            side(11.0, 1.25, 2.5, 6.0),
            RoleDefault {
                role: "rear",
                ..side(6.5, 2.0, 1.5, 4.0)
            },
        ],
        FinSetup::TwoPlusOne => vec![side(11.0, 1.25, 2.5, 6.0), centre(13.0, true)],
    }
}

/// The short box: 4 5/8 in x 1/2 in, 1/2 in deep, round ends; the long
/// centre box 10 in (common practice, from memory; generic pockets, no
/// maker's system).
fn default_pocket(long: bool) -> Pocket {
    Pocket {
        length: if long { 10.0 } else { 4.625 } * MM_PER_INCH,
        width: 0.5 * MM_PER_INCH,
        depth: 0.5 * MM_PER_INCH,
        corner_radius: 0.25 * MM_PER_INCH,
    }
}

/// A number field within a range.
pub(super) fn number_in(
    cx: &Ctx,
    v: &Option<Spanned<f64>>,
    field: &str,
    default: f64,
    lo: f64,
    hi: f64,
    hint: &str,
) -> Res<f64> {
    match v {
        None => Ok(default),
        Some(s) => cx.number(s, field, lo, hi, hint),
    }
}

fn length_or(
    cx: &Ctx,
    v: &Option<Spanned<LengthValue>>,
    field: &str,
    default: f64,
    lo: f64,
    hi: f64,
    hint: &str,
) -> Res<f64> {
    match v {
        None => Ok(default),
        Some(s) => cx.length_in(s, field, lo, hi, false, hint),
    }
}

fn pocket(cx: &Ctx, spec: Option<&PocketSpec>, base: Pocket, field: &str) -> Res<Pocket> {
    let Some(p) = spec else { return Ok(base) };
    let length = length_or(
        cx,
        &p.length,
        &format!("{field}.length"),
        base.length,
        0.0,
        12.0 * MM_PER_INCH,
        "the pocket's length along the fin, e.g. 4 5/8",
    )?;
    let width = length_or(
        cx,
        &p.width,
        &format!("{field}.width"),
        base.width,
        0.0,
        1.5 * MM_PER_INCH,
        "the pocket's width across the fin, e.g. 1/2",
    )?;
    let depth = length_or(
        cx,
        &p.depth,
        &format!("{field}.depth"),
        base.depth,
        0.0,
        2.0 * MM_PER_INCH,
        "the pocket's depth into the foam, e.g. 1/2",
    )?;
    let corner_radius = match &p.corner_radius {
        None => base.corner_radius.min(width / 2.0),
        Some(r) => cx.length_in(
            r,
            &format!("{field}.corner_radius"),
            0.0,
            width / 2.0,
            true,
            "at most half the pocket's width (round ends)",
        )?,
    };
    if width > length {
        let at = p
            .width
            .as_ref()
            .or(p.length.as_ref())
            .map_or(Location::UNKNOWN, |s| s.referenced);
        return cx.fail(
            &at,
            &format!("{field}.width"),
            format!(
                "the pocket is {} wide but only {} long",
                show(width),
                show(length)
            ),
            "a fin box runs along the fin: give a length longer than its width",
        );
    }
    Ok(Pocket {
        length,
        width,
        depth,
        corner_radius,
    })
}

/// The fins and the plug, checked against `board`.
pub(super) fn fittings(
    cx: &Ctx,
    raw: &BoardFile,
    board: &Board,
    stringer: Option<f64>,
) -> Res<Fittings> {
    let mut out = Fittings::default();
    if let Some(f) = &raw.fins {
        let setup = match f.setup.value {
            SetupName::Single => FinSetup::Single,
            SetupName::Twin => FinSetup::Twin,
            SetupName::Thruster => FinSetup::Thruster,
            SetupName::Quad => FinSetup::Quad,
            SetupName::TwoPlusOne => FinSetup::TwoPlusOne,
        };
        out.setup = Some(setup);
        let defaults = roles(setup);
        let names: Vec<&str> = defaults.iter().map(|d| d.role).collect();
        for (spec, role) in [(&f.side, "side"), (&f.centre, "centre"), (&f.rear, "rear")] {
            if let Some(s) = spec
                && !names.contains(&role)
            {
                let at = first_location(s).unwrap_or(f.setup.referenced);
                return cx.fail(
                    &at,
                    &format!("fins.{role}"),
                    format!(
                        "does not apply: a {} has {} fins",
                        setup.name(),
                        names.join(" and ")
                    ),
                    format!("remove it, or give fins for {}", names.join(" and ")),
                );
            }
        }
        for d in &defaults {
            out.fins.push(fin(cx, f, d, board)?);
        }
        for b in out.boxes(board.length, |x| board.half_width(x)) {
            check_box(cx, f, &out, &b, board, stringer)?;
        }
    }
    if let Some(p) = &raw.leash_plug {
        out.plug = Some(leash_plug(cx, p, board)?);
    }
    Ok(out)
}

/// One fin of the setup: the description's values for its role, or the
/// role's defaults, in range.
fn fin(
    cx: &Ctx,
    f: &crate::description::fittings::FinsSpec,
    d: &RoleDefault,
    board: &Board,
) -> Res<Fin> {
    let empty = FinSpec::default();
    let spec = match d.role {
        "side" => f.side.as_ref(),
        "centre" => f.centre.as_ref(),
        _ => f.rear.as_ref(),
    }
    .unwrap_or(&empty);
    let field = format!("fins.{}", d.role);
    if d.centre {
        for (v, name) in [(&spec.toe, "toe"), (&spec.cant, "cant")] {
            if let Some(s) = v {
                return cx.fail(
                    &s.referenced,
                    &format!("{field}.{name}"),
                    "does not apply: a centre fin stands straight on the stringer",
                    "remove the field",
                );
            }
        }
        cx.forbid(
            &spec.from_rail,
            &format!("{field}.from_rail"),
            "a centre fin sits on the stringer",
        )?;
    }
    let base = match (&f.pocket, d.long_box) {
        (Some(p), false) => pocket(cx, Some(p), default_pocket(false), "fins.box")?,
        _ => default_pocket(d.long_box),
    };
    let fin = Fin {
        role: d.role.to_string(),
        centre: d.centre,
        from_tail: length_or(
            cx,
            &spec.from_tail,
            &format!("{field}.from_tail"),
            d.from_tail * MM_PER_INCH,
            0.0,
            board.length / 2.0,
            "from the tail to the front end of the box, e.g. 11 1/4",
        )?,
        from_rail: length_or(
            cx,
            &spec.from_rail,
            &format!("{field}.from_rail"),
            d.from_rail * MM_PER_INCH,
            0.0,
            12.0 * MM_PER_INCH,
            "from the rail in to the front end of the box, e.g. 1 1/8",
        )?,
        toe: number_in(
            cx,
            &spec.toe,
            &format!("{field}.toe"),
            d.toe,
            0.0,
            10.0,
            "degrees the fin's front turns in toward the stringer, e.g. 3",
        )?,
        cant: number_in(
            cx,
            &spec.cant,
            &format!("{field}.cant"),
            d.cant,
            0.0,
            15.0,
            "degrees the fin tilts out toward the rail, e.g. 6",
        )?,
        pocket: pocket(cx, spec.pocket.as_ref(), base, &format!("{field}.box"))?,
    };
    Ok(fin)
}

/// The leash plug: in range, on foam, with foam left under its pocket.
fn leash_plug(
    cx: &Ctx,
    p: &Spanned<crate::description::fittings::PlugSpec>,
    board: &Board,
) -> Res<LeashPlug> {
    let spec = &p.value;
    let tail_room = board.notch_apex().map_or(0.0, |a| board.length - a);
    let plug = LeashPlug {
        from_tail: length_or(
            cx,
            &spec.from_tail,
            "leash_plug.from_tail",
            tail_room + 3.5 * MM_PER_INCH,
            0.0,
            board.length / 3.0,
            "from the tail to the plug's centre, e.g. 3 1/2",
        )?,
        diameter: length_or(
            cx,
            &spec.diameter,
            "leash_plug.diameter",
            MM_PER_INCH,
            0.0,
            2.0 * MM_PER_INCH,
            "the plug pocket's diameter, e.g. 1",
        )?,
        depth: length_or(
            cx,
            &spec.depth,
            "leash_plug.depth",
            0.75 * MM_PER_INCH,
            0.0,
            2.0 * MM_PER_INCH,
            "the plug pocket's depth from the deck, e.g. 3/4",
        )?,
    };
    let x = board.length - plug.from_tail;
    let r = plug.diameter / 2.0;
    let at = p
        .value
        .from_tail
        .as_ref()
        .or(p.value.depth.as_ref())
        .map_or(p.referenced, |s| s.referenced);
    for k in 0..=16 {
        let a = std::f64::consts::TAU * k as f64 / 16.0;
        let (px, py) = (x + r * a.cos(), r * a.sin());
        let st = board.station(px);
        if px >= board.length || (st.inner > 0.0 && py.abs() <= st.inner) {
            return cx.fail(
                &at,
                "leash_plug.from_tail",
                format!(
                    "the plug's pocket, {} across, {} from the tail, runs off the foam (past the tail or into the notch)",
                    show(plug.diameter),
                    show(plug.from_tail)
                ),
                "move it forward",
            );
        }
        let t = st.thickness_at(st.half_width - py.abs());
        if t - plug.depth < FOAM_LEFT {
            let field = if spec.depth.is_some() {
                "leash_plug.depth"
            } else {
                "leash_plug.from_tail"
            };
            return cx.fail(
                &at,
                field,
                format!(
                    "the plug's pocket is {} deep where the board is {} thick: {} would be left under it, at least {} is needed",
                    show(plug.depth),
                    show(t),
                    show((t - plug.depth).max(0.0)),
                    show(FOAM_LEFT)
                ),
                "a shallower pocket, or the plug further forward where the board is thicker",
            );
        }
    }
    Ok(plug)
}

fn first_location(s: &FinSpec) -> Option<Location> {
    [&s.from_tail, &s.from_rail]
        .iter()
        .find_map(|v| v.as_ref().map(|s| s.referenced))
        .or_else(|| s.toe.as_ref().map(|s| s.referenced))
        .or_else(|| s.cant.as_ref().map(|s| s.referenced))
}

/// A box must stay on the foam, `RAIL_ROOM` inside the rail, off the
/// stringer (side fins), and leave `FOAM_LEFT` under the deck.
fn check_box(
    cx: &Ctx,
    spec: &crate::description::fittings::FinsSpec,
    fittings: &Fittings,
    b: &PlacedBox,
    board: &Board,
    stringer: Option<f64>,
) -> Res<()> {
    let fin = &fittings.fins[b.fin];
    let role = match fin.role.as_str() {
        "side" => &spec.side,
        "centre" => &spec.centre,
        _ => &spec.rear,
    };
    let loc = |v: Option<&Spanned<LengthValue>>| {
        v.map(|s| s.referenced)
            .or_else(|| role.as_ref().and_then(first_location))
            .unwrap_or(spec.setup.referenced)
    };
    let field = format!("fins.{}", fin.role);
    let name = if fin.centre {
        format!("the {} fin's box", fin.role)
    } else {
        format!("the {} fins' boxes", fin.role)
    };
    if !fin.centre && b.front[1] * f64::from(b.side) <= fin.pocket.width {
        return cx.fail(
            &loc(role.as_ref().and_then(|r| r.from_rail.as_ref())),
            &format!("{field}.from_rail"),
            format!(
                "{name} would sit {} from the rail, at or past the stringer: a side fin belongs out toward its own rail",
                show(fin.from_rail)
            ),
            "a smaller from_rail",
        );
    }
    let mut pts = b.outline(0.0, 6);
    pts.push(b.middle());
    for p in pts {
        let (x, y) = (p[0], p[1].abs());
        if x <= 0.0 || x >= board.length {
            return cx.fail(
                &loc(role.as_ref().and_then(|r| r.from_tail.as_ref())),
                &format!("{field}.from_tail"),
                format!("{name} run past the tail"),
                "move the fin forward (a smaller from_tail)",
            );
        }
        let st = board.station(x);
        let room = st.half_width - y;
        if room < RAIL_ROOM {
            return cx.fail(
                &loc(role.as_ref().and_then(|r| r.from_rail.as_ref())),
                &format!("{field}.from_rail"),
                format!(
                    "{name} come {} from the rail {} from the tail: the pocket would break out through the rail (at least {} in from it is needed)",
                    show(room.max(0.0)),
                    show(board.length - x),
                    show(RAIL_ROOM)
                ),
                "a larger from_rail, or the fin further forward where the board is wider",
            );
        }
        if y < st.inner + RAIL_ROOM && st.inner > 0.0 {
            return cx.fail(
                &loc(role.as_ref().and_then(|r| r.from_tail.as_ref())),
                &format!("{field}.from_tail"),
                format!("{name} run into the swallow's notch"),
                "move the fin forward, or further out",
            );
        }
        if let (false, Some(w)) = (fin.centre, stringer)
            && y < w / 2.0 + 3.0
        {
            return cx.fail(
                &loc(role.as_ref().and_then(|r| r.from_rail.as_ref())),
                &format!("{field}.from_rail"),
                format!(
                    "{name} reach {} from the centreline: into the {} stringer",
                    show(y),
                    show(w)
                ),
                "side fins sit out toward the rails: a smaller from_rail",
            );
        }
        let t = st.thickness_at(st.half_width - y);
        if t - fin.pocket.depth < FOAM_LEFT {
            let depth_at = role
                .as_ref()
                .and_then(|r| r.pocket.as_ref())
                .or(spec.pocket.as_ref())
                .and_then(|p| p.depth.as_ref());
            return cx.fail(
                &loc(depth_at.or(role.as_ref().and_then(|r| r.from_tail.as_ref()))),
                &format!("{field}.box.depth"),
                format!(
                    "{name} are {} deep where the board is {} thick, {} from the tail: {} would be left under the deck, at least {} is needed",
                    show(fin.pocket.depth),
                    show(t),
                    show(board.length - x),
                    show((t - fin.pocket.depth).max(0.0)),
                    show(FOAM_LEFT)
                ),
                "a shallower box, or the fin further forward where the board is thicker",
            );
        }
    }
    Ok(())
}
