//! Output sets written whole or not at all, and never over an input.
//!
//! A command's files are first written into a hidden staging folder beside
//! their destination and synced; only then are they put in place:
//!
//! - a board's own folder (`make`'s `<out>/<name>/`) is swapped with the
//!   staging folder in one atomic exchange (Linux `renameat2` with
//!   `RENAME_EXCHANGE`), so the folder holds the whole old set or the whole
//!   new one at every moment;
//! - files among others in a shared folder (`mesh`, `cut`, …) are put in
//!   place by a journal: the staging folder gets a `COMMIT` list once every
//!   file is on disk, and the renames follow. A run stopped before the list
//!   leaves the old set; one stopped after it is completed by the next run
//!   into that folder (roll forward). Older files of the same family that
//!   the new set does not have (a program for a tool no longer used) are in
//!   the list too and removed, so the sets never mix.
//!
//! Staging folders are named `.blanksmith-<pid>-<n>.stage`; the next run
//! into a folder finishes or removes those of processes no longer running.

use std::collections::BTreeSet;
use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};

/// Why an output set could not be put in place.
#[derive(Debug, thiserror::Error)]
pub enum OutputError {
    /// The file system refused.
    #[error("{path}: cannot write: {source}")]
    Io {
        /// The file or folder.
        path: String,
        /// What the system said.
        source: io::Error,
    },
    /// A destination would replace a file the command reads.
    #[error(
        "{path}: this is an input of the command; it is never overwritten (choose another output name or folder)"
    )]
    WouldOverwriteInput {
        /// The file.
        path: String,
    },
    /// A destination is a folder (or a board folder is a file, or not ours).
    #[error("{path}: {why}")]
    InTheWay {
        /// The path.
        path: String,
        /// What is there, and the fix.
        why: String,
    },
}

fn io_err(path: &Path) -> impl FnOnce(io::Error) -> OutputError + '_ {
    move |source| OutputError::Io {
        path: path.display().to_string(),
        source,
    }
}

static SEQUENCE: AtomicUsize = AtomicUsize::new(0);

const STAGE_PREFIX: &str = ".blanksmith-";
const STAGE_SUFFIX: &str = ".stage";
const COMMIT: &str = "COMMIT";

fn stage_name() -> String {
    format!(
        "{STAGE_PREFIX}{}-{}{STAGE_SUFFIX}",
        std::process::id(),
        SEQUENCE.fetch_add(1, Ordering::Relaxed)
    )
}

/// The process id in a staging folder's name, if the name is one.
fn stage_pid(name: &str) -> Option<u32> {
    let rest = name
        .strip_prefix(STAGE_PREFIX)?
        .strip_suffix(STAGE_SUFFIX)?;
    rest.split('-').next()?.parse().ok()
}

#[cfg(unix)]
fn alive(pid: u32) -> bool {
    if pid == std::process::id() {
        return true;
    }
    // Signal 0 checks that the process exists without touching it.
    let r = unsafe { libc::kill(pid as libc::pid_t, 0) };
    r == 0 || io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
}

#[cfg(not(unix))]
fn alive(pid: u32) -> bool {
    pid == std::process::id()
}

/// The nearest folder that exists at or above `dir`.
fn existing_ancestor(dir: &Path) -> PathBuf {
    let mut p = if dir.as_os_str().is_empty() {
        PathBuf::from(".")
    } else {
        dir.to_path_buf()
    };
    while !p.exists() {
        match p.parent() {
            Some(q) if !q.as_os_str().is_empty() => p = q.to_path_buf(),
            _ => return PathBuf::from("."),
        }
    }
    p
}

/// Checks, before any work, that files can be written into `dir` (which
/// need not exist yet): the nearest existing folder on its path is a folder
/// and accepts a new entry. Nothing is left behind.
pub fn ready(dir: &Path) -> Result<(), OutputError> {
    let base = existing_ancestor(dir);
    if !base.is_dir() {
        return Err(OutputError::InTheWay {
            path: base.display().to_string(),
            why:
                "is a file, so the output folder cannot be made here; choose another folder with -o"
                    .into(),
        });
    }
    let probe = base.join(stage_name());
    fs::create_dir(&probe).map_err(io_err(&base))?;
    fs::remove_dir(&probe).map_err(io_err(&base))?;
    Ok(())
}

/// Finishes or removes what stopped runs left in `dir`: staging folders of
/// processes no longer running. A journal with its `COMMIT` list is rolled
/// forward; anything else staged is removed.
pub fn recover(dir: &Path) -> Result<(), OutputError> {
    let Ok(entries) = fs::read_dir(dir) else {
        return Ok(());
    };
    let mut stages: Vec<PathBuf> = entries
        .flatten()
        .filter(|e| {
            let name = e.file_name();
            stage_pid(&name.to_string_lossy()).is_some_and(|pid| !alive(pid))
        })
        .map(|e| e.path())
        .collect();
    stages.sort();
    for stage in stages {
        if stage.join(COMMIT).is_file() {
            apply_journal(dir, &stage)?;
        }
        remove_tree(&stage)?;
    }
    Ok(())
}

fn remove_tree(p: &Path) -> Result<(), OutputError> {
    match fs::remove_dir_all(p) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(()),
        Err(e) => Err(io_err(p)(e)),
    }
}

fn write_synced(path: &Path, bytes: &[u8]) -> Result<(), OutputError> {
    let mut f = fs::File::create(path).map_err(io_err(path))?;
    f.write_all(bytes).map_err(io_err(path))?;
    f.sync_all().map_err(io_err(path))?;
    slow_down_for_tests();
    Ok(())
}

/// Syncs a folder's entries (the renames in it) to disk; a no-op where
/// folders cannot be opened as files.
fn sync_dir(dir: &Path) {
    if let Ok(f) = fs::File::open(dir) {
        let _ = f.sync_all();
    }
}

/// `BLANKSMITH_WRITE_DELAY_MS` stretches the write phase (after each file
/// staged and each file put in place) so the tests can stop a run in the
/// middle of it. Unset, it costs one environment lookup per file.
fn slow_down_for_tests() {
    if let Some(ms) = std::env::var("BLANKSMITH_WRITE_DELAY_MS")
        .ok()
        .and_then(|v| v.parse::<u64>().ok())
    {
        std::thread::sleep(std::time::Duration::from_millis(ms));
    }
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (fs::canonicalize(a), fs::canonicalize(b)) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

fn refuse_inputs(dest: &Path, inputs: &[&Path]) -> Result<(), OutputError> {
    if inputs.iter().any(|i| same_file(dest, i)) {
        return Err(OutputError::WouldOverwriteInput {
            path: dest.display().to_string(),
        });
    }
    Ok(())
}

/// Writes `files` (file names and contents) into the shared folder `dir` as
/// one set: all of them, or none. `family` says which files already in the
/// folder belong to the set being replaced (the same board's outputs of
/// this kind); those the new set does not have are removed with it.
/// `inputs` are never overwritten.
pub fn write_set(
    dir: &Path,
    files: &[(String, Vec<u8>)],
    family: &dyn Fn(&str) -> bool,
    inputs: &[&Path],
) -> Result<Vec<PathBuf>, OutputError> {
    let dir = if dir.as_os_str().is_empty() {
        Path::new(".")
    } else {
        dir
    };
    ready(dir)?;
    let mut names = BTreeSet::new();
    for (name, _) in files {
        let dest = dir.join(name);
        refuse_inputs(&dest, inputs)?;
        if dest.is_dir() {
            return Err(OutputError::InTheWay {
                path: dest.display().to_string(),
                why: "is a folder where this file goes; nothing was written (move the folder or choose another -o)".into(),
            });
        }
        names.insert(name.clone());
    }
    fs::create_dir_all(dir).map_err(io_err(dir))?;
    recover(dir)?;
    let stage = dir.join(stage_name());
    let staged = (|| {
        fs::create_dir(&stage).map_err(io_err(&stage))?;
        for (name, bytes) in files {
            write_synced(&stage.join(name), bytes)?;
        }
        let stale: Vec<String> = fs::read_dir(dir)
            .map_err(io_err(dir))?
            .flatten()
            .filter(|e| e.file_type().is_ok_and(|t| t.is_file()))
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| !n.starts_with('.') && family(n) && !names.contains(n))
            .filter(|n| !inputs.iter().any(|i| same_file(&dir.join(n), i)))
            .collect();
        let mut list = String::new();
        for n in &names {
            list.push_str(&format!("put {n}\n"));
        }
        for n in &stale {
            list.push_str(&format!("remove {n}\n"));
        }
        let tmp = stage.join(".commit");
        write_synced(&tmp, list.as_bytes())?;
        sync_dir(&stage);
        // From this rename on, the set is committed: a stopped run is
        // completed by the next one.
        fs::rename(&tmp, stage.join(COMMIT)).map_err(io_err(&stage))?;
        sync_dir(&stage);
        Ok(())
    })();
    if let Err(e) = staged {
        let _ = remove_tree(&stage);
        return Err(e);
    }
    apply_journal(dir, &stage)?;
    remove_tree(&stage)?;
    Ok(names.iter().map(|n| dir.join(n)).collect())
}

/// Carries out a committed journal: each staged file renamed into `dir`
/// (those already moved are skipped), each stale file removed.
fn apply_journal(dir: &Path, stage: &Path) -> Result<(), OutputError> {
    let list = fs::read_to_string(stage.join(COMMIT)).map_err(io_err(stage))?;
    for line in list.lines() {
        if let Some(name) = line.strip_prefix("put ") {
            let from = stage.join(name);
            if from.exists() {
                fs::rename(&from, dir.join(name)).map_err(io_err(&dir.join(name)))?;
                slow_down_for_tests();
            }
        } else if let Some(name) = line.strip_prefix("remove ") {
            match fs::remove_file(dir.join(name)) {
                Ok(()) => {}
                Err(e) if e.kind() == io::ErrorKind::NotFound => {}
                Err(e) => return Err(io_err(&dir.join(name))(e)),
            }
        }
    }
    sync_dir(dir);
    Ok(())
}

/// Writes a board's own folder `dir` (e.g. `<out>/<name>/`) as one set:
/// the files (names relative to `dir`) are staged in a hidden folder beside
/// it and exchanged with the old folder atomically. A folder at `dir` that
/// holds other files than a board's (no `marker` file in it, and not empty)
/// is refused rather than replaced.
pub fn write_folder(
    dir: &Path,
    files: &[(String, Vec<u8>)],
    marker: &str,
    inputs: &[&Path],
) -> Result<Vec<PathBuf>, OutputError> {
    let parent = match dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    ready(&parent)?;
    for i in inputs {
        if let (Ok(i), Ok(d)) = (fs::canonicalize(i), fs::canonicalize(dir))
            && i.starts_with(&d)
        {
            return Err(OutputError::WouldOverwriteInput {
                path: i.display().to_string(),
            });
        }
    }
    if dir.exists() {
        let ours = dir.is_dir()
            && (dir.join(marker).is_file()
                || fs::read_dir(dir).is_ok_and(|mut d| d.next().is_none()));
        if !ours {
            return Err(OutputError::InTheWay {
                path: dir.display().to_string(),
                why: format!(
                    "is in the way: it is not a folder this board's files were made into (no {marker}), so it is not replaced; move it or choose another -o"
                ),
            });
        }
    }
    fs::create_dir_all(&parent).map_err(io_err(&parent))?;
    recover(&parent)?;
    let stage = parent.join(stage_name());
    let staged = (|| {
        fs::create_dir(&stage).map_err(io_err(&stage))?;
        for (name, bytes) in files {
            let p = stage.join(name);
            if let Some(sub) = p.parent() {
                fs::create_dir_all(sub).map_err(io_err(sub))?;
            }
            write_synced(&p, bytes)?;
        }
        sync_dir(&stage);
        swap_in(&stage, dir)
    })();
    // After the swap the staging folder holds the old set (or nothing).
    let removed = remove_tree(&stage);
    staged?;
    removed?;
    let mut names: Vec<PathBuf> = files.iter().map(|(n, _)| dir.join(n)).collect();
    names.sort();
    Ok(names)
}

/// Puts the folder `stage` at `dir` in one step, leaving the old `dir`
/// (if any) at `stage`.
fn swap_in(stage: &Path, dir: &Path) -> Result<(), OutputError> {
    if !dir.exists() {
        fs::rename(stage, dir).map_err(io_err(dir))?;
        fs::create_dir(stage).map_err(io_err(stage))?;
        return Ok(());
    }
    exchange(stage, dir).map_err(io_err(dir))?;
    slow_down_for_tests();
    Ok(())
}

#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    let ca = CString::new(a.as_os_str().as_bytes())?;
    let cb = CString::new(b.as_os_str().as_bytes())?;
    // SAFETY: both are valid NUL-terminated paths, relative to the
    // current folder.
    let r = unsafe {
        libc::renameat2(
            libc::AT_FDCWD,
            ca.as_ptr(),
            libc::AT_FDCWD,
            cb.as_ptr(),
            libc::RENAME_EXCHANGE,
        )
    };
    if r == 0 {
        Ok(())
    } else {
        Err(io::Error::last_os_error())
    }
}

/// Where the kernel has no atomic exchange: the old folder is moved aside
/// and the new one put in its place; a stop between the two renames leaves
/// the old folder under the staging name, which `recover` removes, so the
/// board's folder is then missing rather than mixed.
#[cfg(not(target_os = "linux"))]
fn exchange(a: &Path, b: &Path) -> io::Result<()> {
    let aside = a.with_extension("old");
    fs::rename(b, &aside)?;
    fs::rename(a, b)?;
    fs::rename(&aside, a)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    fn set(pairs: &[(&str, &str)]) -> Vec<(String, Vec<u8>)> {
        pairs
            .iter()
            .map(|(n, b)| (n.to_string(), b.as_bytes().to_vec()))
            .collect()
    }

    #[test]
    fn a_set_replaces_its_family_and_leaves_others() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let fam = |n: &str| n.starts_with("b-");
        write_set(d, &set(&[("b-1.nc", "old"), ("b-2.nc", "old")]), &fam, &[]).unwrap();
        fs::write(d.join("notes.txt"), "mine").unwrap();
        write_set(d, &set(&[("b-1.nc", "new")]), &fam, &[]).unwrap();
        assert_eq!(names(d), ["b-1.nc", "notes.txt"]);
        assert_eq!(fs::read(d.join("b-1.nc")).unwrap(), b"new");
    }

    #[test]
    fn a_folder_in_the_way_stops_the_set_before_anything_moves() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        fs::write(d.join("b.stl"), "user's").unwrap();
        fs::create_dir(d.join("b.report.json")).unwrap();
        let fam = |_: &str| true;
        let e = write_set(
            d,
            &set(&[("b.stl", "new"), ("b.report.json", "{}")]),
            &fam,
            &[],
        );
        assert!(matches!(e, Err(OutputError::InTheWay { .. })), "{e:?}");
        assert_eq!(fs::read(d.join("b.stl")).unwrap(), b"user's");
        assert_eq!(names(d), ["b.report.json", "b.stl"]);
    }

    #[test]
    fn an_input_is_never_overwritten() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        fs::write(d.join("b.yaml"), "hand-written").unwrap();
        let e = write_set(d, &set(&[("b.yaml", "x")]), &|_| true, &[&d.join("b.yaml")]);
        assert!(matches!(e, Err(OutputError::WouldOverwriteInput { .. })));
        assert_eq!(fs::read(d.join("b.yaml")).unwrap(), b"hand-written");
    }

    #[test]
    fn a_committed_journal_is_rolled_forward_and_an_uncommitted_one_dropped() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        fs::write(d.join("b.stl"), "old").unwrap();
        fs::write(d.join("b.json"), "old").unwrap();
        // A stopped run (no process has id 999999999: Linux ids stop at 2^22) that
        // had committed and moved one of its two files.
        let done = d.join(".blanksmith-999999999-0.stage");
        fs::create_dir(&done).unwrap();
        fs::write(done.join("b.json"), "new").unwrap();
        fs::write(done.join(COMMIT), "put b.stl\nput b.json\n").unwrap();
        fs::write(d.join("b.stl"), "new").unwrap();
        // And one that stopped before committing.
        let half = d.join(".blanksmith-999999999-1.stage");
        fs::create_dir(&half).unwrap();
        fs::write(half.join("b.stl"), "other").unwrap();
        recover(d).unwrap();
        assert_eq!(names(d), ["b.json", "b.stl"]);
        assert_eq!(fs::read(d.join("b.json")).unwrap(), b"new");
        assert_eq!(fs::read(d.join("b.stl")).unwrap(), b"new");
    }

    #[test]
    fn a_board_folder_is_swapped_whole() {
        let dir = tempfile::tempdir().unwrap();
        let b = dir.path().join("out").join("board");
        write_folder(
            &b,
            &set(&[("board.json", "1"), ("old.nc", "1")]),
            "board.json",
            &[],
        )
        .unwrap();
        write_folder(&b, &set(&[("board.json", "2")]), "board.json", &[]).unwrap();
        assert_eq!(names(&b), ["board.json"]);
        assert_eq!(names(&dir.path().join("out")), ["board"]);
        // A folder of someone else's files is not replaced.
        let other = dir.path().join("out").join("photos");
        fs::create_dir(&other).unwrap();
        fs::write(other.join("a.jpg"), "x").unwrap();
        let e = write_folder(&other, &set(&[("photos.json", "1")]), "photos.json", &[]);
        assert!(matches!(e, Err(OutputError::InTheWay { .. })));
        assert_eq!(names(&other), ["a.jpg"]);
    }
}
