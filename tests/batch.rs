//! `conicut plan` on several drawings and folders: one output folder per drawing, a summary
//! table, a failure exit when any drawing fails while the others are still written, and no
//! progress output unless stderr is a terminal.

use assert_cmd::Command;
use conicut::demo::sheet::sheet_dxf;
use std::fs;
use std::path::Path;

fn conicut() -> Command {
    Command::cargo_bin("conicut").expect("the conicut binary is built")
}

fn laser() -> String {
    format!("{}/machine-profiles/laser.toml", env!("CARGO_MANIFEST_DIR"))
}

/// A folder `in` with two generated sheets, and a drawing beside it.
fn drawings(root: &Path) {
    fs::create_dir_all(root.join("in")).unwrap();
    fs::write(root.join("in/panel-a.dxf"), sheet_dxf(12, 1)).unwrap();
    fs::write(root.join("in/panel-b.DXF"), sheet_dxf(9, 2)).unwrap();
    fs::write(root.join("in/notes.txt"), "not a drawing").unwrap();
    fs::write(root.join("single.dxf"), sheet_dxf(4, 3)).unwrap();
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).expect("utf-8")
}

#[test]
fn a_folder_and_a_file_give_one_output_folder_each_and_a_summary() {
    let dir = tempfile::tempdir().unwrap();
    drawings(dir.path());
    let out = conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "in",
            "single.dxf",
            "--machine",
            &laser(),
            "--out",
            "out",
        ])
        .assert()
        .success()
        .get_output()
        .clone();
    let summary = text(&out.stdout);
    assert!(
        summary.contains("3 drawings, 3 written, 0 failed"),
        "{summary}"
    );
    for (stem, features) in [
        ("panel-a", 12 + 4 + 1),
        ("panel-b", 9 + 3 + 1),
        ("single", 4 + 2 + 1),
    ] {
        let folder = dir.path().join(format!("out/{stem}-conicut"));
        for file in [".nc", ".svg", "-report.txt", "-report.json"] {
            assert!(
                folder.join(format!("{stem}{file}")).is_file(),
                "{stem}{file}"
            );
        }
        let row = summary
            .lines()
            .find(|l| l.contains(&format!("{stem}.")))
            .unwrap_or_else(|| panic!("a row for {stem}: {summary}"));
        assert!(row.contains(" ok "), "{row}");
        assert!(
            row.contains(&format!(" {features} ")),
            "{features} features: {row}"
        );
    }
    // The text file in the folder is not a drawing and is left alone.
    assert!(!summary.contains("notes"), "{summary}");
    // stderr is not a terminal here: no progress bar, nothing at all.
    assert_eq!(text(&out.stderr), "");
}

#[test]
fn a_failing_drawing_fails_the_run_but_the_others_are_written() {
    let dir = tempfile::tempdir().unwrap();
    drawings(dir.path());
    fs::write(
        dir.path().join("in/broken.dxf"),
        "0\nSECTION\n2\nENTITIES\n0\nLINE\n8\n0\n10\nabc\n",
    )
    .unwrap();
    let out = conicut()
        .current_dir(dir.path())
        .args(["plan", "in", "--machine", &laser(), "--quiet"])
        .assert()
        .failure()
        .get_output()
        .clone();
    let summary = text(&out.stdout);
    assert!(
        summary.contains("3 drawings, 2 written, 1 failed"),
        "{summary}"
    );
    let row = summary.lines().find(|l| l.contains("broken.dxf")).unwrap();
    assert!(row.contains("FAILED") && row.contains("line 10"), "{row}");
    let errors = text(&out.stderr);
    assert!(errors.contains("broken.dxf, line 10"), "{errors}");
    assert!(errors.contains("1 of 3 drawings failed"), "{errors}");
    assert!(dir.path().join("panel-a-conicut/panel-a.nc").is_file());
    assert!(dir.path().join("panel-b-conicut/panel-b.nc").is_file());
    assert!(
        !dir.path().join("broken-conicut").exists(),
        "nothing written for it"
    );
}

#[test]
fn two_drawings_that_would_share_an_output_folder_are_refused_before_any_runs() {
    let dir = tempfile::tempdir().unwrap();
    drawings(dir.path());
    fs::create_dir_all(dir.path().join("other")).unwrap();
    fs::write(dir.path().join("other/panel-a.dxf"), sheet_dxf(3, 9)).unwrap();
    let out = conicut()
        .current_dir(dir.path())
        .args(["plan", "in", "other", "--machine", &laser(), "--out", "out"])
        .assert()
        .failure()
        .get_output()
        .clone();
    let errors = text(&out.stderr);
    assert!(errors.contains("would both write into"), "{errors}");
    assert!(!dir.path().join("out").exists(), "nothing ran");
}

#[test]
fn a_folder_without_drawings_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    fs::create_dir_all(dir.path().join("empty")).unwrap();
    let out = conicut()
        .current_dir(dir.path())
        .args(["plan", "empty", "--machine", &laser()])
        .assert()
        .failure()
        .get_output()
        .clone();
    assert!(text(&out.stderr).contains("holds no .dxf drawings"));
}
