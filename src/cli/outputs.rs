//! Writing a set of outputs (program, preview, reports, …) into a folder all or nothing.
//!
//! The rule, as the README states it:
//!
//! * A final name held by a folder (or anything that is not a plain file) stops the run before
//!   anything is written.
//! * A file already under a final name is replaced when an earlier conicut run wrote it: when
//!   the report of the same name in that folder (`NAME-report.json`) lists it. Any other file is
//!   replaced only with `--force`. The new report says which files it replaced.
//! * Every file is first written whole into `.conicut-writing/new/` inside the output folder
//!   (the same file system, so that each rename is atomic), the old files are linked as
//!   `.conicut-writing/old/NAME`, and a marker `COMMITTED` listing the final names (and which
//!   had an old file) is written last. Only then is each file renamed into place. Should a
//!   rename fail, the marker becomes `ROLLING-BACK` and the files already moved are put back
//!   from `old/`; the folder is as it was (if a file cannot be put back, the message says where
//!   the old ones are kept).
//! * A run stopped (killed) before the marker leaves the old set untouched and a
//!   `.conicut-writing` folder that the next run into the folder removes; one stopped after
//!   the marker, while renaming (a window of a few system calls), leaves the renames to be
//!   finished: the next run into the folder finishes them first (after `ROLLING-BACK`, it
//!   finishes putting the old files back) and says so. No file under a final name is ever half
//!   written. Another run writing into the same folder at the same time is told apart by its
//!   process id where `/proc` shows it (Linux); elsewhere, do not run two into one folder.

use anyhow::{Context, Result, bail};
use std::fs;
use std::io::Write;
use std::path::Path;

/// The folder, inside the output folder, that a set is written into first.
pub const STAGING: &str = ".conicut-writing";
/// The marker that the staged set is whole, with the final names one per line.
const COMMITTED: &str = "COMMITTED";
/// The marker, renamed from [`COMMITTED`], that a failed rename is being undone.
const ROLLING_BACK: &str = "ROLLING-BACK";
/// The staged files' folder inside the staging folder (apart from the markers).
const NEW: &str = "new";
/// The process writing the staged set (its id), to tell a stopped run from a running one.
const OWNER: &str = "OWNER";

/// One file of a set: its name inside the output folder and its contents.
pub struct OutputBody<'a> {
    pub name: String,
    pub body: &'a [u8],
}

/// What [`prepare`] found in the output folder.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct Prepared {
    /// The final names that already hold a file, which the set will replace.
    pub replaced: Vec<String>,
    /// What was done about an earlier run stopped while writing into the folder.
    pub recovered: Option<String>,
}

/// Makes `dir`, deals with any set an earlier run left half moved into it, and decides which of
/// `names` may be replaced: every existing one that `previous_report` (a report JSON in `dir`)
/// lists as a file, or all of them with `force`. Refuses, changing nothing of the old set, when
/// a name is a folder or an existing file conicut did not write.
pub fn prepare(
    dir: &Path,
    names: &[String],
    previous_report: Option<&str>,
    force: bool,
) -> Result<Prepared> {
    fs::create_dir_all(dir)
        .with_context(|| format!("cannot create the output folder {}", dir.display()))?;
    if !dir.is_dir() {
        bail!("the output folder {} is not a folder", dir.display());
    }
    for (k, name) in names.iter().enumerate() {
        if names[..k].iter().any(|n| n.eq_ignore_ascii_case(name)) {
            bail!(
                "two outputs would both be named {name} in {}; give the program another \
                 extension (program_extension in the profile) (nothing was written)",
                dir.display()
            );
        }
    }
    let recovered = recover(dir)?;
    let ours = previous_report.map_or_else(Vec::new, |r| files_listed(&dir.join(r)));
    let mut replaced = Vec::new();
    let mut foreign = Vec::new();
    for name in names {
        let path = dir.join(name);
        let Ok(meta) = fs::symlink_metadata(&path) else {
            continue;
        };
        if !meta.is_file() {
            bail!(
                "{} is in the way: it is {}, where conicut would write its output {name}; move \
                 it away or choose another --out (nothing was written)",
                path.display(),
                if meta.is_dir() {
                    "a folder"
                } else {
                    "not a plain file"
                }
            );
        }
        if force || ours.iter().any(|o| o == name) {
            replaced.push(name.clone());
        } else {
            foreign.push(path.display().to_string());
        }
    }
    if !foreign.is_empty() {
        bail!(
            "{} already exist{} and conicut did not write {} (the report in the folder does not \
             list {}): move {} away, choose another --out, or give --force to replace {} \
             (nothing was written)",
            foreign.join(", "),
            if foreign.len() == 1 { "s" } else { "" },
            if foreign.len() == 1 { "it" } else { "them" },
            if foreign.len() == 1 { "it" } else { "them" },
            if foreign.len() == 1 { "it" } else { "them" },
            if foreign.len() == 1 { "it" } else { "them" },
        );
    }
    Ok(Prepared {
        replaced,
        recovered,
    })
}

/// The file names a report JSON lists under `files` (none when it cannot be read).
fn files_listed(report: &Path) -> Vec<String> {
    let Ok(text) = fs::read_to_string(report) else {
        return Vec::new();
    };
    let Ok(json) = serde_json::from_str::<serde_json::Value>(&text) else {
        return Vec::new();
    };
    json["files"]
        .as_array()
        .map(|files| {
            files
                .iter()
                .filter_map(|f| f["path"].as_str())
                .filter_map(|p| Path::new(p).file_name())
                .map(|n| n.to_string_lossy().into_owned())
                .collect()
        })
        .unwrap_or_default()
}

/// Finishes or removes what an earlier run left in `dir`'s staging folder; a note of what was
/// done. Refuses while another conicut is writing there.
fn recover(dir: &Path) -> Result<Option<String>> {
    let staging = dir.join(STAGING);
    if !staging.exists() {
        return Ok(None);
    }
    if let Ok(owner) = fs::read_to_string(staging.join(OWNER))
        && let Ok(pid) = owner.trim().parse::<u32>()
        && pid != std::process::id()
        && Path::new(&format!("/proc/{pid}")).exists()
    {
        bail!(
            "another conicut (process {pid}) is writing into {} now; wait for it, or remove {} \
             if it has stopped",
            dir.display(),
            staging.display()
        );
    }
    let staged = staging.join(NEW);
    let note = if let Ok(list) = fs::read_to_string(staging.join(ROLLING_BACK)) {
        // A failed rename was being undone: finish putting the old set back.
        for line in list.lines().filter(|l| !l.is_empty()) {
            let (name, had_old) = line.split_once('\t').unwrap_or((line, "true"));
            let kept = staging.join("old").join(name);
            if kept.exists() {
                fs::rename(&kept, dir.join(name))
                    .with_context(|| format!("cannot put back {}", dir.join(name).display()))?;
            } else if had_old == "false" && !staged.join(name).exists() {
                // Moved in new, where there was no file before.
                let _ = fs::remove_file(dir.join(name));
            }
        }
        format!(
            "an earlier run into {} was stopped while putting its old files back after a \
             failure; they were put back first",
            dir.display()
        )
    } else if let Ok(list) = fs::read_to_string(staging.join(COMMITTED)) {
        // The set was whole: finish moving it into place.
        let names: Vec<&str> = list
            .lines()
            .filter(|l| !l.is_empty())
            .map(|l| l.split('\t').next().unwrap_or(l))
            .collect();
        for name in &names {
            let from = staged.join(name);
            if from.exists() {
                fs::rename(&from, dir.join(name)).with_context(|| {
                    format!(
                        "cannot finish the output set an earlier run left in {}",
                        staging.display()
                    )
                })?;
            }
        }
        format!(
            "an earlier run into {} was stopped while moving its outputs into place; its \
             set ({}) was finished first",
            dir.display(),
            names.join(", ")
        )
    } else {
        format!(
            "an earlier run into {} was stopped before its outputs were complete; its unfinished \
             files were removed and the folder's files were left as they were",
            dir.display()
        )
    };
    fs::remove_dir_all(&staging).with_context(|| format!("cannot remove {}", staging.display()))?;
    Ok(Some(note))
}

/// Writes `files` into `dir` all or nothing (the module's rule), after [`prepare`].
pub fn commit(dir: &Path, files: &[OutputBody]) -> Result<()> {
    commit_with(dir, files, &mut |from, to| fs::rename(from, to))
}

/// [`commit`] with the final renames made by `rename` (the tests make one fail).
fn commit_with(
    dir: &Path,
    files: &[OutputBody],
    rename: &mut dyn FnMut(&Path, &Path) -> std::io::Result<()>,
) -> Result<()> {
    let staging = dir.join(STAGING);
    let old = staging.join("old");
    let staged = staging.join(NEW);
    let undo_staging = |e: anyhow::Error| {
        let _ = fs::remove_dir_all(&staging);
        e
    };
    fs::create_dir(&staging).with_context(|| format!("cannot create {}", staging.display()))?;
    let stage = || -> Result<()> {
        fs::write(staging.join(OWNER), std::process::id().to_string())?;
        fs::create_dir(&old)?;
        fs::create_dir(&staged)?;
        for f in files {
            let path = staged.join(&f.name);
            let mut out = fs::File::create(&path)
                .with_context(|| format!("cannot write {}", path.display()))?;
            out.write_all(f.body)
                .and_then(|_| out.sync_all())
                .with_context(|| format!("cannot write {}", path.display()))?;
            let existing = dir.join(&f.name);
            let kept = old.join(&f.name);
            if existing.is_file() && !kept.exists() {
                // A link where the file system allows one, else a copy (never onto a link of
                // the file itself: `prepare` refuses two outputs of one name).
                fs::hard_link(&existing, &kept)
                    .or_else(|_| fs::copy(&existing, &kept).map(|_| ()))
                    .with_context(|| format!("cannot keep a copy of {}", existing.display()))?;
            }
        }
        // One line per file: its name, a tab, and whether an old file was kept for it.
        let names: String = files
            .iter()
            .map(|f| format!("{}\t{}\n", f.name, old.join(&f.name).exists()))
            .collect();
        let marker = staging.join("COMMITTING");
        let mut m = fs::File::create(&marker)?;
        m.write_all(names.as_bytes()).and_then(|_| m.sync_all())?;
        fs::rename(&marker, staging.join(COMMITTED))?;
        Ok(())
    };
    stage().map_err(undo_staging)?;
    for (k, f) in files.iter().enumerate() {
        if let Err(e) = rename(&staged.join(&f.name), &dir.join(&f.name)) {
            // Put back what was there: the old files from their links, and no new file where
            // there was none. The marker says so first, so that a run stopped now is undone by
            // the next one, not finished.
            let _ = fs::rename(staging.join(COMMITTED), staging.join(ROLLING_BACK));
            let mut all_back = true;
            for g in &files[..k] {
                let kept = old.join(&g.name);
                let back = if kept.exists() {
                    fs::rename(&kept, dir.join(&g.name))
                } else {
                    fs::remove_file(dir.join(&g.name))
                };
                all_back &= back.is_ok();
            }
            if !all_back {
                bail!(
                    "cannot write {}: {e}; and not every old file could be put back: they are \
                     kept in {} (move them back by hand; the next run into the folder tries \
                     again)",
                    dir.join(&f.name).display(),
                    old.display()
                );
            }
            let _ = fs::remove_dir_all(&staging);
            bail!(
                "cannot write {}: {e}; the folder's files were left as they were",
                dir.join(&f.name).display()
            );
        }
    }
    fs::remove_dir_all(&staging).with_context(|| format!("cannot remove {}", staging.display()))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn body(name: &str, text: &'static str) -> OutputBody<'static> {
        OutputBody {
            name: name.to_string(),
            body: text.as_bytes(),
        }
    }

    fn read(dir: &Path, name: &str) -> String {
        fs::read_to_string(dir.join(name)).unwrap_or_else(|_| "<missing>".into())
    }

    fn names(list: &[&str]) -> Vec<String> {
        list.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn a_failed_rename_puts_the_old_set_back() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        commit(d, &[body("a.nc", "old a"), body("a.svg", "old svg")]).unwrap();
        // The third rename fails: the first two have replaced a.nc and a.svg already.
        let mut count = 0;
        let mut failing = |from: &Path, to: &Path| {
            count += 1;
            if count == 3 {
                Err(std::io::Error::other("injected"))
            } else {
                fs::rename(from, to)
            }
        };
        let err = commit_with(
            d,
            &[
                body("a.nc", "new a"),
                body("a.svg", "new svg"),
                body("a-report.txt", "new report"),
            ],
            &mut failing,
        )
        .unwrap_err();
        assert!(format!("{err:#}").contains("left as they were"), "{err:#}");
        assert_eq!(read(d, "a.nc"), "old a");
        assert_eq!(read(d, "a.svg"), "old svg");
        assert_eq!(read(d, "a-report.txt"), "<missing>");
        assert!(!d.join(STAGING).exists());
    }

    #[test]
    fn a_run_stopped_after_the_marker_is_finished_by_the_next() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        // The state a run killed after its first rename leaves: the marker written, a.nc
        // already new, a.svg still staged, the old files linked in old/, the owner gone.
        fs::write(d.join("a.nc"), "new a").unwrap();
        fs::write(d.join("a.svg"), "old svg").unwrap();
        let staging = d.join(STAGING);
        fs::create_dir_all(staging.join("old")).unwrap();
        fs::write(staging.join("old/a.nc"), "old a").unwrap();
        fs::write(staging.join("old/a.svg"), "old svg").unwrap();
        fs::create_dir_all(staging.join(NEW)).unwrap();
        fs::write(staging.join(NEW).join("a.svg"), "new svg").unwrap();
        fs::write(staging.join(COMMITTED), "a.nc\na.svg\n").unwrap();
        // No process has this id (above the largest Linux allows).
        fs::write(staging.join(OWNER), "4294967295").unwrap();
        let p = prepare(d, &names(&["a.nc", "a.svg"]), None, true).unwrap();
        assert!(p.recovered.unwrap().contains("finished first"));
        assert_eq!(read(d, "a.nc"), "new a");
        assert_eq!(read(d, "a.svg"), "new svg");
        assert!(!staging.exists());
    }

    #[test]
    fn a_run_stopped_while_undoing_is_undone_by_the_next() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        // Killed while putting back after a failed third rename: a.nc already put back (its
        // link gone), a.svg still new with its old one kept, b.txt new where there was none.
        fs::write(d.join("a.nc"), "old a").unwrap();
        fs::write(d.join("a.svg"), "new svg").unwrap();
        fs::write(d.join("b.txt"), "new b").unwrap();
        let staging = d.join(STAGING);
        fs::create_dir_all(staging.join("old")).unwrap();
        fs::create_dir_all(staging.join(NEW)).unwrap();
        fs::write(staging.join("old/a.svg"), "old svg").unwrap();
        fs::write(staging.join(NEW).join("c.json"), "new c").unwrap();
        fs::write(
            staging.join(ROLLING_BACK),
            "a.nc\ttrue\na.svg\ttrue\nb.txt\tfalse\nc.json\tfalse\n",
        )
        .unwrap();
        fs::write(staging.join(OWNER), "4294967295").unwrap();
        let p = prepare(d, &names(&["a.nc"]), None, true).unwrap();
        assert!(p.recovered.unwrap().contains("put back first"));
        assert_eq!(read(d, "a.nc"), "old a");
        assert_eq!(read(d, "a.svg"), "old svg");
        assert_eq!(read(d, "b.txt"), "<missing>");
        assert_eq!(read(d, "c.json"), "<missing>");
        assert!(!staging.exists());
    }

    #[test]
    fn two_outputs_of_one_name_are_refused() {
        let dir = tempfile::tempdir().unwrap();
        let err = prepare(dir.path(), &names(&["a.svg", "a.SVG"]), None, true)
            .unwrap_err()
            .to_string();
        assert!(err.contains("both be named"), "{err}");
    }

    #[test]
    fn a_run_stopped_before_the_marker_leaves_the_old_set() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        commit(d, &[body("a.nc", "old a")]).unwrap();
        let staging = d.join(STAGING);
        fs::create_dir_all(staging.join(NEW)).unwrap();
        fs::write(staging.join(NEW).join("a.nc"), "half of a new").unwrap();
        let p = prepare(d, &names(&["a.nc"]), None, true).unwrap();
        assert!(p.recovered.unwrap().contains("removed"));
        assert_eq!(read(d, "a.nc"), "old a");
        assert!(!staging.exists());
    }

    #[test]
    fn only_files_of_an_earlier_run_are_replaced_without_force() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        fs::write(d.join("a.nc"), "someone's own program").unwrap();
        let err = prepare(d, &names(&["a.nc", "a.svg"]), Some("a-report.json"), false)
            .unwrap_err()
            .to_string();
        assert!(err.contains("a.nc") && err.contains("--force"), "{err}");
        // Listed in the report of an earlier run: replaced, and said so.
        fs::write(
            d.join("a-report.json"),
            r#"{"files": [{"role": "program", "path": "somewhere/a.nc"}]}"#,
        )
        .unwrap();
        let p = prepare(d, &names(&["a.nc", "a.svg"]), Some("a-report.json"), false).unwrap();
        assert_eq!(p.replaced, names(&["a.nc"]));
        // A folder in the way is refused even with --force.
        fs::create_dir(d.join("a.svg")).unwrap();
        let err = prepare(d, &names(&["a.nc", "a.svg"]), Some("a-report.json"), true)
            .unwrap_err()
            .to_string();
        assert!(err.contains("a folder"), "{err}");
        assert_eq!(read(d, "a.nc"), "someone's own program");
    }

    #[test]
    fn another_running_writer_is_not_disturbed() {
        let dir = tempfile::tempdir().unwrap();
        let d = dir.path();
        let staging = d.join(STAGING);
        fs::create_dir_all(&staging).unwrap();
        // Process 1 is always running on Linux (init); elsewhere this test is moot.
        if Path::new("/proc/1").exists() {
            fs::write(staging.join(OWNER), "1").unwrap();
            let err = prepare(d, &names(&["a.nc"]), None, true)
                .unwrap_err()
                .to_string();
            assert!(err.contains("is writing into"), "{err}");
            assert!(staging.exists());
        }
    }
}
