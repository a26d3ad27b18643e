//! `conicut check PROGRAM --against DRAWING`: hand-made programs, one clean and each of the others
//! with one fault, each fault caught at its line.
//!
//! The drawing (written here by the outside `dxf` crate, R2000, mm): a 100 × 60 mm plate with a
//! Ø20 hole about (50, 30); no bays. With a Ø6 tool the hole's tool-centre path is the circle of
//! radius 10 − 3 = 7 about (50, 30), and the outline's is the plate grown by 3 mm with quarter
//! circles of radius 3 at the corners (the parallel curve of a rectangle). The clean program
//! cuts exactly those; the metric mill's limits (machine-profiles/metric-mill.toml): travel X
//! −10…400, Y −10…250, largest feed 2500 mm/min, largest spindle speed 10000 rpm, safe height
//! 15 mm.
//!
//! Rule sources: arc radii within 0.002 mm, one word per modal group, units before motion, a
//! feed rate before a feed move, no exponents (NISTIR 6556, "The NIST RS274NGC Interpreter –
//! Version 3", §3.5.3.2, §3.4, §3.5.1, §3.3.2).

use assert_cmd::Command;
use dxf::LwPolylineVertex;
use dxf::entities::{Circle, Entity, EntityType, LwPolyline};
use dxf::enums::{AcadVersion, Units};
use std::fs;
use std::path::Path;

fn drawing(path: &Path) {
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R2000;
    d.header.default_drawing_units = Units::Millimeters;
    let mut plate = LwPolyline::default();
    plate.set_is_closed(true);
    for (x, y) in [(0.0, 0.0), (100.0, 0.0), (100.0, 60.0), (0.0, 60.0)] {
        plate.vertices.push(LwPolylineVertex {
            x,
            y,
            ..Default::default()
        });
    }
    let mut e = Entity::new(EntityType::LwPolyline(plate));
    e.common.layer = "PLATE".into();
    d.add_entity(e);
    let mut e = Entity::new(EntityType::Circle(Circle::new(
        dxf::Point::new(50.0, 30.0, 0.0),
        10.0,
    )));
    e.common.layer = "HOLES".into();
    d.add_entity(e);
    d.save_file(path).unwrap();
}

/// The clean program, one block per line (line 1 is `%`).
const CLEAN: &[&str] = &[
    "%",
    "(a hand-made program: the hole, then the outline)",
    "G21 G90 G17 G94 G40",
    "G0 Z15",
    "M3 S8000",
    "G4 P2",
    "G0 X50 Y30",
    "G0 Z2",
    "G1 Z-1 F100",
    "G1 X57 Y30 F400",
    "G3 X43 Y30 I-7 J0",
    "G3 X57 Y30 I7 J0",
    "G0 Z15",
    "G0 X-5 Y-8",
    "G0 Z2",
    "G1 Z-1 F100",
    "G1 X0 Y-3 F400",
    "G1 X100 Y-3",
    "G3 X103 Y0 I0 J3",
    "G1 X103 Y60",
    "G3 X100 Y63 I-3 J0",
    "G1 X0 Y63",
    "G3 X-3 Y60 I0 J-3",
    "G1 X-3 Y0",
    "G3 X0 Y-3 I3 J0",
    "G0 Z15",
    "M5",
    "M30",
    "%",
];

/// Runs `conicut check` on `lines` (the program) against the drawing; exit code and JSON.
fn check(lines: &[String]) -> (i32, serde_json::Value, String) {
    let dir = tempfile::tempdir().unwrap();
    drawing(&dir.path().join("plate.dxf"));
    fs::write(dir.path().join("p.ngc"), lines.join("\n") + "\n").unwrap();
    let out = Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args(["check", "p.ngc", "--against", "plate.dxf"])
        .args(["--machine", "metric-mill", "--tool-diameter", "6", "--json"])
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let stderr = String::from_utf8_lossy(&out.stderr).to_string();
    let json = serde_json::from_str(&stdout).unwrap_or(serde_json::Value::Null);
    (out.status.code().unwrap_or(-1), json, stderr)
}

fn clean() -> Vec<String> {
    CLEAN.iter().map(|s| s.to_string()).collect()
}

/// The clean program with 1-based line `n` replaced by `with`.
fn with_line(n: usize, with: &str) -> Vec<String> {
    let mut p = clean();
    p[n - 1] = with.to_string();
    p
}

/// The (line, rule) of every finding that must be fixed.
fn must_fix(json: &serde_json::Value) -> Vec<(u64, String)> {
    json["findings"]
        .as_array()
        .unwrap_or_else(|| panic!("no findings in {json}"))
        .iter()
        .filter(|f| f["severity"] == "must-fix")
        .map(|f| {
            (
                f["line"].as_u64().unwrap(),
                f["rule"].as_str().unwrap().to_string(),
            )
        })
        .collect()
}

#[test]
fn the_clean_program_passes_and_each_feature_is_measured() {
    let (code, json, stderr) = check(&clean());
    assert_eq!(code, 0, "{stderr}\n{json}");
    assert!(must_fix(&json).is_empty(), "{json}");
    let features = json["features"].as_array().unwrap();
    assert_eq!(features.len(), 2, "{json}");
    for f in features {
        // Exact arcs and lines on exact circles and lines: nothing but floating point.
        assert!(f["deviation_mm"].as_f64().unwrap() < 1e-9, "{f}");
        assert!(f["uncut"].as_array().unwrap().is_empty(), "{f}");
    }
    let hole = features.iter().find(|f| f["name"] != "outline").unwrap();
    assert_eq!(hole["lines"], serde_json::json!([11, 12]));
}

#[test]
fn each_fault_is_caught_at_its_line() {
    let cases: Vec<(&str, Vec<String>, u64, &str)> = vec![
        // The arc's end moved 0.003 mm outward: start radius 7, end radius 7.003.
        (
            "arc radii",
            with_line(11, "G3 X42.997 Y30 I-7 J0"),
            11,
            "arc-radius",
        ),
        // The hole cut at radius 7.05: 0.05 mm into the part (the edge is at 10, the tool
        // radius 3).
        (
            "gouge",
            {
                let mut p = with_line(10, "G1 X57.05 Y30 F400");
                p[10] = "G3 X42.95 Y30 I-7.05 J0".into();
                p[11] = "G3 X57.05 Y30 I7.05 J0".into();
                p
            },
            11,
            "gouge",
        ),
        (
            "outside the envelope",
            with_line(14, "G0 X-50 Y-8"),
            14,
            "travel",
        ),
        (
            "rapid at cutting depth",
            with_line(13, "G0 X57 Y45"),
            13,
            "rapid-cutting",
        ),
        ("exponent", with_line(7, "G0 X5.0E1 Y30"), 7, "exponent"),
        ("missing feed", with_line(9, "G1 Z-1"), 9, "feed"),
        (
            "two motion words",
            with_line(10, "G0 G1 X57 Y30 F400"),
            10,
            "modal-group",
        ),
        (
            "deleted block in the contour",
            with_line(20, "/G1 X103 Y60"),
            20,
            "block-delete",
        ),
    ];
    for (what, program, line, rule) in cases {
        let (code, json, stderr) = check(&program);
        assert_eq!(code, 1, "{what}: {stderr}\n{json}");
        let found = must_fix(&json);
        assert!(
            found.contains(&(line, rule.to_string())),
            "{what}: want line {line} {rule} in {found:?}"
        );
        assert!(stderr.contains("must be fixed"), "{what}: {stderr}");
    }
}

#[test]
fn the_gouge_is_measured_and_uncut_and_stray_cuts_are_found() {
    let mut p = with_line(10, "G1 X57.05 Y30 F400");
    p[10] = "G3 X42.95 Y30 I-7.05 J0".into();
    p[11] = "G3 X57.05 Y30 I7.05 J0".into();
    let (_, json, _) = check(&p);
    let f = &json["findings"];
    let gouge = f
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["rule"] == "gouge")
        .unwrap();
    assert!(
        gouge["message"].as_str().unwrap().contains("by 0.0500 mm"),
        "{gouge}"
    );
    let hole = json["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["name"] != "outline")
        .unwrap();
    assert!(
        (hole["deviation_mm"].as_f64().unwrap() - 0.05).abs() < 1e-9,
        "{hole}"
    );
    // Half the hole's contour left out: uncut.
    let mut p = clean();
    p.remove(11);
    let (code, json, _) = check(&p);
    assert_eq!(code, 1);
    let found = must_fix(&json);
    assert!(found.iter().any(|(_, r)| r == "uncut"), "{found:?}");
    // A detour into the plate in the middle of the outline's cut: a gouge at each move in it.
    let mut p = clean();
    p.insert(25, "G1 X20 Y20".into());
    p.insert(26, "G1 X-3 Y0".into());
    let (code, json, _) = check(&p);
    assert_eq!(code, 1);
    let found = must_fix(&json);
    assert!(found.contains(&(26, "gouge".to_string())), "{found:?}");
    assert!(found.contains(&(27, "gouge".to_string())), "{found:?}");
    // A cut off the part, along no feature's path (lines 27–30): a stray cut.
    let mut p = clean();
    for (k, line) in ["G0 X200 Y20", "G1 Z-1 F100", "G1 X220 Y20 F400", "G0 Z15"]
        .into_iter()
        .enumerate()
    {
        p.insert(26 + k, line.into());
    }
    let (code, json, _) = check(&p);
    assert_eq!(code, 1);
    assert_eq!(must_fix(&json), [(29, "stray".to_string())], "{json}");
    // The same stray cut with a move that goes nowhere in its middle is still one run.
    p.insert(29, "G1 X210 Y20".into());
    p.insert(30, "G1 X210 Y20 Z-1".into());
    p.insert(31, "G1 X220 Y20".into());
    let (_, json, _) = check(&p);
    assert_eq!(must_fix(&json), [(29, "stray".to_string())], "{json}");
}

#[test]
fn an_unreadable_input_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    drawing(&dir.path().join("plate.dxf"));
    let out = Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args(["check", "missing.ngc", "--against", "plate.dxf"])
        .args(["--machine", "metric-mill", "--tool-diameter", "6"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("cannot read the program missing.ngc"));
}

#[test]
fn every_program_plan_writes_passes_check_with_the_same_cycle_time() {
    let root = env!("CARGO_MANIFEST_DIR");
    let drawing = format!("{root}/demo-parts/truss-bracket.dxf");
    for (machine, extra) in [
        ("metric-mill", vec!["--tool-diameter", "6", "--tabs", "2"]),
        ("inch-router", vec!["--tool-diameter", "0.25in"]),
        ("laser", vec!["--tabs", "3"]),
        ("plasma", vec![]),
        ("waterjet", vec![]),
    ] {
        let dir = tempfile::tempdir().unwrap();
        Command::cargo_bin("conicut")
            .unwrap()
            .current_dir(dir.path())
            .args(["plan", &drawing, "--machine", machine, "--out", "out"])
            .args(&extra)
            .assert()
            .success();
        let program = fs::read_to_string(dir.path().join("out/truss-bracket.nc")).unwrap();
        let report: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(dir.path().join("out/truss-bracket-report.json")).unwrap(),
        )
        .unwrap();
        assert!(
            program.contains("(estimated cycle time: ") && !program.contains("measured when"),
            "{machine}: the header's cycle time"
        );
        let out = Command::cargo_bin("conicut")
            .unwrap()
            .current_dir(dir.path())
            .args(["check", "out/truss-bracket.nc", "--against", &drawing])
            .args(["--machine", machine, "--json"])
            .args(&extra)
            .output()
            .unwrap();
        let stdout = String::from_utf8_lossy(&out.stdout);
        assert_eq!(out.status.code(), Some(0), "{machine}: {stdout}");
        let json: serde_json::Value = serde_json::from_str(&stdout).unwrap();
        assert_eq!(
            json["features"].as_array().unwrap().len(),
            report["features"].as_array().unwrap().len(),
            "{machine}"
        );
        for f in json["features"].as_array().unwrap() {
            assert!(f["moves"].as_u64().unwrap() > 0, "{machine}: {f}");
            assert!(
                f["deviation_mm"].as_f64().unwrap() <= 0.01 + 1e-4,
                "{machine}: {f}"
            );
        }
        // The report's cycle time is the one `check` measures on the same text.
        let total = json["cycle_time"]["total_s"].as_f64().unwrap();
        assert!(total > 0.0);
        assert!(
            (report["cycle_time"]["total_s"].as_f64().unwrap() - total).abs() < 1e-9 * total,
            "{machine}"
        );
    }
}

#[test]
fn the_picture_marks_each_finding_where_it_occurs() {
    let dir = tempfile::tempdir().unwrap();
    drawing(&dir.path().join("plate.dxf"));
    let mut p = with_line(10, "G1 X57.05 Y30 F400");
    p[10] = "G3 X42.95 Y30 I-7.05 J0".into();
    p[11] = "G3 X57.05 Y30 I7.05 J0".into();
    fs::write(dir.path().join("p.ngc"), p.join("\n") + "\n").unwrap();
    let out = Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args(["check", "p.ngc", "--against", "plate.dxf"])
        .args(["--machine", "metric-mill", "--tool-diameter", "6"])
        .args(["--svg", "pics/findings.svg"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let svg = fs::read_to_string(dir.path().join("pics/findings.svg")).unwrap();
    // The circle of the gouge on line 11 sits at that move's end, (42.95, 30), drawn at
    // (x, −y).
    let at = svg
        .find("data-line=\"11\"")
        .unwrap_or_else(|| panic!("no finding at line 11 in {svg}"));
    let open = svg[..at].rfind('<').unwrap();
    let close = at + svg[at..].find('>').unwrap();
    let tag = &svg[open..close];
    assert!(tag.contains("class=\"finding\""), "{tag}");
    let attr = |name: &str| -> f64 {
        let k = tag.find(&format!("{name}=\"")).unwrap() + name.len() + 2;
        tag[k..k + tag[k..].find('"').unwrap()].parse().unwrap()
    };
    assert!((attr("cx") - 42.95).abs() < 1e-4, "{tag}");
    assert!((attr("cy") + 30.0).abs() < 1e-4, "{tag}");
    assert!(svg.contains("class=\"edge\"") && svg.contains("class=\"cut\""));
    // The clean program draws no finding.
    fs::write(dir.path().join("clean.ngc"), clean().join("\n") + "\n").unwrap();
    Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args(["check", "clean.ngc", "--against", "plate.dxf"])
        .args(["--machine", "metric-mill", "--tool-diameter", "6"])
        .args(["--svg", "clean.svg"])
        .assert()
        .success();
    let svg = fs::read_to_string(dir.path().join("clean.svg")).unwrap();
    assert!(!svg.contains("class=\"finding\""));
}

#[test]
fn whole_turns_truncation_and_repeated_words_are_caught() {
    // A whole circle (end = start) cut through the plate at depth: read as its two halves, so
    // it is seen, off every path and in the part.
    let mut p = clean();
    for (k, line) in [
        "G0 X30 Y45",
        "G1 Z-1 F100",
        "G3 X30 Y45 I5 J0 F400",
        "G0 Z15",
    ]
    .into_iter()
    .enumerate()
    {
        p.insert(26 + k, line.into());
    }
    let (code, json, _) = check(&p);
    assert_eq!(code, 1);
    let found = must_fix(&json);
    assert!(found.contains(&(29, "gouge".to_string())), "{found:?}");
    assert!(found.contains(&(29, "stray".to_string())), "{found:?}");
    // The same circle past the travel (X −10…400): the travel check sees its far side.
    let mut p = clean();
    for (k, line) in [
        "G0 X30 Y45",
        "G1 Z-1 F100",
        "G3 X30 Y45 I-30 J0 F400",
        "G0 Z15",
    ]
    .into_iter()
    .enumerate()
    {
        p.insert(26 + k, line.into());
    }
    let (_, json, _) = check(&p);
    assert!(
        must_fix(&json).contains(&(29, "travel".to_string())),
        "{json}"
    );
    // Cut short before its end: no M30.
    let mut p = clean();
    p.truncate(CLEAN.len() - 2);
    let (code, json, _) = check(&p);
    assert_eq!(code, 1);
    assert!(
        must_fix(&json).iter().any(|(_, r)| r == "program-end"),
        "{json}"
    );
    // A word twice on one line.
    let (code, json, _) = check(&with_line(14, "G0 X-5 X200 Y-8"));
    assert_eq!(code, 1);
    assert!(must_fix(&json).contains(&(14, "repeated-word".to_string())));
}

#[test]
fn a_pierce_dwell_on_the_beam_on_line_counts_and_a_missing_one_is_caught() {
    let root = env!("CARGO_MANIFEST_DIR");
    let drawing = format!("{root}/demo-parts/truss-bracket.dxf");
    let dir = tempfile::tempdir().unwrap();
    Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args(["plan", &drawing, "--machine", "laser", "--out", "out"])
        .assert()
        .success();
    let program = fs::read_to_string(dir.path().join("out/truss-bracket.nc")).unwrap();
    assert!(
        program.contains("M3\nG4 P0.50\n"),
        "the laser's pierce as written"
    );
    let run = |text: &str| {
        fs::write(dir.path().join("t.nc"), text).unwrap();
        let out = Command::cargo_bin("conicut")
            .unwrap()
            .current_dir(dir.path())
            .args([
                "check",
                "t.nc",
                "--against",
                &drawing,
                "--machine",
                "laser",
                "--json",
            ])
            .output()
            .unwrap();
        let json: serde_json::Value =
            serde_json::from_slice(&out.stdout).unwrap_or(serde_json::Value::Null);
        (out.status.code(), json)
    };
    // NISTIR 6556 §3.8: on one line the spindle (here the beam) comes on before the dwell.
    let (code, json) = run(&program.replace("M3\nG4 P0.50\n", "M3 G4 P0.50\n"));
    assert_eq!(code, Some(0), "{json}");
    let (code, json) = run(&program.replacen("M3\nG4 P0.50\n", "M3\n", 1));
    assert_eq!(code, Some(1));
    assert!(
        must_fix(&json).iter().any(|(_, r)| r == "pierce-dwell"),
        "{json}"
    );
}
