//! Plan-view pictures of a verification: one SVG per setup, the deviation
//! map drawn as an embedded PNG (one pixel a cell), with a legend in mm.

use super::verify::DeviationMap;
use crate::svg::diverging;

/// PNG bytes of a deviation map: blue for stock left, red for gouges,
/// white within ±`scale`/50, light grey where stock remains off the design.
pub fn png(map: &DeviationMap, scale: f64) -> Vec<u8> {
    let [nx, ny] = map.dims;
    let mut rgb = vec![255u8; nx * ny * 3];
    for j in 0..ny {
        // Image rows run top-down; Y runs up in the plan.
        let row = ny - 1 - j;
        for i in 0..nx {
            let k = j * nx + i;
            let d = map.deviation[k];
            let px = &mut rgb[(row * nx + i) * 3..(row * nx + i) * 3 + 3];
            if d.is_nan() {
                if map.stock[k] {
                    px.copy_from_slice(&[205, 205, 205]);
                }
                continue;
            }
            let t = (d as f64 / scale).clamp(-1.0, 1.0);
            px.copy_from_slice(&hex(&diverging(-t)));
        }
    }
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, nx as u32, ny as u32);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        let mut w = enc.write_header().expect("writing to memory");
        w.write_image_data(&rgb).expect("writing to memory");
    }
    out
}

fn hex(colour: &str) -> [u8; 3] {
    let h = colour.trim_start_matches('#');
    let v = |i: usize| u8::from_str_radix(h.get(i..i + 2).unwrap_or("ff"), 16).unwrap_or(255);
    [v(0), v(2), v(4)]
}

/// Standard base64 (RFC 4648, section 4), for embedding the PNG.
pub fn base64(bytes: &[u8]) -> String {
    const A: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut s = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for c in bytes.chunks(3) {
        let n = (c[0] as u32) << 16
            | (*c.get(1).unwrap_or(&0) as u32) << 8
            | *c.get(2).unwrap_or(&0) as u32;
        s.push(A[(n >> 18) as usize & 63] as char);
        s.push(A[(n >> 12) as usize & 63] as char);
        s.push(if c.len() > 1 {
            A[(n >> 6) as usize & 63] as char
        } else {
            '='
        });
        s.push(if c.len() > 2 {
            A[n as usize & 63] as char
        } else {
            '='
        });
    }
    s
}

/// The SVG: the map at true scale (1 user unit = 1 mm), title, legend.
pub fn svg(map: &DeviationMap, scale: f64, title: &str) -> String {
    let w = map.dims[0] as f64 * map.cell[0];
    let h = map.dims[1] as f64 * map.cell[1];
    let pad = 20.0;
    let legend = 60.0;
    let (tw, th) = (w + 2.0 * pad, h + 2.0 * pad + legend);
    let data = base64(&png(map, scale));
    let mut s = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{tw:.0}mm\" height=\"{th:.0}mm\" viewBox=\"0 0 {tw:.1} {th:.1}\">\n<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n<text x=\"{pad}\" y=\"14\" font-family=\"sans-serif\" font-size=\"10\">{}</text>\n<image x=\"{pad}\" y=\"{pad}\" width=\"{w:.1}\" height=\"{h:.1}\" preserveAspectRatio=\"none\" style=\"image-rendering:pixelated\" href=\"data:image/png;base64,{data}\"/>\n<rect x=\"{pad}\" y=\"{pad}\" width=\"{w:.1}\" height=\"{h:.1}\" fill=\"none\" stroke=\"black\" stroke-width=\"0.5\"/>\n",
        xml(title)
    );
    let ly = pad + h + 15.0;
    let steps = 21;
    let lw = 300.0f64.min(w);
    for k in 0..steps {
        let t = -1.0 + 2.0 * k as f64 / (steps - 1) as f64;
        s.push_str(&format!(
            "<rect x=\"{:.2}\" y=\"{ly:.1}\" width=\"{:.2}\" height=\"10\" fill=\"{}\"/>\n",
            pad + lw * k as f64 / steps as f64,
            lw / steps as f64 + 0.1,
            diverging(-t)
        ));
    }
    for (t, label, anchor) in [
        (-1.0, format!("gouge {scale:.2} mm"), "start"),
        (0.0, "0 mm".to_string(), "middle"),
        (1.0, format!("left {scale:.2} mm"), "end"),
    ] {
        let x = pad + lw * (t + 1.0) / 2.0;
        s.push_str(&format!("<text x=\"{x:.1}\" y=\"{:.1}\" font-family=\"sans-serif\" font-size=\"8\" text-anchor=\"{anchor}\">{label}</text>\n", ly + 22.0));
    }
    s.push_str(&format!(
        "<text x=\"{:.1}\" y=\"{:.1}\" font-family=\"sans-serif\" font-size=\"8\">grey: stock left off the board (frame, tabs); white: cut away. Deviation normal to the surface, one cell {:.2} mm.</text>\n</svg>\n",
        pad + lw + 20.0,
        ly + 8.0,
        map.cell[0]
    ));
    s
}

fn xml(t: &str) -> String {
    t.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

#[cfg(test)]
mod tests {
    #[test]
    fn base64_matches_rfc_4648_test_vectors() {
        // RFC 4648, section 10.
        for (i, o) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(super::base64(i.as_bytes()), o);
        }
    }
}
