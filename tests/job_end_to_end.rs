//! Job files through the `conicut` binary: a drawing of our own with a three-sided and a
//! five-sided bay, probe points and guide lines on layers, and a CSV of measured points; solved
//! with `conicut solve --json` and cut with `conicut plan --job`.
//!
//! Reference values: docs/sources.md M3 (Steiner inellipse of (0,0), (6,0), (2,4), here scaled
//! ×10 and moved), §5 (the worked 3 points + 2 lines example, world frame, four ellipses), §9
//! (least-squares fit of the 20 perturbed points, 50-digit reference, here moved by (200, 150)).

use assert_cmd::Command;
use dxf::entities::{Entity, EntityType, Line as DxfLine, LwPolyline, ModelPoint};
use dxf::{Drawing, LwPolylineVertex, Point as DxfPoint};
use std::fs;
use std::path::Path;

fn entity(kind: EntityType, layer: &str) -> Entity {
    let mut e = Entity::new(kind);
    e.common.layer = layer.to_string();
    e
}

fn closed_polyline(points: &[(f64, f64)], layer: &str) -> Entity {
    let mut p = LwPolyline::default();
    p.set_is_closed(true);
    for &(x, y) in points {
        p.vertices.push(LwPolylineVertex {
            x,
            y,
            ..Default::default()
        });
    }
    entity(EntityType::LwPolyline(p), layer)
}

#[path = "support/perturbed_points.rs"]
mod perturbed_points;
/// The 20 perturbed points of docs/sources.md M9.
use perturbed_points::PERTURBED as SCAN;

fn write_inputs(dir: &Path) {
    let mut d = Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    // A three-sided bay: the §3 triangle ×10, moved by (100, 0).
    d.add_entity(closed_polyline(
        &[(100.0, 0.0), (160.0, 0.0), (120.0, 40.0)],
        "OPENING-BAYS",
    ));
    // A regular pentagon, circumradius 20, centre (200, 20).
    let penta: Vec<(f64, f64)> = (0..5)
        .map(|k| {
            let a = std::f64::consts::FRAC_PI_2 + std::f64::consts::TAU / 5.0 * k as f64;
            (200.0 + 20.0 * a.cos(), 20.0 + 20.0 * a.sin())
        })
        .collect();
    d.add_entity(closed_polyline(&penta, "OPENING-BAYS"));
    // §5 world frame: points (83/5, 6/5), (129/5, 3/5), (112/5, 34/5); lines
    // −0.6x + 0.8y + 16 = 0 and 0.8x + 0.6y − 13 = 0 (drawn through two points each).
    for (x, y) in [(16.6, 1.2), (25.8, 0.6), (22.4, 6.8)] {
        let p = ModelPoint {
            location: DxfPoint::new(x, y, 0.0),
            ..Default::default()
        };
        d.add_entity(entity(EntityType::ModelPoint(p), "PROBE"));
    }
    for ((x1, y1), (x2, y2)) in [
        ((0.0, -20.0), (40.0, 10.0)),
        ((0.0, 13.0 / 0.6), (16.25, 0.0)),
    ] {
        d.add_entity(entity(
            EntityType::Line(DxfLine::new(
                DxfPoint::new(x1, y1, 0.0),
                DxfPoint::new(x2, y2, 0.0),
            )),
            "GUIDES",
        ));
    }
    d.save_file(dir.join("bracket.dxf")).unwrap();
    let csv: String = std::iter::once("x,y\n".to_string())
        .chain(
            SCAN.iter()
                .map(|(x, y)| format!("{},{}\n", x + 200.0, y + 150.0)),
        )
        .collect();
    fs::write(dir.join("scan.csv"), csv).unwrap();
    fs::write(
        dir.join("job.toml"),
        r#"units = "mm"

[[feature]]
name = "tri"
inside = [125.0, 10.0]

[[feature]]
name = "penta"
bay = "bay 2"

[[feature]]
name = "probe"
through_layer = "PROBE"
touching_layer = "GUIDES"
choose = 2

[[feature]]
name = "scan"
fit_csv = "scan.csv"
"#,
    )
    .unwrap();
}

fn conicut(dir: &Path) -> Command {
    let mut c = Command::cargo_bin("conicut").unwrap();
    c.current_dir(dir);
    c
}

fn close(x: f64, y: f64, tol: f64) -> bool {
    (x - y).abs() <= tol * y.abs().max(1.0)
}

/// `conicut plan bracket.dxf --job JOB` with a 2 mm tool on the metric mill, into `out/`.
fn plan_with_job(dir: &Path, job: &str) -> assert_cmd::assert::Assert {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    conicut(dir)
        .args(["plan", "bracket.dxf", "--job", job, "--tool-diameter", "2"])
        .arg("--machine")
        .arg(root.join("machine-profiles/metric-mill.toml"))
        .args(["--out", "out"])
        .assert()
}

/// The feature `name` of a `solve --json` listing.
fn feature(v: &serde_json::Value, name: &str) -> serde_json::Value {
    v["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["name"] == name)
        .unwrap_or_else(|| panic!("{name} listed"))
        .clone()
}

/// The chosen candidate of a listed feature.
fn chosen(f: &serde_json::Value) -> serde_json::Value {
    f["candidates"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["chosen"] == true)
        .unwrap()
        .clone()
}

#[test]
fn solve_lists_every_candidate_and_plan_cuts_the_chosen_ones() {
    let tmp = tempfile::tempdir().unwrap();
    write_inputs(tmp.path());
    let out = conicut(tmp.path())
        .args(["solve", "bracket.dxf", "--job", "job.toml", "--json"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
    check_triangle(&v);
    check_pentagon(&v);
    check_probe(&v);
    check_scan(&v);
    check_solve_table(tmp.path());
    check_plan_cuts_them(tmp.path());
}

fn check_triangle(v: &serde_json::Value) {
    // §3 ×10: a = 18.0157654880780, b = 12.8187785208836, centre (100 + 80/3, 40/3).
    let tri = feature(v, "tri");
    assert_eq!(tri["status"], "solved");
    let c = chosen(&tri);
    assert!(close(
        c["semi_major_mm"].as_f64().unwrap(),
        18.0157654880780,
        1e-10
    ));
    assert!(close(
        c["semi_minor_mm"].as_f64().unwrap(),
        12.8187785208836,
        1e-10
    ));
    assert!(close(
        c["center_mm"][0].as_f64().unwrap(),
        100.0 + 80.0 / 3.0,
        1e-12
    ));
}

fn check_pentagon(v: &serde_json::Value) {
    // The regular pentagon's one tangent conic is its incircle, radius 20 cos 36°.
    let c = chosen(&feature(v, "penta"));
    assert!(close(
        c["semi_minor_mm"].as_f64().unwrap(),
        20.0 * 36f64.to_radians().cos(),
        1e-9
    ));
}

fn check_probe(v: &serde_json::Value) {
    // §5 worked example, world frame: four real ellipses; #2 has centre (21.9946296429,
    // 3.5501812071), a = 8.1519506989, b = 3.2603444436.
    let probe = feature(v, "probe");
    let cands = probe["candidates"].as_array().unwrap();
    assert_eq!(cands.len(), 4);
    assert!(
        cands
            .iter()
            .all(|c| c["kind"] == "ellipse" && c["cuttable"] == true)
    );
    let c = chosen(&probe);
    assert_eq!(c["number"], 2);
    let expected_centres = [
        (21.3627674625, 1.7906998474),
        (21.9946296429, 3.5501812071),
        (26.8225746581, 5.1594962122),
        (17.8554557721, 5.4551619597),
    ];
    // The listing order is the solver's; match each reference centre to some candidate.
    for (x, y) in expected_centres {
        assert!(
            cands
                .iter()
                .any(|c| close(c["center_mm"][0].as_f64().unwrap(), x, 1e-8)
                    && close(c["center_mm"][1].as_f64().unwrap(), y, 1e-8)),
            "centre ({x}, {y}) listed"
        );
    }
    let (cx, cy) = (
        c["center_mm"][0].as_f64().unwrap(),
        c["center_mm"][1].as_f64().unwrap(),
    );
    assert!(close(cx, 21.9946296429, 1e-8) && close(cy, 3.5501812071, 1e-8));
    assert!(close(
        c["semi_major_mm"].as_f64().unwrap(),
        8.1519506989,
        1e-8
    ));
}

fn check_scan(v: &serde_json::Value) {
    // §9: centre (30.016369280775, −11.992731884159) + (200, 150), a = 39.999101631552,
    // b = 15.014726264521, angle 25.00141389547°.
    let scan = feature(v, "scan");
    assert_eq!(scan["fit_points"], 20);
    assert_eq!(scan["fit_method"], "geometric");
    // Cut: the geometric fit. Computed (docs/reference/geometric_fit.py, SciPy's least_squares
    // on the parametric form): centre (230.054979058142, 138.033214990826), a 40.061744482668,
    // b 14.984929749531, angle 0.436440617101 rad, RMS distance 0.346048431004 mm (parameters to
    // 1e-6: the minimum is flat along one direction).
    let g = chosen(&scan);
    for (key, want) in [
        ("semi_major_mm", 40.061744482668),
        ("semi_minor_mm", 14.984929749531),
        ("angle_deg", 0.436440617101f64.to_degrees()),
    ] {
        assert!(close(g[key].as_f64().unwrap(), want, 1e-6), "{key}: {g}");
    }
    assert!(close(
        g["center_mm"][0].as_f64().unwrap(),
        230.054979058142,
        1e-6
    ));
    assert!(close(
        g["center_mm"][1].as_f64().unwrap(),
        138.033214990826,
        1e-6
    ));
    assert!(close(
        scan["fit_rms_mm"].as_f64().unwrap(),
        0.346048431004,
        1e-10
    ));
    // Listed second: the algebraic fit, against its 50-digit reference.
    let c = scan["candidates"][1].clone();
    assert_eq!(c["chosen"], false);
    assert!(close(
        c["center_mm"][0].as_f64().unwrap(),
        230.016369280775,
        1e-9
    ));
    assert!(close(
        c["center_mm"][1].as_f64().unwrap(),
        138.007268115841,
        1e-9
    ));
    assert!(close(
        c["semi_major_mm"].as_f64().unwrap(),
        39.999101631552,
        1e-9
    ));
    assert!(close(
        c["angle_deg"].as_f64().unwrap(),
        25.00141389547,
        1e-9
    ));
}

fn check_solve_table(dir: &Path) {
    // The table for people marks the chosen candidate and says why.
    let text = conicut(dir)
        .args(["solve", "bracket.dxf", "--job", "job.toml"])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(text).unwrap();
    println!("{text}");
    assert!(text.contains("probe: 3 points and 2 lines"), "{text}");
    // Measured points: both fits listed, the geometric one cut.
    assert!(
        text.contains("geometric fit to 20 points")
            && text
                .lines()
                .any(|l| l.trim_start().starts_with("*  1 ellipse") && l.contains("geometric fit"))
            && text
                .lines()
                .any(|l| l.trim_start().starts_with("2 ellipse") && l.contains("algebraic fit")),
        "{text}"
    );
    assert!(
        text.lines()
            .any(|l| l.trim_start().starts_with("*  2 ellipse")),
        "{text}"
    );
    assert!(text.contains("chosen: solution 2, as the job file chooses"));
}

fn check_plan_cuts_them(dir: &Path) {
    // The same features are what `plan` cuts (a 2 mm tool: the smallest b²/a here is 1.30 mm).
    plan_with_job(dir, "job.toml").success();
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(dir.join("out/bracket-report.json")).unwrap())
            .unwrap();
    let names: Vec<&str> = report["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["name"].as_str().unwrap())
        .collect();
    for n in ["tri", "penta", "probe", "scan"] {
        assert!(names.contains(&n), "{n} cut: {names:?}");
    }
    let probe = report["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["name"] == "probe")
        .unwrap();
    assert!(close(
        probe["ellipse"]["center_mm"][0].as_f64().unwrap(),
        21.9946296429,
        1e-8
    ));
    assert_eq!(probe["candidates"], 4);
}

#[test]
fn job_file_errors_name_the_line_and_key_and_write_nothing() {
    let tmp = tempfile::tempdir().unwrap();
    write_inputs(tmp.path());
    fs::write(
        tmp.path().join("bad.toml"),
        "units = \"mm\"\n\n[[feature]]\nname = \"tri\"\ninside = [125.0, 10.0]\nrule = \"area\"\nareaa = 100.0\n",
    )
    .unwrap();
    let out = plan_with_job(tmp.path(), "bad.toml")
        .failure()
        .get_output()
        .stderr
        .clone();
    let err = String::from_utf8_lossy(&out);
    assert!(err.contains("line 7") && err.contains("areaa"), "{err}");
    assert!(!tmp.path().join("out").exists());

    // Several ellipses and no `choose`: refused with the way out named, nothing written.
    fs::write(
        tmp.path().join("unchosen.toml"),
        "units = \"mm\"\n\n[[feature]]\nname = \"probe\"\nthrough_layer = \"PROBE\"\ntouching_layer = \"GUIDES\"\n",
    )
    .unwrap();
    let out = plan_with_job(tmp.path(), "unchosen.toml")
        .failure()
        .get_output()
        .stderr
        .clone();
    let err = String::from_utf8_lossy(&out);
    assert!(err.contains("choose = N"), "{err}");
    assert!(!tmp.path().join("out").exists());
}

/// A fit with `reject_outliers`: the points far off are named in the listing and left out of the
/// fit; without it they stay in.
#[test]
fn outliers_are_listed_by_number() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    // 40 points round a 40 × 15 mm ellipse at (120, 80), points 6 and 31 (counting from 1)
    // pushed 2 mm out.
    let mut csv = String::from("x,y\n");
    for k in 0..40 {
        let t = std::f64::consts::TAU * k as f64 / 40.0;
        let push = if k == 5 || k == 30 {
            2.0
        } else {
            0.01 * (3.7 * k as f64).sin()
        };
        let (x, y) = (40.0 * t.cos(), 15.0 * t.sin());
        let r = x.hypot(y);
        csv.push_str(&format!(
            "{},{}\n",
            120.0 + x * (1.0 + push / r),
            80.0 + y * (1.0 + push / r)
        ));
    }
    fs::write(dir.join("probe.csv"), csv).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for (robust, says) in [(true, true), (false, false)] {
        fs::write(
            dir.join("job.toml"),
            format!(
                "units = \"mm\"\n[[feature]]\nname = \"probe\"\nfit_csv = \"probe.csv\"\nreject_outliers = {robust}\n"
            ),
        )
        .unwrap();
        let out = conicut(dir)
            .arg("solve")
            .arg(root.join("demo-parts/truss-bracket.dxf"))
            .args(["--job", "job.toml"])
            .assert()
            .success()
            .get_output()
            .stdout
            .clone();
        let text = String::from_utf8(out).unwrap();
        assert_eq!(
            text.contains("points 6, 31 (counting from 1) rejected as outliers"),
            says,
            "{text}"
        );
        assert_eq!(text.contains("geometric fit to 38 points"), says, "{text}");
    }
}
