//! The volume certificate: the mesh's volume by the divergence theorem,
//! checked against the integral of the continuous shape, with an error
//! estimate of the mesh value from a second, coarser mesh.
//!
//! A chord of length h sags κh²/8 below a curve of curvature κ, so the
//! volume a mesh misses goes as h². The error estimate meshes the same grid
//! again with every other station and ring point dropped (h → 2h, about
//! four times the error): V(2h) − V(h) ≈ 3·(V(h) − V*), so the error of the
//! fine mesh is about |V(2h) − V(h)| / 3 (Richardson extrapolation;
//! L. F. Richardson, Phil. Trans. R. Soc. A 210, 1911).

use crate::meshing::mesher::{self, MeshError};
use crate::meshing::topology::{self, Topology};
use crate::model::board::Board;
use crate::model::mesh::Mesh;
use crate::volume::integrals;
use crate::volume::measure::{self as volume, Measures};

/// A certified mesh of a board and what was measured of it.
#[derive(Debug, Clone)]
pub struct Certified {
    /// The mesh at the requested tolerance.
    pub mesh: Mesh,
    /// Its edge topology.
    pub topology: Topology,
    /// Its mass properties (mm³, mm², mm).
    pub measures: Measures,
    /// The certificate.
    pub certificate: Certificate,
    /// The tolerance used, mm.
    pub tolerance: f64,
    /// The tolerance asked for, when the mesh had to be made finer to
    /// certify.
    pub refined_from: Option<f64>,
    /// The continuous shape's volume along the board, for (b) and the report.
    pub integrals: integrals::AreaIntegrals,
}

/// Three volumes and whether they agree.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Certificate {
    /// (a) Divergence theorem on the mesh, litres.
    pub mesh_litres: f64,
    /// (b) Integral of cross-section areas of the continuous shape, litres.
    pub surface_litres: f64,
    /// Quadrature error estimate of (b), litres.
    pub surface_error_litres: f64,
    /// Volume of the coarsened mesh (every other station and ring point), litres.
    pub coarse_mesh_litres: f64,
    /// (c) Error estimate of (a): |V(2h) − V(h)| / 3, litres.
    pub error_estimate_litres: f64,
    /// |(a) − (b)|, litres.
    pub difference_litres: f64,
    /// What (c) explains: 3·(c) + the quadrature error + a rounding floor.
    pub allowed_litres: f64,
    /// Whether the difference is within what the estimate explains.
    pub agrees: bool,
}

/// Meshes `board` at `tolerance`, checks its topology, and certifies its
/// volume. Where the two volumes disagree, the mesh is made again at a
/// quarter of the tolerance (twice at most, never below the finest
/// accepted): the error estimate assumes the mesh error falls with the
/// square of the spacing, which a feature the coarse mesh straddles (a
/// concave ending close to the rail) can defeat; a finer mesh settles it.
/// `tolerance` in the result is the one the certificate holds at.
pub fn certify(board: &Board, tolerance: f64) -> Result<Certified, MeshError> {
    let mut c = certify_at(board, tolerance)?;
    let mut finer = tolerance;
    for _ in 0..2 {
        finer *= 0.25;
        if c.certificate.agrees || finer < mesher::MIN_TOLERANCE {
            break;
        }
        match certify_at(board, finer) {
            Ok(f) => {
                c = Certified {
                    refined_from: Some(tolerance),
                    ..f
                }
            }
            Err(MeshError::TooLarge { .. }) => break,
            Err(e) => return Err(e),
        }
    }
    Ok(c)
}

fn certify_at(board: &Board, tolerance: f64) -> Result<Certified, MeshError> {
    let sampling = mesher::sample(board, tolerance)?;
    let ((mesh, coarse_volume), surface) = rayon::join(
        || {
            rayon::join(
                || mesher::build(board, &sampling),
                || volume::volume(&mesher::build(board, &sampling.coarsened(board))),
            )
        },
        || integrals::area_integrals(board),
    );
    let topology = topology::analyse(&mesh);
    let measures = volume::measure(&mesh);
    let mesh_litres = measures.volume * 1e-6;
    let coarse_mesh_litres = coarse_volume * 1e-6;
    let surface_litres = surface.volume() * 1e-6;
    let error_estimate_litres = (coarse_mesh_litres - mesh_litres).abs() / 3.0;
    let difference_litres = (mesh_litres - surface_litres).abs();
    let surface_error_litres = surface.error() * 1e-6;
    let allowed_litres =
        3.0 * error_estimate_litres + surface_error_litres + 1e-9 * surface_litres.abs() + 1e-9;
    Ok(Certified {
        mesh,
        topology,
        measures,
        certificate: Certificate {
            mesh_litres,
            surface_litres,
            surface_error_litres,
            coarse_mesh_litres,
            error_estimate_litres,
            difference_litres,
            allowed_litres,
            agrees: difference_litres <= allowed_litres,
        },
        tolerance,
        refined_from: None,
        integrals: surface,
    })
}
