//! blanksmith: from a surfboard described in the trade's measurements to a
//! certified watertight mesh, STL, and (in later stages) router programs and
//! full-size templates.
//!
//! The pipeline, one module a stage:
//!
//! - [`units`]: lengths as shops write them, in and out.
//! - [`description`]: the YAML board description, checked and resolved.
//! - [`board`] and [`section`]: the continuous shape and its cross-sections.
//! - [`curve`]: shape-preserving curves through stations.
//! - [`mesher`]: the watertight triangle mesh.
//! - [`topology`] and [`volume`]: what the mesh is and holds.
//! - [`integrals`] and [`quadrature`]: integrals of the continuous shape.
//! - [`certificate`]: the two volumes and the error estimate, compared.
//! - [`stl`]: STL output.
//! - [`report`]: measurement tables and the JSON report.
//! - [`input`]: input files read with a bound.
//! - [`output`]: output sets written whole or not at all.
//! - [`jobs`]: the commands' work, without the command line.
//! - [`demo`]: the built-in demo board.

pub mod board;
pub mod cam;
pub mod certificate;
pub mod compare;
pub mod contours;
pub mod curve;
pub mod demo;
pub mod description;
pub mod gcode;
pub mod input;
pub mod inspect;
pub mod integrals;
pub mod jobs;
pub mod mesh;
pub mod mesher;
pub mod nearest;
pub mod output;
pub mod overlay;
pub mod page;
pub mod quadrature;
pub mod report;
pub mod resize;
pub mod section;
pub mod sim;
pub mod slice;
pub mod stl;
pub mod svg;
pub mod template;
pub mod tiling;
pub mod topology;
pub mod units;
pub mod volume;
pub mod weld;
