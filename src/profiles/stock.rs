//! Stock as a shop buys it, read from a job's `stock:` or a stock list: a
//! flat block or a pre-rockered blank (its bottom and deck measured at
//! stations), either with an optional plan shape (widths at stations,
//! tapering to nose and tail).

use serde::Deserialize;
use serde_saphyr::{Location, Spanned};

use crate::description::DescriptionError;
use crate::description::located::Reader;
use crate::description::values::LengthValue;
use crate::model::curve::Curve;
use crate::model::job::{BlankRocker, Block, Stringer};
use crate::profiles::values::mm_text;

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct BlockSpec {
    length: Option<Spanned<LengthValue>>,
    width: Option<Spanned<LengthValue>>,
    thickness: Option<Spanned<LengthValue>>,
    rocker: Option<Spanned<Vec<Spanned<BlankStationSpec>>>>,
    allowance: Option<Spanned<LengthValue>>,
    plan: Option<Spanned<Vec<Spanned<PlanStationSpec>>>>,
    stringer: Option<StringerSpec>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct StringerSpec {
    width: Spanned<LengthValue>,
    material: Option<Spanned<String>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct BlankStationSpec {
    at: Spanned<LengthValue>,
    bottom: Spanned<LengthValue>,
    deck: Spanned<LengthValue>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct PlanStationSpec {
    at: Spanned<LengthValue>,
    width: Spanned<LengthValue>,
}

/// The stock as a job (or a stock list's entry) gives it: a flat block,
/// a pre-rockered blank, or none (sized from the board); `prefix` names
/// its fields in messages (`stock`, `blanks[2]`).
pub(crate) fn read_block(
    r: &Reader,
    stock: Option<&BlockSpec>,
    prefix: &str,
    at: Location,
) -> Result<Option<Block>, DescriptionError> {
    Ok(match stock {
        None => None,
        Some(b) => {
            let need = |v: &Option<Spanned<LengthValue>>,
                        name: &str,
                        hi: f64|
             -> Result<f64, DescriptionError> {
                match v {
                    Some(v) => r.length(v, &format!("{prefix}.{name}"), 0.0, hi, "the block's size"),
                    None => r.fail(
                        &at,
                        &format!("{prefix}.{name}"),
                        "is missing",
                        if prefix == "stock" {
                            "give length, width and thickness, or leave out `stock:` to size the block from the board"
                        } else {
                            "give length, width and thickness (or rocker stations instead of thickness)"
                        },
                    ),
                }
            };
            let length = need(&b.length, "length", 20_000.0)?;
            let width = need(&b.width, "width", 20_000.0)?;
            let plan = match &b.plan {
                None => None,
                Some(p) => Some(plan_shape(r, p, length, width, prefix)?),
            };
            let block = match &b.rocker {
                None => {
                    if let Some(a) = &b.allowance {
                        return r.fail(
                            &a.referenced,
                            &format!("{prefix}.allowance"),
                            "is only for a rockered blank",
                            "a flat block's faces are flat; leave it out, or give `rocker:` stations",
                        );
                    }
                    Block::flat(length, width, need(&b.thickness, "thickness", 2000.0)?)
                }
                Some(st) => rockered_blank(r, b, st, length, width, prefix)?,
            };
            let stringer = match &b.stringer {
                None => None,
                Some(st) => Some(Stringer {
                    width: r.length(
                        &st.width,
                        &format!("{prefix}.stringer.width"),
                        0.0,
                        50.0,
                        "the stringer's width across the blank, e.g. 1/8in",
                    )?,
                    material: st
                        .material
                        .as_ref()
                        .map_or("wood".to_string(), |m| m.value.trim().to_string()),
                }),
            };
            Some(Block {
                plan,
                stringer,
                ..block
            })
        }
    })
}

/// A plan shape from its stations: at least two, from 0 to the length,
/// increasing, each width more than 0 and at most the stock's `width`.
fn plan_shape(
    r: &Reader,
    p: &Spanned<Vec<Spanned<PlanStationSpec>>>,
    length: f64,
    width: f64,
    prefix: &str,
) -> Result<Vec<[f64; 2]>, DescriptionError> {
    if p.value.len() < 2 {
        return r.fail(
            &p.referenced,
            &format!("{prefix}.plan"),
            format!(
                "has {} station(s); a plan shape needs at least 2",
                p.value.len()
            ),
            "give {at, width} at both ends of the stock and where it tapers",
        );
    }
    let mut out: Vec<[f64; 2]> = Vec::new();
    for (k, sp) in p.value.iter().enumerate() {
        let v = &sp.value;
        let at = v.at.value.0.to_mm(r.unit);
        let field = |f: &str| format!("{prefix}.plan[{k}].{f}");
        if !(0.0..=length + 0.5).contains(&at) || out.last().is_some_and(|q| at <= q[0]) {
            return r.fail(
                &v.at.referenced,
                &field("at"),
                format!(
                    "is {}; stations run from 0 to the stock's length, {}, increasing",
                    mm_text(at),
                    mm_text(length)
                ),
                "`at` is from the stock's nose end",
            );
        }
        let w = r.length(
            &v.width,
            &field("width"),
            0.0,
            width + 0.5,
            "at most the stock's `width`, its widest",
        )?;
        out.push([at, w.min(width)]);
    }
    let (first, last) = (out[0][0], out[out.len() - 1][0]);
    if first > 0.5 || (last - length).abs() > 0.5 {
        return r.fail(
            &p.referenced,
            &format!("{prefix}.plan"),
            format!(
                "runs from {} to {}; it must run from 0 to the stock's length, {}",
                mm_text(first),
                mm_text(last),
                mm_text(length)
            ),
            "give the width at both ends",
        );
    }
    Ok(out)
}

/// A pre-rockered blank from its stations.
fn rockered_blank(
    r: &Reader,
    b: &BlockSpec,
    st: &Spanned<Vec<Spanned<BlankStationSpec>>>,
    length: f64,
    width: f64,
    prefix: &str,
) -> Result<Block, DescriptionError> {
    if let Some(t) = &b.thickness {
        return r.fail(
            &t.referenced,
            &format!("{prefix}.thickness"),
            "is set by the rocker stations of a rockered blank",
            "leave it out: the blank's thickness at each station is deck - bottom",
        );
    }
    let list = &st.value;
    if list.len() < 2 {
        return r.fail(
            &st.referenced,
            &format!("{prefix}.rocker"),
            format!(
                "has {} station(s); a blank's curves need at least 2",
                list.len()
            ),
            "give {at, bottom, deck} at both ends of the blank and every 300 mm or so between",
        );
    }
    let mut stations: Vec<[f64; 3]> = Vec::new();
    for (k, sp) in list.iter().enumerate() {
        let v = &sp.value;
        let field = |f: &str| format!("{prefix}.rocker[{k}].{f}");
        let at = v.at.value.0.to_mm(r.unit);
        let bottom = v.bottom.value.0.to_mm(r.unit);
        let deck = v.deck.value.0.to_mm(r.unit);
        for (val, f, loc) in [
            (at, "at", &v.at.referenced),
            (bottom, "bottom", &v.bottom.referenced),
            (deck, "deck", &v.deck.referenced),
        ] {
            if !(0.0..=20_000.0).contains(&val) {
                return r.fail(
                    loc,
                    &field(f),
                    format!("is {}; it must be from 0 to 20 m", mm_text(val)),
                    "heights are above the table the blank lies on, bottom down; `at` is from the blank's nose end",
                );
            }
        }
        if let Some(prev) = stations.last()
            && at <= prev[0]
        {
            return r.fail(
                &v.at.referenced,
                &field("at"),
                format!(
                    "is {}; stations must increase along the blank (the one before is at {})",
                    mm_text(at),
                    mm_text(prev[0])
                ),
                "list the stations from the nose end",
            );
        }
        if deck < bottom + 10.0 {
            return r.fail(
                &v.deck.referenced,
                &field("deck"),
                format!(
                    "is {} over a bottom of {}; the blank must be at least 10 mm thick",
                    mm_text(deck),
                    mm_text(bottom)
                ),
                "heights of the deck and the bottom above the table, at the same station",
            );
        }
        stations.push([at, bottom, deck]);
    }
    let (first, last) = (stations[0][0], stations[stations.len() - 1][0]);
    if first > 0.5 || (last - length).abs() > 0.5 {
        return r.fail(
            &st.referenced,
            &format!("{prefix}.rocker"),
            format!(
                "runs from {} to {}; it must run from 0 to the blank's length, {}",
                mm_text(first),
                mm_text(last),
                mm_text(length)
            ),
            "measure the blank at both its ends",
        );
    }
    // Heights from the lowest bottom point. The curves do not overshoot
    // their stations, so the box runs from the lowest bottom station to
    // the highest deck station.
    let lo = stations.iter().map(|s| s[1]).fold(f64::INFINITY, f64::min);
    let hi = stations
        .iter()
        .map(|s| s[2])
        .fold(f64::NEG_INFINITY, f64::max);
    for s in &mut stations {
        s[1] -= lo;
        s[2] -= lo;
    }
    let curve = |k: usize| {
        Curve::new(&stations.iter().map(|s| (s[0], s[k])).collect::<Vec<_>>())
            .expect("stations checked: finite and increasing")
    };
    let (bottom, deck) = (curve(1), curve(2));
    // Between stations the two curves may come closer than at any station.
    let n = length.ceil() as usize;
    let thin = (0..=n)
        .map(|k| {
            let x = (k as f64).min(length);
            deck.eval(x) - bottom.eval(x)
        })
        .fold(f64::INFINITY, f64::min);
    if thin < 10.0 {
        return r.fail(
            &st.referenced,
            &format!("{prefix}.rocker"),
            format!(
                "makes the blank {} thick between stations; it must be at least 10 mm",
                mm_text(thin)
            ),
            "add stations where the curves come close",
        );
    }
    let allowance = match &b.allowance {
        None => 5.0,
        Some(a) => r.length_or_zero(
            a,
            &format!("{prefix}.allowance"),
            0.0,
            50.0,
            "how far the real blank may stand proud of its measured curves, e.g. 5 mm",
        )?,
    };
    Ok(Block {
        length,
        width,
        thickness: hi - lo,
        rocker: Some(BlankRocker::new(stations, bottom, deck, allowance)),
        stringer: None,
        plan: None,
    })
}

/// One blank in the shop's stock list.
#[derive(Debug, Clone, PartialEq)]
pub struct StockEntry {
    /// The shop's name for it.
    pub name: String,
    /// Its size, rocker and plan shape.
    pub block: Block,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct StockListFile {
    units: Option<Spanned<crate::units::Unit>>,
    blanks: Spanned<Vec<Spanned<BlankEntry>>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct BlankEntry {
    name: Spanned<String>,
    length: Option<Spanned<LengthValue>>,
    width: Option<Spanned<LengthValue>>,
    thickness: Option<Spanned<LengthValue>>,
    rocker: Option<Spanned<Vec<Spanned<BlankStationSpec>>>>,
    allowance: Option<Spanned<LengthValue>>,
    plan: Option<Spanned<Vec<Spanned<PlanStationSpec>>>>,
    stringer: Option<StringerSpec>,
}

/// Reads a stock list from its text: `units` (default mm) and `blanks`,
/// each a name and a stock as a job's `stock:` takes it (with `plan:`
/// where it tapers). Names must be unique; every value is checked at its
/// line and column.
pub fn stock_list_from_str(text: &str, file: &str) -> Result<Vec<StockEntry>, DescriptionError> {
    let raw: StockListFile = crate::description::read_yaml(text, file)?;
    let unit = raw
        .units
        .as_ref()
        .map_or(crate::units::Unit::Mm, |u| u.value);
    let r = Reader { text, file, unit };
    if raw.blanks.value.is_empty() {
        return r.fail(
            &raw.blanks.referenced,
            "blanks",
            "is empty",
            "list the blanks the shop has: name, length, width and thickness or rocker",
        );
    }
    let mut out: Vec<StockEntry> = Vec::new();
    for (k, e) in raw.blanks.value.into_iter().enumerate() {
        let prefix = format!("blanks[{k}]");
        let at = e.referenced;
        let e = e.value;
        let name = e.name.value.trim().to_string();
        if name.is_empty() || out.iter().any(|o| o.name == name) {
            return r.fail(
                &e.name.referenced,
                &format!("{prefix}.name"),
                if name.is_empty() {
                    "is empty".to_string()
                } else {
                    format!("\"{name}\" is already the name of another blank")
                },
                "give each blank its own name",
            );
        }
        let spec = BlockSpec {
            length: e.length,
            width: e.width,
            thickness: e.thickness,
            rocker: e.rocker,
            allowance: e.allowance,
            plan: e.plan,
            stringer: e.stringer,
        };
        let block = read_block(&r, Some(&spec), &prefix, at)?.expect("a spec was given");
        out.push(StockEntry { name, block });
    }
    Ok(out)
}

/// Reads a stock list file (bounded, as every input).
pub fn load_stock_list(path: &std::path::Path) -> Result<Vec<StockEntry>, DescriptionError> {
    let (text, file) = crate::description::read_text(path)?;
    stock_list_from_str(&text, &file)
}
