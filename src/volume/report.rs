//! What a shop reads about a board: the measurement table at stations, the
//! key figures in millimetres and feet-inches, and the volume certificate,
//! as text and as JSON.

use std::fmt::Write as _;

use serde::Serialize;

use crate::model::board::Board;
use crate::units::{self, Both, MM_PER_FOOT, MM_PER_INCH};
use crate::volume::certificate::{Certificate, Certified};
use crate::volume::integrals;
use crate::volume::tail_pull::{self, TailPull, Water};

/// One row of the measurement table.
#[derive(Debug, Clone, Serialize)]
pub struct StationRow {
    /// Distance from the nose, mm.
    pub from_nose_mm: f64,
    /// Full width, mm.
    pub width_mm: f64,
    /// Thickness at the stringer, mm.
    pub thickness_mm: f64,
    /// Bottom height at the stringer above the flat (rocker), mm.
    pub bottom_mm: f64,
    /// Deck height at the stringer above the flat, mm.
    pub deck_mm: f64,
    /// Rail apex height above the flat, mm.
    pub apex_mm: f64,
    /// Rail thickness 1 in (the description's gauge) in from the edge, mm.
    pub rail_mm: f64,
    /// Height of the rail's outermost point above the bottom edge, mm.
    pub apex_above_edge_mm: f64,
}

/// Litres in one piece of the length.
#[derive(Debug, Clone, Serialize)]
pub struct Piece {
    /// Start, mm from the nose.
    pub from_mm: f64,
    /// End, mm from the nose.
    pub to_mm: f64,
    /// Litres in the piece (continuous shape).
    pub litres: f64,
}

/// Axis-aligned bounds, mm.
#[derive(Debug, Clone, Serialize)]
pub struct Bounds {
    /// Smallest x, y, z.
    pub min: [f64; 3],
    /// Largest x, y, z.
    pub max: [f64; 3],
}

/// The JSON report of a certified board.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    /// Board name.
    pub name: String,
    /// Flat length, mm.
    pub length_mm: f64,
    /// Width at the wide point, mm.
    pub width_mm: f64,
    /// Wide point, mm from the nose.
    pub wide_point_from_nose_mm: f64,
    /// Greatest thickness, mm.
    pub thickness_mm: f64,
    /// Distance from the tips where nose and tail widths are quoted, mm.
    pub tip_station_mm: f64,
    /// Width at `tip_station_mm` from the nose, mm.
    pub nose_width_mm: f64,
    /// Width at `tip_station_mm` from the tail, mm.
    pub tail_width_mm: f64,
    /// Nose rocker, mm.
    pub nose_rocker_mm: f64,
    /// Tail rocker, mm.
    pub tail_rocker_mm: f64,
    /// Angle of the bottom at the tail: the tangent at the tip, degrees.
    pub tail_exit_angle_deg: f64,
    /// Angle of the chord of the rocker over the last `tip_station_mm`
    /// (12 in), degrees.
    pub tail_exit_chord_deg: f64,
    /// The tail's pull: a rough momentum estimate of the force from the
    /// water the tail rocker turns (see [`tail_pull`]).
    pub tail_pull: Option<TailPull>,
    /// Tail shape.
    pub tail: String,
    /// (a) Volume by the divergence theorem on the mesh, litres.
    pub volume_litres: f64,
    /// (b) Volume by integrating cross-sections of the continuous shape, litres.
    pub volume_litres_surface: f64,
    /// (c) Error estimate of (a), litres.
    pub volume_error_estimate_litres: f64,
    /// Whether (a) and (b) agree within what (c) explains, and the mesh is watertight.
    pub certified: bool,
    /// The certificate in full.
    pub certificate: Certificate,
    /// Chord tolerance the mesh was made at, mm.
    pub tolerance_mm: f64,
    /// The tolerance asked for, when the mesh was made finer to certify.
    #[serde(skip)]
    pub refined_from_mm: Option<f64>,
    /// Triangles in the mesh.
    pub triangles: usize,
    /// Vertices in the mesh.
    pub vertices: usize,
    /// Every edge shared by exactly two consistently oriented triangles, none degenerate.
    pub watertight: bool,
    /// V − E + F (2 for a closed board).
    pub euler_characteristic: i64,
    /// Mesh surface area, m².
    pub surface_area_m2: f64,
    /// Plan-view area, m².
    pub planform_area_m2: f64,
    /// Centre of volume, mm from the nose.
    pub centre_of_volume_from_nose_mm: f64,
    /// Bounding box of the mesh, mm.
    pub bbox_mm: Bounds,
    /// Litres in each foot from the nose.
    pub litres_per_foot: Vec<Piece>,
    /// Litres in each 300 mm from the nose.
    pub litres_per_300mm: Vec<Piece>,
    /// The measurement table, every 6 in from the nose.
    pub stations: Vec<StationRow>,
    /// The STL written, if any.
    pub stl: Option<String>,
    /// Whether that STL, read back as written (f32), is a clean closed solid.
    pub stl_clean: Option<bool>,
}

/// Measurements every `step` mm from the nose, at the tail-width station
/// (12 in from the tail, where the trade measures a tail) and at the tail.
pub fn measurements(board: &Board, step: f64) -> Vec<StationRow> {
    let mut xs: Vec<f64> = (0..)
        .map(|i| i as f64 * step)
        .take_while(|&x| x < board.length - 1e-6)
        .collect();
    let t12 = board.length - board.tip_station;
    if !xs.iter().any(|x| (x - t12).abs() < 0.5) {
        xs.push(t12);
    }
    xs.push(board.length);
    xs.sort_by(f64::total_cmp);
    xs.into_iter()
        .map(|x| {
            let st = board.station(x);
            let thickness = board.thickness(x);
            let bottom = st.lower(0.0)[1];
            StationRow {
                from_nose_mm: x,
                width_mm: 2.0 * st.half_width,
                thickness_mm: thickness,
                bottom_mm: bottom,
                deck_mm: bottom + thickness,
                apex_mm: st.apex_height(),
                rail_mm: st.thickness_at(board.rails.gauge),
                apex_above_edge_mm: st.apex_height() - st.lower(st.u_edge())[1],
            }
        })
        .collect()
}

fn pieces(v: Vec<(f64, f64, f64)>) -> Vec<Piece> {
    v.into_iter()
        .map(|(from_mm, to_mm, litres)| Piece {
            from_mm,
            to_mm,
            litres,
        })
        .collect()
}

/// Greatest thickness of the board (sampled finely; stations included).
pub fn max_thickness(board: &Board) -> f64 {
    let n = 2000;
    (0..=n)
        .map(|i| board.thickness(board.length * i as f64 / n as f64))
        .chain(board.foil.stations().map(|(x, _)| board.thickness(x)))
        .fold(0.0, f64::max)
}

impl Report {
    /// Gathers the report of a certified board; `stl` is the path written.
    pub fn new(board: &Board, c: &Certified, stl: Option<String>) -> Report {
        let (lo, hi) = c.mesh.bounding_box().unwrap_or(([0.0; 3], [0.0; 3]));
        let l = board.length;
        let xw = board.outline.wide_point;
        let d = board.tip_station;
        let (tangent, chord) = tail_pull::exit_angles(board);
        let certified = c.certificate.agrees && c.topology.is_watertight();
        Report {
            name: board.name.clone(),
            length_mm: l,
            width_mm: 2.0 * board.half_width(xw),
            wide_point_from_nose_mm: xw,
            thickness_mm: max_thickness(board),
            tip_station_mm: d,
            nose_width_mm: 2.0 * board.half_width(d),
            tail_width_mm: 2.0 * board.half_width(l - d),
            nose_rocker_mm: board.rocker.eval(0.0),
            tail_rocker_mm: board.rocker.eval(l),
            tail_exit_angle_deg: tangent,
            tail_exit_chord_deg: chord,
            tail_pull: tail_pull::estimate(board, &Water::default()).ok(),
            tail: board.outline.tail_shape.name().to_string(),
            volume_litres: c.certificate.mesh_litres,
            volume_litres_surface: c.certificate.surface_litres,
            volume_error_estimate_litres: c.certificate.error_estimate_litres,
            certified,
            certificate: c.certificate,
            tolerance_mm: c.tolerance,
            refined_from_mm: c.refined_from,
            triangles: c.mesh.triangles.len(),
            vertices: c.topology.vertices,
            watertight: c.topology.is_watertight(),
            euler_characteristic: c.topology.euler_characteristic,
            surface_area_m2: c.measures.area * 1e-6,
            planform_area_m2: integrals::planform_area(board) * 1e-6,
            centre_of_volume_from_nose_mm: c.integrals.centre_of_volume(),
            bbox_mm: Bounds { min: lo, max: hi },
            litres_per_foot: pieces(c.integrals.litres_along(l, MM_PER_FOOT)),
            litres_per_300mm: pieces(c.integrals.litres_along(l, 300.0)),
            stations: measurements(board, 6.0 * MM_PER_INCH),
            stl,
            stl_clean: None,
        }
    }

    /// The report as pretty JSON (deterministic: fields in a fixed order).
    pub fn to_json(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).expect("a report always serialises");
        s.push('\n');
        s
    }

    /// The key figures, for the terminal.
    pub fn summary(&self) -> String {
        let mut s = String::new();
        let d = units::tip_station_words(self.tip_station_mm);
        let _ = writeln!(s, "{}", self.name);
        let _ = writeln!(s, "  length       {} (flat)", Both(self.length_mm));
        let _ = writeln!(
            s,
            "  width        {} at {} from the nose",
            Both(self.width_mm),
            Both(self.wide_point_from_nose_mm)
        );
        let _ = writeln!(
            s,
            "  nose / tail  {} / {} ({d} from the tips)",
            Both(self.nose_width_mm),
            Both(self.tail_width_mm)
        );
        let _ = writeln!(s, "  thickness    {}", Both(self.thickness_mm));
        let _ = writeln!(
            s,
            "  rocker       nose {}, tail {}, tail exit {:.1}° at the tip, {:.1}° over the last {d}",
            Both(self.nose_rocker_mm),
            Both(self.tail_rocker_mm),
            self.tail_exit_angle_deg,
            self.tail_exit_chord_deg
        );
        if let Some(p) = &self.tail_pull {
            s.push_str(&p.text(&d));
        }
        let _ = writeln!(s, "  tail         {}", self.tail);
        let _ = writeln!(s, "  volume       {:.2} L", self.volume_litres);
        let _ = writeln!(
            s,
            "  centre of volume {} from the nose",
            Both(self.centre_of_volume_from_nose_mm)
        );
        let _ = writeln!(
            s,
            "  area         surface {:.3} m², planform {:.3} m²",
            self.surface_area_m2, self.planform_area_m2
        );
        let _ = writeln!(
            s,
            "  mesh         {} triangles, {} vertices, {}, Euler characteristic {}, tolerance {} mm{}",
            self.triangles,
            self.vertices,
            if self.watertight {
                "watertight"
            } else {
                "NOT WATERTIGHT"
            },
            self.euler_characteristic,
            self.tolerance_mm,
            self.refined_from_mm.map_or(String::new(), |t| format!(
                " (refined from the {t} mm asked for, where the two volumes first disagreed)"
            ))
        );
        s.push_str(&self.certificate_text());
        s
    }

    /// The volume certificate in words.
    pub fn certificate_text(&self) -> String {
        let c = &self.certificate;
        let mut s = String::new();
        let _ = writeln!(s, "  volume certificate");
        let _ = writeln!(
            s,
            "    (a) divergence theorem on the mesh    {:.4} L",
            c.mesh_litres
        );
        let _ = writeln!(
            s,
            "    (b) integral of the cross-sections    {:.4} L (quadrature error {:.1e} L)",
            c.surface_litres, c.surface_error_litres
        );
        let _ = writeln!(
            s,
            "    (c) error estimate of (a)             {:.4} L (coarsened mesh {:.4} L)",
            c.error_estimate_litres, c.coarse_mesh_litres
        );
        let _ = writeln!(
            s,
            "    |(a) - (b)| = {:.4} L, explained up to {:.4} L",
            c.difference_litres, c.allowed_litres
        );
        if self.certified {
            let _ = writeln!(s, "    certified: the two volumes agree");
        } else {
            let _ = writeln!(s, "    *** NOT CERTIFIED: {} ***", self.failure());
            let _ = writeln!(
                s,
                "    *** do not order or cut foam by this volume; report the board file as a bug ***"
            );
        }
        s
    }

    /// Why the certificate failed (empty when it did not).
    pub fn failure(&self) -> String {
        let mut why = vec![];
        if !self.watertight {
            why.push("the mesh is not watertight".to_string());
        }
        if self.stl_clean == Some(false) {
            why.push("the STL read back as written (f32) is not a clean closed solid; run `blanksmith check` on it".to_string());
        }
        if !self.certificate.agrees {
            why.push(format!(
                "the mesh and the shape integral differ by {:.4} L, more than the {:.4} L the error estimate explains",
                self.certificate.difference_litres, self.certificate.allowed_litres
            ));
        }
        why.join("; ")
    }

    /// The measurement table, in millimetres and inches.
    pub fn table(&self) -> String {
        let mut s = String::new();
        let _ = writeln!(
            s,
            "measurements at stations (heights above the flat the board rests on, at the stringer; the rail 1 in from the edge, its apex above the bottom edge)"
        );
        let _ = writeln!(
            s,
            "  {:>16}  {:>18}  {:>17}  {:>17}  {:>17}  {:>17}  {:>17}",
            "from nose", "width", "thickness", "rail", "apex over edge", "bottom (rocker)", "deck"
        );
        for r in &self.stations {
            let _ = writeln!(
                s,
                "  {:>16}  {:>18}  {:>17}  {:>17}  {:>17}  {:>17}  {:>17}",
                format!(
                    "{:.0} mm {}",
                    r.from_nose_mm,
                    units::feet_inches(r.from_nose_mm)
                ),
                dual(r.width_mm),
                dual(r.thickness_mm),
                dual(r.rail_mm),
                dual(r.apex_above_edge_mm),
                dual(r.bottom_mm),
                dual(r.deck_mm),
            );
        }
        let _ = writeln!(s, "litres per foot from the nose");
        let line: Vec<String> = self
            .litres_per_foot
            .iter()
            .map(|p| format!("{:.2}", p.litres))
            .collect();
        let _ = writeln!(s, "  {} L", line.join(" | "));
        s
    }
}

/// `495.3 19 1/2"`: millimetres and inches in one short cell.
fn dual(mm: f64) -> String {
    format!("{mm:.1} {}", units::inches(mm))
}
