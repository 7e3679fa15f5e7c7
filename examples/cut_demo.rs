use blanksmith::cam::{job, profile, program};
fn main() {
    let board = blanksmith::jobs::load(&blanksmith::jobs::Input::Demo).unwrap();
    let c = blanksmith::certificate::certify(&board, 0.01).unwrap();
    let m = profile::generic_machine();
    let j = job::default_job(&m).unwrap();
    let t = std::time::Instant::now();
    let p = program::plan(
        "demo",
        28.0,
        &c.mesh,
        Some(&program::apex_line(&board)),
        &m,
        &j,
        &|s| eprintln!("{s} {:?}", t.elapsed()),
    );
    match p {
        Ok(p) => {
            eprintln!("{:?}", t.elapsed());
            for l in p.placement.fit_lines() {
                eprintln!("{l}");
            }
            for s in &p.setups {
                eprintln!("positions {}", s.positions);
            }
            for pr in &p.programs {
                eprintln!(
                    "{} {} lines {}",
                    pr.file_name,
                    pr.text.lines().count(),
                    program::duration(pr.time_s)
                );
                std::fs::write(format!("/tmp/{}", pr.file_name), &pr.text).unwrap();
            }
            std::fs::write("/tmp/sheet.txt", &p.sheet).unwrap();
        }
        Err(e) => eprintln!("error {e}"),
    }
}
