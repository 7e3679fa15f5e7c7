use blanksmith::cam::{dropcutter::DropCutter, job, profile, setup};
fn main() {
    let board = blanksmith::jobs::load(&blanksmith::jobs::Input::Demo).unwrap();
    let c = blanksmith::certificate::certify(&board, 0.01).unwrap();
    let m = profile::generic_machine();
    let j = job::default_job(&m).unwrap();
    let apex = blanksmith::cam::program::apex_line(&board);
    let p = setup::place(&c.mesh, Some(&apex), &j).unwrap();
    let g = p.guard(setup::Side::Bottom);
    let ray = DropCutter::new(&[&g[0]], profile::Cutter::flat(0.0));
    let ball = DropCutter::new(&g.iter().collect::<Vec<_>>(), profile::Cutter::ball(12.7));
    for y in [509.25, 509.75, 510.25] {
        eprintln!("design at y {y}: {:?}", ray.drop_contact(1612.25, y));
    }
    for x in [1132.923, 1133.423, 1133.923] {
        eprintln!(
            "ball {x}: {:?} floor {}",
            ball.drop(x, 567.984),
            p.floor_at(setup::Side::Bottom, x, 1.0)
        );
    }
}
