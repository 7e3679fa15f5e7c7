use blanksmith::cam::profile;
use blanksmith::gcode::read::*;
use blanksmith::sim::zmap::*;
fn main() {
    for (f, c) in [
        ("/tmp/demo-2-bottom-T1.nc", profile::Cutter::flat(19.05)),
        ("/tmp/demo-2-bottom-T2.nc", profile::Cutter::ball(12.7)),
    ] {
        let text = std::fs::read_to_string(f).unwrap();
        let mut z = ZMap::block([1612.0, 509.5], [0.5, 0.5], -130.0, 0.0, 0.5).unwrap();
        read(text.as_bytes(), "t", ReadOptions::default(), |e| {
            if let Event::Move { line, from, to, .. } = e {
                let before = z.top[0];
                z.cut(&[Sweep {
                    from,
                    to,
                    cutter: c,
                }]);
                if z.top[0] < before - 0.01 {
                    eprintln!("{f} line {line} {from:?} -> {to:?} now {}", z.top[0]);
                }
            }
        })
        .unwrap();
    }
}
