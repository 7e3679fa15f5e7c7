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
            use blanksmith::sim::verify::*;
            let srcs: Vec<ProgramSource> = p
                .programs
                .iter()
                .map(|pr| ProgramSource {
                    name: pr.file_name.clone(),
                    side: pr.side,
                    reader: Box::new(pr.text.as_bytes()),
                })
                .collect();
            let setting = Setting {
                machine: &m,
                block: p.placement.block,
                table_position: j.table_position,
                default_tool: None,
                design: Some(&p.placement.part),
            };
            let t = std::time::Instant::now();
            let v = verify(srcs, &setting, VerifyOptions::default(), &|s| {
                eprintln!("{s} {:?}", t.elapsed())
            })
            .unwrap();
            eprintln!("verify {:?}", t.elapsed());
            let mut v2 = v.clone();
            v2.collisions.truncate(5);
            v2.limits.truncate(5);
            v2.out_of_envelope.truncate(5);
            v2.spindle_off_cuts.truncate(5);
            eprintln!("{}", v2.to_json());
            eprintln!(
                "counts {} {} {} {}",
                v.collisions.len(),
                v.limits.len(),
                v.out_of_envelope.len(),
                v.spindle_off_cuts.len()
            );
        }
        Err(e) => eprintln!("error {e}"),
    }
}
#[allow(dead_code)]
fn unused() {}
