//! The stock as a height map (a Z-map): one column of foam per grid cell,
//! its top lowered by the swept tool along every move.
//!
//! Each cell is sampled at its centre, and the swept tool's lowest point
//! over that centre is computed exactly for straight moves: for a flat end
//! the extreme of the interval of the move over which the centre is within
//! the radius; for a ball the lower intersection of the vertical line with
//! the capsule the ball sweeps; for a bull-nose the minimum of a convex
//! function along the move (golden-section search). So a cell's height is
//! exact at its centre; only what lies between centres is unknown.

use rayon::prelude::*;

mod swept;

use swept::SweptShape;

use crate::model::job::Block;
use crate::model::machine::{Cutter, ToolKind};

/// A straight move of one cutter, tip positions in mm.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sweep {
    /// Tip at the start.
    pub from: [f64; 3],
    /// Tip at the end.
    pub to: [f64; 3],
    /// The tool.
    pub cutter: Cutter,
}

/// What one move did to the stock.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Touch {
    /// Deepest cut into the stock it met (mm; 0 when it met only air).
    pub depth: f64,
    /// Where that was (x, y).
    pub at: [f64; 2],
}

/// A height map over a rectangle of the XY plane.
#[derive(Debug, Clone, PartialEq)]
pub struct ZMap {
    /// Corner of cell (0, 0).
    pub origin: [f64; 2],
    /// Cell size in X and Y.
    pub cell: [f64; 2],
    /// Cells in X and Y.
    pub dims: [usize; 2],
    /// Column tops, row by row (Y outer).
    pub top: Vec<f32>,
    /// Column bottoms (material lies between bottom and top).
    pub bottom: Vec<f32>,
}

/// Most cells a map may have (about 0.4 GB of heights).
pub const MAX_CELLS: usize = 50_000_000;

impl ZMap {
    /// A block with corner `origin`, `size` in X and Y, from `z0` up to
    /// `z1`, in cells near `cell` that divide the block exactly.
    pub fn block(
        origin: [f64; 2],
        size: [f64; 2],
        z0: f64,
        z1: f64,
        cell: f64,
    ) -> Result<ZMap, String> {
        let nx = (size[0] / cell).round().max(1.0);
        let ny = (size[1] / cell).round().max(1.0);
        if (nx * ny).is_nan() || nx * ny > MAX_CELLS as f64 {
            return Err(format!(
                "a {:.0} x {:.0} mm block at {cell} mm cells needs {:.0} cells; the limit is {MAX_CELLS}",
                size[0],
                size[1],
                nx * ny
            ));
        }
        let dims = [nx as usize, ny as usize];
        let n = dims[0] * dims[1];
        Ok(ZMap {
            origin,
            cell: [size[0] / nx, size[1] / ny],
            dims,
            top: vec![z1 as f32; n],
            bottom: vec![z0 as f32; n],
        })
    }

    /// The stock as a side's setup sees it (program zero on the top of its
    /// box, front-left), its top raised by `grow`: a flat block's box, or
    /// a rockered blank's columns between its curves at each cell's X.
    pub fn of_stock(block: &Block, deck_up: bool, cell: f64, grow: f64) -> Result<ZMap, String> {
        let mut map = ZMap::block(
            [0.0, 0.0],
            [block.length, block.width],
            -block.thickness,
            0.0,
            cell,
        )?;
        let nx = map.dims[0];
        let columns: Vec<(f32, f32)> = (0..nx)
            .map(|i| {
                let (top, under) = block.top_under(deck_up, map.centre(i, 0)[0]);
                ((top + grow) as f32, under as f32)
            })
            .collect();
        for (top, bottom) in map.top.chunks_mut(nx).zip(map.bottom.chunks_mut(nx)) {
            for (i, &(t, u)) in columns.iter().enumerate() {
                top[i] = t;
                bottom[i] = u;
            }
        }
        Ok(map)
    }

    /// Centre of cell (i, j).
    pub fn centre(&self, i: usize, j: usize) -> [f64; 2] {
        [
            self.origin[0] + (i as f64 + 0.5) * self.cell[0],
            self.origin[1] + (j as f64 + 0.5) * self.cell[1],
        ]
    }

    /// Volume of material, mm³.
    pub fn volume(&self) -> f64 {
        let area = self.cell[0] * self.cell[1];
        // Rows in parallel, then summed in row order: a parallel sum's
        // order (and so its last bits) depends on how the threads split it.
        let rows: Vec<f64> = self
            .top
            .par_chunks(self.dims[0])
            .zip(self.bottom.par_chunks(self.dims[0]))
            .map(|(t, b)| {
                t.iter()
                    .zip(b)
                    .map(|(&t, &b)| (t as f64 - b as f64).max(0.0))
                    .sum::<f64>()
            })
            .collect();
        rows.iter().sum::<f64>() * area
    }

    /// Applies the moves in order; returns what each met. Rows are shared
    /// out among threads; each thread applies every move to its rows in
    /// order, so the result does not depend on the number of threads.
    pub fn cut(&mut self, moves: &[Sweep]) -> Vec<Touch> {
        let nx = self.dims[0];
        let (origin, cell) = (self.origin, self.cell);
        let per_band: Vec<Vec<Touch>> = self
            .top
            .par_chunks_mut(nx * BAND_ROWS)
            .zip(self.bottom.par_chunks(nx * BAND_ROWS))
            .enumerate()
            .map(|(band, (top, bottom))| {
                let mut band = Band {
                    j0: band * BAND_ROWS,
                    rows: top.len() / nx,
                    nx,
                    highest: Vec::new(),
                    open: Vec::new(),
                    cut: Vec::new(),
                    top,
                    bottom,
                };
                band.highest = (0..nx.div_ceil(BLOCK_COLUMNS))
                    .map(|b| band.highest_in(b))
                    .collect();
                moves
                    .iter()
                    .map(|m| apply(m, &mut band, origin, cell))
                    .collect()
            })
            .collect();
        let mut out = vec![Touch::default(); moves.len()];
        for band in per_band {
            for (o, t) in out.iter_mut().zip(band) {
                if t.depth > o.depth {
                    *o = t;
                }
            }
        }
        out
    }
}

/// Rows of the map one thread cuts: every move is applied to them in
/// order, so the result does not depend on how many threads share them.
const BAND_ROWS: usize = 16;

/// Columns of a band's block: a move passes over a whole block without
/// looking at its cells when the block's highest top is already below
/// the tool everywhere in it.
const BLOCK_COLUMNS: usize = 16;

/// One thread's rows of the map, and the highest top of each block of
/// [`BLOCK_COLUMNS`] columns in them (tops only go down, so a block's
/// figure stays an upper bound until it is read again after a cut).
struct Band<'a> {
    j0: usize,
    rows: usize,
    nx: usize,
    highest: Vec<f32>,
    /// For the move being applied, whether each block it spans is open
    /// and whether it cut there (kept between moves, not allocated anew).
    open: Vec<bool>,
    cut: Vec<bool>,
    top: &'a mut [f32],
    bottom: &'a [f32],
}

impl Band<'_> {
    /// The highest top in block `b`.
    fn highest_in(&self, b: usize) -> f32 {
        let (c0, c1) = (b * BLOCK_COLUMNS, ((b + 1) * BLOCK_COLUMNS).min(self.nx));
        (0..self.rows)
            .flat_map(|j| &self.top[j * self.nx + c0..j * self.nx + c1])
            .fold(f32::NEG_INFINITY, |m, &h| m.max(h))
    }
}

fn apply(m: &Sweep, band: &mut Band, origin: [f64; 2], cell: [f64; 2]) -> Touch {
    let (nx, j0, rows) = (band.nx, band.j0, band.rows);
    let r = m.cutter.radius;
    let (a, b) = (m.from, m.to);
    let lo = [a[0].min(b[0]) - r, a[1].min(b[1]) - r];
    let hi = [a[0].max(b[0]) + r, a[1].max(b[1]) + r];
    let zlow = a[2].min(b[2]) as f32;
    let i0 = ((lo[0] - origin[0]) / cell[0] - 0.5).ceil().max(0.0) as usize;
    let i1 = ((hi[0] - origin[0]) / cell[0] - 0.5).floor();
    let jj0 = ((lo[1] - origin[1]) / cell[1] - 0.5).ceil().max(j0 as f64) as usize;
    let jj1 = ((hi[1] - origin[1]) / cell[1] - 0.5).floor();
    let mut touch = Touch::default();
    if i1 < 0.0 || jj1 < j0 as f64 {
        return touch;
    }
    let i1 = (i1 as usize).min(nx - 1);
    let jj1 = (jj1 as usize).min(j0 + rows - 1);
    if i0 > i1 || jj0 > jj1 {
        return touch;
    }
    // A ball is no lower over a cell than its tip's lowest height plus its
    // rise at the cell's plan distance from the move's box (the distance to
    // the axis is no less): cells already below that are passed over
    // without the exact test, with 1e-4 mm to spare for the f32 heights.
    let ball = m.cutter.kind == ToolKind::Ball;
    let (bx, by) = (
        [a[0].min(b[0]), a[0].max(b[0])],
        [a[1].min(b[1]), a[1].max(b[1])],
    );
    let centre = |i: usize, k: usize| origin[k] + (i as f64 + 0.5) * cell[k];
    // Whether a cell of top `h` at plan distance² `d2` from the move's box
    // is clear of the tool (the cell test below, read the same way).
    // (h ≤ zlow + r − √(r² − d²) − 1e-4, squared: no root taken.)
    let clear = |h: f32, d2: f64| {
        let t = zlow as f64 + r - 1e-4 - h as f64;
        h <= zlow || (ball && (d2 > r * r || (t >= 0.0 && r * r - d2 <= t * t)))
    };
    // Blocks whose highest top is clear at their nearest cell centre are
    // clear at every cell: the rise only grows with the distance.
    let (b0, b1) = (i0 / BLOCK_COLUMNS, i1 / BLOCK_COLUMNS);
    let (y0, y1) = (centre(jj0, 1), centre(jj1, 1));
    let dy = (by[0] - y1).max(y0 - by[1]).max(0.0);
    let mut open = std::mem::take(&mut band.open);
    open.clear();
    open.extend((b0..=b1).map(|bk| {
        let (c0, c1) = (
            (bk * BLOCK_COLUMNS).max(i0),
            ((bk + 1) * BLOCK_COLUMNS - 1).min(i1),
        );
        let dx = (bx[0] - centre(c1, 0)).max(centre(c0, 0) - bx[1]).max(0.0);
        !clear(band.highest[bk], dx * dx + dy * dy)
    }));
    if !open.contains(&true) {
        band.open = open;
        return touch;
    }
    // A ball reaches no cell farther from the move's box than where its
    // rise clears the highest top of the open blocks (the margin keeps
    // every cell the cell test would look at): each row's cells are
    // looked at only between those distances.
    let reach2 = if ball {
        let highest = (b0..=b1)
            .zip(&open)
            .filter(|&(_, &o)| o)
            .map(|(bk, _)| band.highest[bk])
            .fold(f32::NEG_INFINITY, f32::max);
        let lift = highest as f64 + 2e-4 - zlow as f64;
        (lift < r).then_some(r * r - (r - lift) * (r - lift))
    } else {
        None
    };
    let mut cut = std::mem::take(&mut band.cut);
    cut.clear();
    cut.resize(open.len(), false);
    let sweep = SweptShape::new(m.from, m.to, m.cutter);
    // The moves whose lowest points are worked out a row of a block at a
    // time: a sloped ball's, and a flat end's.
    type Lows = fn(&SweptShape, usize, f64, (f64, f64)) -> [f64; BLOCK_COLUMNS];
    let lanes: Option<Lows> = match m.cutter.kind {
        ToolKind::Ball if sweep.sloped() => Some(SweptShape::capsule_lows),
        ToolKind::Flat if m.cutter.corner == 0.0 => Some(SweptShape::flat_lows),
        _ => None,
    };
    let (top, bottom) = (&mut *band.top, band.bottom);
    for j in jj0..=jj1 {
        let y = centre(j, 1);
        let row = (j - j0) * nx;
        let dy = (by[0] - y).max(y - by[1]).max(0.0);
        let (ri0, ri1) = match reach2 {
            Some(d2) if d2 < dy * dy => continue,
            Some(d2) => {
                let dx = (d2 - dy * dy).sqrt();
                let first = ((bx[0] - dx - origin[0]) / cell[0] - 0.5).ceil() - 1.0;
                let last = ((bx[1] + dx - origin[0]) / cell[0] - 0.5).floor() + 1.0;
                if last < i0 as f64 {
                    continue;
                }
                ((first.max(0.0) as usize).max(i0), (last as usize).min(i1))
            }
            None => (i0, i1),
        };
        if ri0 > ri1 {
            continue;
        }
        for (o, bk) in (b0..=b1).enumerate() {
            if !open[o] {
                continue;
            }
            let (c0, c1) = (
                (bk * BLOCK_COLUMNS).max(ri0),
                ((bk + 1) * BLOCK_COLUMNS - 1).min(ri1),
            );
            if let Some(lows_of) = lanes {
                // The tool's lowest points over the block's cells in this
                // row, all at once. (The cells a ball's `clear` would pass
                // over are left by the test against the top: it has 1e-4
                // mm to spare.)
                let lows = lows_of(&sweep, c0, y, (origin[0], cell[0]));
                for (i, &z) in (c0..=c1).zip(&lows) {
                    let k = row + i;
                    let (h, z) = (top[k], z as f32);
                    if z < h && h > zlow && h > bottom[k] {
                        let depth = (h - z.max(bottom[k])) as f64;
                        if depth > touch.depth {
                            touch = Touch {
                                depth,
                                at: [centre(i, 0), y],
                            };
                        }
                        top[k] = z;
                        cut[o] = true;
                    }
                }
                continue;
            }
            for i in c0..=c1 {
                let k = row + i;
                let h = top[k];
                if h <= zlow || h <= bottom[k] {
                    continue;
                }
                let x = centre(i, 0);
                if ball {
                    let dx = (bx[0] - x).max(x - bx[1]).max(0.0);
                    if clear(h, dx * dx + dy * dy) {
                        continue;
                    }
                }
                if let Some(z) = sweep.lowest(x, y) {
                    let z = z as f32;
                    if z < h {
                        let depth = (h - z.max(bottom[k])) as f64;
                        if depth > touch.depth {
                            touch = Touch { depth, at: [x, y] };
                        }
                        top[k] = z;
                        cut[o] = true;
                    }
                }
            }
        }
    }
    for (o, bk) in (b0..=b1).enumerate() {
        if cut[o] {
            band.highest[bk] = band.highest_in(bk);
        }
    }
    band.open = open;
    band.cut = cut;
    touch
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn block() -> ZMap {
        ZMap::block([0.0, 0.0], [200.0, 100.0], -50.0, 0.0, 0.25).unwrap()
    }

    #[test]
    fn ball_slot_removes_half_cylinder_and_hemisphere() {
        // A ball of radius R plunged to depth R and moved L removes
        // πR²L/2 + (2/3)πR³: a half-cylinder, and a quarter-sphere at each
        // end (elementary geometry).
        let mut z = block();
        let c = Cutter::ball(20.0);
        let (r, l) = (10.0, 100.0);
        z.cut(&[Sweep {
            from: [50.0, 50.0, -r],
            to: [150.0, 50.0, -r],
            cutter: c,
        }]);
        let removed = 200.0 * 100.0 * 50.0 - z.volume();
        let want = PI * r * r * l / 2.0 + 2.0 / 3.0 * PI * r.powi(3);
        // Grid error: the cells along the boundary, each at most a cell's
        // area times the local depth, bounded here by 1 %.
        assert!((removed - want).abs() / want < 0.01, "{removed} vs {want}");
    }

    #[test]
    fn sloped_ball_move_matches_the_capsule() {
        // The same slot cut in one sloped move agrees with many short steps.
        let c = Cutter::ball(12.0);
        let mut one = block();
        one.cut(&[Sweep {
            from: [20.0, 40.0, -2.0],
            to: [180.0, 60.0, -20.0],
            cutter: c,
        }]);
        let mut many = block();
        let steps: Vec<Sweep> = (0..1600)
            .map(|k| {
                let p = |t: f64| [20.0 + 160.0 * t, 40.0 + 20.0 * t, -2.0 - 18.0 * t];
                Sweep {
                    from: p(k as f64 / 1600.0),
                    to: p((k + 1) as f64 / 1600.0),
                    cutter: c,
                }
            })
            .collect();
        many.cut(&steps);
        let worst = one
            .top
            .iter()
            .zip(&many.top)
            .map(|(a, b)| (a - b).abs())
            .fold(0f32, f32::max);
        // Steps of 0.1 mm: the scallops between them are under 0.001 mm deep.
        assert!(worst < 0.002, "{worst}");
    }

    #[test]
    fn flat_and_bull_levels() {
        let mut z = block();
        z.cut(&[Sweep {
            from: [100.0, 50.0, -5.0],
            to: [100.0, 50.0, -5.0],
            cutter: Cutter::bull(20.0, 4.0),
        }]);
        let at = |z: &ZMap, x: f64, y: f64| {
            let i = ((x - z.origin[0]) / z.cell[0]) as usize;
            let j = ((y - z.origin[1]) / z.cell[1]) as usize;
            z.top[j * z.dims[0] + i] as f64
        };
        assert!((at(&z, 100.1, 50.1) + 5.0).abs() < 1e-6);
        // Off the flat part, on the corner arc: 4 - sqrt(16 - u²) above the tip.
        let x = 100.0 + 6.0 + 2.0 + 0.125; // cell centre 108.125
        let u: f64 = 108.125 - 100.0 - 6.0;
        let want = -5.0 + 4.0 - (16.0 - u * u).sqrt();
        assert!(
            (at(&z, x, 50.1) - want).abs() < 0.02,
            "{} vs {want}",
            at(&z, x, 50.1)
        );
    }
}
