//! The layout holds the pipeline's order: a module uses only modules
//! declared before it in `src/lib.rs` (the foundations, then the stages in
//! order), never a later one, so no two folders depend on each other.
//! Files stay short enough to read in one sitting.

use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The top-level modules in the order `src/lib.rs` declares them.
fn order() -> Vec<String> {
    let lib = std::fs::read_to_string(root().join("src/lib.rs")).unwrap();
    lib.lines()
        .filter_map(|l| l.strip_prefix("pub mod "))
        .map(|m| m.trim_end_matches(';').to_string())
        .collect()
}

fn sources(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap().flatten() {
        let p = e.path();
        if p.is_dir() {
            sources(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") {
            out.push(p);
        }
    }
}

/// The top-level module a file belongs to (`src/volume/report.rs` →
/// `volume`), or `None` for `lib.rs` and `main.rs`.
fn home(file: &Path) -> Option<String> {
    let rel = file.strip_prefix(root().join("src")).unwrap();
    let first = rel
        .components()
        .next()?
        .as_os_str()
        .to_string_lossy()
        .into_owned();
    match first.as_str() {
        "lib.rs" | "main.rs" => None,
        f => Some(f.trim_end_matches(".rs").to_string()),
    }
}

/// Every `crate::NAME` a file names, with its line.
fn uses(text: &str) -> Vec<(usize, String)> {
    let mut out = vec![];
    for (i, line) in text.lines().enumerate() {
        let code = line.split("//").next().unwrap_or("");
        let mut rest = code;
        while let Some(k) = rest.find("crate::") {
            let tail = &rest[k + 7..];
            let name: String = tail
                .chars()
                .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
                .collect();
            rest = &tail[name.len()..];
            if !name.is_empty() {
                out.push((i + 1, name));
            }
        }
    }
    out
}

#[test]
fn no_module_uses_a_later_one() {
    let order = order();
    assert!(order.len() > 10, "lib.rs lists {order:?}");
    let rank = |m: &str| order.iter().position(|o| o == m);
    let mut files = vec![];
    sources(&root().join("src"), &mut files);
    files.sort();
    let mut wrong = vec![];
    for f in &files {
        let Some(own) = home(f) else { continue };
        let r = rank(&own)
            .unwrap_or_else(|| panic!("{}: `{own}` is not declared in lib.rs", f.display()));
        for (line, used) in uses(&std::fs::read_to_string(f).unwrap()) {
            match rank(&used) {
                Some(u) if u > r => wrong.push(format!(
                    "{}:{line}: `{own}` uses `{used}`, which comes later",
                    f.strip_prefix(root()).unwrap().display()
                )),
                _ => {}
            }
        }
    }
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
}

/// Whether a folder's `mod.rs` holds more than its list of modules (and
/// their docs and re-exports).
fn holds_code(file: &Path) -> bool {
    std::fs::read_to_string(file).unwrap().lines().any(|l| {
        let l = l.trim();
        !(l.is_empty()
            || l.starts_with("//")
            || l.starts_with("pub mod ")
            || l.starts_with("mod ")
            || l.starts_with("pub use ")
            || l.starts_with("#["))
    })
}

/// DEVELOPERS.md's layout table names every source file, and only those
/// (a folder's `mod.rs` only where it holds code, not just its list).
#[test]
fn the_layout_table_matches_the_tree() {
    let guide = std::fs::read_to_string(root().join("DEVELOPERS.md")).unwrap();
    let table = &guide[guide.find("## Layout").unwrap()..guide.find("## Tests").unwrap()];
    let mut named = std::collections::BTreeSet::new();
    for line in table.lines().filter(|l| l.starts_with("| `")) {
        let first = line.split('|').nth(1).unwrap();
        for part in first.split('`').skip(1).step_by(2) {
            named.insert(part.to_string());
        }
    }
    let mut files = vec![];
    sources(&root().join("src"), &mut files);
    let tree: std::collections::BTreeSet<String> = files
        .iter()
        .map(|f| {
            f.strip_prefix(root().join("src"))
                .unwrap()
                .display()
                .to_string()
        })
        .filter(|f| !f.ends_with("mod.rs") || holds_code(&root().join("src").join(f)))
        .filter(|f| f != "lib.rs")
        .collect();
    let missing: Vec<_> = tree.difference(&named).collect();
    let gone: Vec<_> = named.difference(&tree).collect();
    assert!(
        missing.is_empty() && gone.is_empty(),
        "not in the table: {missing:?}; not in the tree: {gone:?}"
    );
}

/// No file in `src/` over 600 lines, tests beside the code included: a
/// file holds one idea that can be read in one sitting (functions are held
/// to 150 lines by clippy's `too_many_lines`, set in `clippy.toml`).
#[test]
fn no_source_file_is_over_600_lines() {
    let mut files = vec![];
    sources(&root().join("src"), &mut files);
    files.sort();
    let long: Vec<String> = files
        .iter()
        .filter_map(|f| {
            let n = std::fs::read_to_string(f).unwrap().lines().count();
            (n > 600).then(|| format!("{}: {n} lines", f.strip_prefix(root()).unwrap().display()))
        })
        .collect();
    assert!(
        long.is_empty(),
        "split along their seams:\n{}",
        long.join("\n")
    );
}
