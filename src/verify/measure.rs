//! The simulated stock measured against the design: each setup's
//! deviation map along the surface normal, the deepest gouge, the leftover
//! (all, and where the finishing ball reaches), the cells no ball can
//! touch, and each pocket's depth and area.

use super::outside::in_rect;
use super::report::{DeviationMap, PocketReport, REACH_CHECKED_MM, Verification};
use super::setting::{Setting, VerifyOptions};
use crate::geom::dropcutter::{DropCutter, Lattice, Prepared};
use crate::geom::nearest::Nearest;
use crate::geom::zmap::ZMap;
use crate::model::machine::Cutter;
use crate::model::mesh::Mesh;
use crate::toolpath::setup::{Side, flip, flip_mesh};
use rayon::prelude::*;
use std::sync::Arc;

/// The figures against the design, from the stock's top after setup 1
/// (`top1`) and the stock after setup 2 (`top2`, when there was one);
/// `balls` is the smallest ball that finished each side.
pub(super) fn against(
    v: &mut Verification,
    (design, near): (&Mesh, &Nearest),
    setting: &Setting,
    options: VerifyOptions,
    (top1, top2): (Vec<f32>, Option<&ZMap>),
    balls: [Option<f64>; 2],
) {
    let b = &setting.block;
    let mut m1 = ZMap::of_stock(b, true, options.cell, 0.0).expect("sized above");
    m1.top = top1;
    let reach = |side: Side| {
        let floor = setting.floor.map(|(p, overlap)| {
            (
                move |x: f64| p.floor_at(side, x, overlap),
                p.floor_highest(side, overlap),
            )
        });
        balls[side.number() as usize - 1].map(|r| Reach { r, floor })
    };
    // Foam left on the board by the tabs: inside their rectangles on the
    // design's plan, and outside the plan within a ball's radius of them.
    let mut beside_tabs = vec![];
    let mut maps = vec![deviation(
        &m1,
        (design, setting.prepared[0].clone()),
        Side::Deck,
        reach(Side::Deck),
        (near, |p| p),
    )];
    if let Some(m2) = top2 {
        let to_design = |p| flip(p, b);
        maps.push(deviation(
            m2,
            (&flip_mesh(design, b), setting.prepared[1].clone()),
            Side::Bottom,
            reach(Side::Bottom),
            (near, to_design),
        ));
        let inside: Vec<bool> = maps[1].deviation.iter().map(|d| !d.is_nan()).collect();
        let keep: Vec<[[f64; 2]; 2]> = setting
            .keep
            .iter()
            .map(|r| [[r[0][0], b.width - r[1][1]], [r[1][0], b.width - r[0][1]]])
            .collect();
        let tab_reach = balls[1].or(balls[0]).unwrap_or(0.0);
        let (fin, tabs) =
            super::outside::outside_plan(m2, &inside, &keep, tab_reach, near, to_design);
        beside_tabs = tabs;
        v.parting_line = super::outside::summary(fin, options.cell * options.cell);
    }
    let near_pocket = pocket_boxes(setting, 1.5 * options.cell);
    // Each row's figures side by side, then taken in the maps' order, so
    // the first of equal extremes is the one reported, as in a scan.
    let mut sum = Figures::new();
    sum.pockets = vec![vec![]; setting.pockets.len()];
    sum.all
        .reserve(maps.iter().map(|m| m.deviation.len()).sum());
    for dm in &maps {
        let rows: Vec<Figures> = (0..dm.dims[1])
            .into_par_iter()
            .map(|j| row_figures(dm, j, setting, &near_pocket, options.cell))
            .collect();
        for row in rows {
            sum.take(row);
        }
    }
    let Figures {
        mut on_tabs,
        pockets: pocket_cells,
        gouge,
        left,
        reach_left,
        out_of_reach,
        out_of_reach_cells,
        mut all,
    } = sum;
    let cell_area = options.cell * options.cell;
    on_tabs.extend(beside_tabs);
    v.tab_zones = super::outside::summary(on_tabs, cell_area);
    for (z, mut cells) in setting.pockets.iter().zip(pocket_cells) {
        cells.sort_by(f64::total_cmp);
        let deep: Vec<f64> = cells
            .iter()
            .copied()
            .filter(|&d| d >= z.depth / 2.0)
            .collect();
        v.pockets.push(PocketReport {
            label: z.label.clone(),
            setup: z.side.number() as u8,
            depth_mm: z.depth,
            depth_median_mm: deep.get(deep.len() / 2).copied().unwrap_or(0.0),
            depth_max_mm: cells.last().copied().unwrap_or(0.0).max(0.0),
            area_mm2: deep.len() as f64 * cell_area,
            design_area_mm2: z.area,
            volume_ml: cells.iter().map(|d| d.max(0.0)).sum::<f64>() * cell_area / 1000.0,
        });
    }
    if !all.is_empty() {
        let k = ((all.len() as f64 * 0.95) as usize).min(all.len() - 1);
        let (_, p95, _) = all.select_nth_unstable_by(k, f32::total_cmp);
        v.leftover_p95_mm = Some(*p95 as f64);
        v.gouge_max_mm = Some(gouge.0.max(0.0));
        v.gouge_at = Some(gouge.1);
        v.leftover_max_mm = Some(left.0.max(0.0));
        v.leftover_at = Some(left.1);
        if reach_left.0 > f64::NEG_INFINITY {
            v.leftover_reachable_max_mm = Some(reach_left.0.max(0.0));
            v.leftover_reachable_at = Some(reach_left.1);
        }
        if out_of_reach_cells > 0 {
            v.unreachable_mm2 = out_of_reach_cells as f64 * options.cell * options.cell;
            v.unreachable_max_mm = Some(out_of_reach.0);
            v.unreachable_at = Some(out_of_reach.1);
        }
    }
    v.maps = maps;
}

/// A measured figure and where: (value, [x, y, setup]).
type At = (f64, [f64; 3]);

/// The figures of some cells of the deviation maps.
struct Figures {
    on_tabs: Vec<At>,
    /// Each pocket's cells' depths below the design.
    pockets: Vec<Vec<f64>>,
    gouge: At,
    left: At,
    reach_left: At,
    out_of_reach: At,
    out_of_reach_cells: usize,
    all: Vec<f32>,
}

impl Figures {
    fn new() -> Figures {
        let none = (f64::NEG_INFINITY, [0.0; 3]);
        Figures {
            on_tabs: vec![],
            pockets: vec![],
            gouge: none,
            left: none,
            reach_left: none,
            out_of_reach: none,
            out_of_reach_cells: 0,
            all: vec![],
        }
    }

    /// Adds the figures of cells after these.
    fn take(&mut self, later: Figures) {
        let higher = |a: &mut At, b: At| {
            if b.0 > a.0 {
                *a = b;
            }
        };
        self.on_tabs.extend(later.on_tabs);
        self.pockets
            .resize(self.pockets.len().max(later.pockets.len()), vec![]);
        for (mine, theirs) in self.pockets.iter_mut().zip(later.pockets) {
            mine.extend(theirs);
        }
        higher(&mut self.gouge, later.gouge);
        higher(&mut self.left, later.left);
        higher(&mut self.reach_left, later.reach_left);
        higher(&mut self.out_of_reach, later.out_of_reach);
        self.out_of_reach_cells += later.out_of_reach_cells;
        self.all.extend(later.all);
    }
}

/// The figures of row `j` of a deviation map: a cell on a tab, in a
/// pocket, at a pocket's wall (judged neither way) or on the board.
fn row_figures(
    dm: &DeviationMap,
    j: usize,
    setting: &Setting,
    near_pocket: &[[[f64; 2]; 2]],
    cell: f64,
) -> Figures {
    let b = &setting.block;
    let mut f = Figures::new();
    f.pockets = vec![vec![]; setting.pockets.len()];
    for i in 0..dm.dims[0] {
        let d = dm.deviation[j * dm.dims[0] + i];
        if d.is_nan() {
            continue;
        }
        let p = [
            dm.origin[0] + (i as f64 + 0.5) * dm.cell[0],
            dm.origin[1] + (j as f64 + 0.5) * dm.cell[1],
            dm.side.number() as f64,
        ];
        let d = d as f64;
        let y1 = if dm.side == Side::Bottom {
            b.width - p[1]
        } else {
            p[1]
        };
        if d > 0.0 && setting.keep.iter().any(|r| in_rect([p[0], y1], r, 0.0)) {
            f.on_tabs.push((d, p));
            continue;
        }
        if let Some(k) = setting.pockets.iter().zip(near_pocket).position(|(z, b)| {
            z.side == dm.side && in_rect([p[0], p[1]], b, 0.0) && z.contains([p[0], p[1]])
        }) {
            f.pockets[k].push(-d);
            continue;
        }
        // A cell at a pocket's wall stands beside a cliff as deep as
        // the pocket: it is judged neither way.
        if setting.pockets.iter().zip(near_pocket).any(|(z, b)| {
            z.side == dm.side
                && in_rect([p[0], p[1]], b, 0.0)
                && z.edge_distance([p[0], p[1]]) <= 1.5 * cell
        }) {
            continue;
        }
        if -d > f.gouge.0 {
            f.gouge = (-d, p);
        }
        if d > f.left.0 {
            f.left = (d, p);
        }
        if dm.unreachable.get(j * dm.dims[0] + i) == Some(&true) {
            f.out_of_reach_cells += 1;
            if d > f.out_of_reach.0 {
                f.out_of_reach = (d, p);
            }
        } else if d > f.reach_left.0 {
            f.reach_left = (d, p);
        }
        f.all.push(d.max(0.0) as f32);
    }
    f
}

/// Each pocket's plan box grown by `margin` (its wall's): a cell outside
/// it is neither in the pocket nor at its wall, so the box is tried before
/// the outline.
fn pocket_boxes(setting: &Setting, margin: f64) -> Vec<[[f64; 2]; 2]> {
    setting
        .pockets
        .iter()
        .map(|z| {
            z.outline.iter().fold(
                [[f64::INFINITY; 2], [f64::NEG_INFINITY; 2]],
                |[lo, hi], q| {
                    [
                        [lo[0].min(q[0] - margin), lo[1].min(q[1] - margin)],
                        [hi[0].max(q[0] + margin), hi[1].max(q[1] + margin)],
                    ]
                },
            )
        })
        .collect()
}

/// The ball that finished a side, and the floor its tip stayed above
/// (along X, and the highest it gets).
struct Reach<F: Fn(f64) -> f64 + Sync> {
    r: f64,
    floor: Option<(F, f64)>,
}

/// Below this normal Z component (steeper than about 25°, the rails) a
/// cell's deviation is the true distance to the design, found with
/// `near` at the cell's surface point taken back to the design's
/// coordinates; flatter, the vertical difference times the normal's Z
/// differs from it only by the surface's curvature over the gap: on a
/// sphere of radius R, h² sin²θ / 2R, under 0.001 mm for h = 0.5 mm left
/// at θ = 25° on R = 50 mm.
const STEEP_NZ: f64 = 0.9;

/// Deviation of a side's simulated surface from the design seen from
/// above: along the surface normal (the vertical difference times the
/// normal's Z component), the true distance where steeper than
/// [`STEEP_NZ`]; with `ball`, which cells that ball could not reach.
fn deviation<F: Fn(f64) -> f64 + Sync>(
    map: &ZMap,
    (design, prepared): (&Mesh, Option<Arc<Prepared>>),
    side: Side,
    ball: Option<Reach<F>>,
    (near, to_design): (&Nearest, impl Fn([f64; 3]) -> [f64; 3] + Sync),
) -> DeviationMap {
    use rayon::prelude::*;
    // The design's triangles prepared once (by the planner, with the
    // tabs after them, for programs planned here): the rays at every
    // cell's centre, and the side's ball on them.
    let prepared = prepared.unwrap_or_else(|| Arc::new(Prepared::new(&[design])));
    let ball_dc = ball
        .as_ref()
        .map(|reach| DropCutter::on_first(Arc::clone(&prepared), Cutter::ball(2.0 * reach.r), 1));
    let [nx, ny] = map.dims;
    let contacts = prepared.rays(
        &Lattice {
            origin: map.origin,
            step: map.cell,
            offset: 0.5,
            dims: map.dims,
        },
        1,
    );
    let mut deviation = vec![0.0f32; nx * ny];
    let mut stock = vec![false; nx * ny];
    let mut unreachable = vec![false; nx * ny];
    let rows = deviation
        .par_chunks_mut(nx.max(1))
        .zip(stock.par_chunks_mut(nx.max(1)))
        .zip(unreachable.par_chunks_mut(nx.max(1)));
    rows.enumerate()
        .for_each(|(j, ((dev, stock), unreachable))| {
            for i in 0..nx {
                let c = map.centre(i, j);
                let k = j * nx + i;
                let present = map.top[k] > map.bottom[k];
                stock[i] = present;
                // A column cut away where the design has foam is a gouge
                // down to the column's bottom.
                let surface = if present { map.top[k] } else { map.bottom[k] } as f64;
                let touch = contacts.contact(i, j);
                let d = match touch {
                    Some((z, n)) if n[2] < STEEP_NZ => near
                        .closest(to_design([c[0], c[1], surface]))
                        .map_or(f32::NAN, |h| {
                            (h.distance.min((surface - z).abs()) * (surface - z).signum()) as f32
                        }),
                    Some((z, n)) => ((surface - z) * n[2]) as f32,
                    None => f32::NAN,
                };
                dev[i] = d;
                unreachable[i] = match (&ball, &ball_dc, touch) {
                    (Some(reach), Some(dc), Some(contact)) if d as f64 > REACH_CHECKED_MM => {
                        out_of_reach(dc, reach, c, contact)
                    }
                    _ => false,
                };
            }
        });
    // Kept only where a ball finished the side and some cell was checked.
    if ball.is_none() || !deviation.iter().any(|&d| d as f64 > REACH_CHECKED_MM) {
        unreachable = vec![];
    }
    DeviationMap {
        side,
        origin: map.origin,
        cell: map.cell,
        dims: map.dims,
        deviation,
        stock,
        unreachable,
    }
}

/// How far above its touch on a face a ball may be held by the rest of
/// the design and still count as touching (the mesh's facets and the
/// rounding of the drop).
const REACH_SLACK_MM: f64 = 0.02;

/// Whether a cell with more than [`REACH_CHECKED_MM`] left is out of
/// the reach of a ball of radius `r` (`dc`, its drop-cutter on the
/// design): the ball resting on the design at the cell's point `c` (the
/// design's `contact` under it: height and normal), its centre `r` out
/// along the face's normal, is held higher by the rest of the design, or
/// would need its tip below the floor. A convex surface is reachable
/// everywhere above the floor; a notch or a corner tighter than the ball
/// is not.
fn out_of_reach<F: Fn(f64) -> f64 + Sync>(
    dc: &DropCutter,
    reach: &Reach<F>,
    c: [f64; 2],
    (z, n): (f64, [f64; 3]),
) -> bool {
    let r = reach.r;
    let centre = [c[0] + r * n[0], c[1] + r * n[1], z + r * n[2]];
    let tip = centre[2] - r;
    reach.floor.as_ref().is_some_and(|(f, highest)| {
        tip < highest - REACH_SLACK_MM && tip < f(centre[0]) - REACH_SLACK_MM
    }) || dc.above(centre[0], centre[1], tip + REACH_SLACK_MM)
}
