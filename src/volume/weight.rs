//! Glassing and the finished weight: the cloth each layer takes, the
//! resin, and what the board will weigh, each figure with what it rests on.
//!
//! Areas come from the certified mesh: a triangle whose normal points up
//! is deck, down is bottom (a vertical wall half each), so deck and bottom
//! add up to the mesh's surface area. A layer covers its side and laps the
//! rail by the schedule's lap, the lap measured along the outline's
//! perimeter. The stringer is a strip of its width through the board's
//! thickness at the stringer, nose to tail.

use crate::geom::quadrature;
use crate::model::board::Board;
use crate::model::mesh::{Mesh, cross, norm, sub};

/// The estimate, in grams and square metres.
#[derive(Debug, Clone, PartialEq)]
pub struct Weight {
    /// Deck surface, m².
    pub deck_m2: f64,
    /// Bottom surface, m².
    pub bottom_m2: f64,
    /// The outline's perimeter, m (where the laps run).
    pub perimeter_m: f64,
    /// Cloth per deck layer, m² (deck plus its lap).
    pub deck_layer_m2: f64,
    /// Cloth per bottom layer, m².
    pub bottom_layer_m2: f64,
    /// Each line of the estimate: what, grams, what it rests on.
    pub lines: Vec<(String, f64, String)>,
    /// The finished board, g.
    pub total_g: f64,
}

/// Deck and bottom areas of a mesh, mm²: by the sign of each triangle's
/// normal's z, a vertical one half each.
pub fn deck_and_bottom(mesh: &Mesh) -> (f64, f64) {
    let v = &mesh.vertices;
    let (mut deck, mut bottom) = (0.0, 0.0);
    for t in &mesh.triangles {
        let [a, b, c] = t.map(|i| v[i as usize]);
        let n = cross(sub(b, a), sub(c, a));
        let area = 0.5 * norm(n);
        let nz = if area > 0.0 { n[2] / (2.0 * area) } else { 0.0 };
        if nz > 1e-9 {
            deck += area;
        } else if nz < -1e-9 {
            bottom += area;
        } else {
            deck += area / 2.0;
            bottom += area / 2.0;
        }
    }
    (deck, bottom)
}

/// The outline's perimeter, mm: both rails, the nose and tail ends, and a
/// swallow's notch edges.
pub fn perimeter(board: &Board) -> f64 {
    let l = board.length;
    let n = 4000;
    let mut rail = 0.0;
    let mut notch = 0.0;
    let (mut x0, mut w0, mut i0) = (0.0, board.half_width(0.0), board.outline.inner(0.0, l));
    for k in 1..=n {
        let x = l * k as f64 / n as f64;
        let (w, i) = (board.half_width(x), board.outline.inner(x, l));
        rail += ((x - x0).powi(2) + (w - w0).powi(2)).sqrt();
        if i > 0.0 || i0 > 0.0 {
            notch += ((x - x0).powi(2) + (i - i0).powi(2)).sqrt();
        }
        (x0, w0, i0) = (x, w, i);
    }
    // Ends: the width left at each tip, less a notch's mouth.
    let ends =
        2.0 * board.half_width(0.0) + 2.0 * (board.half_width(l) - board.outline.inner(l, l));
    2.0 * rail + 2.0 * notch + ends
}

/// The stringer's volume, mm³: its width times the board's side area at
/// the stringer.
pub fn stringer_volume(board: &Board, width: f64) -> f64 {
    let side = quadrature::integrate(
        |x| {
            let st = board.station(x);
            if st.inner > 0.0 {
                return 0.0;
            }
            st.thickness_at(st.half_width).max(0.0)
        },
        &board.breaks(),
        1e-6 * board.length * board.thickness(board.length / 2.0).max(1.0),
        4000,
    )
    .value;
    width * side
}

/// The weight of `board` (meshed as `mesh`, of `volume_mm3`), from its
/// laminate schedule and fittings.
pub fn estimate(board: &Board, mesh: &Mesh, volume_mm3: f64) -> Weight {
    let lam = &board.laminate;
    let (deck, bottom) = deck_and_bottom(mesh);
    let per = perimeter(board);
    let m2 = 1e-6;
    let lap = lam.lap * per;
    let deck_layer = deck + lap;
    let bottom_layer = bottom + lap;
    let cloth_deck: f64 = lam.deck.iter().map(|g| g * deck_layer * m2).sum();
    let cloth_bottom: f64 = lam.bottom.iter().map(|g| g * bottom_layer * m2).sum();
    let cloth = cloth_deck + cloth_bottom;
    let resin = lam.resin_ratio * cloth;
    let hot = lam.hot_coat * (deck + bottom) * m2;
    let kg_per_mm3_to_g = 1e-9 * 1000.0;
    let (stringer_v, stringer_g, stringer_note) = match lam.stringer {
        Some((w, rho)) => {
            let v = stringer_volume(board, w).min(volume_mm3);
            (
                v,
                v * rho * kg_per_mm3_to_g,
                format!(
                    "{:.2} L of wood {} wide, {rho:.0} kg/m3",
                    v * 1e-6,
                    crate::units::Both(w)
                ),
            )
        }
        None => (0.0, 0.0, "none".into()),
    };
    let foam_v = (volume_mm3 - stringer_v).max(0.0);
    let foam = foam_v * lam.foam_density * kg_per_mm3_to_g;
    let boxes = board.fin_boxes().len();
    let plug = usize::from(board.fittings.plug.is_some());
    let layers = |l: &[f64]| {
        if l.is_empty() {
            "no cloth".to_string()
        } else {
            l.iter()
                .map(|g| format!("{g:.0} g/m2"))
                .collect::<Vec<_>>()
                .join(" + ")
        }
    };
    let lines = vec![
        (
            "foam".to_string(),
            foam,
            format!("{:.2} L at {:.0} kg/m3", foam_v * 1e-6, lam.foam_density),
        ),
        ("stringer".to_string(), stringer_g, stringer_note),
        (
            "deck cloth".to_string(),
            cloth_deck,
            format!(
                "{} over {:.3} m2 each (deck {:.3} m2 + lap {:.3} m2)",
                layers(&lam.deck),
                deck_layer * m2,
                deck * m2,
                lap * m2
            ),
        ),
        (
            "bottom cloth".to_string(),
            cloth_bottom,
            format!(
                "{} over {:.3} m2 each (bottom {:.3} m2 + lap {:.3} m2)",
                layers(&lam.bottom),
                bottom_layer * m2,
                bottom * m2,
                lap * m2
            ),
        ),
        (
            "laminating resin".to_string(),
            resin,
            format!("{} x the cloth by weight", lam.resin_ratio),
        ),
        (
            "hot coat".to_string(),
            hot,
            format!(
                "{:.0} g/m2 over {:.3} m2",
                lam.hot_coat,
                (deck + bottom) * m2
            ),
        ),
        (
            "fin boxes".to_string(),
            boxes as f64 * lam.box_mass,
            format!("{boxes} at {:.0} g", lam.box_mass),
        ),
        (
            "leash plug".to_string(),
            plug as f64 * lam.plug_mass,
            format!("{plug} at {:.0} g", lam.plug_mass),
        ),
    ];
    let total_g = lines.iter().map(|l| l.1).sum();
    Weight {
        deck_m2: deck * m2,
        bottom_m2: bottom * m2,
        perimeter_m: per * 1e-3,
        deck_layer_m2: deck_layer * m2,
        bottom_layer_m2: bottom_layer * m2,
        lines,
        total_g,
    }
}

impl Weight {
    /// The estimate as text lines, grams and pounds.
    pub fn text(&self) -> Vec<String> {
        let mut out = vec![format!(
            "finished weight about {:.2} kg ({:.1} lb): an estimate from the schedule below, not a weighing",
            self.total_g / 1000.0,
            self.total_g / 453.592_37
        )];
        for (what, g, why) in &self.lines {
            out.push(format!("  {what:<17} {g:>7.0} g   {why}"));
        }
        out
    }
}
