//! The golden manifest: every command on every fixture (and every bad
//! fixture), each output file, stdout, stderr and exit code hashed
//! (SHA-256, FIPS 180-4, by the `sha2` crate) and held against
//! `tests/golden/manifest.txt`. A refactor keeps the manifest as it is; a
//! change that moves an output rewrites it and says why in its commit:
//!
//! ```sh
//! BLANKSMITH_GOLDEN=write cargo test --release --test golden
//! ```
//!
//! (or `bash tests/golden/update.sh`, which also shows what moved).
//! Floating-point results can differ between platforms and compilers: the
//! manifest is that of x86_64 Linux with the toolchain CI runs (rustc
//! 1.95); elsewhere, regenerate it and compare the outputs, not the hashes.
//!
//! Each case runs in one temporary folder holding a copy of `fixtures/`,
//! with relative paths, so no message names a temporary folder.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;

use sha2::{Digest, Sha256};

const MACHINE: &str = "fixtures/machine-gantry-3000.yaml";
const BOARDS: [&str; 4] = ["shortboard", "fish", "longboard", "check-box"];

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn copy_tree(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap().flatten() {
        let p = e.path();
        if p.is_dir() {
            copy_tree(&p, &to.join(e.file_name()));
        } else {
            std::fs::copy(&p, to.join(e.file_name())).unwrap();
        }
    }
}

fn listed(dir: &str, ext: &str) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(root().join(dir))
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(ext))
        .map(|n| format!("{dir}/{n}"))
        .collect();
    v.sort();
    v
}

/// The cases with fixed arguments (split at spaces; `{m}` is the shipped
/// machine), after the per-board ones.
const FIXED: [(&str, &str); 9] = [
    (
        "make-box-no-cut",
        "make fixtures/check-box.yaml -o {out} --no-cut --quiet",
    ),
    (
        "make-demo-rockered",
        "make -o {out} --job fixtures/job-rockered-blank.yaml --machine {m} --quiet",
    ),
    (
        "make-demo-cradle",
        "make -o {out} --job fixtures/job-cradle.yaml --stock-list fixtures/stock-list.yaml --machine {m} --quiet",
    ),
    (
        "blanks-shortboard",
        "blanks fixtures/shortboard.yaml --stock-list fixtures/stock-list.yaml --job fixtures/job-cradle.yaml",
    ),
    (
        "cut-box",
        "cut fixtures/check-box.yaml --machine {m} -o {out} --quiet",
    ),
    (
        "resize-length",
        "resize fixtures/shortboard.yaml --length 5'10\" -o {out}/short.yaml",
    ),
    (
        "resize-volume",
        "resize fixtures/check-box.yaml --volume 25 --keep length,width -o {out}/box.yaml",
    ),
    (
        "resize-fresh",
        "resize fixtures/fish.yaml --water fresh -o {out}/fish.yaml",
    ),
    (
        "diff",
        "diff fixtures/shortboard.yaml fixtures/fish.yaml -o {out}",
    ),
];

/// The cases: an id (also its output folder under `out/`) and the
/// arguments; `{out}` stands for the case's output folder.
fn cases() -> Vec<(String, Vec<String>)> {
    let mut c: Vec<(String, Vec<String>)> = vec![];
    let mut add = |id: String, args: &[&str]| {
        let out = format!("out/{id}");
        c.push((id, args.iter().map(|a| a.replace("{out}", &out)).collect()));
    };
    for b in BOARDS {
        let f = format!("fixtures/{b}.yaml");
        add(format!("mesh-{b}"), &["mesh", &f, "-o", "{out}"]);
        add(format!("report-{b}"), &["report", &f]);
        add(format!("report-json-{b}"), &["report", &f, "--json"]);
        add(
            format!("slice-{b}"),
            &["slice", &f, "-o", "{out}", "--z-step", "20mm"],
        );
        add(format!("templates-{b}"), &["templates", &f, "-o", "{out}"]);
        add(format!("make-{b}"), &["make", &f, "-o", "{out}", "--quiet"]);
    }
    for (id, line) in FIXED {
        let line = line.replace("{m}", MACHINE);
        add(id.into(), &line.split(' ').collect::<Vec<_>>());
    }
    for b in listed("fixtures/bad", ".yaml") {
        let id = b.trim_start_matches("fixtures/bad/").replace('/', "-");
        add(format!("bad-{id}"), &["mesh", &b, "-o", "{out}"]);
    }
    for b in listed("fixtures/bad", ".stl") {
        let id = b.trim_start_matches("fixtures/bad/");
        add(format!("bad-check-{id}"), &["check", &b]);
    }
    for b in listed("fixtures/bad/machine", ".yaml") {
        let id = b.trim_start_matches("fixtures/bad/machine/");
        add(
            format!("bad-machine-{id}"),
            &[
                "cut",
                "fixtures/check-box.yaml",
                "--machine",
                &b,
                "-o",
                "{out}",
                "--quiet",
            ],
        );
    }
    for b in listed("fixtures/bad/job", ".yaml") {
        let id = b.trim_start_matches("fixtures/bad/job/");
        add(
            format!("bad-job-{id}"),
            &[
                "cut",
                "fixtures/shortboard.yaml",
                "--machine",
                MACHINE,
                "--job",
                &b,
                "-o",
                "{out}",
                "--quiet",
            ],
        );
    }
    for b in listed("fixtures/bad/gcode", ".nc") {
        let id = b.trim_start_matches("fixtures/bad/gcode/");
        add(
            format!("bad-gcode-{id}"),
            &[
                "verify",
                &b,
                "--machine",
                MACHINE,
                "--stock",
                "300x200x50mm",
                "--tool",
                "flat:10mm",
                "-o",
                "{out}",
                "--quiet",
            ],
        );
    }
    c
}

/// Cases that read what an earlier case wrote, run after all the others.
fn later_cases() -> Vec<(String, Vec<String>)> {
    let args = |a: &[&str]| a.iter().map(|s| s.to_string()).collect();
    let mut c: Vec<(String, Vec<String>)> = vec![];
    for b in ["check-box", "shortboard"] {
        let name = if b == "check-box" {
            "check-box".to_string()
        } else {
            "saltgrass-shortboard-6-2".to_string()
        };
        let stl = format!("out/mesh-{b}/{name}.stl");
        c.push((format!("check-{b}"), args(&["check", &stl])));
        c.push((format!("check-json-{b}"), args(&["check", &stl, "--json"])));
    }
    c.push((
        "compare-box".into(),
        args(&[
            "compare",
            "fixtures/check-box.yaml",
            "out/mesh-check-box/check-box.stl",
            "-o",
            "out/compare-box",
        ]),
    ));
    c
}

fn sha(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Every file under `dir`, relative, with its hash.
fn hashes(dir: &Path, base: &Path, out: &mut BTreeMap<String, String>) {
    let Ok(rd) = std::fs::read_dir(dir) else {
        return;
    };
    for e in rd.flatten() {
        let p = e.path();
        if p.is_dir() {
            hashes(&p, base, out);
        } else {
            let rel = p.strip_prefix(base).unwrap().display().to_string();
            out.insert(rel, sha(&std::fs::read(&p).unwrap()));
        }
    }
}

fn run_case(work: &Path, id: &str, args: &[String]) -> Vec<String> {
    let o = Command::new(env!("CARGO_BIN_EXE_blanksmith"))
        .args(args)
        .current_dir(work)
        .output()
        .expect("runs");
    let mut lines = vec![
        format!(
            "{id}\texit\t{}",
            o.status.code().map_or("signal".into(), |c| c.to_string())
        ),
        format!("{id}\tstdout\t{}", sha(&o.stdout)),
        format!("{id}\tstderr\t{}", sha(&o.stderr)),
    ];
    let mut files = BTreeMap::new();
    let dir = work.join("out").join(id);
    hashes(&dir, &dir, &mut files);
    for (f, h) in files {
        lines.push(format!("{id}\tfile {f}\t{h}"));
    }
    lines
}

/// Runs the cases on two threads, keeping their order.
fn run_all(work: &Path, cases: &[(String, Vec<String>)]) -> Vec<String> {
    let next = std::sync::atomic::AtomicUsize::new(0);
    let results: Vec<std::sync::Mutex<Vec<String>>> = cases
        .iter()
        .map(|_| std::sync::Mutex::new(vec![]))
        .collect();
    std::thread::scope(|s| {
        for _ in 0..2 {
            s.spawn(|| {
                loop {
                    let k = next.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
                    let Some((id, args)) = cases.get(k) else {
                        break;
                    };
                    *results[k].lock().unwrap() = run_case(work, id, args);
                }
            });
        }
    });
    results
        .into_iter()
        .flat_map(|m| m.into_inner().unwrap())
        .collect()
}

#[test]
fn every_output_matches_the_golden_manifest() {
    let dir = tempfile::tempdir().unwrap();
    let work = dir.path();
    copy_tree(&root().join("fixtures"), &work.join("fixtures"));
    let mut lines = run_all(work, &cases());
    lines.extend(run_all(work, &later_cases()));
    let got = lines.join("\n") + "\n";
    let path = root().join("tests/golden/manifest.txt");
    if std::env::var("BLANKSMITH_GOLDEN").as_deref() == Ok("write") {
        std::fs::create_dir_all(path.parent().unwrap()).unwrap();
        std::fs::write(&path, &got).unwrap();
        return;
    }
    let want = std::fs::read_to_string(&path).unwrap_or_default();
    if got != want {
        let key = |l: &str| {
            l.rsplit_once('\t')
                .map(|(k, _)| k.to_string())
                .unwrap_or_default()
        };
        let w: BTreeMap<String, &str> = want.lines().map(|l| (key(l), l)).collect();
        let g: BTreeMap<String, &str> = got.lines().map(|l| (key(l), l)).collect();
        let mut moved = vec![];
        for (k, l) in &g {
            match w.get(k) {
                None => moved.push(format!("new      {k}")),
                Some(x) if x != l => moved.push(format!("changed  {k}")),
                _ => {}
            }
        }
        for k in w.keys().filter(|k| !g.contains_key(*k)) {
            moved.push(format!("gone     {k}"));
        }
        panic!(
            "{} outputs differ from tests/golden/manifest.txt (rewrite it with BLANKSMITH_GOLDEN=write and say why in the commit):\n{}",
            moved.len(),
            moved.join("\n")
        );
    }
}
