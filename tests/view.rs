//! The report page's 3D view, read back from the page `make` writes: the
//! scene's index parsed with serde_json, its data unpacked (base64, then
//! zlib with flate2), and held against things outside the view: the
//! board's certified volume (the screen mesh's volume by parry3d), the
//! block's box, the programs' operations and the packed libraries'
//! versions. That the page draws in a browser is `.ci/browser-check`'s job.

use std::path::Path;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Standard base64 (RFC 4648, with padding), decoded.
fn unbase64(text: &str) -> Vec<u8> {
    let value = |c: u8| -> u32 {
        match c {
            b'A'..=b'Z' => u32::from(c - b'A'),
            b'a'..=b'z' => u32::from(c - b'a') + 26,
            b'0'..=b'9' => u32::from(c - b'0') + 52,
            b'+' => 62,
            b'/' => 63,
            _ => panic!("not base64: {c}"),
        }
    };
    let bytes: Vec<u8> = text.bytes().filter(|c| !c.is_ascii_whitespace()).collect();
    let mut out = vec![];
    for chunk in bytes.chunks(4) {
        let pad = chunk.iter().filter(|&&c| c == b'=').count();
        let n = chunk
            .iter()
            .map(|&c| if c == b'=' { 0 } else { value(c) })
            .fold(0u32, |n, v| (n << 6) | v);
        out.extend_from_slice(&n.to_be_bytes()[1..4 - pad]);
    }
    out
}

fn unpack(text: &str) -> Vec<u8> {
    use std::io::Read;
    let mut out = vec![];
    flate2::read::ZlibDecoder::new(&unbase64(text)[..])
        .read_to_end(&mut out)
        .unwrap();
    out
}

fn between<'a>(page: &'a str, id: &str) -> &'a str {
    let start = page.find(&format!("id=\"{id}\">")).unwrap() + id.len() + 6;
    let end = start + page[start..].find("</script>").unwrap();
    &page[start..end]
}

fn floats(data: &[u8], at: &serde_json::Value) -> Vec<f32> {
    let (off, n) = (
        at[0].as_u64().unwrap() as usize,
        at[1].as_u64().unwrap() as usize,
    );
    data[off..off + 4 * n]
        .chunks(4)
        .map(|b| f32::from_le_bytes([b[0], b[1], b[2], b[3]]))
        .collect()
}

fn u32s(data: &[u8], at: &serde_json::Value) -> Vec<u32> {
    let (off, n) = (
        at[0].as_u64().unwrap() as usize,
        at[1].as_u64().unwrap() as usize,
    );
    data[off..off + 4 * n]
        .chunks(4)
        .map(|b| u32::from_le_bytes([b[0], b[1], b[2], b[3]]))
        .collect()
}

#[test]
fn the_view_holds_the_board_its_finish_and_its_toolpaths() {
    let dir = tempfile::tempdir().unwrap();
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_blanksmith"))
        .args(["make", "--quiet", "-o"])
        .arg(dir.path())
        .arg(root().join("fixtures/fish.yaml"))
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let folder = dir.path().join("saltgrass-fish-5-6");
    let page = std::fs::read_to_string(folder.join("index.html")).unwrap();
    let report: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(folder.join("saltgrass-fish-5-6.report.json")).unwrap(),
    )
    .unwrap();

    // The libraries: three.js r170 and its orbit controls, as vendored.
    let three = String::from_utf8(unpack(between(&page, "three-js"))).unwrap();
    assert_eq!(
        three,
        std::fs::read_to_string(root().join("assets/three/three.module.min.js")).unwrap()
    );
    assert!(
        three.contains("const t=\"170\""),
        "three.js r170 opens with its revision"
    );
    let orbit = String::from_utf8(unpack(between(&page, "orbit-js"))).unwrap();
    assert!(orbit.contains("class OrbitControls") && orbit.contains("from 'three'"));

    let index: serde_json::Value = serde_json::from_str(between(&page, "scene-index")).unwrap();
    let data = unpack(between(&page, "scene-data"));

    // The board: a closed mesh of the same shape, coarser. parry3d's volume
    // of it within 1 % of the certified volume (a 0.5 mm chord tolerance
    // cuts a little off every curve).
    let v = floats(&data, &index["board"]["vertices"]);
    let t = u32s(&data, &index["board"]["triangles"]);
    assert_eq!(v.len() % 3, 0);
    assert_eq!(t.len() % 3, 0);
    assert!(
        t.len() / 3 < 40_000,
        "{} triangles for the screen",
        t.len() / 3
    );
    let pts: Vec<parry3d_f64::math::Vector> = v
        .chunks(3)
        .map(|p| parry3d_f64::math::Vector::new(p[0].into(), p[1].into(), p[2].into()))
        .collect();
    let tris: Vec<[u32; 3]> = t.chunks(3).map(|c| [c[0], c[1], c[2]]).collect();
    let litres =
        parry3d_f64::mass_properties::MassProperties::from_trimesh(1.0, &pts, &tris).mass() / 1e6;
    let certified = report["volume_litres"].as_f64().unwrap();
    assert!(
        (litres - certified).abs() < 0.01 * certified,
        "screen mesh {litres} L, certified {certified} L"
    );

    // Placed in the block, as the programs cut it.
    let block: Vec<f64> = index["block"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    for p in v.chunks(3) {
        let p: Vec<f64> = p.iter().map(|&x| f64::from(x)).collect();
        assert!(
            p[0] > 0.0 && p[0] < block[0],
            "{p:?} outside the block's length"
        );
        assert!(
            p[1] > 0.0 && p[1] < block[1],
            "{p:?} outside the block's width"
        );
        assert!(
            p[2] < 0.01 && p[2] > -block[2],
            "{p:?} outside the block's thickness"
        );
    }

    // Painted: one colour per vertex; the finish (white to pale blue) on
    // most of it, the routed boxes and plug grey.
    let c = &index["board"]["colours"];
    let (off, n) = (
        c[0].as_u64().unwrap() as usize,
        c[1].as_u64().unwrap() as usize,
    );
    assert_eq!(n, v.len());
    let rgb = &data[off..off + n];
    let grey = rgb.chunks(3).filter(|c| c == &[120, 120, 120]).count();
    let finish = rgb
        .chunks(3)
        .filter(|c| c[2] == 255 && c[0] == c[1])
        .count();
    assert!(grey > 0, "no pocket painted");
    assert!(
        finish > n / 3 * 9 / 10,
        "{finish} of {} vertices in the finish colours",
        n / 3
    );

    // The toolpaths: every operation of every setup the page's program
    // table lists, points inside the block's box (setup 2's turned back).
    let groups = index["paths"].as_array().unwrap();
    for (setup, label) in [
        (1, "roughing"),
        (1, "outline"),
        (1, "finishing"),
        (1, "leash plug"),
        (2, "roughing"),
        (2, "finishing"),
        (2, "fin boxes"),
        (1, "rapids"),
        (2, "rapids"),
    ] {
        let g = groups
            .iter()
            .find(|g| g["setup"] == setup && g["label"] == label)
            .unwrap_or_else(|| panic!("no {label} in setup {setup}"));
        let pts = floats(&data, &g["points"]);
        let starts = u32s(&data, &g["starts"]);
        assert!(pts.len() >= 6 && !starts.is_empty(), "{label} {setup}");
        assert!(
            starts.windows(2).all(|w| w[0] < w[1])
                && (*starts.last().unwrap() as usize) < pts.len() / 3
        );
        if label != "rapids" {
            for p in pts.chunks(3) {
                assert!(
                    f64::from(p[0]) > -30.0 && f64::from(p[0]) < block[0] + 30.0,
                    "{label} {setup}: {p:?}"
                );
                assert!(
                    f64::from(p[2]) > -block[2] - 30.0 && f64::from(p[2]) < 30.0,
                    "{label} {setup}: {p:?}"
                );
            }
        }
        assert!(page.contains(&format!("data-view=\"{label}\"")) || page.contains(label));
    }
}
