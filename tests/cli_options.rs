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

#[test]
fn feeds_and_speeds_from_the_command_line_and_the_job_file_within_the_profile_limits() {
    let dir = tempfile::tempdir().unwrap();
    // The demo part on the bundled mill (6 mm end mill): its profile's feeds are 400 and 100
    // mm/min and 8,000 rpm, at most 2,500 mm/min and 10,000 rpm.
    let demo = conicut::demo::demo_dxf_bytes();
    fs::write(dir.path().join("d.dxf"), &demo).unwrap();
    let run = |args: &[&str]| {
        conicut()
            .current_dir(dir.path())
            .args([
                "plan",
                "d.dxf",
                "--machine",
                "metric-mill",
                "--tool-diameter",
                "6",
                "--out",
                "out",
            ])
            .args(args)
            .output()
            .unwrap()
    };
    let program = || fs::read_to_string(dir.path().join("out/d.nc")).unwrap();
    let out = run(&[
        "--feed",
        "800",
        "--plunge-feed",
        "120",
        "--spindle-speed",
        "9000",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = program();
    assert!(text.contains("F800"), "the cut feed is written");
    assert!(text.contains("F120"), "the plunge feed is written");
    assert!(text.contains("S9000"), "the spindle speed is written");
    // The job file's (in inches per minute: 40 in/min = 1016 mm/min) when the command line is
    // silent.
    fs::write(
        dir.path().join("job.toml"),
        "units = \"in\"\nfeed = 40\n[[feature]]\nname = \"bay 1\"\nbay = \"bay 1\"\n",
    )
    .unwrap();
    let out = run(&["--job", "job.toml"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(program().contains("F1016"), "40 in/min in mm/min");
    // Past the profile's limits: refused, naming the limit.
    let out = run(&["--feed", "5000"]);
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(message.contains("2500"), "{message}");
    let out = run(&["--spindle-speed", "12000"]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("10000"));
    let out = run(&["--feed", "-5"]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("not a positive number"));
}

#[test]
fn lengths_on_the_command_line_are_millimetres_unless_they_carry_their_unit() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("d.dxf"), conicut::demo::demo_dxf_bytes()).unwrap();
    // A bare number is millimetres whatever the profile; 0.125 in is exactly 3.175 mm and 0.1 in
    // 2.54 mm (the international inch, 25.4 mm, 1959).
    for (tool, mm) in [("3.175", 3.175), ("0.125in", 3.175), ("3.175mm", 3.175)] {
        let out = conicut()
            .current_dir(dir.path())
            .args(["plan", "d.dxf", "--machine", "metric-mill", "--out", "out"])
            .args(["--tool-diameter", tool, "--depth", "0.1in"])
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let report: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(dir.path().join("out/d-report.json")).unwrap(),
        )
        .unwrap();
        assert!(
            (report["tool_diameter_mm"].as_f64().unwrap() - mm).abs() < 1e-12,
            "{tool}"
        );
        assert!((report["cut_depth_mm"].as_f64().unwrap() - 2.54).abs() < 1e-12);
    }
    let out = conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "d.dxf",
            "--machine",
            "metric-mill",
            "--tool-diameter",
            "6 cubits",
        ])
        .output()
        .unwrap();
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("is not a length"));
}
