//! Resizing against the scaling laws of volume, Archimedes, and exact
//! answers on the box.

use blanksmith::description::{self, write};
use blanksmith::meshing::mesher::DEFAULT_TOLERANCE;
use blanksmith::resize::scale::{
    self as resize, FRESH_WATER, Keep, Request, SALT_WATER, mesh_litres,
};
use blanksmith::volume::integrals;

fn fixture(name: &str) -> blanksmith::model::board::Board {
    let path = format!("{}/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    description::load(std::path::Path::new(&path)).unwrap()
}

fn measures(b: &blanksmith::model::board::Board) -> (f64, f64) {
    let c = blanksmith::volume::certificate::certify(b, DEFAULT_TOLERANCE).unwrap();
    let r = blanksmith::volume::report::Report::new(b, &c, None);
    (r.width_mm, r.thickness_mm)
}

fn resize(b: &blanksmith::model::board::Board, req: Request) -> resize::Resized {
    let (w, t) = measures(b);
    resize::resize(b, &req, w, t, DEFAULT_TOLERANCE).unwrap()
}

#[test]
fn forty_litres_at_six_eight_scaled_to_five_eight() {
    // Build a 40 L board at 6'8" from the shortboard, then scale it to 5'8".
    // Volume scales as k³ proportionally and as k by length alone (affine
    // maps); practitioners put it as "about 25 L" and "about 34 L" (common
    // practice): 40·(68/80)³ = 24.56, 40·68/80 = 34.
    let inch = 25.4;
    let b = resize(
        &fixture("shortboard.yaml"),
        Request {
            length: Some(80.0 * inch),
            ..Default::default()
        },
    )
    .board;
    let forty = resize(
        &b,
        Request {
            volume: Some(40.0),
            keep: Keep {
                length: true,
                ..Default::default()
            },
            ..Default::default()
        },
    );
    let v40 = mesh_litres(&forty.board, DEFAULT_TOLERANCE).unwrap();
    assert!((v40 - 40.0).abs() <= resize::VOLUME_TOLERANCE, "{v40}");
    let k: f64 = 68.0 / 80.0;
    let prop = resize(
        &forty.board,
        Request {
            length: Some(68.0 * inch),
            ..Default::default()
        },
    );
    let v_prop = mesh_litres(&prop.board, DEFAULT_TOLERANCE).unwrap();
    let by_length = resize(
        &forty.board,
        Request {
            length: Some(68.0 * inch),
            keep: Keep {
                width: true,
                thickness: true,
                length: false,
            },
            ..Default::default()
        },
    );
    let v_len = mesh_litres(&by_length.board, DEFAULT_TOLERANCE).unwrap();
    // To the certificate's tolerance (0.01 L).
    assert!((v_prop - 40.0 * k.powi(3)).abs() < 0.01, "{v_prop}");
    assert!((v_len - 40.0 * k).abs() < 0.01, "{v_len}");
    assert!((v_prop - 25.0).abs() < 0.5 && (v_len - 34.0).abs() < 0.01);
    assert_eq!(prop.factors, [k, k, k]);
}

#[test]
fn box_width_for_a_target_is_volume_over_length_times_thickness() {
    // Elementary geometry: a box of length L and thickness T holds V when
    // its width is V / (L·T): 33 L / (1000 mm × 60 mm) = 550 mm.
    let r = resize(
        &fixture("check-box.yaml"),
        Request {
            volume: Some(33.0),
            keep: Keep {
                length: true,
                thickness: true,
                width: false,
            },
            ..Default::default()
        },
    );
    let (w, _) = measures(&r.board);
    assert!((w - 33e6 / (1000.0 * 60.0)).abs() < 1e-6 * w, "{w}");
    assert_eq!(r.adjusted.as_deref(), Some("width"));
}

#[test]
fn thirty_litres_in_salt_floats_like_thirty_point_eight_in_fresh() {
    // Archimedes' principle with the trade's densities: 30 × 1024 / 997 = 30.81.
    let r = resize(
        &fixture("check-box.yaml"),
        Request {
            water: Some((SALT_WATER, FRESH_WATER)),
            ..Default::default()
        },
    );
    let v = mesh_litres(&r.board, DEFAULT_TOLERANCE).unwrap();
    assert!(
        (v - 30.0 * 1024.0 / 997.0).abs() <= resize::VOLUME_TOLERANCE,
        "{v}"
    );
    assert!((v - 30.81).abs() < 0.005);
    // Width and thickness grew together by one factor.
    assert_eq!(r.factors[1], r.factors[2]);
}

#[test]
fn a_resized_board_reads_back_with_the_same_volume() {
    // Round trip: resize, write the description, read it back: the same
    // shape, so the same volume to 1e-6 L.
    for name in ["shortboard.yaml", "fish.yaml", "longboard.yaml"] {
        let r = resize(
            &fixture(name),
            Request {
                length: Some(2000.0),
                keep: Keep {
                    width: true,
                    ..Default::default()
                },
                ..Default::default()
            },
        );
        let text = write::to_yaml(&r.board, write::unit_of(&r.board), "test");
        let back = description::board_from_str(&text, "resized.yaml")
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        let (a, b) = (
            integrals::area_integrals(&r.board).volume() * 1e-6,
            integrals::area_integrals(&back).volume() * 1e-6,
        );
        assert!((a - b).abs() < 1e-6, "{name}: {a} vs {b}");
    }
}
