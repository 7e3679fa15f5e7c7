//! Full-size shop templates as drawings in millimetres: the half outline
//! from the stringer and the rocker over a straight baseline (the female
//! sections and the shaping sheet in their own files). A drawing knows
//! nothing of paper; the tiling stage lays it onto pages, and it can be
//! written as one SVG.

use crate::model::board::Board;
use crate::model::mesh::Mesh;
use crate::svg::Svg;
use crate::units::{self, MM_PER_INCH};

/// What a line is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// The edge to cut or trace: the template itself.
    Cut,
    /// Stringer, baseline, station ticks, frames.
    Guide,
}

/// One thing drawn, in drawing millimetres (y up).
#[derive(Debug, Clone, PartialEq)]
pub enum Item {
    /// A polyline.
    Line {
        /// Points, mm.
        points: Vec<[f64; 2]>,
        /// Closed back to the first point.
        closed: bool,
        /// Cut edge or guide.
        role: Role,
    },
    /// A line of text (ASCII), its baseline starting at `at`.
    Text {
        /// Where, mm.
        at: [f64; 2],
        /// Height, mm.
        size: f64,
        /// The words.
        text: String,
    },
}

/// A template at full size.
#[derive(Debug, Clone, PartialEq)]
pub struct Drawing {
    /// Short name: outline, rocker, sections.
    pub kind: &'static str,
    /// Title line.
    pub title: String,
    /// Extent, mm (the drawing spans 0..width, 0..height).
    pub width: f64,
    /// Extent, mm.
    pub height: f64,
    /// What is drawn.
    pub items: Vec<Item>,
}

/// Space around every drawing, mm.
pub const BORDER: f64 = 20.0;

/// How far the rocker template's straight back stands below its
/// baseline, mm: a strip that does not pinch where the rocker touches the
/// flat.
pub const BACK: f64 = 40.0;

/// The board's curves at the stringer, sampled along the length.
pub struct Curves {
    /// Name of the board.
    pub name: String,
    /// Station spacing for ticks and heights: 6 in, or 150 mm for a mm board.
    pub step: f64,
    /// Stations, mm from the nose.
    pub x: Vec<f64>,
    /// Half-width.
    pub half_width: Vec<f64>,
    /// Half-width of a swallow tail's notch (0 elsewhere, and for a mesh).
    pub inner: Vec<f64>,
    /// Bottom (rocker) at the stringer.
    pub bottom: Vec<f64>,
    /// Deck at the stringer.
    pub deck: Vec<f64>,
}

/// Samples a board description finely (the mesher's own stations at a
/// 0.05 mm chord tolerance, plus every 5 mm).
pub fn curves_of(board: &Board) -> Curves {
    let mut x: Vec<f64> = crate::meshing::mesher::sample(board, 0.05)
        .map(|p| p.stations().to_vec())
        .unwrap_or_default();
    x.extend(
        (0..)
            .map(|i| i as f64 * 5.0)
            .take_while(|&v| v < board.length),
    );
    x.push(board.length);
    x.sort_by(f64::total_cmp);
    x.dedup_by(|a, b| (*a - *b).abs() < 1e-6);
    let half_width = x.iter().map(|&v| board.half_width(v)).collect();
    let inner = x
        .iter()
        .map(|&v| board.outline.inner(v, board.length))
        .collect();
    let bottom: Vec<f64> = x.iter().map(|&v| board.rocker.eval(v)).collect();
    let deck = x
        .iter()
        .zip(&bottom)
        .map(|(&v, b)| b + board.thickness(v))
        .collect();
    Curves {
        name: board.name.clone(),
        step: station_step(board),
        x,
        half_width,
        inner,
        bottom,
        deck,
    }
}

/// Samples a mesh (x along the board) by slicing it.
pub fn curves_of_mesh(name: &str, mesh: &Mesh) -> Curves {
    let p = crate::resize::overlay::curves(name, mesh, 400);
    let n = p.x.len();
    // The profile's tips have no height; take their neighbours'.
    let fix = |v: &[f64]| -> Vec<f64> {
        (0..n)
            .map(|i| {
                if v[i].is_finite() {
                    v[i]
                } else {
                    v[if i == 0 {
                        1.min(n - 1)
                    } else {
                        n.saturating_sub(2)
                    }]
                }
            })
            .collect()
    };
    Curves {
        name: name.to_string(),
        step: 6.0 * MM_PER_INCH,
        x: p.x.clone(),
        half_width: p.half_width.clone(),
        inner: vec![0.0; n],
        bottom: fix(&p.bottom),
        deck: fix(&p.deck),
    }
}

impl Curves {
    /// Length, mm.
    pub fn length(&self) -> f64 {
        self.x.last().copied().unwrap_or(0.0)
    }

    /// Half-width, bottom and deck at `x`, interpolated linearly.
    pub fn at(&self, x: f64) -> [f64; 3] {
        let i = self
            .x
            .partition_point(|&v| v < x)
            .clamp(1, self.x.len().max(2) - 1);
        let (x0, x1) = (self.x[i - 1], self.x[i]);
        let t = if x1 > x0 {
            ((x - x0) / (x1 - x0)).clamp(0.0, 1.0)
        } else {
            0.0
        };
        let lerp = |v: &[f64]| v[i - 1] + t * (v[i] - v[i - 1]);
        [lerp(&self.half_width), lerp(&self.bottom), lerp(&self.deck)]
    }

    /// A distance along the board in its own units: inches for a board
    /// written in inches (6 in ticks), millimetres for one in mm.
    pub fn distance(&self, x: f64) -> String {
        if (self.step - 150.0).abs() < 1e-9 {
            format!("{x:.0} mm")
        } else {
            units::inches(x)
        }
    }

    /// Where the half-width is greatest.
    pub fn wide_point(&self) -> f64 {
        let i = (0..self.x.len())
            .max_by(|&a, &b| self.half_width[a].total_cmp(&self.half_width[b]))
            .unwrap_or(0);
        self.x[i]
    }
}

pub(crate) fn label(mm: f64) -> String {
    // Templates speak both systems; ASCII only (PDF base fonts).
    format!("{:.1} mm / {}", mm, units::inches(mm))
}

fn station_step(board: &Board) -> f64 {
    if crate::description::write::unit_of(board) == units::Unit::In {
        6.0 * MM_PER_INCH
    } else {
        150.0
    }
}

/// The half outline from the stringer, with station ticks, the half-width
/// written at each, the wide point, and the nose and tail ends.
pub fn outline(side: &Curves) -> Drawing {
    let b = BORDER;
    let l = side.length();
    let w_max = side.half_width.iter().fold(0.0f64, |m, &v| m.max(v));
    let mut items = vec![];
    let mut cut: Vec<[f64; 2]> = side
        .x
        .iter()
        .zip(&side.half_width)
        .map(|(&x, &w)| [b + x, b + w])
        .collect();
    // Close the template along the tail's end and the stringer so it can
    // be cut out; a swallow's end runs in to the notch, then along the
    // notch's edge back to its apex on the stringer.
    let notch: Vec<[f64; 2]> = side
        .x
        .iter()
        .zip(&side.inner)
        .filter(|(_, w)| **w > 0.0)
        .map(|(&x, &w)| [b + x, b + w])
        .rev()
        .collect();
    match side
        .x
        .iter()
        .zip(&side.inner)
        .rev()
        .find(|(_, w)| **w <= 0.0)
    {
        Some((&apex, _)) if !notch.is_empty() => {
            cut.extend(notch);
            cut.push([b + apex, b]);
        }
        _ => cut.push([b + l, b]),
    }
    cut.push([b, b]);
    items.push(Item::Line {
        points: cut,
        closed: true,
        role: Role::Cut,
    });
    items.push(Item::Line {
        points: vec![[b - 10.0, b], [b + l + 10.0, b]],
        closed: false,
        role: Role::Guide,
    });
    items.push(Item::Text {
        at: [b + 5.0, b - 6.0],
        size: 4.0,
        text: "STRINGER (centreline): flip the template here for the other side".into(),
    });
    let step = side.step;
    let mut x = step;
    while x < l - 1.0 {
        let w = side.at(x)[0];
        items.push(Item::Line {
            points: vec![[b + x, b], [b + x, b + w + 4.0]],
            closed: false,
            role: Role::Guide,
        });
        items.push(beside(
            b + x,
            b + l,
            b + w + 6.0,
            format!("{} from nose", side.distance(x)),
        ));
        items.push(beside(b + x, b + l, b + 3.0, format!("half {}", label(w))));
        x += step;
    }
    let xw = side.wide_point();
    let ww = side.at(xw)[0];
    items.push(Item::Line {
        points: vec![[b + xw, b], [b + xw, b + ww + 12.0]],
        closed: false,
        role: Role::Guide,
    });
    items.push(Item::Text {
        at: [b + xw + 1.0, b + ww + 13.0],
        size: 3.5,
        text: format!(
            "WIDE POINT {} from nose, half-width {}",
            units::Both(xw),
            label(ww)
        ),
    });
    for (at, name) in [(0.0, "NOSE"), (l, "TAIL")] {
        items.push(Item::Line {
            points: vec![[b + at, b - 8.0], [b + at, b + 8.0]],
            closed: false,
            role: Role::Guide,
        });
        items.push(Item::Text {
            at: [b + at - 6.0, b - 12.0],
            size: 3.5,
            text: name.into(),
        });
    }
    Drawing {
        kind: "outline",
        title: format!("{}: half outline, full size", side.name),
        width: l + 2.0 * b,
        height: w_max + 2.0 * b + 15.0,
        items,
    }
}

/// The fins' boxes and the leash plug marked on the half outline (the +y
/// half, drawn from the stringer): each box's pocket, its fin's centreline
/// run past both ends so its toe can be laid off with a straightedge, and
/// what the shop reads beside it. Centre boxes straddle the stringer; the
/// plug goes on the deck, the boxes on the bottom. All are guides: the
/// template's cut edge stays the outline alone.
pub fn fitting_marks(board: &Board) -> Vec<Item> {
    let b = BORDER;
    let f = &board.fittings;
    let at = |p: [f64; 2]| [b + p[0], b + p[1]];
    let mut items = vec![];
    for bx in board.fin_boxes().iter().filter(|bx| bx.side >= 0) {
        let fin = &f.fins[bx.fin];
        let mut pocket: Vec<[f64; 2]> = bx.outline(0.0, 8).into_iter().map(at).collect();
        if let Some(&first) = pocket.first() {
            pocket.push(first);
        }
        items.push(Item::Line {
            points: pocket,
            closed: true,
            role: Role::Guide,
        });
        let reach = 30.0;
        items.push(Item::Line {
            points: vec![
                at(bx.at(-reach, 0.0)),
                at(bx.at(bx.pocket.length + reach, 0.0)),
            ],
            closed: false,
            role: Role::Guide,
        });
        let text = if fin.centre {
            format!(
                "{} FIN BOX (bottom): front {} from tail, on the stringer; pocket {} x {}, {} deep",
                fin.role.to_uppercase(),
                label(fin.from_tail),
                label(fin.pocket.length),
                label(fin.pocket.width),
                label(fin.pocket.depth)
            )
        } else {
            format!(
                "{} FIN BOX (bottom): front {} from tail, {} in from rail; toe {} deg in, cant {} deg out; pocket {} x {}, {} deep",
                fin.role.to_uppercase(),
                label(fin.from_tail),
                label(fin.from_rail),
                fin.toe,
                fin.cant,
                label(fin.pocket.length),
                label(fin.pocket.width),
                label(fin.pocket.depth)
            )
        };
        let [x, y] = at(bx.front);
        let y_text = if fin.centre { y + 14.0 } else { y - 10.0 };
        items.push(Item::Text {
            at: [x - 150.0, y_text],
            size: 3.0,
            text,
        });
    }
    if let (Some(c), Some(p)) = (board.plug_at(), f.plug) {
        let r = p.diameter / 2.0;
        let circle: Vec<[f64; 2]> = (0..=48)
            .map(|k| {
                let a = std::f64::consts::TAU * k as f64 / 48.0;
                at([c[0] + r * a.cos(), c[1] + r * a.sin()])
            })
            .collect();
        items.push(Item::Line {
            points: circle,
            closed: true,
            role: Role::Guide,
        });
        let [x, y] = at(c);
        items.push(Item::Text {
            at: [x - 120.0, y + r + 22.0],
            size: 3.0,
            text: format!(
                "LEASH PLUG (deck): centre {} from tail on the stringer; {} across, {} deep",
                label(p.from_tail),
                label(p.diameter),
                label(p.depth)
            ),
        });
    }
    items
}

/// A station's label (3 mm text) at height `y`, just right of its tick at
/// `x`, or just left of it where it would run past the drawing's `end`:
/// a label by the tail needs no paper of its own.
fn beside(x: f64, end: f64, y: f64, text: String) -> Item {
    let width = crate::template::print::text_width(&text, 3.0);
    let at = if x + 1.0 + width > end {
        x - 1.0 - width
    } else {
        x + 1.0
    };
    Item::Text {
        at: [at, y],
        size: 3.0,
        text,
    }
}

/// The bottom at the stringer over a straight baseline (the flat the board
/// rests on): a strip to cut out, with the rocker and the thickness at
/// stations, nose and tail rocker and the tail exit angle. The deck is not
/// drawn: it would double the strip's height on paper for what the
/// thickness at each station already says.
pub fn rocker(side: &Curves) -> Drawing {
    let b = BORDER;
    let l = side.length();
    let zmin = side.bottom.iter().fold(0.0f64, |m, &v| m.min(v));
    let top = side.bottom.iter().fold(0.0f64, |m, &v| m.max(v));
    // The template is a strip: the rocker curve on top, a straight back
    // BACK below the baseline, square ends; cut round, it lies on the
    // board's bottom along the stringer.
    let base = b + BACK - zmin;
    let mut items = vec![];
    let mut bottom: Vec<[f64; 2]> = side
        .x
        .iter()
        .zip(&side.bottom)
        .map(|(&x, &z)| [b + x, base + z])
        .collect();
    bottom.push([b + l, base - BACK]);
    bottom.push([b, base - BACK]);
    items.push(Item::Line {
        points: bottom,
        closed: true,
        role: Role::Cut,
    });
    items.push(Item::Line {
        points: vec![[b - 10.0, base], [b + l + 10.0, base]],
        closed: false,
        role: Role::Guide,
    });
    items.push(Item::Text {
        at: [b + 5.0, base - 6.0],
        size: 4.0,
        text: "BASELINE: the flat the board rests on".into(),
    });
    items.push(Item::Text {
        at: [b + 5.0, base - BACK + 3.0],
        size: 3.0,
        text: format!(
            "straight back {} below the baseline: cut round the solid line",
            label(BACK)
        ),
    });
    // Each station's tick from the baseline up to the bottom, its words
    // inside the strip below the baseline, where every piece has room.
    let step = side.step;
    let mut x = step;
    while x < l - 1.0 {
        let [_, z, deck] = side.at(x);
        items.push(Item::Line {
            points: vec![[b + x, base], [b + x, base + z]],
            closed: false,
            role: Role::Guide,
        });
        for (k, text) in [
            format!("{} from nose", side.distance(x)),
            format!("rocker {}", label(z)),
            format!("thick {}", label(deck - z)),
        ]
        .into_iter()
        .enumerate()
        {
            items.push(beside(b + x, b + l, base - 5.5 - 4.5 * k as f64, text));
        }
        x += step;
    }
    let n = side.x.len();
    let exit = if n >= 3 {
        let (a, b2) = (n - 3, n - 2);
        ((side.bottom[b2] - side.bottom[a]) / (side.x[b2] - side.x[a]))
            .atan()
            .to_degrees()
    } else {
        0.0
    };
    // Inside the strip, above the words of the back: above the curve it
    // would need paper of its own at the nose.
    items.push(Item::Text {
        at: [b + 5.0, base - BACK + 9.0],
        size: 3.0,
        text: format!(
            "nose rocker {}, tail rocker {}, tail exit angle {:.1} deg; solid line: the bottom at the stringer (cut edge)",
            label(side.bottom[0]),
            label(side.bottom[side.bottom.len() - 1]),
            exit
        ),
    });
    Drawing {
        kind: "rocker",
        title: format!("{}: rocker at the stringer, full size", side.name),
        width: l + 2.0 * b,
        height: top - zmin + 2.0 * b + BACK,
        items,
    }
}

/// A drawing as one true-scale SVG (mm), y turned down for SVG.
pub fn to_svg(d: &Drawing) -> String {
    let mut doc = Svg::new(d.width, d.height);
    let flip = |p: &[f64; 2]| [p[0], d.height - p[1]];
    doc.text([BORDER, 8.0], 4.0, &d.title);
    for item in &d.items {
        match item {
            Item::Line {
                points,
                closed,
                role,
            } => {
                let pts: Vec<[f64; 2]> = points.iter().map(flip).collect();
                match role {
                    Role::Cut => doc.path(&pts, *closed, "black", 0.5, None),
                    Role::Guide => doc.path(&pts, *closed, "#777777", 0.25, None),
                }
            }
            Item::Text { at, size, text } => doc.text(flip(at), *size, text),
        }
    }
    doc.finish()
}
