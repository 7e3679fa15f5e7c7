//! Chasing a leftover or a gouge the simulation reports: plans a board,
//! then prints, at one point of one setup, what the finishing ball's
//! drop-cutter gives across Y there, which finishing moves cross that X
//! nearby and at what height, and any move of any tool that stands below
//! the drop-cutter (digs in) by more than 0.025 mm near the point.
//!
//! ```sh
//! cargo run --release --example passes_at -- fixtures/shortboard.yaml 1026.75 68.25 1
//! cargo run --release --example passes_at -- fixtures/shortboard.yaml 600 300 2 fixtures/job-rockered-blank.yaml
//! ```
//!
//! The point is the `leftover_reachable_at` or `gouge_at` of `verify`'s
//! JSON (X, Y in the setup's coordinates, and the setup).

use blanksmith::commands;
use blanksmith::geom::dropcutter::DropCutter;
use blanksmith::model::toolpath::Step;
use blanksmith::profiles::{job, machine as profile};
use blanksmith::toolpath::setup::Side;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    if args.len() < 4 {
        eprintln!("usage: passes_at BOARD.yaml X Y SETUP [JOB.yaml]");
        std::process::exit(2);
    }
    let number = |s: &str, what: &str| -> f64 {
        s.parse().unwrap_or_else(|_| {
            eprintln!("passes_at: {what} `{s}` is not a number");
            std::process::exit(2)
        })
    };
    let (cx, cy) = (number(&args[1], "X"), number(&args[2], "Y"));
    let side = match args[3].as_str() {
        "1" => Side::Deck,
        "2" => Side::Bottom,
        other => {
            eprintln!("passes_at: setup `{other}` is 1 or 2");
            std::process::exit(2)
        }
    };
    let fail = |e: &dyn std::fmt::Display| -> ! {
        eprintln!("passes_at: {e}");
        std::process::exit(2)
    };
    // The longboard fixture needs a machine with 4 m of X travel, as in
    // the tests.
    let machine = if args[0].contains("longboard") {
        let text = profile::GENERIC_MACHINE.replace("travel: {x: 3000,", "travel: {x: 4000,");
        profile::machine_from_str(&text, "long.yaml").unwrap_or_else(|e| fail(&e))
    } else {
        profile::generic_machine()
    };
    let job = match args.get(4) {
        Some(p) => job::load_job(std::path::Path::new(p), &machine),
        None => job::default_job(&machine),
    }
    .unwrap_or_else(|e| fail(&e));
    let design = commands::load_design(std::path::Path::new(&args[0])).unwrap_or_else(|e| fail(&e));
    let plan = commands::plan_design(&design, &machine, &job, &|_| {}).unwrap_or_else(|e| fail(&e));
    let k = if side == Side::Deck { 0 } else { 1 };
    let place = &plan.placement;
    let guard = place.guard(side);
    let guard: Vec<_> = guard.iter().collect();
    let floor = place.floor_at(side, cx, job.overlap);
    let Some(fin) = plan.setups[k].paths.iter().find(|p| p.label == "finishing") else {
        fail(&"no finishing in that setup")
    };
    let ball = DropCutter::new(&guard, fin.pass.tool.cutter);
    let ray = DropCutter::new(&guard, blanksmith::model::machine::Cutter::flat(0.0));
    let r = fin.pass.tool.cutter.radius;
    println!(
        "setup {} at X {cx} mm: floor Z {floor:.3} mm, ball radius {r} mm",
        k + 1
    );
    println!("      Y mm   ball tip Z mm   surface Z mm");
    let z = |v: Option<f64>| v.map_or("-".to_string(), |v| format!("{v:.3}"));
    for i in -32..=32 {
        let y = cy + i as f64 * 0.25;
        println!(
            "{y:>10.2} {:>15} {:>14}",
            z(ball.drop(cx, y)),
            z(ray.drop(cx, y))
        );
    }
    println!("finishing moves crossing X {cx} within 8 mm of Y {cy}:");
    let mut at = [0.0f64; 3];
    for s in &fin.steps {
        let (p, kind) = match *s {
            Step::Rapid(p) => (p, "rapid"),
            Step::Plunge(p) => (p, "plunge"),
            Step::Cut(p) => (p, "cut"),
            Step::Arc { to, .. } => (to, "arc"),
        };
        if at[0] != p[0] && (at[0] - cx) * (p[0] - cx) <= 0.0 {
            let t = (cx - at[0]) / (p[0] - at[0]);
            let y = at[1] + t * (p[1] - at[1]);
            if (y - cy).abs() < 8.0 {
                println!(
                    "  {kind:<6} Y {y:>9.3}  Z {:>9.3}",
                    at[2] + t * (p[2] - at[2])
                );
            }
        }
        at = p;
    }
    println!("moves standing more than 0.025 mm below the drop-cutter within the ball's radius:");
    for path in &plan.setups[k].paths {
        let dc = DropCutter::new(&guard, path.pass.tool.cutter);
        let mut at = [0.0f64, 0.0, machine.clearance];
        for (n, s) in path.steps.iter().enumerate() {
            let p = match *s {
                Step::Rapid(p) | Step::Plunge(p) | Step::Cut(p) => p,
                Step::Arc { to, .. } => to,
            };
            let len = ((p[0] - at[0]).powi(2) + (p[1] - at[1]).powi(2)).sqrt();
            let steps = ((len / 0.01).ceil() as usize).max(1);
            let mut worst = (0.025, None);
            for i in 0..=steps {
                let t = i as f64 / steps as f64;
                let q = [0, 1, 2].map(|c| at[c] + t * (p[c] - at[c]));
                if (q[0] - cx).abs() > r + 1.0 || (q[1] - cy).abs() > r + 1.0 {
                    continue;
                }
                if let Some(d) = dc.drop(q[0], q[1])
                    && d - q[2] > worst.0
                {
                    worst = (d - q[2], Some(q));
                }
            }
            if let (dig, Some(q)) = worst {
                println!(
                    "  {} step {n} ({:?} from {at:.3?}): {dig:.3} mm at {q:.3?}",
                    path.label, path.steps[n]
                );
            }
            at = p;
        }
    }
}
