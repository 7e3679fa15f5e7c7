//! Picking the blank: the board tried in every blank of the shop's stock
//! list with the job's holding, on the machine; the blanks it fits ranked
//! by the foam they waste, each with its least margin and where, and why
//! each other one does not fit.

use crate::model::job::Job;
use crate::model::machine::Machine;
use crate::model::mesh::Mesh;
use crate::profiles::stock::StockEntry;
use crate::toolpath::setup::{self, Margins};
use crate::units;

/// A blank the board fits.
#[derive(Debug, Clone, PartialEq)]
pub struct Fit {
    /// Room all round.
    pub margins: Margins,
    /// The least of the margins: which (`over the deck`, `at the nose`…),
    /// how much, mm, and where (X from the board's nose, mm).
    pub least: (&'static str, f64, f64),
    /// The blank's volume less the board's, litres: the foam cut away.
    pub waste_litres: f64,
}

/// One blank, tried.
#[derive(Debug, Clone, PartialEq)]
pub struct Tried {
    /// The blank.
    pub entry: StockEntry,
    /// Its fit, or why it does not fit.
    pub fit: Result<Fit, String>,
}

/// Tries the board (`mesh`, `litres`; `apex` as for placement) in every
/// blank with the job's holding and placement rules on `machine`: the
/// blanks it fits first, least foam wasted first (ties: the larger least
/// margin first), then the rest in the list's order.
pub fn rank(
    mesh: &Mesh,
    apex: Option<&[[f64; 3]]>,
    litres: f64,
    job: &Job,
    machine: &Machine,
    blanks: &[StockEntry],
) -> Vec<Tried> {
    let mut tried: Vec<Tried> = blanks
        .iter()
        .map(|e| {
            let j = Job {
                stock: Some(e.block.clone()),
                ..job.clone()
            };
            let fit = setup::place(mesh, apex, &j)
                .and_then(|p| setup::fits_machine(&p, machine, &j).map(|()| p))
                .map(|p| {
                    let m = p.margins;
                    let least = [
                        ("over the deck", m.top.0, m.top.1),
                        ("under the bottom", m.bottom.0, m.bottom.1),
                        ("at the nose", m.nose, 0.0),
                        ("at the tail", m.tail, p.x_range[1] - p.x_range[0]),
                        ("at each side", m.side.0, m.side.1),
                    ]
                    .into_iter()
                    .fold(
                        ("", f64::INFINITY, 0.0),
                        |a, b| if b.1 < a.1 { b } else { a },
                    );
                    Fit {
                        margins: m,
                        least,
                        waste_litres: e.block.volume() / 1e6 - litres,
                    }
                })
                .map_err(|e| e.to_string());
            Tried {
                entry: e.clone(),
                fit,
            }
        })
        .collect();
    // Stable: blanks that do not fit keep the list's order.
    tried.sort_by(|a, b| match (&a.fit, &b.fit) {
        (Ok(x), Ok(y)) => x
            .waste_litres
            .total_cmp(&y.waste_litres)
            .then(y.least.1.total_cmp(&x.least.1)),
        (Ok(_), Err(_)) => std::cmp::Ordering::Less,
        (Err(_), Ok(_)) => std::cmp::Ordering::Greater,
        (Err(_), Err(_)) => std::cmp::Ordering::Equal,
    });
    tried
}

/// The ranking as text: one line per blank that fits, then why each other
/// one does not.
pub fn text(board: &str, litres: f64, tried: &[Tried]) -> String {
    let both = |mm: f64| units::Both(mm).to_string();
    let mut s = format!("blanks for {board} ({litres:.2} L), best first:\n");
    let fits: Vec<&Tried> = tried.iter().filter(|t| t.fit.is_ok()).collect();
    if fits.is_empty() {
        s.push_str("  none of the blanks fits\n");
    }
    for (k, t) in fits.iter().enumerate() {
        let Ok(f) = &t.fit else { continue };
        let b = &t.entry.block;
        s.push_str(&format!(
            "{:>2}. {}: {} x {} {}; foam cut away {:.2} L; least margin {} {}",
            k + 1,
            t.entry.name,
            both(b.length),
            both(b.width),
            match &b.rocker {
                None => format!("x {} block", both(b.thickness)),
                Some(_) => format!("rockered blank, {} high overall", both(b.thickness)),
            },
            f.waste_litres,
            both(f.least.1),
            f.least.0
        ));
        if f.least.0 != "at the nose" {
            s.push_str(&format!(", {} from the nose", both(f.least.2.max(0.0))));
        }
        s.push('\n');
    }
    let misfits: Vec<&Tried> = tried.iter().filter(|t| t.fit.is_err()).collect();
    if !misfits.is_empty() {
        s.push_str("does not fit:\n");
        for t in misfits {
            if let Err(why) = &t.fit {
                s.push_str(&format!("  {}: {why}\n", t.entry.name));
            }
        }
    }
    s
}

/// The ranking as JSON: per blank its name, size (mm), whether it fits,
/// and the least margin, where and the foam cut away (litres), or why not.
pub fn to_json(tried: &[Tried]) -> String {
    let rows: Vec<serde_json::Value> = tried
        .iter()
        .map(|t| {
            let b = &t.entry.block;
            let mut v = serde_json::json!({
                "name": t.entry.name,
                "length_mm": b.length,
                "width_mm": b.width,
                "thickness_mm": b.thickness,
                "rockered": b.rocker.is_some(),
                "fits": t.fit.is_ok(),
            });
            match &t.fit {
                Ok(f) => {
                    v["least_margin_mm"] = f.least.1.into();
                    v["least_margin_where"] = f.least.0.into();
                    v["least_margin_from_nose_mm"] = f.least.2.into();
                    v["foam_cut_away_litres"] = f.waste_litres.into();
                }
                Err(why) => v["why_not"] = why.clone().into(),
            }
            v
        })
        .collect();
    let mut s = serde_json::to_string_pretty(&rows).expect("plain values");
    s.push('\n');
    s
}
