//! The output set is written all or nothing (src/cli/outputs.rs states the rule): a folder in the
//! way or a file conicut did not write stops the run with the old set untouched; files of an
//! earlier run are replaced and the report says so; a run killed at any moment leaves every file
//! under a final name whole (the old one or the new one), and the next run finishes or removes
//! what the killed one left.

use assert_cmd::Command;
use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

const STAGING: &str = ".conicut-writing";

fn demo_drawing() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-parts/truss-bracket.dxf")
}

fn plan(drawing: &Path, out: &Path, extra: &[&str]) -> assert_cmd::assert::Assert {
    Command::cargo_bin("conicut")
        .unwrap()
        .arg("plan")
        .arg(drawing)
        .args(["--machine", "laser", "--out"])
        .arg(out)
        .args(extra)
        .assert()
}

/// Every file in `dir` (not in folders) by name, with its bytes.
fn files(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    fs::read_dir(dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.path().is_file())
        .map(|e| {
            (
                e.file_name().to_string_lossy().into_owned(),
                fs::read(e.path()).unwrap(),
            )
        })
        .collect()
}

fn stderr(a: &assert_cmd::assert::Assert) -> String {
    String::from_utf8_lossy(&a.get_output().stderr).into_owned()
}

#[test]
fn a_folder_in_the_way_changes_nothing() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    plan(&demo_drawing(), &out, &[]).success();
    fs::remove_file(out.join("truss-bracket.svg")).unwrap();
    fs::create_dir(out.join("truss-bracket.svg")).unwrap();
    let before = files(&out);
    let run = plan(&demo_drawing(), &out, &["--tolerance", "0.02"]).failure();
    let message = stderr(&run);
    assert!(
        message.contains("truss-bracket.svg") && message.contains("a folder"),
        "{message}"
    );
    assert_eq!(files(&out), before, "the old files are as they were");
    assert!(!out.join(STAGING).exists());
    // Even with --force.
    plan(&demo_drawing(), &out, &["--tolerance", "0.02", "--force"]).failure();
    assert_eq!(files(&out), before);
}

#[test]
fn an_earlier_set_is_replaced_and_the_report_says_so() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    let first = plan(&demo_drawing(), &out, &[]).success();
    assert!(!String::from_utf8_lossy(&first.get_output().stdout).contains("(replaced)"));
    let again = plan(&demo_drawing(), &out, &["--tolerance", "0.02"]).success();
    let text = String::from_utf8_lossy(&again.get_output().stdout).into_owned();
    for name in [
        "truss-bracket.nc",
        "truss-bracket.svg",
        "truss-bracket-report.json",
    ] {
        assert!(
            text.lines()
                .any(|l| l.contains(name) && l.contains("(replaced)")),
            "{name}: {text}"
        );
    }
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("truss-bracket-report.json")).unwrap())
            .unwrap();
    assert!(
        report["files"]
            .as_array()
            .unwrap()
            .iter()
            .all(|f| f["replaced"] == true),
        "{}",
        report["files"]
    );
    // The new program is the one in place.
    assert!(
        fs::read_to_string(out.join("truss-bracket.nc"))
            .unwrap()
            .contains("tolerance 0.0200 mm")
    );
}

#[test]
fn a_file_conicut_did_not_write_needs_force() {
    let tmp = tempfile::tempdir().unwrap();
    let out = tmp.path().join("out");
    fs::create_dir_all(&out).unwrap();
    fs::write(out.join("truss-bracket.nc"), "(the shop's own program)\n").unwrap();
    let run = plan(&demo_drawing(), &out, &[]).failure();
    let message = stderr(&run);
    assert!(
        message.contains("truss-bracket.nc") && message.contains("--force"),
        "{message}"
    );
    assert_eq!(
        fs::read_to_string(out.join("truss-bracket.nc")).unwrap(),
        "(the shop's own program)\n"
    );
    assert_eq!(files(&out).len(), 1, "nothing else written");
    plan(&demo_drawing(), &out, &["--force"]).success();
    assert!(
        fs::read_to_string(out.join("truss-bracket.nc"))
            .unwrap()
            .contains("G21")
    );
}

/// Kills `plan` at moments spread over a run's length; after each kill every file under a final
/// name is whole (byte for byte the old set's or the new set's), and the next run leaves the
/// new set complete with no staging folder.
#[test]
fn a_run_killed_at_any_moment_leaves_whole_files() {
    let tmp = tempfile::tempdir().unwrap();
    let drawing = tmp.path().join("sheet.dxf");
    // A generated sheet (src/demo/sheet.rs, invented for tests and benchmarks), large enough
    // that a run lasts a while.
    fs::write(&drawing, conicut::demo::sheet::sheet_dxf(600, 7)).unwrap();
    let out = tmp.path().join("out");
    plan(&drawing, &out, &[]).success();
    let old = files(&out);
    let started = Instant::now();
    plan(&drawing, &out, &["--tolerance", "0.02"]).success();
    let length = started.elapsed();
    let new = files(&out);
    assert_eq!(
        old.keys().collect::<Vec<_>>(),
        new.keys().collect::<Vec<_>>()
    );
    let restore_old = || {
        let _ = fs::remove_dir_all(out.join(STAGING));
        for (name, bytes) in &old {
            fs::write(out.join(name), bytes).unwrap();
        }
    };
    let binary = assert_cmd::cargo::cargo_bin("conicut");
    let shares = [0.2, 0.5, 0.8, 0.95, 0.99, 1.0, 1.03, 1.1];
    for share in shares {
        restore_old();
        let mut child = std::process::Command::new(&binary)
            .arg("plan")
            .arg(&drawing)
            .args(["--machine", "laser", "--tolerance", "0.02", "--out"])
            .arg(&out)
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(Duration::from_secs_f64(length.as_secs_f64() * share));
        let _ = child.kill(); // SIGKILL on Unix
        child.wait().unwrap();
        let now = files(&out);
        for (name, bytes) in &now {
            let whole = old.get(name) == Some(bytes) || new.get(name) == Some(bytes);
            assert!(
                whole,
                "killed at {share} of a run: {name} is neither the old nor the new file"
            );
        }
        assert_eq!(
            now.keys().collect::<Vec<_>>(),
            old.keys().collect::<Vec<_>>(),
            "killed at {share}: no other file under the output folder"
        );
        let fresh = now.iter().filter(|(n, b)| new.get(*n) == Some(b)).count();
        eprintln!(
            "killed at {share} of a run: {fresh} of {} files new, staging folder {}",
            now.len(),
            if out.join(STAGING).exists() {
                "left"
            } else {
                "gone"
            }
        );
        // The next run finishes or removes what the killed one left, then writes its own set.
        plan(&drawing, &out, &["--tolerance", "0.02"]).success();
        assert!(!out.join(STAGING).exists(), "killed at {share}");
        let after = files(&out);
        for name in ["sheet.nc", "sheet.svg"] {
            assert_eq!(after.get(name), new.get(name), "killed at {share}: {name}");
        }
    }
}

#[test]
fn an_output_folder_under_a_regular_file_is_refused() {
    let tmp = tempfile::tempdir().unwrap();
    let file = tmp.path().join("notes.txt");
    fs::write(&file, "the shop's notes\n").unwrap();
    let run = plan(&demo_drawing(), &file.join("out"), &[]).failure();
    let message = stderr(&run);
    assert!(
        message.contains("cannot create the output folder") && message.contains("notes.txt"),
        "{message}"
    );
    assert_eq!(fs::read_to_string(&file).unwrap(), "the shop's notes\n");
}
