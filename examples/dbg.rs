use blanksmith::cam::{dropcutter::DropCutter, job, profile, setup};
fn main() {
    let board = blanksmith::jobs::load(&blanksmith::jobs::Input::Demo).unwrap();
    let c = blanksmith::certificate::certify(&board, 0.01).unwrap();
    let m = profile::generic_machine();
    let j = job::default_job(&m).unwrap();
    let p = setup::place(&c.mesh, &j).unwrap();
    let g = p.guard(setup::Side::Deck);
    let dc = DropCutter::new(&g.iter().collect::<Vec<_>>(), profile::Cutter::ball(12.7));
    let y0 = p.centre_y - p.half_width - 7.35;
    eprintln!(
        "y0 {y0} hw {} floor {}",
        p.half_width,
        p.floor_at(setup::Side::Deck, 1130.0, 1.0)
    );
    for k in 0..20 {
        let x = 1125.0 + k as f64 * 0.5;
        eprintln!("{x} {:?}", dc.drop(x, y0));
    }
    eprintln!(
        "parting {:?}",
        &p.parting[p.parting.len() / 2 - 3..p.parting.len() / 2 + 3]
    );
}
