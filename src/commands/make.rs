//! `make`: every output of a board into its own folder, for one board or a
//! day's orders.

use super::*;
use crate::description::DescriptionError;
use crate::description::demo;
use crate::gcode::program::CutPlan;
use crate::model::board::Board;
use crate::output;
use crate::volume::certificate::{self};
use crate::volume::report::Report;
use std::path::{Path, PathBuf};

/// What became of `make`'s cutting stage.
#[derive(Debug)]
pub enum Cutting {
    /// Not asked for.
    Skipped,
    /// Programs written; estimated run time of setup 1 and setup 2, s.
    Done([f64; 2]),
    /// Planning or a gate refused: the design's files were written, no
    /// programs.
    Failed(JobError),
}

/// A board made: its certified mesh and what became of the cutting.
pub struct Made {
    /// The board, its mesh and report, and every file written.
    pub meshed: Meshed,
    /// The cutting stage.
    pub cutting: Cutting,
}

impl Made {
    /// Why the run is not a full success, if it is not: the volume not
    /// certified, or no programs.
    pub fn shortfall(&self) -> Option<String> {
        if !self.meshed.report.certified {
            return Some("volume NOT certified".into());
        }
        match &self.cutting {
            Cutting::Failed(e) if e.is_misfit() => Some("no programs: does not fit".into()),
            Cutting::Failed(_) => Some("no programs: cutting refused".into()),
            _ => None,
        }
    }
}

/// The file that marks a folder as a board's made folder (it is replaced
/// whole by the next `make` of that board, and only then).
pub(crate) fn board_marker(name: &str) -> String {
    format!("{name}.report.json")
}

/// The main job for one board: everything into `<out>/<name>/`: the
/// certified mesh (STL and reports), the full-size templates on A4, the
/// programs and their simulation (unless `cut` is `None`), and the page;
/// all computed before any file is written, and the folder replaced whole.
/// A cutting stage that fails leaves the design's files and the reason.
pub fn make(
    input: &Input,
    tolerance: f64,
    paper: crate::template::print::Paper,
    out: &Path,
    cut: Option<&CutArgs>,
    progress: &(dyn Fn(&str) + Sync),
) -> Result<Made, JobError> {
    let profiles = cut.map(cut_profiles).transpose()?;
    let blanks = cut.map(cut_blanks).transpose()?.flatten();
    let board = load(input)?;
    crate::meshing::mesher::check_tolerance(tolerance)?;
    output::ready(out)?;
    let dir = out.join(&board.name);
    let certified = certificate::certify(&board, tolerance)?;
    let design = Design::Board(Box::new(board.clone()));
    let source = match input {
        Input::File(p) => p.clone(),
        Input::Demo => PathBuf::from(demo::DEMO_NAME),
    };
    // The shape's files (STL, report, templates) and the cut need only the
    // certified mesh: made side by side, so the cores the one leaves idle
    // work on the other.
    let (shape, cutting) = rayon::join(
        || -> Result<_, JobError> {
            let (report, mut files) = mesh_files(&board, &certified, &dir, StlKind::Binary, true);
            let (_, _, template_files) = template_files(
                &design,
                &certified.mesh,
                Some(&report),
                paper,
                &[],
                &[],
                &dir,
            )?;
            files.extend(template_files);
            // The board meshed coarser for the page's 3D view.
            let screen =
                crate::meshing::mesher::mesh_board(&board, crate::page::scene::SCREEN_TOLERANCE)
                    .ok();
            Ok((report, files, screen))
        },
        || match (cut, &profiles) {
            (Some(args), Some((machine, job))) => {
                let litres = certified.certificate.mesh_litres;
                cut_files(
                    &design,
                    &certified.mesh,
                    litres,
                    machine,
                    job,
                    blanks.as_deref(),
                    &dir,
                    progress,
                )
                .map_err(|e| Some(with_profiles(e, &source, args)))
            }
            _ => Err(None),
        },
    );
    let (report, mut files, screen) = shape?;
    // The weight and cloth, for the page and the order sheet.
    let weight = crate::volume::weight::estimate(
        &board,
        &certified.mesh,
        certified.certificate.mesh_litres * 1e6,
    );
    let section = match &cutting {
        Ok((plan, verification, cut_files)) => {
            files.extend(cut_files.iter().cloned());
            crate::page::CutSection::Done { plan, verification }
        }
        Err(None) => crate::page::CutSection::Skipped,
        Err(Some(e)) => crate::page::CutSection::Failed(e.to_string()),
    };
    let summary = match &cutting {
        Ok((plan, verification, _)) => cut_summary(plan, verification),
        _ => vec![],
    };
    // The page and the order sheet, side by side.
    let (page, sheet) = rayon::join(
        || {
            board_page(
                &report,
                section,
                &files,
                &dir,
                fitting_lines(&board, &weight),
                screen.map(|mesh| screen_scene(&mesh, &cutting)),
                &board,
            )
        },
        || {
            let sheet =
                crate::template::order::order_page(&board, &report, &weight, &summary, paper);
            crate::template::print::to_pdf(&[sheet])
        },
    );
    files.push((dir.join("index.html"), page.into_bytes()));
    files.push((dir.join(format!("{}.order.pdf", board.name)), sheet));
    let named: Vec<(String, Vec<u8>)> = files
        .into_iter()
        .map(|(p, b)| {
            let rel = p.strip_prefix(&dir).unwrap_or(&p).display().to_string();
            (rel, b)
        })
        .collect();
    let inputs: Vec<&Path> = [Some(source.as_path())]
        .into_iter()
        .chain(cut.iter().flat_map(|a| {
            [
                a.machine.as_deref(),
                a.job.as_deref(),
                a.stock_list.as_deref(),
            ]
        }))
        .flatten()
        .collect();
    let written = output::write_folder(&dir, &named, &board_marker(&board.name), &inputs)?;
    let cutting = match cutting {
        Ok((plan, _, _)) => Cutting::Done(setup_times(&plan)),
        Err(None) => Cutting::Skipped,
        Err(Some(e)) => Cutting::Failed(e),
    };
    Ok(Made {
        meshed: Meshed {
            board,
            certified,
            report,
            written,
        },
        cutting,
    })
}

/// The cut in a few lines for the order sheet.
pub(crate) fn cut_summary(plan: &CutPlan, v: &crate::verify::report::Verification) -> Vec<String> {
    use crate::gcode::program::duration;
    let [t1, t2] = setup_times(plan);
    let b = &plan.placement.block;
    let mut out = vec![
        format!(
            "cut: {} on the router (setup 1 {}, setup 2 {}), {} programs",
            duration(t1 + t2),
            duration(t1),
            duration(t2),
            plan.programs.len()
        ),
        format!(
            "  stock: {} x {} x {}{}",
            crate::units::Both(b.length),
            crate::units::Both(b.width),
            crate::units::Both(b.thickness),
            if b.rocker.is_some() {
                ", a rockered blank"
            } else {
                ""
            }
        ),
    ];
    out.push(format!(
        "  simulated: {}; {:.2} L of foam cut away",
        if v.has_findings() {
            "FINDINGS (see the verification)".to_string()
        } else {
            match (v.gouge_max_mm, v.leftover_p95_mm) {
                (Some(g), Some(p)) => format!(
                    "clean, deepest gouge {g:.3} mm, 95 % of the stock left under {p:.3} mm"
                ),
                _ => "clean".to_string(),
            }
        },
        v.removed_volume_litres
    ));
    out
}

pub(crate) fn setup_times(plan: &CutPlan) -> [f64; 2] {
    let mut t = [0.0; 2];
    for p in &plan.programs {
        t[(p.side.number() - 1) as usize] += p.time_s;
    }
    t
}

/// The fins, the plug, the glassing and the weight, as the page lists them.
pub(crate) fn fitting_lines(
    board: &Board,
    weight: &crate::volume::weight::Weight,
) -> Vec<(String, Vec<String>)> {
    use crate::units::Both;
    let f = &board.fittings;
    let mut fins = vec![match f.setup {
        Some(s) => s.label().to_string(),
        None => "none given".to_string(),
    }];
    for fin in &f.fins {
        fins.push(format!(
            "{}{}: box front {} from the tail{}; pocket {} x {}, {} deep",
            fin.role,
            if fin.centre { "" } else { " pair" },
            Both(fin.from_tail),
            if fin.centre {
                ", on the stringer".to_string()
            } else {
                format!(
                    ", {} in from the rail, toe {} deg, cant {} deg",
                    Both(fin.from_rail),
                    fin.toe,
                    fin.cant
                )
            },
            Both(fin.pocket.length),
            Both(fin.pocket.width),
            Both(fin.pocket.depth)
        ));
    }
    if let Some(p) = f.plug {
        fins.push(format!(
            "leash plug: {} from the tail on the stringer, {} across, {} deep from the deck",
            Both(p.from_tail),
            Both(p.diameter),
            Both(p.depth)
        ));
    }
    let layers = |n: usize| match n {
        1 => "1 layer".to_string(),
        n => format!("{n} layers"),
    };
    let cloth = vec![format!(
        "cloth to cut: deck {:.2} m² a layer ({}), bottom {:.2} m² a layer ({}); laps {} round a {:.2} m outline",
        weight.deck_layer_m2,
        layers(board.laminate.deck.len()),
        weight.bottom_layer_m2,
        layers(board.laminate.bottom.len()),
        Both(board.laminate.lap),
        weight.perimeter_m
    )];
    vec![
        ("Fins and leash plug".to_string(), fins),
        ("Glassing".to_string(), cloth),
        ("Weight".to_string(), weight.text()),
    ]
}

/// The 3D view's scene: `mesh`, the board meshed coarsely for the
/// screen, placed and painted by the simulation when it was cut. (Where
/// the coarse mesh cannot be made, the page goes without the view.)
fn screen_scene<E>(
    mesh: &crate::model::mesh::Mesh,
    cutting: &Result<(CutPlan, crate::verify::report::Verification, Files), E>,
) -> crate::page::scene::Scene {
    let cut = cutting.as_ref().ok().map(|(plan, v, _)| (plan, v));
    let scale = cut.map_or(1.0, |(_, v)| crate::verify::picture::colour_scale(v));
    crate::page::scene::scene(mesh, cut, scale)
}

/// The board's report page from the files about to be written.
pub(crate) fn board_page(
    report: &Report,
    cut: crate::page::CutSection,
    files: &Files,
    dir: &Path,
    fittings: Vec<(String, Vec<String>)>,
    scene: Option<crate::page::scene::Scene>,
    board: &Board,
) -> String {
    let rails = crate::page::rail_closeups(board);
    let text = |suffix: &str| -> Option<&str> {
        files
            .iter()
            .find(|(p, _)| p.to_string_lossy().ends_with(suffix))
            .and_then(|(_, b)| std::str::from_utf8(b).ok())
    };
    let mut templates = vec![];
    if let Some(t) = text(".sections.svg") {
        templates.push((
            "Half sections (the full-size templates, shrunk to the page)",
            t,
        ));
    }
    use crate::page::views;
    let views = vec![
        ("Plan view".to_string(), views::plan_view(board)),
        (
            "Side view: rocker and foil".to_string(),
            format!(
                "{}{}",
                views::side_view(board),
                views::thickness_view(board)
            ),
        ),
    ];
    let deviations = files
        .iter()
        .filter(|(p, _)| p.to_string_lossy().ends_with(".deviation.svg"))
        .filter_map(|(_, b)| std::str::from_utf8(b).ok())
        .collect();
    let mut names: Vec<String> = files
        .iter()
        .filter_map(|(p, _)| p.strip_prefix(dir).ok().map(|q| q.display().to_string()))
        .collect();
    names.push("index.html".into());
    names.sort();
    crate::page::board_page(&crate::page::BoardPage {
        report,
        templates,
        cut,
        deviations,
        rails,
        files: names,
        fittings,
        scene,
        views,
    })
}

/// Two inputs of one run that would make the same folder.
pub(crate) fn duplicate_names(
    inputs: &[Input],
    boards: &[Result<Board, DescriptionError>],
) -> Option<String> {
    for (j, b) in boards.iter().enumerate() {
        let Ok(b) = b else { continue };
        for (i, a) in boards[..j].iter().enumerate() {
            if let Ok(a) = a
                && a.name == b.name
            {
                let show = |k: usize| match &inputs[k] {
                    Input::File(p) => p.display().to_string(),
                    Input::Demo => demo::DEMO_NAME.to_string(),
                };
                return Some(format!(
                    "{} and {} both describe a board named `{}`: their files would go into one folder and one would be lost; nothing was made (give each board its own `name:`, or list a file once)",
                    show(i),
                    show(j),
                    a.name
                ));
            }
        }
    }
    None
}

/// `make` for many boards at once, in parallel: each board in its own
/// folder, a failure (even a fault in the program) not stopping the
/// others; then `out/index.html` listing them all. Two boards with one
/// name are refused before any work. `progress(k, stage)` reports board
/// `k`'s stage.
pub fn make_many(
    inputs: &[Input],
    tolerance: f64,
    paper: crate::template::print::Paper,
    out: &Path,
    cut: Option<&CutArgs>,
    progress: &(dyn Fn(usize, &str) + Sync),
) -> Result<(Vec<Result<Made, JobError>>, PathBuf), JobError> {
    use rayon::prelude::*;
    let boards: Vec<Result<Board, DescriptionError>> = inputs.iter().map(load).collect();
    if let Some(why) = duplicate_names(inputs, &boards) {
        return Err(JobError::SameName(why));
    }
    cut.map(cut_profiles).transpose()?;
    cut.map(cut_blanks).transpose()?;
    output::ready(out)?;
    let results: Vec<Result<Made, JobError>> = inputs
        .par_iter()
        .enumerate()
        .map(|(k, input)| {
            std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                make(input, tolerance, paper, out, cut, &|s| progress(k, s))
            }))
            .unwrap_or_else(|p| Err(JobError::Internal(panic_text(&p))))
        })
        .collect();
    let rows: Vec<crate::page::Row> = inputs
        .iter()
        .zip(&results)
        .map(|(input, r)| match r {
            Ok(m) => crate::page::Row {
                name: m.meshed.board.name.clone(),
                litres: Some(m.meshed.report.volume_litres),
                times: match m.cutting {
                    Cutting::Done(t) => Some(t),
                    _ => None,
                },
                verdict: m.shortfall().unwrap_or_else(|| "done".into()),
            },
            Err(e) => crate::page::Row {
                name: match input {
                    Input::File(p) => p.display().to_string(),
                    Input::Demo => demo::DEMO_NAME.to_string(),
                },
                litres: None,
                times: None,
                verdict: format!("failed: {}", e.to_string().lines().next().unwrap_or("")),
            },
        })
        .collect();
    let index = out.join("index.html");
    let page = crate::page::run_page(&rows);
    output::write_set(
        out,
        &[("index.html".to_string(), page.into_bytes())],
        &|n| n == "index.html",
        &[],
    )?;
    Ok((results, index))
}

/// The message a panic carried.
pub(crate) fn panic_text(p: &Box<dyn std::any::Any + Send>) -> String {
    p.downcast_ref::<&str>()
        .map(|s| s.to_string())
        .or_else(|| p.downcast_ref::<String>().cloned())
        .unwrap_or_else(|| "no message".into())
}
