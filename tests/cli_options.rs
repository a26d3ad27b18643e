//! Command-line options a new user reaches for: bundled profiles by name, `--kerf` listed, and
//! milling-only options on a kind that cuts through said to be ignored, never silently.

use assert_cmd::Command;
use std::fs;

fn conicut() -> Command {
    Command::cargo_bin("conicut").expect("the conicut binary is built")
}

#[test]
fn plan_takes_a_bundled_profile_by_name_and_lists_the_names_when_unknown() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("s.dxf"),
        conicut::demo::sheet::sheet_dxf(4, 1),
    )
    .unwrap();
    let out = conicut()
        .current_dir(dir.path())
        .args(["plan", "s.dxf", "--machine", "laser", "--out", "out"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    assert!(String::from_utf8_lossy(&out).contains("machine: laser (laser)"));
    let out = conicut()
        .current_dir(dir.path())
        .args(["plan", "s.dxf", "--machine", "plasmacutter"])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    for name in ["metric-mill", "inch-router", "laser", "plasma", "waterjet"] {
        assert!(message.contains(name), "{name}: {message}");
    }
    let help = conicut().args(["plan", "--help"]).output().unwrap().stdout;
    assert!(String::from_utf8_lossy(&help).contains("[alias: --kerf]"));
}

#[test]
fn milling_options_on_a_laser_are_ignored_with_a_warning_naming_them() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("s.dxf"),
        conicut::demo::sheet::sheet_dxf(4, 1),
    )
    .unwrap();
    conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "s.dxf",
            "--machine",
            "laser",
            "--out",
            "out",
            "--stepdown",
            "1",
            "--depth",
            "2",
            "--entry",
            "zigzag",
        ])
        .assert()
        .success();
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(dir.path().join("out/s-report.json")).unwrap())
            .unwrap();
    let warnings = report["warnings"].to_string();
    assert!(
        warnings.contains("--depth, --stepdown, --entry apply to mills and routers only"),
        "{warnings}"
    );
}
