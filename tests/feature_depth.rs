//! A feature's own depth and passes from the job file: the demo's pockets
//! (demo-parts/truss-bracket-pocket-job.toml) go 1.5 mm (in passes of 0.75 mm) and 1 mm into
//! the 3 mm plate while its holes cut through at the job's depth. Read back by the outside
//! `gcode` crate (tests/support/gcode_read.rs; f32, 1e-4 mm).

#[path = "support/gcode_read.rs"]
mod gcode_read;

use assert_cmd::Command;
use gcode_read::{marked_moves, read_back};
use std::fs;

#[test]
fn pockets_keep_their_own_depth_and_holes_the_jobs() {
    let dir = tempfile::tempdir().unwrap();
    let root = env!("CARGO_MANIFEST_DIR");
    Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args([
            "demo",
            "--out",
            "out",
            "--job",
            &format!("{root}/demo-parts/truss-bracket-pocket-job.toml"),
        ])
        .assert()
        .success();
    let program = fs::read_to_string(dir.path().join("out/truss-bracket.nc")).unwrap();
    let read = read_back(&program);
    // The deepest Z of each feature's contour moves, and how many passes reach the contour.
    let deepest = |name: &str| {
        marked_moves(&read, name, "contour")
            .iter()
            .map(|&i| read.moves[i].to[2])
            .fold(f64::INFINITY, f64::min)
    };
    let demo_depth = conicut::demo::CUT_DEPTH;
    for (name, depth) in [
        ("pocket 2", 1.5),
        ("round pocket 3", 1.0),
        ("lightening hole 1", demo_depth),
        ("lightening hole 4", demo_depth),
    ] {
        assert!(
            (deepest(name) + depth).abs() < 1e-4,
            "{name}: {}",
            deepest(name)
        );
    }
    // Pocket 2 in two passes of 0.75 mm: its contour at Z −0.75 and Z −1.5.
    let mut levels: Vec<i64> = marked_moves(&read, "pocket 2", "contour")
        .iter()
        .map(|&i| (read.moves[i].to[2] * 1e4).round() as i64)
        .collect();
    levels.sort();
    levels.dedup();
    assert_eq!(levels, [-15000, -7500], "{levels:?}");
    assert!(
        program.contains(
            "pocket 2: elliptical pocket, tool inside, its own depth 1.500 mm in 2 passes"
        )
    );
}

#[test]
fn a_feature_keeps_its_own_feeds() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("d.dxf"), conicut::demo::demo_dxf_bytes()).unwrap();
    // The metric mill's own feeds are 400 and 100 mm/min (machine-profiles/metric-mill.toml).
    fs::write(
        dir.path().join("job.toml"),
        "units = \"mm\"\n[[feature]]\nname = \"slow\"\nbay = \"bay 1\"\nfeed = 250\nplunge_feed = 60\n\
         [[feature]]\nname = \"usual\"\nbay = \"bay 2\"\n",
    )
    .unwrap();
    assert!(plan_on_mill(dir.path(), "job.toml", "out").status.success());
    let program = fs::read_to_string(dir.path().join("out/d.nc")).unwrap();
    let read = read_back(&program);
    let feeds = |name: &str| -> Vec<i64> {
        let mut f: Vec<i64> = marked_moves(&read, name, "contour")
            .iter()
            .map(|&i| read.moves[i].feed.round() as i64)
            .collect();
        f.sort();
        f.dedup();
        f
    };
    assert_eq!(feeds("slow"), [250]);
    assert_eq!(feeds("usual"), [400]);
    assert!(program.contains("its own feeds 250.0 and 60.0 mm/min"));
    // A feature's feed past the profile's largest (2500 mm/min) is refused, named.
    fs::write(
        dir.path().join("fast.toml"),
        "units = \"mm\"\n[[feature]]\nname = \"fast\"\nbay = \"bay 1\"\nfeed = 9000\n",
    )
    .unwrap();
    let out = plan_on_mill(dir.path(), "fast.toml", "out2");
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(
        message.contains("feature's cut feed") && message.contains("2500"),
        "{message}"
    );
}

/// `conicut plan d.dxf` in `dir` on the bundled metric mill with a 6 mm tool and `job`, into
/// `out`.
fn plan_on_mill(dir: &std::path::Path, job: &str, out: &str) -> std::process::Output {
    Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir)
        .args(["plan", "d.dxf", "--machine", "metric-mill"])
        .args(["--tool-diameter", "6", "--job", job, "--out", out])
        .output()
        .unwrap()
}

/// The spindle speed in force at the first feed move of each cut, by the cut's name (from the
/// "cut i of n: NAME" comment before it), read from the program text.
fn speeds_at_first_feed(program: &str) -> Vec<(String, i64)> {
    let mut speed = None;
    let mut section: Option<String> = None;
    let mut out = Vec::new();
    for line in program.lines() {
        if let (Some(i), true) = (line.find("of "), line.contains("(cut ")) {
            let name = line[i..].split_once(": ").unwrap().1.trim_end_matches(')');
            section = Some(name.to_string());
            continue;
        }
        let words: Vec<&str> = line.split_whitespace().collect();
        for w in &words {
            if let Some(s) = w.strip_prefix('S') {
                speed = Some(s.parse::<f64>().unwrap().round() as i64);
            }
        }
        if !words.contains(&"G1") {
            continue;
        }
        if let Some(name) = section.take() {
            out.push((name, speed.expect("a speed before the first feed move")));
        }
    }
    out
}

#[test]
fn a_feature_keeps_its_own_spindle_speed() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("d.dxf"), conicut::demo::demo_dxf_bytes()).unwrap();
    // The metric mill's own speed is 8000 rpm, its largest 10000, its spindle delay 2 s
    // (machine-profiles/metric-mill.toml).
    fs::write(
        dir.path().join("job.toml"),
        "units = \"mm\"\n[[feature]]\nname = \"slow\"\nbay = \"bay 1\"\nspindle_speed = 6000\n\
         [[feature]]\nname = \"usual\"\nbay = \"bay 2\"\n",
    )
    .unwrap();
    assert!(plan_on_mill(dir.path(), "job.toml", "out").status.success());
    let program = fs::read_to_string(dir.path().join("out/d.nc")).unwrap();
    let speeds = speeds_at_first_feed(&program);
    let of = |name: &str| speeds.iter().find(|(n, _)| n == name).map(|s| s.1);
    assert_eq!(of("slow"), Some(6000), "{speeds:?}");
    assert_eq!(of("usual"), Some(8000), "{speeds:?}");
    // Every other cut (holes, outline) at the job's speed.
    assert!(
        speeds
            .iter()
            .filter(|(n, _)| n != "slow")
            .all(|s| s.1 == 8000),
        "{speeds:?}"
    );
    // Each change of speed waits the spindle delay (G4 P2.00) on the next block.
    let lines: Vec<&str> = program.lines().collect();
    let changes: Vec<usize> = (0..lines.len())
        .filter(|&i| lines[i].split_whitespace().any(|w| w.starts_with('S')))
        .collect();
    assert!(changes.len() >= 2, "{changes:?}");
    for i in changes {
        assert!(lines[i + 1].contains("G4 P2"), "{}", lines[i + 1]);
    }
    assert!(program.contains("its own spindle speed 6000 rpm"));
    // Past the profile's largest speed: refused, the feature named.
    fs::write(
        dir.path().join("fast.toml"),
        "units = \"mm\"\n[[feature]]\nname = \"fast\"\nbay = \"bay 1\"\nspindle_speed = 24000\n",
    )
    .unwrap();
    let out = plan_on_mill(dir.path(), "fast.toml", "out2");
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(
        message.contains("fast") && message.contains("24000") && message.contains("10000"),
        "{message}"
    );
    assert!(!dir.path().join("out2/d.nc").exists());
    // A laser has no spindle: the feature's speed is a warning, never silently dropped.
    let out = Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args(["plan", "d.dxf", "--machine", "laser"])
        .args(["--job", "job.toml", "--out", "out3"])
        .output()
        .unwrap();
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success(),
        "{:?} {message} {}",
        out.status,
        String::from_utf8_lossy(&out.stdout)
    );
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(dir.path().join("out3/d-report.json")).unwrap())
            .unwrap();
    assert!(
        report["warnings"].as_array().unwrap().iter().any(|w| w
            .as_str()
            .unwrap()
            .contains("slow: its own spindle_speed applies to mills and routers only")),
        "{}",
        report["warnings"]
    );
}
