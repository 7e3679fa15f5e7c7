//! The triangle mesh that flows between stages: shared vertices, triangles
//! as vertex indices, counter-clockwise seen from outside.

/// An indexed triangle mesh in millimetres.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Mesh {
    /// Vertex positions (x, y, z) in mm.
    pub vertices: Vec<[f64; 3]>,
    /// Triangles as indices into `vertices`, outward by the right-hand rule.
    pub triangles: Vec<[u32; 3]>,
}

impl Mesh {
    /// The three corners of triangle `t`.
    pub fn corners(&self, t: &[u32; 3]) -> [[f64; 3]; 3] {
        [
            self.vertices[t[0] as usize],
            self.vertices[t[1] as usize],
            self.vertices[t[2] as usize],
        ]
    }

    /// Axis-aligned bounding box (min, max); `None` for an empty mesh.
    pub fn bounding_box(&self) -> Option<([f64; 3], [f64; 3])> {
        let first = *self.vertices.first()?;
        Some(self.vertices.iter().fold((first, first), |(lo, hi), v| {
            (
                [lo[0].min(v[0]), lo[1].min(v[1]), lo[2].min(v[2])],
                [hi[0].max(v[0]), hi[1].max(v[1]), hi[2].max(v[2])],
            )
        }))
    }

    /// A closed, outward box with one corner at `origin` and sides `size`.
    pub fn cuboid(origin: [f64; 3], size: [f64; 3]) -> Mesh {
        let vertices = (0..8)
            .map(|i| {
                [
                    origin[0] + size[0] * (i & 1) as f64,
                    origin[1] + size[1] * ((i >> 1) & 1) as f64,
                    origin[2] + size[2] * ((i >> 2) & 1) as f64,
                ]
            })
            .collect();
        let quads = [
            [0, 2, 3, 1],
            [4, 5, 7, 6],
            [0, 1, 5, 4],
            [2, 6, 7, 3],
            [0, 4, 6, 2],
            [1, 3, 7, 5],
        ];
        let triangles = quads
            .iter()
            .flat_map(|q| [[q[0], q[1], q[2]], [q[0], q[2], q[3]]])
            .collect();
        Mesh {
            vertices,
            triangles,
        }
    }

    /// The same mesh moved by `d`.
    pub fn translated(&self, d: [f64; 3]) -> Mesh {
        Mesh {
            vertices: self
                .vertices
                .iter()
                .map(|v| [v[0] + d[0], v[1] + d[1], v[2] + d[2]])
                .collect(),
            triangles: self.triangles.clone(),
        }
    }
}

/// `a - b`.
pub fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// `a × b`.
pub fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// `a · b`.
pub fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Euclidean length.
pub fn norm(a: [f64; 3]) -> f64 {
    dot(a, a).sqrt()
}
