//! Peak memory of the weld on a crowd of near-duplicate open vertices: the
//! one test in its own process, so the peak is its own.

/// A 1 MB binary STL (20,000 facets, 84 + 50·n bytes, the format's
/// layout) whose 60,000 corners lie scattered within 0.5 µm of one point:
/// none equal, all on open edges, all within the default weld tolerance of
/// one another. Comparing every pair would hold 3.6e9 pairs (about 14 GB as
/// u32 pairs); the binned weld holds a few per point.
#[test]
fn welding_a_crowd_of_near_duplicates_stays_under_200_mb() {
    let n = 20_000u32;
    let mut bytes = vec![0u8; 80];
    bytes.extend(n.to_le_bytes());
    let mut seed = 1u64;
    let mut next = || {
        seed = seed
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((seed >> 40) as f32 / (1u32 << 24) as f32) * 5e-4
    };
    for _ in 0..n {
        bytes.extend([0u8; 12]);
        for _ in 0..9 {
            bytes.extend((100.0f32 + next()).to_le_bytes());
        }
        bytes.extend([0u8; 2]);
    }
    assert_eq!(bytes.len(), 84 + 50 * n as usize);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("crowd.stl");
    std::fs::write(&path, &bytes).unwrap();
    let inspection = blanksmith::commands::check(&path, None).expect("reads");
    assert!(!inspection.is_clean());
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    // SAFETY: getrusage fills the struct it is given.
    assert_eq!(unsafe { libc::getrusage(libc::RUSAGE_SELF, &mut usage) }, 0);
    // ru_maxrss is in kilobytes on Linux (getrusage(2)).
    let peak_mb = usage.ru_maxrss as f64 / 1024.0;
    eprintln!(
        "peak resident memory {peak_mb:.0} MB, {} vertices after welding",
        inspection.vertices
    );
    assert!(peak_mb < 200.0, "peak resident memory {peak_mb:.0} MB");
}
