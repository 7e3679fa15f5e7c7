//! A small SVG writer for true-scale drawings: the document is in
//! millimetres (width and height in mm, viewBox in mm), numbers are written
//! with a fixed precision so the same drawing gives the same bytes.

use std::fmt::Write as _;

/// An SVG document being drawn, in mm, y down (SVG's own convention).
pub struct Svg {
    width: f64,
    height: f64,
    body: String,
}

/// Escapes text for XML.
fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

impl Svg {
    /// A drawing `width` × `height` mm.
    pub fn new(width: f64, height: f64) -> Svg {
        Svg {
            width,
            height,
            body: String::new(),
        }
    }

    /// A polyline or polygon (`closed`) through `points` (mm), stroked
    /// `stroke` wide in `colour`, filled with `fill` (or none).
    pub fn path(
        &mut self,
        points: &[[f64; 2]],
        closed: bool,
        colour: &str,
        stroke: f64,
        fill: Option<&str>,
    ) {
        if points.is_empty() {
            return;
        }
        let mut d = String::with_capacity(points.len() * 18);
        for (i, p) in points.iter().enumerate() {
            let _ = write!(
                d,
                "{}{:.3},{:.3}",
                if i == 0 { "M" } else { " L" },
                p[0],
                p[1]
            );
        }
        if closed {
            d.push_str(" Z");
        }
        let _ = writeln!(
            self.body,
            "<path d=\"{d}\" fill=\"{}\" fill-rule=\"evenodd\" stroke=\"{colour}\" stroke-width=\"{stroke:.3}\"/>",
            fill.unwrap_or("none")
        );
    }

    /// A straight line, dashed when `dash` is given (mm on, mm off).
    pub fn line(
        &mut self,
        a: [f64; 2],
        b: [f64; 2],
        colour: &str,
        stroke: f64,
        dash: Option<(f64, f64)>,
    ) {
        let dash = dash
            .map(|(on, off)| format!(" stroke-dasharray=\"{on:.3} {off:.3}\""))
            .unwrap_or_default();
        let _ = writeln!(
            self.body,
            "<line x1=\"{:.3}\" y1=\"{:.3}\" x2=\"{:.3}\" y2=\"{:.3}\" stroke=\"{colour}\" stroke-width=\"{stroke:.3}\"{dash}/>",
            a[0], a[1], b[0], b[1]
        );
    }

    /// A filled rectangle.
    pub fn rect(&mut self, at: [f64; 2], size: [f64; 2], fill: &str) {
        let _ = writeln!(
            self.body,
            "<rect x=\"{:.3}\" y=\"{:.3}\" width=\"{:.3}\" height=\"{:.3}\" fill=\"{fill}\"/>",
            at[0], at[1], size[0], size[1]
        );
    }

    /// Text with its baseline starting at `at`, `size` mm high.
    pub fn text(&mut self, at: [f64; 2], size: f64, text: &str) {
        let _ = writeln!(
            self.body,
            "<text x=\"{:.3}\" y=\"{:.3}\" font-family=\"sans-serif\" font-size=\"{size:.3}\">{}</text>",
            at[0],
            at[1],
            escape(text)
        );
    }

    /// The finished document.
    pub fn finish(self) -> String {
        format!(
            "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w:.3}mm\" height=\"{h:.3}mm\" viewBox=\"0 0 {w:.3} {h:.3}\">\n<rect x=\"0\" y=\"0\" width=\"{w:.3}\" height=\"{h:.3}\" fill=\"white\"/>\n{}</svg>\n",
            self.body,
            w = self.width,
            h = self.height
        )
    }
}

/// A colour for `t` in [0, 1] on a blue–green–red ramp, as `#rrggbb`.
pub fn ramp(t: f64) -> String {
    let t = t.clamp(0.0, 1.0);
    let (r, g, b) = if t < 0.5 {
        let s = t / 0.5;
        (0.0, s, 1.0 - s)
    } else {
        let s = (t - 0.5) / 0.5;
        (s, 1.0 - s, 0.0)
    };
    format!(
        "#{:02x}{:02x}{:02x}",
        (r * 255.0).round() as u8,
        (g * 255.0).round() as u8,
        (b * 255.0).round() as u8
    )
}

/// A diverging colour for `t` in [−1, 1]: blue, white at 0, red.
pub fn diverging(t: f64) -> String {
    let [r, g, b] = diverging_rgb(t);
    format!("#{r:02x}{g:02x}{b:02x}")
}

/// [`diverging`]'s colour as its three bytes.
pub fn diverging_rgb(t: f64) -> [u8; 3] {
    let t = t.clamp(-1.0, 1.0);
    let (r, g, b) = if t < 0.0 {
        (1.0 + t, 1.0 + t, 1.0)
    } else {
        (1.0, 1.0 - t, 1.0 - t)
    };
    [r, g, b].map(|c| (c * 255.0).round() as u8)
}
