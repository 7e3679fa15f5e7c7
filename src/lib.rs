//! blanksmith: from a surfboard described in the trade's measurements to a
//! certified watertight mesh, STL, router programs for both sides of the
//! blank, their simulation, full-size templates and a report page.
//!
//! Foundations any stage may use:
//!
//! - [`units`]: lengths as shops write them, in and out.
//! - [`input`], [`output`]: input files read with a bound; output sets
//!   written whole or not at all.
//! - [`svg`]: a small true-scale SVG writer.
//! - [`model`]: the types that cross stages (board, contour, curve, mesh, machine,
//!   job, toolpath, machine limits).
//! - [`geom`]: kernels more than one stage uses (quadrature, sections,
//!   closest points, drop-cutter, grid fields, the stock height map).
//!
//! The stages, in pipeline order; each uses the foundations and earlier
//! stages only (`tests/layout.rs` holds the code to this order):
//!
//! 1. [`description`]: the YAML board description, checked and resolved.
//! 2. [`meshing`]: the watertight mesh, welding, edge topology.
//! 3. [`volume`]: mesh volume, shape integrals, the certificate, the report.
//! 4. [`stl`]: STL in and out.
//! 5. [`inspect`]: meshes from elsewhere checked, and compared with a design.
//! 6. [`slice`](mod@slice): sections and waterlines.
//! 7. [`resize`]: boards scaled to a size, a volume or other water; overlays.
//! 8. [`template`]: full-size templates on paper.
//! 9. [`profiles`]: machine and job profiles read.
//! 10. [`toolpath`]: placement in the stock and each setup's toolpaths.
//! 11. [`gcode`]: G-code read and written; the programs of a cut.
//! 12. [`verify`]: simulation of programs, deviation pictures.
//! 13. [`page`]: the report pages.
//! 14. [`commands`]: the commands' work, one file a command (reachable
//!     without the command line), the flags as read (`cli`) and a command
//!     run and rendered once (`run`).

pub mod units;
pub mod input;
pub mod output;
pub mod svg;
pub mod model;
pub mod geom;
pub mod description;
pub mod meshing;
pub mod volume;
pub mod stl;
pub mod inspect;
pub mod slice;
pub mod resize;
pub mod template;
pub mod profiles;
pub mod toolpath;
pub mod gcode;
pub mod verify;
pub mod page;
pub mod commands;
