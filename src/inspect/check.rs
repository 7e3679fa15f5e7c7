//! Inspection of any mesh before foam is spent on it: is it one closed,
//! outward-facing solid, and if not, what is wrong, what it means for
//! cutting, and where.

use rayon::prelude::*;
use serde::Serialize;

use crate::meshing::topology::{self, EdgeTable};
use crate::meshing::weld::{self, Welded};
use crate::model::mesh::Mesh;
use crate::stl::{Soup, StlFormat};
use crate::volume::measure as volume;
use crate::volume::report::Bounds;

/// How many example places a finding lists.
const EXAMPLES: usize = 5;

/// One kind of problem found, with what it means and where.
#[derive(Debug, Clone, Serialize)]
pub struct Finding {
    /// Short name, as in the JSON counts.
    pub kind: &'static str,
    /// How many.
    pub count: usize,
    /// What it means for cutting.
    pub meaning: &'static str,
    /// A few places, mm.
    pub examples: Vec<[f64; 3]>,
}

/// One edge-connected piece of the mesh.
#[derive(Debug, Clone, Serialize)]
pub struct Component {
    /// Triangles in it.
    pub triangles: usize,
    /// V − E + F of the piece.
    pub euler_characteristic: i64,
    /// Closed (no open edges), manifold and consistently oriented.
    pub closed: bool,
    /// Handles, (2 − χ)/2, for a closed piece.
    pub genus: Option<i64>,
    /// Enclosed volume of a closed piece, litres.
    pub volume_litres: Option<f64>,
}

/// What `check` reports.
#[derive(Debug, Clone, Serialize)]
pub struct Inspection {
    /// Binary or ASCII.
    pub format: StlFormat,
    /// Triangles read.
    pub triangles: usize,
    /// Vertices after welding.
    pub vertices: usize,
    /// Weld tolerance, mm.
    pub weld_tolerance_mm: f64,
    /// Vertices merged by the tolerance (beyond exact matches).
    pub welded_vertices: usize,
    /// Edges used by one triangle only.
    pub open_edges: usize,
    /// Holes: connected loops of open edges.
    pub holes: usize,
    /// Edges used by more than two triangles.
    pub non_manifold_edges: usize,
    /// Vertices where separate fans of triangles meet.
    pub non_manifold_vertices: usize,
    /// Edges whose two triangles face opposite ways.
    pub inconsistent_edges: usize,
    /// Triangles with no area.
    pub degenerate_triangles: usize,
    /// Triangles repeating another.
    pub duplicate_triangles: usize,
    /// Edge-connected pieces.
    pub components: usize,
    /// Each piece.
    pub component_list: Vec<Component>,
    /// V − E + F of the whole.
    pub euler_characteristic: i64,
    /// Closed, manifold, consistently oriented, nothing degenerate or repeated.
    pub watertight: bool,
    /// A watertight mesh whose triangles all face inward.
    pub inside_out: bool,
    /// Enclosed volume, litres; null unless watertight.
    pub volume_litres: Option<f64>,
    /// The divergence sum whatever the mesh is (not a volume unless watertight), litres.
    pub signed_sum_litres: f64,
    /// Bounds, mm.
    pub bbox_mm: Bounds,
    /// Surface area, m².
    pub surface_area_m2: f64,
    /// Every problem found.
    pub findings: Vec<Finding>,
}

impl Inspection {
    /// A clean closed solid: one watertight, outward piece.
    pub fn is_clean(&self) -> bool {
        self.findings.is_empty()
    }
}

struct Sets {
    parent: Vec<u32>,
}

impl Sets {
    fn new(n: usize) -> Sets {
        Sets {
            parent: (0..n as u32).collect(),
        }
    }
    fn find(&mut self, mut i: u32) -> u32 {
        while self.parent[i as usize] != i {
            self.parent[i as usize] = self.parent[self.parent[i as usize] as usize];
            i = self.parent[i as usize];
        }
        i
    }
    fn join(&mut self, a: u32, b: u32) {
        let (a, b) = (self.find(a), self.find(b));
        if a != b {
            self.parent[a.max(b) as usize] = a.min(b);
        }
    }
}

fn midpoint(mesh: &Mesh, a: u32, b: u32) -> [f64; 3] {
    let (p, q) = (mesh.vertices[a as usize], mesh.vertices[b as usize]);
    [
        0.5 * (p[0] + q[0]),
        0.5 * (p[1] + q[1]),
        0.5 * (p[2] + q[2]),
    ]
}

fn centroid(mesh: &Mesh, t: u32) -> [f64; 3] {
    let [a, b, c] = mesh.corners(&mesh.triangles[t as usize]);
    [
        (a[0] + b[0] + c[0]) / 3.0,
        (a[1] + b[1] + c[1]) / 3.0,
        (a[2] + b[2] + c[2]) / 3.0,
    ]
}

/// Vertices whose triangles form more than one fan (joined through edges
/// at the vertex).
fn non_manifold_vertices(mesh: &Mesh) -> Vec<u32> {
    let nv = mesh.vertices.len();
    let mut start = vec![0usize; nv + 1];
    for t in &mesh.triangles {
        for &v in t {
            start[v as usize + 1] += 1;
        }
    }
    for i in 0..nv {
        start[i + 1] += start[i];
    }
    let mut fill = start.clone();
    let mut around = vec![0u32; start[nv]];
    for (i, t) in mesh.triangles.iter().enumerate() {
        for &v in t {
            around[fill[v as usize]] = i as u32;
            fill[v as usize] += 1;
        }
    }
    let chunk = 1 << 14;
    let found: Vec<Vec<u32>> = (0..nv.div_ceil(chunk))
        .into_par_iter()
        .map(|c| {
            let mut out = vec![];
            let (mut parent, mut by_other): (Vec<u32>, Vec<(u32, u32)>) = (vec![], vec![]);
            for v in c * chunk..((c + 1) * chunk).min(nv) {
                let fan = &around[start[v]..start[v + 1]];
                if fan.len() < 2 {
                    continue;
                }
                // Join triangles of the fan that share a second vertex.
                parent.clear();
                parent.extend(0..fan.len() as u32);
                by_other.clear();
                for (k, &t) in fan.iter().enumerate() {
                    for w in mesh.triangles[t as usize] {
                        if w != v as u32 {
                            by_other.push((w, k as u32));
                        }
                    }
                }
                by_other.sort_unstable();
                let root = |p: &mut Vec<u32>, mut i: u32| {
                    while p[i as usize] != i {
                        i = p[i as usize];
                    }
                    i
                };
                for w in by_other.windows(2) {
                    if w[0].0 == w[1].0 {
                        let (a, b) = (root(&mut parent, w[0].1), root(&mut parent, w[1].1));
                        if a != b {
                            parent[a.max(b) as usize] = a.min(b);
                        }
                    }
                }
                if (0..fan.len() as u32)
                    .filter(|&k| parent[k as usize] == k)
                    .count()
                    > 1
                {
                    out.push(v as u32);
                }
            }
            out
        })
        .collect();
    found.into_iter().flatten().collect()
}

/// Inspects a mesh read from STL, welding at `tolerance` mm (the default
/// from the model's size when `None`).
pub fn inspect_soup(soup: &Soup, tolerance: Option<f64>) -> (Welded, Inspection) {
    let tol = tolerance.unwrap_or_else(|| weld::default_tolerance(&soup.triangles));
    let (welded, table) = weld::weld_with_edges(&soup.triangles, tol);
    let inspection = inspect_with(&welded.mesh, &table, soup.format, tol, welded.near_merges);
    (welded, inspection)
}

/// Inspects a welded mesh.
pub fn inspect(mesh: &Mesh, format: StlFormat, weld_tolerance: f64, welded: usize) -> Inspection {
    inspect_with(mesh, &EdgeTable::new(mesh), format, weld_tolerance, welded)
}

/// What the edges show: the triangles joined through them, the open,
/// non-manifold and inconsistent ones (at their midpoints), the holes
/// (loops of open edges), and each edge's first triangle and soundness.
struct EdgeScan {
    tri_sets: Sets,
    open: Vec<[f64; 3]>,
    nonmanifold: Vec<[f64; 3]>,
    inconsistent: Vec<[f64; 3]>,
    holes: usize,
    edge_count: usize,
    edge_of_component: Vec<(u32, u32, bool)>,
}

fn scan_edges(mesh: &Mesh, table: &EdgeTable) -> EdgeScan {
    let nt = mesh.triangles.len();
    let mut tri_sets = Sets::new(nt);
    let mut boundary = Sets::new(mesh.vertices.len());
    let mut on_boundary = vec![false; mesh.vertices.len()];
    let (mut open, mut nonmanifold, mut inconsistent) = (vec![], vec![], vec![]);
    let mut edge_count = 0usize;
    let mut edge_of_component: Vec<(u32, u32, bool)> = vec![];
    for e in table.edges() {
        edge_count += 1;
        for u in &e.uses[1..] {
            tri_sets.join(e.uses[0].triangle, u.triangle);
        }
        match e.uses.len() {
            1 => {
                open.push(midpoint(mesh, e.lo, e.hi));
                boundary.join(e.lo, e.hi);
                on_boundary[e.lo as usize] = true;
                on_boundary[e.hi as usize] = true;
            }
            2 if !e.is_manifold() => inconsistent.push(midpoint(mesh, e.lo, e.hi)),
            2 => {}
            _ => nonmanifold.push(midpoint(mesh, e.lo, e.hi)),
        }
        edge_of_component.push((
            e.uses[0].triangle,
            e.lo,
            e.uses.len() == 2 && e.is_manifold(),
        ));
    }
    let holes = (0..mesh.vertices.len() as u32)
        .filter(|&v| on_boundary[v as usize] && boundary.find(v) == v)
        .count();
    EdgeScan {
        tri_sets,
        open,
        nonmanifold,
        inconsistent,
        holes,
        edge_count,
        edge_of_component,
    }
}

/// The pieces: triangles joined through shared edges, numbered in order
/// of their first triangle, each with its Euler characteristic, whether it
/// is closed, its genus and volume.
fn pieces(
    mesh: &Mesh,
    tri_sets: &mut Sets,
    edge_of_component: &[(u32, u32, bool)],
) -> (usize, Vec<Component>) {
    let nt = mesh.triangles.len();
    let mut index_of_root = vec![usize::MAX; nt];
    let mut nc = 0;
    let comp_of: Vec<usize> = (0..nt as u32)
        .map(|t| {
            let r = tri_sets.find(t) as usize;
            if index_of_root[r] == usize::MAX {
                index_of_root[r] = nc;
                nc += 1;
            }
            index_of_root[r]
        })
        .collect();
    let mut f = vec![0usize; nc];
    let mut e_count = vec![0usize; nc];
    let mut v_count = vec![0usize; nc];
    let mut bad = vec![false; nc];
    let mut vertex_seen = vec![false; mesh.vertices.len()];
    for (t, tri) in mesh.triangles.iter().enumerate() {
        f[comp_of[t]] += 1;
        for &v in tri {
            // A vertex belongs to one piece: pieces share no edge, and a
            // vertex they share is counted with the first (and is non-manifold).
            if !vertex_seen[v as usize] {
                vertex_seen[v as usize] = true;
                v_count[comp_of[t]] += 1;
            }
        }
    }
    for &(t, _, ok) in edge_of_component {
        let c = comp_of[t as usize];
        e_count[c] += 1;
        if !ok {
            bad[c] = true;
        }
    }
    let piece_volume = volume::volumes_by_label(mesh, &comp_of, nc);
    let component_list: Vec<Component> = (0..nc)
        .map(|c| {
            let chi = v_count[c] as i64 - e_count[c] as i64 + f[c] as i64;
            let closed = !bad[c];
            let vol = piece_volume[c];
            Component {
                triangles: f[c],
                euler_characteristic: chi,
                closed,
                genus: closed.then_some((2 - chi) / 2),
                volume_litres: closed.then_some(vol * 1e-6),
            }
        })
        .collect();
    (nc, component_list)
}

fn inspect_with(
    mesh: &Mesh,
    table: &EdgeTable,
    format: StlFormat,
    weld_tolerance: f64,
    welded: usize,
) -> Inspection {
    let nt = mesh.triangles.len();
    let EdgeScan {
        mut tri_sets,
        open,
        nonmanifold,
        inconsistent,
        holes,
        edge_count,
        edge_of_component,
    } = scan_edges(mesh, table);
    let degenerate: Vec<u32> = (0..nt as u32)
        .filter(|&t| topology::is_degenerate(mesh, &mesh.triangles[t as usize]))
        .collect();
    let duplicates = topology::duplicate_triangles(mesh);
    let nm_vertices = non_manifold_vertices(mesh);

    let (nc, component_list) = pieces(mesh, &mut tri_sets, &edge_of_component);

    let measures = volume::measure(mesh);
    let watertight = nt > 0
        && open.is_empty()
        && nonmanifold.is_empty()
        && inconsistent.is_empty()
        && degenerate.is_empty()
        && duplicates.is_empty();
    let inside_out = watertight && measures.volume < 0.0;
    let used_vertices = {
        let mut u = vec![false; mesh.vertices.len()];
        for t in &mesh.triangles {
            for &v in t {
                u[v as usize] = true;
            }
        }
        u.iter().filter(|&&x| x).count()
    };
    let (lo, hi) = mesh.bounding_box().unwrap_or(([0.0; 3], [0.0; 3]));

    let mut findings = vec![];
    let mut add = |kind, count: usize, meaning, examples: Vec<[f64; 3]>| {
        if count > 0 {
            findings.push(Finding {
                kind,
                count,
                meaning,
                examples: examples.into_iter().take(EXAMPLES).collect(),
            });
        }
    };
    add(
        "open_edges",
        open.len(),
        "the surface has holes: it encloses no volume, and a toolpath can fall through the gap; close the holes in the model, or weld with a larger --weld if they are only cracks",
        open,
    );
    add(
        "non_manifold_edges",
        nonmanifold.len(),
        "edges shared by more than two triangles: the surface folds or touches itself, so slices and toolpaths are ambiguous there",
        nonmanifold,
    );
    add(
        "non_manifold_vertices",
        nm_vertices.len(),
        "separate sheets of surface meet at a single point: slices are ambiguous there",
        nm_vertices
            .iter()
            .map(|&v| mesh.vertices[v as usize])
            .collect(),
    );
    add(
        "inconsistent_edges",
        inconsistent.len(),
        "neighbouring triangles face opposite ways: inside and outside are mixed up there and the volume is wrong; re-orient the normals",
        inconsistent,
    );
    add(
        "degenerate_triangles",
        degenerate.len(),
        "triangles with no area: they cut nothing, but show a poor export and can upset other programs",
        degenerate.iter().map(|&t| centroid(mesh, t)).collect(),
    );
    add(
        "duplicate_triangles",
        duplicates.len(),
        "the same triangle twice: the volume counts it twice and the surface is not a single skin",
        duplicates.iter().map(|&t| centroid(mesh, t)).collect(),
    );
    add(
        "inside_out",
        usize::from(inside_out),
        "every triangle faces inward: the volume comes out negative and a cutter would take the outside for the inside; flip all normals",
        vec![],
    );
    add(
        "components",
        if nc > 1 { nc } else { 0 },
        "more than one separate piece: check each is meant to be there (a stray shell becomes extra cutting)",
        vec![],
    );
    if nt == 0 {
        add("no_triangles", 1, "the file holds no triangles", vec![]);
    }

    Inspection {
        format,
        triangles: nt,
        vertices: used_vertices,
        weld_tolerance_mm: weld_tolerance,
        welded_vertices: welded,
        open_edges: findings
            .iter()
            .find(|f| f.kind == "open_edges")
            .map_or(0, |f| f.count),
        holes,
        non_manifold_edges: findings
            .iter()
            .find(|f| f.kind == "non_manifold_edges")
            .map_or(0, |f| f.count),
        non_manifold_vertices: nm_vertices.len(),
        inconsistent_edges: findings
            .iter()
            .find(|f| f.kind == "inconsistent_edges")
            .map_or(0, |f| f.count),
        degenerate_triangles: degenerate.len(),
        duplicate_triangles: duplicates.len(),
        components: nc,
        component_list,
        euler_characteristic: used_vertices as i64 - edge_count as i64 + nt as i64,
        watertight,
        inside_out,
        volume_litres: watertight.then_some(measures.volume * 1e-6),
        signed_sum_litres: measures.volume * 1e-6,
        bbox_mm: Bounds { min: lo, max: hi },
        surface_area_m2: measures.area * 1e-6,
        findings,
    }
}

impl Inspection {
    /// The report for the terminal.
    pub fn text(&self, file: &str) -> String {
        use std::fmt::Write as _;
        let mut s = String::new();
        let fmt = match self.format {
            StlFormat::Binary => "binary",
            StlFormat::Ascii => "ASCII",
        };
        let _ = writeln!(s, "{file} ({fmt} STL, taken as millimetres)");
        let _ = writeln!(s, "  triangles    {}", self.triangles);
        let _ = writeln!(
            s,
            "  vertices     {} after welding ({} merged within {:.4} mm)",
            self.vertices, self.welded_vertices, self.weld_tolerance_mm
        );
        let (lo, hi) = (self.bbox_mm.min, self.bbox_mm.max);
        let _ = writeln!(
            s,
            "  size         {:.1} × {:.1} × {:.1} mm (from {:.1}, {:.1}, {:.1} to {:.1}, {:.1}, {:.1})",
            hi[0] - lo[0],
            hi[1] - lo[1],
            hi[2] - lo[2],
            lo[0],
            lo[1],
            lo[2],
            hi[0],
            hi[1],
            hi[2]
        );
        let _ = writeln!(s, "  surface area {:.4} m²", self.surface_area_m2);
        let _ = writeln!(
            s,
            "  pieces       {}; Euler characteristic {}",
            self.components, self.euler_characteristic
        );
        for (i, c) in self.component_list.iter().enumerate().take(10) {
            let what = match (c.closed, c.genus) {
                (true, Some(0)) => "closed, a sphere-like solid".to_string(),
                (true, Some(g)) => format!(
                    "closed, genus {g} ({g} through-hole{})",
                    if g == 1 { "" } else { "s" }
                ),
                _ => "not closed".to_string(),
            };
            let _ = writeln!(
                s,
                "    piece {}: {} triangles, χ = {}, {what}",
                i + 1,
                c.triangles,
                c.euler_characteristic
            );
        }
        match self.volume_litres {
            Some(v) if !self.inside_out => {
                let _ = writeln!(s, "  volume       {v:.3} L (closed; divergence theorem)");
            }
            _ => {
                let _ = writeln!(
                    s,
                    "  volume       none: the mesh is not a closed outward solid (the divergence sum is {:.3} L, which is not a volume)",
                    self.signed_sum_litres
                );
            }
        }
        if self.findings.is_empty() {
            let _ = writeln!(s, "  verdict      a clean closed solid");
        } else {
            let _ = writeln!(s, "  findings");
            for f in &self.findings {
                let _ = writeln!(
                    s,
                    "    {} × {}: {}",
                    f.count,
                    f.kind.replace('_', " "),
                    f.meaning
                );
                if f.kind == "open_edges" {
                    let _ = writeln!(
                        s,
                        "      they form {} hole{}",
                        self.holes,
                        if self.holes == 1 { "" } else { "s" }
                    );
                }
                for p in &f.examples {
                    let _ = writeln!(s, "      at ({:.2}, {:.2}, {:.2}) mm", p[0], p[1], p[2]);
                }
            }
        }
        s
    }

    /// The report as pretty JSON.
    pub fn to_json(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).expect("an inspection always serialises");
        s.push('\n');
        s
    }
}
