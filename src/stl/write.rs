//! STL writers, generic over `Write` (see the module above for the layout).

use std::io::{self, Write};

use rayon::prelude::*;

use crate::model::mesh::{Mesh, cross, norm, sub};

fn facet_normal(c: &[[f64; 3]; 3]) -> [f32; 3] {
    let n = cross(sub(c[1], c[0]), sub(c[2], c[0]));
    let len = norm(n);
    if len > 0.0 {
        [
            (n[0] / len) as f32,
            (n[1] / len) as f32,
            (n[2] / len) as f32,
        ]
    } else {
        [0.0; 3]
    }
}

/// Writes `mesh` as binary STL with `header` (cut or padded to 80 bytes).
pub fn write_binary(mut out: impl Write, mesh: &Mesh, header: &str) -> io::Result<()> {
    let mut head = [b' '; 80];
    let bytes = header.as_bytes();
    let n = bytes.len().min(80);
    head[..n].copy_from_slice(&bytes[..n]);
    // A binary header must not start with "solid": readers take that as ASCII.
    if head.starts_with(b"solid") {
        head[0] = b'_';
    }
    let count = u32::try_from(mesh.triangles.len()).map_err(|_| {
        io::Error::new(
            io::ErrorKind::InvalidInput,
            "more triangles than binary STL can count",
        )
    })?;
    let mut buf = vec![0u8; 84 + 50 * mesh.triangles.len()];
    buf[..80].copy_from_slice(&head);
    buf[80..84].copy_from_slice(&count.to_le_bytes());
    // Each facet fills its own 50 bytes, so the facets can be filled in parallel.
    buf[84..]
        .par_chunks_mut(50)
        .zip(mesh.triangles.par_iter())
        .for_each(|(facet, t)| {
            let c = mesh.corners(t);
            let n = facet_normal(&c);
            let values = [n[0], n[1], n[2]]
                .into_iter()
                .chain(c.iter().flat_map(|p| p.iter().map(|&v| v as f32)));
            for (k, v) in values.enumerate() {
                facet[4 * k..4 * k + 4].copy_from_slice(&v.to_le_bytes());
            }
        });
    out.write_all(&buf)
}

/// Writes `mesh` as ASCII STL named `name`.
pub fn write_ascii(mut out: impl Write, mesh: &Mesh, name: &str) -> io::Result<()> {
    let mut s = String::with_capacity(260 * mesh.triangles.len() + 64);
    use std::fmt::Write as _;
    let _ = writeln!(s, "solid {name}");
    for t in &mesh.triangles {
        let c = mesh.corners(t);
        let n = facet_normal(&c);
        let _ = writeln!(s, "  facet normal {:e} {:e} {:e}", n[0], n[1], n[2]);
        s.push_str("    outer loop\n");
        for p in &c {
            let _ = writeln!(
                s,
                "      vertex {:e} {:e} {:e}",
                p[0] as f32, p[1] as f32, p[2] as f32
            );
        }
        s.push_str("    endloop\n  endfacet\n");
    }
    let _ = writeln!(s, "endsolid {name}");
    out.write_all(s.as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tetra() -> Mesh {
        Mesh {
            vertices: vec![
                [0.0, 0.0, 0.0],
                [10.0, 0.0, 0.0],
                [0.0, 10.0, 0.0],
                [0.0, 0.0, 10.0],
            ],
            triangles: vec![[0, 2, 1], [0, 1, 3], [1, 2, 3], [0, 3, 2]],
        }
    }

    #[test]
    fn binary_layout_matches_the_format() {
        // 84 + 50·n bytes (binary STL layout, see the module comment).
        let mut buf = vec![];
        write_binary(&mut buf, &tetra(), "solid test").unwrap();
        assert_eq!(buf.len(), 84 + 50 * 4);
        assert_eq!(u32::from_le_bytes(buf[80..84].try_into().unwrap()), 4);
        assert_ne!(&buf[..5], b"solid");
        // An independent reader (stl_io) gets the same triangles back.
        let read = stl_io::read_stl(&mut std::io::Cursor::new(&buf)).unwrap();
        assert_eq!(read.faces.len(), 4);
        assert_eq!(read.vertices.len(), 4);
    }

    #[test]
    fn ascii_reads_back() {
        let mut buf = vec![];
        write_ascii(&mut buf, &tetra(), "t").unwrap();
        let read = stl_io::read_stl(&mut std::io::Cursor::new(&buf)).unwrap();
        assert_eq!(read.faces.len(), 4);
        let text = String::from_utf8(buf).unwrap();
        assert!(text.starts_with("solid t\n") && text.ends_with("endsolid t\n"));
    }
}
