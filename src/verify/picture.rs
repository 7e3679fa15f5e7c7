//! Plan-view pictures of a verification: one SVG per setup, the deviation
//! map drawn as an embedded PNG (one pixel a cell), with a legend in mm.

use crate::svg::{diverging, diverging_rgb};
use crate::verify::report::DeviationMap;

/// PNG bytes of a deviation map: blue for stock left, red for gouges,
/// white within ±`scale`/50, light grey where stock remains off the design.
/// Widest picture drawn, in pixels: a larger map is shown with one pixel
/// for each square of cells, coloured by the cell that deviates most (so a
/// one-cell gouge still shows).
const MAX_PIXELS: usize = 2400;

/// Cells per pixel side for a map.
fn block(map: &DeviationMap) -> usize {
    map.dims[0].max(map.dims[1]).div_ceil(MAX_PIXELS).max(1)
}

/// The map as a PNG, one pixel per `block` of cells, rows top-down.
pub fn png(map: &DeviationMap, scale: f64) -> Vec<u8> {
    let [nx, ny] = map.dims;
    let f = block(map);
    let (px_w, px_h) = (nx.div_ceil(f), ny.div_ceil(f));
    let mut rgb = vec![255u8; px_w * px_h * 3];
    for pj in 0..px_h {
        // Image rows run top-down; Y runs up in the plan.
        let row = px_h - 1 - pj;
        for pi in 0..px_w {
            let (mut worst, mut stock) = (f32::NAN, false);
            for j in pj * f..((pj + 1) * f).min(ny) {
                for i in pi * f..((pi + 1) * f).min(nx) {
                    let k = j * nx + i;
                    let d = map.deviation[k];
                    stock |= map.stock[k];
                    if !d.is_nan() && (worst.is_nan() || d.abs() > worst.abs()) {
                        worst = d;
                    }
                }
            }
            let px = &mut rgb[(row * px_w + pi) * 3..(row * px_w + pi) * 3 + 3];
            if worst.is_nan() {
                if stock {
                    px.copy_from_slice(&[205, 205, 205]);
                }
                continue;
            }
            let t = (worst as f64 / scale).clamp(-1.0, 1.0);
            px.copy_from_slice(&diverging_rgb(-t));
        }
    }
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, px_w as u32, px_h as u32);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        let mut w = enc.write_header().expect("writing to memory");
        w.write_image_data(&rgb).expect("writing to memory");
    }
    out
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

/// The deviation drawn at full colour, mm: four times the larger of the
/// stock left under 95 % of the surface and the gouge tolerance, so the
/// common leftover shows pale and anything unusual strong.
pub fn colour_scale(v: &crate::verify::report::Verification) -> f64 {
    v.leftover_p95_mm.unwrap_or(0.1).max(v.gouge_tolerance_mm) * 4.0
}

/// The SVG: the map at true scale (1 user unit = 1 mm), title, legend.
pub fn svg(map: &DeviationMap, scale: f64, title: &str) -> String {
    let w = map.dims[0] as f64 * map.cell[0];
    let h = map.dims[1] as f64 * map.cell[1];
    let pad = 20.0;
    let legend = 60.0;
    let (tw, th) = (w + 2.0 * pad, h + 2.0 * pad + legend);
    let data = base64(&png(map, scale));
    // The picture's pixels may overrun the map's far edges by part of a
    // pixel; its near corner stays on the block's front-left corner.
    let f = block(map) as f64;
    let iw = map.dims[0].div_ceil(f as usize) as f64 * f * map.cell[0];
    let ih = map.dims[1].div_ceil(f as usize) as f64 * f * map.cell[1];
    let iy = pad + h - ih;
    let mut s = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{tw:.0}mm\" height=\"{th:.0}mm\" viewBox=\"0 0 {tw:.1} {th:.1}\">\n<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n<text x=\"{pad}\" y=\"14\" font-family=\"sans-serif\" font-size=\"10\">{}</text>\n<image x=\"{pad}\" y=\"{iy:.1}\" width=\"{iw:.1}\" height=\"{ih:.1}\" preserveAspectRatio=\"none\" style=\"image-rendering:pixelated\" href=\"data:image/png;base64,{data}\"/>\n<rect x=\"{pad}\" y=\"{pad}\" width=\"{w:.1}\" height=\"{h:.1}\" fill=\"none\" stroke=\"black\" stroke-width=\"0.5\"/>\n",
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
        "<text x=\"{:.1}\" y=\"{:.1}\" font-family=\"sans-serif\" font-size=\"8\">grey: stock left off the board (frame, tabs); white: cut away. Deviation normal to the surface; one pixel {:.2} mm, the largest deviation within it.</text>\n</svg>\n",
        pad + lw + 20.0,
        ly + 8.0,
        map.cell[0] * f
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
    use super::*;
    use crate::toolpath::setup::Side;

    /// The bytes of an SVG colour `#rrggbb`, as the legend writes it.
    fn hex(colour: &str) -> [u8; 3] {
        let h = colour.trim_start_matches('#');
        let v = |i: usize| u8::from_str_radix(h.get(i..i + 2).unwrap_or("ff"), 16).unwrap_or(255);
        [v(0), v(2), v(4)]
    }

    /// A map wider than the picture is drawn a pixel per square of cells,
    /// and a single gouging cell still colours its pixel (decoded with the
    /// `png` crate's own reader).
    #[test]
    fn a_one_cell_gouge_survives_the_smaller_picture() {
        let (nx, ny) = (4800, 30);
        let mut deviation = vec![0.01f32; nx * ny];
        deviation[17 * nx + 4321] = -0.5;
        let map = DeviationMap {
            side: Side::Deck,
            origin: [0.0, 0.0],
            cell: [0.5, 0.5],
            dims: [nx, ny],
            deviation,
            stock: vec![false; nx * ny],
            unreachable: vec![],
        };
        let bytes = png(&map, 0.5);
        let mut r = ::png::Decoder::new(std::io::Cursor::new(bytes))
            .read_info()
            .unwrap();
        let mut buf = vec![0; r.output_buffer_size().unwrap()];
        let info = r.next_frame(&mut buf).unwrap();
        assert_eq!((info.width, info.height), (2400, 15));
        // Cell (4321, 17) is pixel (2160, 8), row 15 - 1 - 8 from the top.
        let at = |x: usize, y: usize| {
            let k = (y * 2400 + x) * 3;
            [buf[k], buf[k + 1], buf[k + 2]]
        };
        assert_eq!(at(2160, 6), hex(&diverging(1.0)));
        assert_ne!(at(2161, 6), at(2160, 6));
    }

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
