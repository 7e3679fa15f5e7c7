//! A template as DXF, for shops that cut their templates from plywood or
//! hardboard on a CNC router or a laser: the same drawing as the SVG, at
//! true scale in millimetres, y up as drawn. Written with the `dxf` crate.
//!
//! Layers: `CUT` (the template's edge, closed where the drawing closes
//! it), `GUIDE` (stringer, baseline, station ticks, marks) and `TEXT`
//! (labels). The file is the same bytes on every run: the header's dates
//! are pinned to the format's epoch and its identifiers to the nil id.

use super::drawing::{Drawing, Item, Role};
use chrono::{Local, TimeZone, Utc};
use dxf::LwPolylineVertex;
use dxf::entities::{Entity, EntityType, LwPolyline, Text};
use dxf::enums::{AcadVersion, DrawingUnits, Units};
use dxf::tables::Layer;
use dxf::{Color, Point};

/// The layer of the template's edge.
pub const CUT: &str = "CUT";
/// The layer of guides: stringer, baseline, ticks, marks.
pub const GUIDE: &str = "GUIDE";
/// The layer of labels.
pub const TEXT: &str = "TEXT";

/// A drawing as the bytes of a DXF file (AutoCAD 2000 text format, mm).
pub fn to_dxf(d: &Drawing) -> Result<Vec<u8>, String> {
    let mut out = dxf::Drawing::new();
    out.header.version = AcadVersion::R2000;
    out.header.default_drawing_units = Units::Millimeters;
    out.header.drawing_units = DrawingUnits::Metric;
    pin(&mut out.header);
    for (name, colour) in [(CUT, 7), (GUIDE, 8), (TEXT, 7)] {
        out.add_layer(Layer {
            name: name.into(),
            color: Color::from_index(colour),
            ..Default::default()
        });
    }
    title(&mut out, d);
    for item in &d.items {
        match item {
            Item::Line {
                points,
                closed,
                role,
            } => {
                let mut line = LwPolyline {
                    vertices: points
                        .iter()
                        .map(|p| LwPolylineVertex {
                            x: p[0],
                            y: p[1],
                            ..Default::default()
                        })
                        .collect(),
                    ..Default::default()
                };
                line.set_is_closed(*closed);
                let layer = match role {
                    Role::Cut => CUT,
                    Role::Guide => GUIDE,
                };
                add(&mut out, EntityType::LwPolyline(line), layer);
            }
            Item::Text { at, size, text } => label(&mut out, *at, *size, text),
        }
    }
    let mut bytes = vec![];
    out.save(&mut bytes).map_err(|e| format!("DXF: {e}"))?;
    Ok(bytes)
}

/// The title where the SVG puts it: along the top border.
fn title(out: &mut dxf::Drawing, d: &Drawing) {
    label(out, [super::drawing::BORDER, d.height - 8.0], 4.0, &d.title);
}

fn label(out: &mut dxf::Drawing, at: [f64; 2], size: f64, text: &str) {
    let t = Text {
        location: Point::new(at[0], at[1], 0.0),
        text_height: size,
        value: text.into(),
        ..Default::default()
    };
    add(out, EntityType::Text(t), TEXT);
}

fn add(out: &mut dxf::Drawing, specific: EntityType, layer: &str) {
    let mut e = Entity::new(specific);
    e.common.layer = layer.into();
    out.add_entity(e);
}

/// Dates and identifiers that would change from run to run, pinned: the
/// dates to 1 January 1900 (the format's day count starts there) and the
/// identifiers to the nil id.
fn pin(h: &mut dxf::Header) {
    if let Some(t) = Local.with_ymd_and_hms(1900, 1, 1, 0, 0, 0).earliest() {
        h.creation_date = t;
        h.update_date = t;
    }
    if let Some(t) = Utc.with_ymd_and_hms(1900, 1, 1, 0, 0, 0).earliest() {
        h.creation_date_universal = t;
        h.update_date_universal = t;
    }
    h.fingerprint_guid = uuid::Uuid::nil();
    h.version_guid = uuid::Uuid::nil();
}
