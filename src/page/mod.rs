//! The report page: one self-contained `index.html` per board (nothing
//! fetched, no external fonts: it opens from disk), with a 3D view drawn by
//! its one script ([`scene`]), and one page listing every board of a run.

pub mod scene;
pub mod views;

use std::fmt::Write as _;

use crate::gcode::program::{self, CutPlan};
use crate::model::board::{Board, RailProfile};
use crate::units::Both;
use crate::verify::report::Verification;
use crate::volume::report::Report;

const STYLE: &str = "body{font-family:sans-serif;margin:2em;max-width:1200px;color:#222}\
h1{margin-bottom:0}h2{border-bottom:1px solid #ccc;margin-top:2em}\
table{border-collapse:collapse}td,th{border:1px solid #ccc;padding:3px 8px;text-align:right}\
th{background:#f4f4f4}td.l,th.l{text-align:left}.fig{max-width:100%;height:auto;border:1px solid #ddd;margin:4px 0}\
.ok{color:#060}.bad{color:#a00;font-weight:bold}pre{background:#f8f8f8;padding:1em;white-space:pre-wrap}\
.caution{background:#fff3cd;border:1px solid #e0c060;padding:0.5em 1em}";

fn esc(t: &str) -> String {
    t.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// An SVG file's text made fit to inline: its XML prolog dropped, scaled
/// to the page width and no taller than most of the window (a tall
/// drawing, the stacked sections, stays whole in view).
fn inline_svg(svg: &str) -> String {
    let body = match svg.find("<svg") {
        Some(i) => &svg[i..],
        None => svg,
    };
    body.replacen(
        "<svg ",
        "<svg class=\"fig\" style=\"width:100%;height:auto;max-height:80vh\" ",
        1,
    )
}

/// Litres per foot as a small bar chart.
fn litres_chart(r: &Report) -> String {
    let n = r.litres_per_foot.len().max(1);
    let top = r
        .litres_per_foot
        .iter()
        .map(|p| p.litres)
        .fold(0.0, f64::max)
        .max(1e-9);
    let (w, h) = (60.0 * n as f64 + 40.0, 180.0);
    let mut s = format!(
        "<svg class=\"fig\" id=\"litres-chart\" xmlns=\"http://www.w3.org/2000/svg\" width=\"{w:.0}\" height=\"{h:.0}\" viewBox=\"0 0 {w:.0} {h:.0}\">"
    );
    for (k, p) in r.litres_per_foot.iter().enumerate() {
        let bh = 120.0 * p.litres / top;
        let x = 30.0 + 60.0 * k as f64;
        let _ = write!(
            s,
            "<rect x=\"{x:.1}\" y=\"{:.1}\" width=\"44\" height=\"{bh:.1}\" fill=\"#4a78b0\"/><text x=\"{:.1}\" y=\"{:.1}\" font-size=\"11\" text-anchor=\"middle\">{:.2} L</text><text x=\"{:.1}\" y=\"170\" font-size=\"10\" text-anchor=\"middle\">{}–{} ft</text>",
            145.0 - bh,
            x + 22.0,
            140.0 - bh,
            p.litres,
            x + 22.0,
            k,
            k + 1
        );
    }
    s.push_str("</svg>");
    s
}

/// What a board's page shows.
pub struct BoardPage<'a> {
    /// The report.
    pub report: &'a Report,
    /// Template SVGs (title, text).
    pub templates: Vec<(&'a str, &'a str)>,
    /// The cutting stage: programs and their simulation, or why there are none.
    pub cut: CutSection<'a>,
    /// Deviation SVGs per setup.
    pub deviations: Vec<&'a str>,
    /// Close-ups of the rail at true scale (an inline SVG), if drawn.
    pub rails: String,
    /// Every file of the board's folder (names relative to it).
    pub files: Vec<String>,
    /// Fins, plug, glassing and the weight estimate: (what, lines).
    pub fittings: Vec<(String, Vec<String>)>,
    /// The 3D view's data, when a screen mesh could be made.
    pub scene: Option<scene::Scene>,
    /// Drawings made for the screen (title, inline SVG), before the
    /// templates.
    pub views: Vec<(String, String)>,
}

/// The 3D view: a place for the canvas, its switches and legend, the
/// packed libraries and scene, and the script that draws them.
fn view(sc: &scene::Scene) -> String {
    let (three, orbit) = scene::libraries();
    let mut s = String::from(
        "<h2>The board in 3D</h2><p id=\"view-status\">The 3D view needs JavaScript and WebGL; the drawings below show the same board.</p><div id=\"view\" style=\"width:100%;border:1px solid #ddd\"></div><div id=\"view-switches\" style=\"margin:0.5em 0\"></div>",
    );
    if sc.index.contains("\"colours\"") {
        let scale = sc.scale;
        let _ = write!(
            s,
            "<p>Colours: the simulated finish of the programs below, as in the deviation maps: <span style=\"background:linear-gradient(90deg,#0000ff,#ffffff,#ff0000);display:inline-block;width:12em;height:0.8em;border:1px solid #999\"></span> blue is stock left, red a gouge, full colour at {scale:.2} mm; white within ±{:.3} mm; grey the routed fin boxes and plug; cream where the maps hold nothing. The deck is coloured by setup 1's map, the bottom by setup 2's, each point by the mean within 3 mm (or the deepest gouge there, where one is deeper than the tolerance).</p>",
            scale / 50.0
        );
    }
    let _ = write!(
        s,
        "<pre id=\"view-check\" hidden></pre><script type=\"application/json\" id=\"scene-index\">{}</script><script type=\"application/octet-stream\" id=\"scene-data\">{}</script><script type=\"application/octet-stream\" id=\"three-js\">{three}</script><script type=\"application/octet-stream\" id=\"orbit-js\">{orbit}</script><script>{}</script>",
        sc.index,
        sc.data,
        scene::VIEW_JS
    );
    s
}

/// What the page says of the cutting stage.
pub enum CutSection<'a> {
    /// Programs were made and simulated.
    Done {
        /// The cutting plan.
        plan: &'a CutPlan,
        /// Its verification.
        verification: &'a Verification,
    },
    /// Cutting was not asked for.
    Skipped,
    /// Cutting failed: the reason, in full.
    Failed(String),
}

/// The tail pull estimate: what it assumes and the two angles' forces.
fn tail_pull(t: &crate::volume::tail_pull::TailPull, tip_station: f64) -> String {
    let mut s = format!(
        "<h2>Tail pull</h2><p id=\"tail-pull\">A rough momentum estimate, not a flow simulation: {:.1} kg/s of water ({:.1} cm deep × {:.1} cm wide: {}; at {:.1} m/s; {:.0} kg/m³) leaves the tail turned up by its rocker, pushing the tail down and holding the board back. <code>blanksmith report --speed --water-depth --water-width --water</code> changes the assumptions.</p><table><tr><th class=\"l\">water turned along</th><th>angle</th><th>down</th><th>weighs</th><th>drag</th></tr>",
        t.mass_flow_kg_s,
        t.water_depth_mm / 10.0,
        t.water_width_mm / 10.0,
        esc(&t.water_width_rule),
        t.speed_m_s,
        t.density_kg_m3
    );
    let over = format!(
        "the rocker's chord over the last {}",
        crate::units::tip_station_words(tip_station)
    );
    for (what, p) in [
        ("the bottom's tangent at the tail tip", &t.at_tip),
        (over.as_str(), &t.over_tail_station),
    ] {
        let _ = write!(
            s,
            "<tr><td class=\"l\">{}</td><td>{:.1}°</td><td>{:.1} N</td><td>{:.2} kg</td><td>{:.2} N</td></tr>",
            esc(what),
            p.angle_deg,
            p.down_n,
            p.down_kg,
            p.drag_n
        );
    }
    s.push_str("</table>");
    s
}

/// The board's `index.html`.
pub fn board_page(p: &BoardPage) -> String {
    let r = p.report;
    let mut s = String::new();
    let _ = write!(
        s,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>{} — blanksmith</title><style>{STYLE}</style></head><body>\n",
        esc(&r.name)
    );
    let _ = writeln!(
        s,
        "<h1>{}</h1><p>{} long, {} wide ({} from the nose), {} thick, {} tail.</p>",
        esc(&r.name),
        Both(r.length_mm),
        Both(r.width_mm),
        Both(r.wide_point_from_nose_mm),
        Both(r.thickness_mm),
        esc(&r.tail)
    );
    if let Some(sc) = &p.scene {
        s.push_str(&view(sc));
    }
    let c = &r.certificate;
    let _ = writeln!(
        s,
        "<h2>Volume</h2><p id=\"volume\" style=\"font-size:1.6em\"><strong>{:.2} L</strong> <span class=\"{}\">{}</span></p>",
        r.volume_litres,
        if r.certified { "ok" } else { "bad" },
        if r.certified {
            "certified"
        } else {
            "NOT certified"
        }
    );
    let _ = writeln!(
        s,
        "<table><tr><th class=\"l\">certificate</th><th>litres</th></tr><tr><td class=\"l\">(a) divergence theorem on the mesh ({} triangles)</td><td>{:.4}</td></tr><tr><td class=\"l\">(b) integral of the continuous shape's section areas</td><td>{:.4}</td></tr><tr><td class=\"l\">(c) error estimate of (a)</td><td>{:.4}</td></tr><tr><td class=\"l\">|a − b|</td><td>{:.4}</td></tr></table>",
        r.triangles,
        c.mesh_litres,
        c.surface_litres,
        c.error_estimate_litres,
        (c.mesh_litres - c.surface_litres).abs()
    );
    s.push_str("<h3>Litres per foot from the nose</h3>");
    s.push_str(&litres_chart(r));
    if let Some(t) = &r.tail_pull {
        s.push_str(&tail_pull(t, r.tip_station_mm));
    }
    for (title, svg) in &p.views {
        let _ = write!(s, "<h2>{}</h2>{svg}", esc(title));
    }
    for (title, svg) in &p.templates {
        let _ = write!(s, "<h2>{}</h2>{}", esc(title), inline_svg(svg));
    }
    // The rail close up follows the sections (the only template drawn).
    if !p.templates.is_empty() && !p.rails.is_empty() {
        let _ = write!(s, "<h3>The rail, close up</h3>{}", p.rails);
    }
    if !p.fittings.is_empty() {
        s.push_str("<h2>Fins, glassing and weight</h2>");
        for (what, lines) in &p.fittings {
            let _ = write!(s, "<h3>{}</h3><ul>", esc(what));
            for l in lines {
                let _ = write!(s, "<li>{}</li>", esc(l.trim()));
            }
            s.push_str("</ul>");
        }
    }
    match &p.cut {
        CutSection::Done { plan, verification } => {
            s.push_str("<h2>Fit in the stock</h2><ul>");
            for l in plan.placement.fit_lines() {
                let _ = write!(s, "<li>{}</li>", esc(&l));
            }
            s.push_str("</ul><h2>Toolpaths</h2><p>Each setup's moves are drawn on the board in the 3D view above (switch them on by setup and operation; setup 2's turned back over the bottom).</p>");
            s.push_str("<table><tr><th class=\"l\">program</th><th class=\"l\">tool</th><th class=\"l\">cuts</th><th>time</th></tr>");
            for pr in &plan.programs {
                let _ = write!(
                    s,
                    "<tr><td class=\"l\"><a href=\"{0}\">{0}</a></td><td class=\"l\">{1}</td><td class=\"l\">{2}</td><td>{3}</td></tr>",
                    esc(&pr.file_name),
                    esc(&pr.tool.describe()),
                    pr.labels.join(", "),
                    program::duration(pr.time_s)
                );
            }
            s.push_str("</table><h2>Simulation</h2>");
            let _ = write!(
                s,
                "<pre id=\"verification\">{}</pre>",
                esc(&verification.text())
            );
            for d in &p.deviations {
                s.push_str(&inline_svg(d));
            }
            let _ = write!(
                s,
                "<h2>Setup sheet</h2><div class=\"caution\">The machine maker's manual, your shop rules and local codes come first.</div><pre>{}</pre>",
                esc(&plan.sheet)
            );
        }
        CutSection::Skipped => {
            s.push_str("<h2>Cutting</h2><p>Not asked for: no router programs were made (<code>--no-cut</code>).</p>");
        }
        CutSection::Failed(why) => {
            let _ = write!(
                s,
                "<h2>Cutting</h2><div class=\"caution\">No router programs: the cutting stage failed. The shape's files above are complete.</div><pre id=\"cut-failure\">{}</pre>",
                esc(why)
            );
        }
    }
    s.push_str("<h2>Files</h2><ul>");
    for f in &p.files {
        let _ = write!(s, "<li><a href=\"{0}\">{0}</a></li>", esc(f));
    }
    s.push_str("</ul></body></html>\n");
    s
}

/// One row of the run's summary.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// Board name (its folder).
    pub name: String,
    /// Litres, when meshed.
    pub litres: Option<f64>,
    /// Setup 1 and setup 2 run times, s.
    pub times: Option<[f64; 2]>,
    /// `done`, or what went wrong.
    pub verdict: String,
}

/// The run's `index.html`: every board, linked to its page.
pub fn run_page(rows: &[Row]) -> String {
    let mut s = format!(
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>blanksmith run</title><style>{STYLE}</style></head><body><h1>Boards</h1><table><tr><th class=\"l\">board</th><th>litres</th><th>setup 1</th><th>setup 2</th><th class=\"l\">verdict</th></tr>\n"
    );
    for r in rows {
        let link = if r.litres.is_some() {
            format!("<a href=\"{0}/index.html\">{0}</a>", esc(&r.name))
        } else {
            esc(&r.name)
        };
        let l = r.litres.map_or("—".to_string(), |l| format!("{l:.2} L"));
        let (t1, t2) = r.times.map_or(("—".into(), "—".into()), |t| {
            (program::duration(t[0]), program::duration(t[1]))
        });
        let _ = writeln!(
            s,
            "<tr><td class=\"l\">{link}</td><td>{l}</td><td>{t1}</td><td>{t2}</td><td class=\"l\">{}</td></tr>",
            esc(&r.verdict)
        );
    }
    s.push_str("</table></body></html>\n");
    s
}

/// The outer 3 in of the section at the wide point and at the tail-width
/// station, at true scale (millimetres on the page), with the rail's
/// thickness 1 in from the edge and the apex's height above the bottom edge
/// marked as the report measures them. Empty for square rails.
pub fn rail_closeups(board: &Board) -> String {
    if board.rails.profile == RailProfile::Square {
        return String::new();
    }
    let gauge = board.rails.gauge;
    let span = 3.0 * crate::units::MM_PER_INCH;
    let mut s = String::new();
    for (name, x) in [
        ("at the wide point", board.outline.wide_point),
        (
            "at the tail-width station",
            board.length - board.tip_station,
        ),
    ] {
        let st = board.station(x);
        let w = st.half_width;
        if w <= 0.0 {
            continue;
        }
        let from = ((w - span) / w).max(st.u_start());
        let n = 240;
        let u = |k: usize| from + (1.0 - from) * (1.0 - (1.0 - k as f64 / n as f64).powi(2));
        let mut pts: Vec<[f64; 2]> = (0..n).map(|k| st.lower(u(k))).collect();
        pts.push(st.apex_point());
        pts.extend((0..n).rev().map(|k| st.upper(u(k))));
        let y0 = w - span;
        let z0 = pts.iter().map(|p| p[1]).fold(f64::INFINITY, f64::min);
        let z1 = pts.iter().map(|p| p[1]).fold(f64::NEG_INFINITY, f64::max);
        let (mx, my) = (30.0, 12.0);
        let (vw, vh) = (span + mx + 70.0, z1 - z0 + 2.0 * my);
        // Page y runs down: a height z sits at vh - my - (z - z0).
        let px = |y: f64| y - y0 + mx;
        let py = |z: f64| vh - my - (z - z0);
        let path: Vec<String> = pts
            .iter()
            .map(|p| format!("{:.3},{:.3}", px(p[0]), py(p[1])))
            .collect();
        let yg = w - gauge;
        let (gl, gu) = (st.lower(yg / w)[1], st.upper(yg / w)[1]);
        let apex = st.apex_height();
        let edge = st.lower(st.u_edge())[1];
        let _ = write!(
            s,
            "<figure><svg class=\"fig\" xmlns=\"http://www.w3.org/2000/svg\" width=\"{vw:.1}mm\" height=\"{vh:.1}mm\" viewBox=\"0 0 {vw:.1} {vh:.1}\" font-family=\"sans-serif\">\
<polyline points=\"{}\" fill=\"#e8eef6\" stroke=\"#222\" stroke-width=\"0.3\"/>\
<line x1=\"{gx:.2}\" y1=\"{:.2}\" x2=\"{gx:.2}\" y2=\"{:.2}\" stroke=\"#c03\" stroke-width=\"0.4\"/>\
<text x=\"{gx:.2}\" y=\"{:.2}\" font-size=\"3\" fill=\"#c03\" text-anchor=\"middle\">rail {} at {} in</text>\
<line x1=\"{:.2}\" y1=\"{ay:.2}\" x2=\"{:.2}\" y2=\"{ay:.2}\" stroke=\"#06c\" stroke-width=\"0.3\"/>\
<line x1=\"{:.2}\" y1=\"{ey:.2}\" x2=\"{:.2}\" y2=\"{ey:.2}\" stroke=\"#06c\" stroke-width=\"0.3\"/>\
<text x=\"{:.2}\" y=\"{:.2}\" font-size=\"3\" fill=\"#06c\">apex {} above the edge</text>\
</svg><figcaption>The rail {name}, {} from the nose, at true scale (the outer 3 in of the half-section; the stringer is off to the left).</figcaption></figure>",
            path.join(" "),
            py(gl),
            py(gu),
            py(gu) - 2.0,
            Both(gu - gl),
            Both(gauge),
            px(w) - 12.0,
            px(w) + 4.0,
            px(st.edge_y()) - 4.0,
            px(w) + 4.0,
            px(w) + 6.0,
            0.5 * (py(apex) + py(edge)) + 1.0,
            Both(apex - edge),
            Both(x),
            gx = px(yg),
            ay = py(apex),
            ey = py(edge),
        );
    }
    s
}
