//! The order sheet: one printable page per board for the glasser and the
//! customer: the order's fields, the board's numbers in both systems, the
//! plan and side views with the fins and plug, the fin setup, the
//! laminate and the weight estimate, and the cut summary.

use crate::model::board::Board;
use crate::template::print::{MARGIN, Mark, Page, Paper};
use crate::units::Both;
use crate::volume::report::Report;
use crate::volume::weight::Weight;

/// Vertical exaggeration of the side view.
pub const SIDE_EXAGGERATION: f64 = 2.0;

fn line(points: Vec<[f64; 2]>, width: f64, grey: bool) -> Mark {
    Mark::Line {
        points,
        closed: false,
        width,
        dashed: false,
        grey,
    }
}

/// Words wrapped to lines of at most `width` characters.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut out = vec![];
    for para in text.lines() {
        let mut cur = String::new();
        for w in para.split_whitespace() {
            if !cur.is_empty() && cur.len() + 1 + w.len() > width {
                out.push(std::mem::take(&mut cur));
            }
            if !cur.is_empty() {
                cur.push(' ');
            }
            cur.push_str(w);
        }
        out.push(cur);
    }
    out
}

/// The order sheet being written: its marks, the next line's height,
/// the left edge and the page's width (mm).
struct Sheet {
    marks: Vec<Mark>,
    y: f64,
    left: f64,
    width: f64,
}

impl Sheet {
    /// A line of text at `size`, wrapped (continuations indented) where
    /// Helvetica's characters, about half an em each (the em is 1.4 x the
    /// size given, see `print::draw`), would run past the right margin.
    fn text(&mut self, size: f64, s: String) {
        let chars = ((self.width - 2.0 * self.left) / (size * 1.4 * 0.47))
            .floor()
            .max(20.0) as usize;
        let indent = s.len() - s.trim_start().len();
        for (i, l) in wrap(&s, chars).into_iter().enumerate() {
            let l = if i == 0 {
                format!("{}{l}", " ".repeat(indent))
            } else {
                format!("{}{l}", " ".repeat(indent + 4))
            };
            self.marks.push(Mark::Text {
                at: [self.left, self.y],
                size,
                text: l,
            });
            self.y -= size * 1.45;
        }
    }
}

/// Samples along the board for the views.
const SAMPLES: usize = 600;

/// The order sheet on `paper` (a roll gets an A4-sized page), portrait.
/// `cut` is the cut summary's lines, when programs were made.
pub fn order_page(
    board: &Board,
    report: &Report,
    weight: &Weight,
    cut: &[String],
    paper: Paper,
) -> Page {
    let (w, h) = if paper.roll {
        (210.0, 297.0)
    } else {
        (paper.width, paper.height)
    };
    let mut sh = Sheet {
        marks: vec![],
        y: h - MARGIN - 8.0,
        left: MARGIN + 2.0,
        width: w,
    };
    order_and_numbers(&mut sh, board, report);
    let k = plan_view(&mut sh, board);
    side_view(&mut sh, board, k);
    fins(&mut sh, board);
    glassing_and_weight(&mut sh, board, weight);
    cut_lines(&mut sh, cut);
    sh.marks.push(Mark::Text {
        at: [sh.left, MARGIN],
        size: 2.4,
        text: format!(
            "{}: order sheet ({}). Weight and cloth are estimates from the schedule; the shop's own scale and cutting rule.",
            board.name, paper.name
        ),
    });
    Page {
        width: w,
        height: h,
        marks: sh.marks,
        tiles: vec![],
    }
}

/// The order's fields and the board's numbers in both systems.
fn order_and_numbers(sh: &mut Sheet, board: &Board, report: &Report) {
    sh.text(5.0, format!("ORDER SHEET: {}", board.name));
    sh.y -= 1.0;
    let o = &board.order;
    let field = |v: &Option<String>| v.clone().unwrap_or_else(|| "-".into());
    sh.text(
        3.0,
        format!(
            "customer: {}    order: {}    wanted: {}",
            field(&o.customer),
            field(&o.reference),
            field(&o.due)
        ),
    );
    for l in wrap(&format!("colour: {}", field(&o.colour)), 100) {
        sh.text(3.0, l);
    }
    for l in wrap(&format!("notes: {}", field(&o.notes)), 100) {
        sh.text(3.0, l);
    }
    sh.y -= 2.0;
    sh.text(
        3.0,
        format!(
            "{} x {} x {}   volume {:.2} L   {} tail",
            Both(report.length_mm),
            Both(report.width_mm),
            Both(report.thickness_mm),
            report.volume_litres,
            report.tail
        ),
    );
    sh.text(
        3.0,
        format!(
            "nose {} and tail {} wide {} from the tips; rocker nose {}, tail {}",
            Both(report.nose_width_mm),
            Both(report.tail_width_mm),
            Both(report.tip_station_mm),
            Both(report.nose_rocker_mm),
            Both(report.tail_rocker_mm)
        ),
    );
}

/// The whole outline, scaled to the page's width, with the bottom's fin
/// boxes and the deck's leash plug; returns the scale.
fn plan_view(sh: &mut Sheet, board: &Board) -> f64 {
    let l = board.length;
    let left = sh.left;
    let span = sh.width - 2.0 * left;
    let k = span / l;
    let half = (0..=400)
        .map(|i| board.half_width(l * i as f64 / 400.0))
        .fold(0.0f64, f64::max);
    sh.y -= 2.0;
    sh.text(
        2.6,
        format!(
            "plan view, 1:{:.0}: bottom fin boxes and the deck's leash plug (circle)",
            1.0 / k
        ),
    );
    let cy = sh.y - half * k - 2.0;
    let pt = |p: [f64; 2]| [left + p[0] * k, cy + p[1] * k];
    let n = SAMPLES;
    let mut outer_top = vec![];
    let mut outer_bottom = vec![];
    for i in 0..=n {
        let x = l * i as f64 / n as f64;
        let hw = board.half_width(x);
        outer_top.push(pt([x, hw]));
        outer_bottom.push(pt([x, -hw]));
    }
    // A swallow's notch: the tail edge runs in to the notch.
    let notch: Vec<[f64; 2]> = (0..=n)
        .map(|i| l * i as f64 / n as f64)
        .filter(|&x| board.outline.inner(x, l) > 0.0)
        .map(|x| [x, board.outline.inner(x, l)])
        .collect();
    let mut outline = outer_top;
    if notch.is_empty() {
        outline.extend(outer_bottom.into_iter().rev());
    } else {
        outline.extend(notch.iter().rev().map(|&p| pt(p)));
        outline.extend(notch.iter().map(|&[x, i]| pt([x, -i])));
        outline.extend(outer_bottom.into_iter().rev());
    }
    sh.marks.push(Mark::Line {
        points: outline,
        closed: true,
        width: 0.35,
        dashed: false,
        grey: false,
    });
    sh.marks.push(Mark::Line {
        points: vec![pt([0.0, 0.0]), pt([l, 0.0])],
        closed: false,
        width: 0.15,
        dashed: true,
        grey: true,
    });
    for bx in board.fin_boxes() {
        let mut p: Vec<[f64; 2]> = bx.outline(0.0, 4).into_iter().map(pt).collect();
        if let Some(&first) = p.first() {
            p.push(first);
        }
        sh.marks.push(line(p, 0.25, false));
    }
    if let (Some(c), Some(p)) = (board.plug_at(), board.fittings.plug) {
        let r = p.diameter / 2.0;
        let circle = (0..=24)
            .map(|i| {
                let a = std::f64::consts::TAU * i as f64 / 24.0;
                pt([c[0] + r * a.cos(), c[1] + r * a.sin()])
            })
            .collect();
        sh.marks.push(line(circle, 0.25, false));
    }
    sh.y = cy - half * k - 6.0;
    k
}

/// The bottom and the deck at the stringer, heights exaggerated, at the
/// plan view's length scale `k`.
fn side_view(sh: &mut Sheet, board: &Board, k: f64) {
    let (l, n, left) = (board.length, SAMPLES, sh.left);
    sh.text(2.6,
        format!(
            "side view at the stringer, lengths 1:{:.0}, heights x{SIDE_EXAGGERATION} (rocker and foil)",
            1.0 / k
        ),
    );
    let kz = k * SIDE_EXAGGERATION;
    let (mut bottom, mut deck) = (vec![], vec![]);
    let mut top = 0.0f64;
    for i in 0..=n {
        let x = l * i as f64 / n as f64;
        let z0 = board.rocker.eval(x);
        let z1 = z0 + board.thickness(x);
        top = top.max(z1);
        bottom.push((x, z0));
        deck.push((x, z1));
    }
    let base = sh.y - top * kz - 1.0;
    let sp = |(x, z): (f64, f64)| [left + x * k, base + z * kz];
    let mut side: Vec<[f64; 2]> = bottom.iter().copied().map(sp).collect();
    side.extend(deck.iter().rev().copied().map(sp));
    sh.marks.push(Mark::Line {
        points: side,
        closed: true,
        width: 0.35,
        dashed: false,
        grey: false,
    });
    sh.marks.push(Mark::Line {
        points: vec![[left, base], [left + l * k, base]],
        closed: false,
        width: 0.15,
        dashed: true,
        grey: true,
    });
    sh.y = base - 6.0;
}

/// The fin setup, each fin and the leash plug.
fn fins(sh: &mut Sheet, board: &Board) {
    let f = &board.fittings;
    match f.setup {
        Some(s) => sh.text(3.0, format!("fins: {}", s.label())),
        None => sh.text(3.0, "fins: none given".into()),
    }
    for fin in &f.fins {
        let where_ = if fin.centre {
            "on the stringer".to_string()
        } else {
            format!(
                "{} in from the rail, toe {} deg, cant {} deg",
                Both(fin.from_rail),
                fin.toe,
                fin.cant
            )
        };
        sh.text(
            2.6,
            format!(
                "  {}{}: box front {} from the tail, {where_}; pocket {} x {}, {} deep",
                fin.role,
                if fin.centre { "" } else { " pair" },
                Both(fin.from_tail),
                Both(fin.pocket.length),
                Both(fin.pocket.width),
                Both(fin.pocket.depth)
            ),
        );
    }
    match f.plug {
        Some(p) => sh.text(
            2.6,
            format!(
                "  leash plug: {} from the tail on the stringer, {} across, {} deep (deck)",
                Both(p.from_tail),
                Both(p.diameter),
                Both(p.depth)
            ),
        ),
        None => sh.text(2.6, "  leash plug: none given".into()),
    }
}

/// The cloth by layer, the cloth to cut, and the weight estimate as a
/// table (what, grams right-aligned, basis).
fn glassing_and_weight(sh: &mut Sheet, board: &Board, weight: &Weight) {
    sh.y -= 1.5;
    let lam = &board.laminate;
    let layers = |v: &[f64]| {
        v.iter()
            .map(|g| {
                format!(
                    "{:.1} oz ({g:.0} g/m2)",
                    g / crate::model::laminate::G_PER_M2_PER_OZ_YD2
                )
            })
            .collect::<Vec<_>>()
            .join(" + ")
    };
    sh.text(
        3.0,
        format!(
            "glassing: deck {}, bottom {}; laps {}",
            if lam.deck.is_empty() {
                "none".into()
            } else {
                layers(&lam.deck)
            },
            if lam.bottom.is_empty() {
                "none".into()
            } else {
                layers(&lam.bottom)
            },
            Both(lam.lap)
        ),
    );
    sh.text(2.6,
        format!(
            "  cloth to cut: deck {:.2} m2 a layer, bottom {:.2} m2 a layer (the surface {:.2} + {:.2} m2, laps round a {:.2} m outline)",
            weight.deck_layer_m2,
            weight.bottom_layer_m2,
            weight.deck_m2,
            weight.bottom_m2,
            weight.perimeter_m
        ),
    );
    if let Some(first) = weight.text().into_iter().next() {
        sh.text(3.0, first);
    }
    // The estimate's lines as a table: what, grams (right-aligned), basis.
    for (what, g, why) in &weight.lines {
        let size = 2.6;
        let grams = format!("{g:.0} g");
        let digit = size * 1.4 * 0.556;
        sh.marks.push(Mark::Text {
            at: [sh.left + 4.0, sh.y],
            size,
            text: what.clone(),
        });
        sh.marks.push(Mark::Text {
            at: [sh.left + 48.0 - grams.len() as f64 * digit, sh.y],
            size,
            text: grams,
        });
        sh.marks.push(Mark::Text {
            at: [sh.left + 54.0, sh.y],
            size,
            text: why.clone(),
        });
        sh.y -= size * 1.45;
    }
    sh.y -= 1.5;
}

/// The cut summary, or that no programs were made.
fn cut_lines(sh: &mut Sheet, cut: &[String]) {
    if cut.is_empty() {
        sh.text(3.0, "cut: no programs made".into());
    } else {
        for (i, l) in cut.iter().enumerate() {
            sh.text(if i == 0 { 3.0 } else { 2.6 }, l.clone());
        }
    }
}
