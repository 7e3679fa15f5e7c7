//! Toolpaths for one setup: registration holes, Z-level roughing, the
//! outline (separation) pass with tabs, and ball-end finishing (parallel
//! passes plus Z levels on the steep rail band).

mod finish;
mod levels;
mod raster;
mod refine;
mod rough;

use crate::geom::dropcutter::{DropCutter, Lattice, Prepared};
use crate::geom::field::{self, Field};
use crate::geom::zmap::{Sweep, ZMap};
use crate::model::job::{Holding, Job};
use crate::model::machine::Cutter;
use crate::model::toolpath::{Step, Toolpath};
use crate::toolpath::setup::{Placement, Side};
use rayon::prelude::*;
use std::sync::Arc;

use finish::*;
use levels::*;
use raster::*;
use refine::resample;
use refine::{Dropped, Tip, refine};
pub use refine::{scallop_stepover, simplify, slope_stepover};
use rough::*;

/// Everything a setup cuts, tool by tool.
#[derive(Debug, Clone)]
pub struct SetupPaths {
    /// Which side is up.
    pub side: Side,
    /// In cutting order.
    pub paths: Vec<Toolpath>,
    /// Finishing cutter positions computed (for speed reports).
    pub positions: usize,
    /// The part (the first mesh) and the tabs as this setup sees them,
    /// prepared for the drop-cutter: the simulation measures the setup's
    /// side against the part without preparing it again.
    pub prepared: Arc<Prepared>,
}

/// How far above the stock under it a link by rapid travels, mm (common
/// practice, no source: a few millimetres clear a flake of foam).
pub const LINK_CLEARANCE: f64 = 5.0;

struct Ctx<'a> {
    place: &'a Placement,
    job: &'a Job,
    side: Side,
    /// The part's and the tabs' triangles made ready once for every tool's drop-cutter.
    prepared: Arc<Prepared>,
    clear: f64,
    /// Distance from the part's plan silhouette (0 inside), 1 mm grid.
    outside: Field,
    /// Distance inside the silhouette from its edge (0 outside), 1 mm grid.
    inside: Field,
    /// The stock as the paths so far have left it (1 mm cells).
    stock: std::sync::RwLock<ZMap>,
}

fn lerp3(a: [f64; 3], b: [f64; 3], t: f64) -> [f64; 3] {
    [
        a[0] + t * (b[0] - a[0]),
        a[1] + t * (b[1] - a[1]),
        a[2] + t * (b[2] - a[2]),
    ]
}

impl Ctx<'_> {
    /// `cutter`'s drop-cutter on the part and the tabs.
    fn drop_cutter(&self, cutter: Cutter) -> DropCutter {
        DropCutter::on(Arc::clone(&self.prepared), cutter)
    }

    fn floor(&self, x: f64) -> f64 {
        self.place.floor_at(self.side, x, self.job.overlap)
    }

    /// Takes a toolpath's cut out of the stock map.
    fn cut(&self, path: &Toolpath) {
        let cutter = path.pass.tool.cutter;
        let mut at = [0.0, 0.0, self.clear];
        let mut sweeps = Vec::with_capacity(path.steps.len());
        for s in &path.steps {
            let to = match *s {
                Step::Rapid(p) | Step::Plunge(p) | Step::Cut(p) => p,
                Step::Arc { to, .. } => to,
            };
            sweeps.push(Sweep {
                from: at,
                to,
                cutter,
            });
            at = to;
        }
        self.stock.write().expect("not poisoned").cut(&sweeps);
    }

    /// Highest stock left under a tool of radius `r` at (x, y) (every
    /// cell of the square round it).
    fn stock_top(&self, x: f64, y: f64, r: f64) -> f64 {
        self.highest_less(x, y, r, |_| Some(0.0))
    }

    /// The tip height at which `cutter`, lowered at (x, y), first meets
    /// the stock the paths so far have left: over every cell within its
    /// radius, the cell's top less the tool's rise at the cell's nearest
    /// point (its profile, [`Cutter::height_at`]: a ball's rim meets foam
    /// beside it higher than its tip meets foam under it); −∞ over none.
    /// The cell's top stands anywhere in the cell, so this is never below
    /// the true first touch on the map.
    fn first_touch(&self, x: f64, y: f64, cutter: &Cutter) -> f64 {
        self.highest_less(x, y, cutter.radius, |d| cutter.height_at(d))
    }

    /// Over the stock map's cells with foam in the square of half side `r`
    /// round (x, y), the highest top less `rise` at the cell's nearest
    /// point's distance from (x, y) (cells where `rise` gives none left
    /// out).
    fn highest_less(&self, x: f64, y: f64, r: f64, rise: impl Fn(f64) -> Option<f64>) -> f64 {
        let map = self.stock.read().expect("not poisoned");
        let (c, o, [nx, ny]) = (map.cell, map.origin, map.dims);
        let i0 = (((x - r - o[0]) / c[0]).floor().max(0.0) as usize).min(nx - 1);
        let i1 = (((x + r - o[0]) / c[0]).ceil().max(0.0) as usize).min(nx - 1);
        let j0 = (((y - r - o[1]) / c[1]).floor().max(0.0) as usize).min(ny - 1);
        let j1 = (((y + r - o[1]) / c[1]).ceil().max(0.0) as usize).min(ny - 1);
        let mut top = f64::NEG_INFINITY;
        for j in j0..=j1 {
            for i in i0..=i1 {
                let k = j * nx + i;
                if map.top[k] <= map.bottom[k] {
                    continue;
                }
                let m = map.centre(i, j);
                let dx = ((x - m[0]).abs() - c[0] / 2.0).max(0.0);
                let dy = ((y - m[1]).abs() - c[1] / 2.0).max(0.0);
                if let Some(h) = rise((dx * dx + dy * dy).sqrt()) {
                    top = top.max(map.top[k] as f64 - h);
                }
            }
        }
        top
    }

    /// Top of the uncut stock at X in this setup, raised by the blank's
    /// allowance (0 all along for a flat block).
    fn stock_top_at(&self, x: f64) -> f64 {
        let b = &self.place.block;
        b.top_under(self.side == Side::Deck, x).0 + b.allowance()
    }

    /// The tip height of `dc`'s tool resting on the part at (x, y), never
    /// below the floor; sooner beside a point whose touched triangle
    /// `hint` holds ([`DropCutter::drop_above_near`]).
    fn tip_near(&self, dc: &DropCutter, x: f64, y: f64, hint: &mut Option<u32>) -> f64 {
        dc.drop_above_near(x, y, self.floor(x), hint)
    }

    /// Height for a rapid across between X `a` and X `b` with a tool of
    /// radius `r`: the clearance above the highest stock top under the
    /// tool on the way (a rockered blank's, with its allowance), never
    /// above the clearance over Z0. Over a flat block that is the
    /// clearance over Z0; over a rockered blank's low middle it saves
    /// lifting the tool to the height of its ends between every pass.
    fn travel_z(&self, a: f64, b: f64, r: f64) -> f64 {
        let block = &self.place.block;
        if block.rocker.is_none() {
            return self.clear;
        }
        let (x0, x1) = (a.min(b) - r - 1.0, a.max(b) + r + 1.0);
        let top = block.top_max(self.side == Side::Deck, x0, x1) + block.allowance();
        (top + self.clear).min(self.clear)
    }

    /// Height for a link by rapid from `a` to `b` with a tool of radius
    /// `r`: [`LINK_CLEARANCE`] above the highest stock the paths so far
    /// have left under the tool on the way (the part included; finishing
    /// only lowers it), sampled every 2 mm with the tool grown by 2 mm,
    /// and never above the clearance plane.
    fn link_z(&self, a: [f64; 3], b: [f64; 3], r: f64) -> f64 {
        let len = (b[0] - a[0]).hypot(b[1] - a[1]);
        let n = (len / 2.0).ceil().max(1.0) as usize;
        let top = (0..=n)
            .map(|k| {
                let t = k as f64 / n as f64;
                self.stock_top(a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1]), r + 2.0)
            })
            .fold(a[2].max(b[2]), f64::max);
        (top + LINK_CLEARANCE).min(self.travel_z(a[0], b[0], r))
    }

    /// The plan area a level strategy works over: the stock, and with a
    /// cradle (all the stock off the board cut away) `grow` beyond its
    /// edges, so the offsets close round the stock instead of stopping at
    /// its edge.
    fn region(&self, grow: f64) -> ([f64; 2], [f64; 2]) {
        let b = &self.place.block;
        let g = match self.job.holding {
            Holding::Frame => 0.0,
            Holding::Cradle => grow,
        };
        ([-g, -g], [b.length + g, b.width + g])
    }
}

/// Builds the paths of one setup.
pub fn setup_paths(
    place: &Placement,
    job: &Job,
    side: Side,
    clearance: f64,
    progress: &(dyn Fn(&str) + Sync),
) -> SetupPaths {
    let guard = place.guard(side);
    let (lo, hi) = ([0.0, 0.0], [place.block.length, place.block.width]);
    let grid = Field::new(lo, hi, 1.0, 0.0);
    // Part and tabs prepared together, for every tool of the setup.
    let prepared = Arc::new(Prepared::new(&guard.iter().collect::<Vec<_>>()));
    // The part's plan: where a vertical ray meets it (the tabs, the
    // second mesh, left out).
    let lattice = Lattice {
        origin: grid.origin,
        step: [grid.cell; 2],
        offset: 0.0,
        dims: grid.dims,
    };
    let hits = prepared.rays(&lattice, 1);
    let inside: Vec<bool> = (0..grid.dims[1])
        .flat_map(|j| (0..grid.dims[0]).map(move |i| (i, j)))
        .map(|(i, j)| hits.hit(i, j))
        .collect();
    let outside = field::distance_to(&grid, &inside);
    let beyond: Vec<bool> = inside.iter().map(|b| !b).collect();
    let inside = field::distance_to(&grid, &beyond);
    // Setup 1 never cuts through the block (it stops at the parting
    // surface), so each setup starts from a whole block.
    let b = &place.block;
    let stock = ZMap::of_stock(b, side == Side::Deck, 1.0, b.allowance())
        .expect("a block within the machine fits a 1 mm map");
    let ctx = Ctx {
        place,
        job,
        side,
        prepared,
        clear: clearance,
        outside,
        inside,
        stock: std::sync::RwLock::new(stock),
    };
    let mut paths = Vec::new();
    if side == Side::Deck {
        progress("registration holes");
        paths.push(holes(&ctx));
    }
    // The finishing ball's drop-cutter, built once: the roughing asks it
    // where the ball can take the foam itself, then the ball runs on it.
    let ball = ctx.drop_cutter(job.finishing.pass.tool.cutter);
    progress("roughing");
    let rough = roughing(&ctx, &ball);
    ctx.cut(&rough);
    paths.push(rough);
    progress("outline");
    let out = outline(&ctx);
    ctx.cut(&out);
    paths.push(out);
    progress("finishing");
    let (fin, positions) = finishing(&ctx, &ball);
    paths.extend(fin);
    SetupPaths {
        side,
        paths,
        positions,
        prepared: Arc::clone(&ctx.prepared),
    }
}

/// Where the steps so far leave the tool (the origin before any).
fn last_at(steps: &[Step]) -> [f64; 3] {
    steps
        .iter()
        .rev()
        .map(|s| match s {
            Step::Rapid(p) | Step::Plunge(p) | Step::Cut(p) => *p,
            Step::Arc { to, .. } => *to,
        })
        .next()
        .unwrap_or([0.0; 3])
}

fn last_xy(steps: &[Step], z: f64) -> [f64; 3] {
    let p = last_at(steps);
    [p[0], p[1], z]
}

/// Goes to the start of a ring and cuts it: rapid at clearance, rapid down
/// to 2 mm above the level cleared before, then a zig-zag ramp at the
/// roughing's `ramp_angle` down to this level along the ring's first
/// stretch, then the ring.
fn entry(steps: &mut Vec<Step>, ctx: &Ctx, pts: &[[f64; 3]], closed: bool, above: f64, level: f64) {
    let start = pts[0];
    let r = ctx.job.roughing.tool.cutter.radius;
    let from = last_at(steps);
    let travel = ctx.travel_z(from[0], start[0], r).max(from[2]);
    steps.push(Step::Rapid([from[0], from[1], travel]));
    steps.push(Step::Rapid([start[0], start[1], travel]));
    steps.push(Step::Rapid([start[0], start[1], above + 2.0]));
    steps.push(Step::Plunge([start[0], start[1], above]));
    let drop = above - level;
    let ramp_len = drop / ctx.job.roughing.ramp_angle.to_radians().tan();
    // The stretch to ramp along: up to half the ramp length forward.
    let mut stretch = vec![start];
    let mut run = 0.0;
    for w in pts.windows(2) {
        let l = ((w[1][0] - w[0][0]).powi(2) + (w[1][1] - w[0][1]).powi(2)).sqrt();
        stretch.push(w[1]);
        run += l;
        if run >= ramp_len / 2.0 {
            break;
        }
    }
    if run > 1e-6 && drop > 1e-9 {
        let laps = (ramp_len / (2.0 * run)).ceil().max(1.0) as usize;
        let total = 2.0 * run * laps as f64;
        let mut done = 0.0;
        let mut at = start;
        for _ in 0..laps {
            for dir in [true, false] {
                let seq: Vec<[f64; 3]> = if dir {
                    stretch[1..].to_vec()
                } else {
                    stretch.iter().rev().skip(1).copied().collect()
                };
                for p in seq {
                    done += ((p[0] - at[0]).powi(2) + (p[1] - at[1]).powi(2)).sqrt();
                    // Never more than 1 mm over the foam: over a rockered
                    // blank the top may fall away along the ramp.
                    let z = (above - drop * (done / total).min(1.0))
                        .min(ctx.stock_top_at(p[0]) + 1.0)
                        .max(level);
                    steps.push(Step::Cut([p[0], p[1], z]));
                    at = p;
                }
            }
        }
    } else {
        steps.push(Step::Plunge(start));
    }
    steps.push(Step::Cut(start));
    for p in &pts[1..] {
        steps.push(Step::Cut(*p));
    }
    if closed {
        steps.push(Step::Cut(start));
    }
    // The tool stays at the level: the next piece either slides in along
    // it or begins by lifting from here.
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scallop_stepover_is_the_chord_at_cusp_depth() {
        // s = 2·√(2Rh − h²) (standard machining geometry). For R = 6.35 mm,
        // h = 0.1 mm: s = 2·√(1.27 − 0.01) = 2.2450 mm.
        assert!((scallop_stepover(6.35, 0.1) - 2.0 * 1.26f64.sqrt()).abs() < 1e-12);
        // Hand check against the circle: the cusp between two balls s apart
        // sits h above their lowest points.
        let (r, h) = (6.35, 0.1);
        let s = scallop_stepover(r, h);
        let cusp = r - (r * r - (s / 2.0).powi(2)).sqrt();
        assert!((cusp - h).abs() < 1e-12);
    }

    #[test]
    fn slope_stepover_matches_the_ball_and_the_bull_on_the_flat() {
        use crate::model::machine::Cutter;
        // A ball on a face tilted φ: the chord 2·√(2Rh − h²) along the face
        // (circle geometry: the cusp is the same on any plane), cos φ of it
        // in plan.
        let (d, h) = (50.8, 0.25);
        for deg in [0.0f64, 10.0, 30.0, 45.0, 70.0] {
            let cos = deg.to_radians().cos();
            let got = slope_stepover(&Cutter::ball(d), h, cos);
            let want = scallop_stepover(d / 2.0, h) * cos;
            assert!((got - want).abs() < 1e-6, "{deg}°: {got} vs {want}");
        }
        // A bull-nose on the flat: its flat's diameter plus its corner's
        // chord (the flats overlap, the corners leave the cusp).
        let c = 6.35;
        let bull = Cutter::bull(d, c);
        let got = slope_stepover(&bull, h, 1.0);
        let want = d - 2.0 * c + scallop_stepover(c, h);
        assert!((got - want).abs() < 1e-6, "{got} vs {want}");
        // Tilted past the flat's reach it leaves what its corner leaves:
        // on a face tilted φ the flat's far edge stands (d − 2c)·sin φ
        // off it, so by a few degrees the corner's chord rules.
        let cos = 20f64.to_radians().cos();
        let got = slope_stepover(&bull, h, cos);
        let want = scallop_stepover(c, h) * cos;
        assert!((got - want).abs() < 1e-6, "{got} vs {want}");
        // A flat end tilted 1°: each pass's tilted bottom leaves a step
        // s·tan φ high at the last one's rim, s·sin φ square to the face
        // (geometry), so s = h / sin φ.
        let flat = Cutter::flat(d);
        let s1 = 1f64.to_radians();
        let got = slope_stepover(&flat, h, s1.cos());
        let want = h / s1.sin();
        assert!((got - want).abs() < 1e-6, "{got} vs {want}");
    }

    #[test]
    fn simplify_keeps_corners_and_drops_collinear_points() {
        let pts: Vec<[f64; 3]> = (0..=10)
            .map(|k| [k as f64, 0.0, if k <= 5 { 0.0 } else { k as f64 - 5.0 }])
            .collect();
        let s = simplify(&pts, 0.01);
        assert_eq!(s, vec![[0.0, 0.0, 0.0], [5.0, 0.0, 0.0], [10.0, 0.0, 5.0]]);
    }
}
