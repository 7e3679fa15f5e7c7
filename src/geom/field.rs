//! Sampled fields over the plan view: distance transforms and contour
//! lines, the raw material of pocketing and waterline paths.

/// Values on a regular grid of nodes.
#[derive(Debug, Clone, PartialEq)]
pub struct Field {
    /// Node (0, 0).
    pub origin: [f64; 2],
    /// Node spacing.
    pub cell: f64,
    /// Nodes in X and Y.
    pub dims: [usize; 2],
    /// Values, row by row (Y outer).
    pub values: Vec<f64>,
}

impl Field {
    /// A field of `value` over nodes covering [lo, hi].
    pub fn new(lo: [f64; 2], hi: [f64; 2], cell: f64, value: f64) -> Field {
        let dims = [
            ((hi[0] - lo[0]) / cell).ceil() as usize + 1,
            ((hi[1] - lo[1]) / cell).ceil() as usize + 1,
        ];
        Field {
            origin: lo,
            cell,
            dims,
            values: vec![value; dims[0] * dims[1]],
        }
    }

    /// Position of node (i, j).
    pub fn node(&self, i: usize, j: usize) -> [f64; 2] {
        [
            self.origin[0] + i as f64 * self.cell,
            self.origin[1] + j as f64 * self.cell,
        ]
    }

    /// All node positions, row by row.
    pub fn nodes(&self) -> Vec<[f64; 2]> {
        let mut out = Vec::with_capacity(self.values.len());
        for j in 0..self.dims[1] {
            for i in 0..self.dims[0] {
                out.push(self.node(i, j));
            }
        }
        out
    }

    /// The same grid with other values.
    pub fn with_values(&self, values: Vec<f64>) -> Field {
        Field {
            values,
            ..self.clone()
        }
    }

    /// Bilinear value at a point (clamped to the grid).
    pub fn at(&self, p: [f64; 2]) -> f64 {
        let fx = ((p[0] - self.origin[0]) / self.cell).clamp(0.0, (self.dims[0] - 1) as f64);
        let fy = ((p[1] - self.origin[1]) / self.cell).clamp(0.0, (self.dims[1] - 1) as f64);
        let i = (fx.floor() as usize).min(self.dims[0].saturating_sub(2));
        let j = (fy.floor() as usize).min(self.dims[1].saturating_sub(2));
        let (tx, ty) = (fx - i as f64, fy - j as f64);
        let v = |i: usize, j: usize| self.values[j * self.dims[0] + i];
        let a = v(i, j) * (1.0 - tx) + v((i + 1).min(self.dims[0] - 1), j) * tx;
        let b = v(i, (j + 1).min(self.dims[1] - 1)) * (1.0 - tx)
            + v((i + 1).min(self.dims[0] - 1), (j + 1).min(self.dims[1] - 1)) * tx;
        a * (1.0 - ty) + b * ty
    }

    /// Largest value at the nodes of the cells a segment passes over.
    pub fn max_along(&self, a: [f64; 2], b: [f64; 2]) -> f64 {
        let len = ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt();
        let n = (len / (0.5 * self.cell)).ceil().max(1.0) as usize;
        let mut best = f64::NEG_INFINITY;
        for k in 0..=n {
            let t = k as f64 / n as f64;
            let p = [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])];
            let fx = ((p[0] - self.origin[0]) / self.cell).clamp(0.0, (self.dims[0] - 1) as f64);
            let fy = ((p[1] - self.origin[1]) / self.cell).clamp(0.0, (self.dims[1] - 1) as f64);
            for (i, j) in [
                (fx.floor(), fy.floor()),
                (fx.ceil(), fy.floor()),
                (fx.floor(), fy.ceil()),
                (fx.ceil(), fy.ceil()),
            ] {
                best = best.max(self.values[j as usize * self.dims[0] + i as usize]);
            }
        }
        best
    }
}

/// Euclidean distance from each node to the nearest node where `inside`
/// holds (0 there), exact on the grid: Felzenszwalb and Huttenlocher,
/// "Distance Transforms of Sampled Functions", Theory of Computing 8 (2012).
pub fn distance_to(grid: &Field, inside: &[bool]) -> Field {
    let [nx, ny] = grid.dims;
    let big = 1e20;
    let mut d2: Vec<f64> = inside.iter().map(|&b| if b { 0.0 } else { big }).collect();
    let mut f = vec![0.0; nx.max(ny)];
    let mut out = vec![0.0; nx.max(ny)];
    for i in 0..nx {
        for j in 0..ny {
            f[j] = d2[j * nx + i];
        }
        edt_1d(&f[..ny], &mut out[..ny]);
        for j in 0..ny {
            d2[j * nx + i] = out[j];
        }
    }
    for j in 0..ny {
        f[..nx].copy_from_slice(&d2[j * nx..(j + 1) * nx]);
        edt_1d(&f[..nx], &mut out[..nx]);
        d2[j * nx..(j + 1) * nx].copy_from_slice(&out[..nx]);
    }
    let c = grid.cell;
    grid.with_values(
        d2.into_iter()
            .map(|v| {
                if v >= big {
                    f64::INFINITY
                } else {
                    v.sqrt() * c
                }
            })
            .collect(),
    )
}

fn edt_1d(f: &[f64], d: &mut [f64]) {
    let n = f.len();
    let mut v = vec![0usize; n];
    let mut z = vec![0.0f64; n + 1];
    let mut k = 0usize;
    z[0] = f64::NEG_INFINITY;
    z[1] = f64::INFINITY;
    for q in 1..n {
        loop {
            let p = v[k];
            let s = ((f[q] + (q * q) as f64) - (f[p] + (p * p) as f64))
                / (2.0 * q as f64 - 2.0 * p as f64);
            if s <= z[k] && k > 0 {
                k -= 1;
                continue;
            }
            if s <= z[k] {
                // k == 0: replace the first parabola.
                v[0] = q;
                z[0] = f64::NEG_INFINITY;
                z[1] = f64::INFINITY;
                break;
            }
            k += 1;
            v[k] = q;
            z[k] = s;
            z[k + 1] = f64::INFINITY;
            break;
        }
    }
    k = 0;
    for (q, dq) in d.iter_mut().enumerate().take(n) {
        while z[k + 1] < q as f64 {
            k += 1;
        }
        let p = v[k];
        *dq = (q as f64 - p as f64).powi(2) + f[p];
    }
}

/// A polyline in the plan view.
#[derive(Debug, Clone, PartialEq)]
pub struct Line {
    /// Points in order.
    pub points: Vec<[f64; 2]>,
    /// Whether the last point joins the first.
    pub closed: bool,
}

/// Contour lines where the field crosses `level` (marching squares, with
/// the saddle cells split by the cell's mean). Each crossing point lies on
/// a cell edge, linearly interpolated between its two nodes.
pub fn contours(field: &Field, level: f64) -> Vec<Line> {
    contours_in(field, &Ranges::of(field), level)
}

/// Side of the square tiles whose value ranges let the contouring skip
/// the cells a level cannot cross.
const TILE: usize = 32;

/// The lowest and highest value (NaN counts as below everything) over each
/// tile's nodes, including the row and column shared with the next tile,
/// so a tile's range bounds all four corners of each of its cells.
#[derive(Debug, Clone)]
pub struct Ranges {
    tiles_x: usize,
    lo: Vec<f64>,
    hi: Vec<f64>,
}

impl Ranges {
    pub fn of(field: &Field) -> Ranges {
        let [nx, ny] = field.dims;
        let (tx, ty) = (nx.div_ceil(TILE).max(1), ny.div_ceil(TILE).max(1));
        let mut lo = vec![f64::INFINITY; tx * ty];
        let mut hi = vec![f64::NEG_INFINITY; tx * ty];
        for b in 0..ty {
            // Rows and columns TILE * k ..= TILE * (k + 1): the last one is
            // shared with the next tile.
            let rows = (b * TILE)..((b + 1) * TILE + 1).min(ny);
            for a in 0..tx {
                let cols = (a * TILE)..((a + 1) * TILE + 1).min(nx);
                let (mut l, mut h) = (f64::INFINITY, f64::NEG_INFINITY);
                for j in rows.clone() {
                    for &v in &field.values[j * nx + cols.start..j * nx + cols.end] {
                        let v = if v.is_nan() { f64::NEG_INFINITY } else { v };
                        l = l.min(v);
                        h = h.max(v);
                    }
                }
                lo[b * tx + a] = l;
                hi[b * tx + a] = h;
            }
        }
        Ranges {
            tiles_x: tx,
            lo,
            hi,
        }
    }

    /// Whether `level` may cross a cell of the tile holding cell (i, j).
    fn may_cross(&self, i: usize, j: usize, level: f64) -> bool {
        let k = (j / TILE) * self.tiles_x + i / TILE;
        self.lo[k] < level && self.hi[k] >= level
    }
}

/// [`contours`] with the tile ranges of `field` computed once, for many levels.
pub fn contours_in(field: &Field, ranges: &Ranges, level: f64) -> Vec<Line> {
    contours_placed(field, ranges, level, &|p, q, t, _, _| {
        [p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])]
    })
}

/// Where [`contours_placed`] puts a crossing on the cell edge from node
/// `p` (value `vp`, at or above the level) to node `q` (value `vq`,
/// below), given `t`, the linear estimate along the edge.
pub type Place<'a> = dyn Fn([f64; 2], [f64; 2], f64, f64, f64) -> [f64; 2] + Sync + 'a;

/// [`contours_in`] with each crossing placed by `place`: for a field
/// sampled from a function that can be evaluated anywhere, the crossing
/// can be found on the edge itself rather than interpolated.
pub fn contours_placed(field: &Field, ranges: &Ranges, level: f64, place: &Place) -> Vec<Line> {
    let [nx, ny] = field.dims;
    if nx < 2 || ny < 2 {
        return vec![];
    }
    let v = |i: usize, j: usize| field.values[j * nx + i];
    let above = |i: usize, j: usize| v(i, j) >= level;
    // Edge ids: horizontal edge (i, j)-(i+1, j) = 2*(j*nx + i); vertical (i, j)-(i, j+1) = 2*(j*nx+i)+1.
    let h = |i: usize, j: usize| 2 * (j * nx + i);
    let vv = |i: usize, j: usize| 2 * (j * nx + i) + 1;
    let point = |e: usize| -> [f64; 2] {
        let k = e / 2;
        let (i, j) = (k % nx, k / nx);
        let (i2, j2) = if e.is_multiple_of(2) {
            (i + 1, j)
        } else {
            (i, j + 1)
        };
        let (a, b) = (v(i, j), v(i2, j2));
        let t = if (b - a).abs() > 0.0 {
            ((level - a) / (b - a)).clamp(0.0, 1.0)
        } else {
            0.5
        };
        let p = field.node(i, j);
        let q = field.node(i2, j2);
        if a >= level {
            place(p, q, t, a, b)
        } else {
            place(q, p, 1.0 - t, b, a)
        }
    };
    // Segments oriented with the "above" side on the left.
    let mut next: rustc_hash::FxHashMap<usize, usize> = Default::default();
    let mut starts = Vec::new();
    for j in 0..ny - 1 {
        let mut i = 0;
        while i < nx - 1 {
            if !ranges.may_cross(i, j, level) {
                // Every cell of this tile's row is all above or all below.
                i = (i / TILE + 1) * TILE;
                continue;
            }
            let c = [
                above(i, j),
                above(i + 1, j),
                above(i + 1, j + 1),
                above(i, j + 1),
            ];
            let idx = c[0] as u8 | (c[1] as u8) << 1 | (c[2] as u8) << 2 | (c[3] as u8) << 3;
            if idx == 0 || idx == 15 {
                i += 1;
                continue;
            }
            let (b, r, t, l) = (h(i, j), vv(i + 1, j), h(i, j + 1), vv(i, j));
            let mean = (v(i, j) + v(i + 1, j) + v(i + 1, j + 1) + v(i, j + 1)) / 4.0 >= level;
            let segs: &[(usize, usize)] = match idx {
                0 | 15 => &[],
                1 => &[(l, b)],
                2 => &[(b, r)],
                3 => &[(l, r)],
                4 => &[(r, t)],
                5 => {
                    if mean {
                        &[(l, t), (r, b)]
                    } else {
                        &[(l, b), (r, t)]
                    }
                }
                6 => &[(b, t)],
                7 => &[(l, t)],
                8 => &[(t, l)],
                9 => &[(t, b)],
                10 => {
                    if mean {
                        &[(b, l), (t, r)]
                    } else {
                        &[(b, r), (t, l)]
                    }
                }
                11 => &[(t, r)],
                12 => &[(r, l)],
                13 => &[(r, b)],
                14 => &[(b, l)],
                _ => &[],
            };
            for &(a, e) in segs {
                // Orientation fix-up below: store as given; reverse whole
                // lines later if needed. Keep the map deterministic.
                next.insert(a, e);
                starts.push(a);
            }
            i += 1;
        }
    }
    let has_prev: rustc_hash::FxHashSet<usize> = next.values().copied().collect();
    let mut used: rustc_hash::FxHashSet<usize> = Default::default();
    let mut lines = Vec::new();
    // Open lines first (start where nothing leads in), then closed loops.
    for pass in 0..2 {
        for &s in &starts {
            if used.contains(&s) || (pass == 0 && has_prev.contains(&s)) {
                continue;
            }
            let mut pts = vec![point(s)];
            used.insert(s);
            let mut e = s;
            let mut closed = false;
            while let Some(&n) = next.get(&e) {
                if n == s {
                    closed = true;
                    break;
                }
                pts.push(point(n));
                if !used.insert(n) {
                    break;
                }
                e = n;
            }
            if pts.len() >= 2 {
                lines.push(Line {
                    points: pts,
                    closed,
                });
            }
        }
    }
    lines
}

/// Signed area of a closed line (positive counter-clockwise).
pub fn signed_area(points: &[[f64; 2]]) -> f64 {
    let n = points.len();
    (0..n)
        .map(|k| {
            let (a, b) = (points[k], points[(k + 1) % n]);
            a[0] * b[1] - b[0] * a[1]
        })
        .sum::<f64>()
        / 2.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distance_to_a_point_is_euclidean() {
        let g = Field::new([0.0, 0.0], [20.0, 10.0], 0.5, 0.0);
        let inside: Vec<bool> = g
            .nodes()
            .iter()
            .map(|p| p[0] == 5.0 && p[1] == 5.0)
            .collect();
        let d = distance_to(&g, &inside);
        for (p, v) in g.nodes().iter().zip(&d.values) {
            let want = ((p[0] - 5.0).powi(2) + (p[1] - 5.0).powi(2)).sqrt();
            assert!((v - want).abs() < 1e-9, "{p:?} {v} {want}");
        }
    }

    #[test]
    fn contours_across_tile_corners_are_whole() {
        // A small cone centred on the node shared by four tiles: each tile
        // holds a quarter of the circle, and skipping tiles must not lose any.
        let c = TILE as f64;
        let g = Field::new([0.0, 0.0], [3.0 * c, 3.0 * c], 1.0, 0.0);
        for (cx, cy) in [(c, c), (c - 0.5, c + 0.5), (2.0 * c, 3.0)] {
            let vals = g
                .nodes()
                .iter()
                .map(|p| 10.0 - ((p[0] - cx).powi(2) + (p[1] - cy).powi(2)).sqrt())
                .collect();
            let f = g.with_values(vals);
            let lines = contours(&f, 7.5);
            assert_eq!(lines.len(), 1, "centre {cx},{cy}");
            assert!(lines[0].closed);
            // Area of a circle of radius 2.5 (geometry), within the chord
            // error of a 1 mm grid.
            let area = signed_area(&lines[0].points).abs();
            assert!((area - std::f64::consts::PI * 6.25).abs() < 1.5, "{area}");
        }
    }

    #[test]
    fn crossings_found_on_the_edge_land_on_a_step() {
        // A plateau of height 10 inside a circle of radius 7.3, 0 outside:
        // the 5 level is the circle (geometry), but linear interpolation
        // on a 1 mm grid puts every crossing at the middle of its edge, up
        // to 0.5 mm off. Bisecting the function itself on the edge puts it
        // on the circle to 1/1024 of the edge.
        let step = |p: [f64; 2]| {
            if (p[0] * p[0] + p[1] * p[1]).sqrt() <= 7.3 {
                10.0
            } else {
                0.0
            }
        };
        let g = Field::new([-10.0, -10.0], [10.0, 10.0], 1.0, 0.0);
        let f = g.with_values(g.nodes().into_iter().map(step).collect());
        let off = |lines: &[Line]| {
            lines
                .iter()
                .flat_map(|l| &l.points)
                .map(|p| ((p[0] * p[0] + p[1] * p[1]).sqrt() - 7.3).abs())
                .fold(0.0, f64::max)
        };
        let linear = contours(&f, 5.0);
        assert!(off(&linear) > 0.2, "{}", off(&linear));
        let place = |p: [f64; 2], q: [f64; 2], _t: f64, _: f64, _: f64| {
            let at = |t: f64| [p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])];
            let (mut a, mut b) = (0.0, 1.0);
            for _ in 0..10 {
                let m = 0.5 * (a + b);
                if step(at(m)) >= 5.0 { a = m } else { b = m }
            }
            at(a)
        };
        let placed = contours_placed(&f, &Ranges::of(&f), 5.0, &place);
        assert_eq!(placed.len(), 1);
        assert!(placed[0].closed);
        assert!(off(&placed) < 1.0 / 1024.0 + 1e-9, "{}", off(&placed));
        // Same lines, point for point, only moved along their edges.
        assert_eq!(placed[0].points.len(), linear[0].points.len());
    }

    #[test]
    fn contour_of_a_cone_is_a_circle() {
        // The level set of the distance to a point is a circle (geometry);
        // linear interpolation on a 0.25 mm grid keeps it within 0.01 mm.
        let g = Field::new([-20.0, -20.0], [20.0, 20.0], 0.25, 0.0);
        let vals = g
            .nodes()
            .iter()
            .map(|p| (p[0] * p[0] + p[1] * p[1]).sqrt())
            .collect();
        let f = g.with_values(vals);
        let lines = contours(&f, 10.0);
        assert_eq!(lines.len(), 1);
        assert!(lines[0].closed);
        for p in &lines[0].points {
            assert!(((p[0] * p[0] + p[1] * p[1]).sqrt() - 10.0).abs() < 0.01);
        }
        let area = signed_area(&lines[0].points).abs();
        assert!((area - std::f64::consts::PI * 100.0).abs() < 0.5, "{area}");
    }
}
