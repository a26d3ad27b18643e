//! Where the program's X0 Y0 is: `--zero` (and the job file's `zero`), `--work-offset`, on
//! drawings written by the outside `dxf` crate and placed far from the drawing's origin. Every
//! program is read back by the outside `gcode` crate (tests/support/gcode_read.rs).
//!
//! Reference values: a rectangle bay of w × h gets the ellipse with semi-axes w/2 and h/2 at the
//! rectangle's centre, touching the side midpoints (docs/sources.md M2: the largest ellipse
//! tangent to a quadrilateral's four sides covers at most π/4 of it, with equality only for a
//! parallelogram touched at its side midpoints; its table's rectangle row). The outline is cut with
//! the tool outside it, so its tool-centre path reaches exactly the tool radius past the
//! outline's box on every side.

#[path = "support/gcode_read.rs"]
mod gcode_read;

use assert_cmd::Command;
use dxf::entities::{Entity, EntityType, Line};
use dxf::enums::AcadVersion;
use gcode_read::{marked_moves, read_back};
use std::fs;
use std::path::Path;

const R: f64 = 3.0;

fn conicut() -> Command {
    Command::cargo_bin("conicut").expect("the conicut binary is built")
}

fn mill() -> String {
    format!(
        "{}/machine-profiles/metric-mill.toml",
        env!("CARGO_MANIFEST_DIR")
    )
}

fn add_loop(d: &mut dxf::Drawing, layer: &str, pts: &[(f64, f64)]) {
    for i in 0..pts.len() {
        let (a, b) = (pts[i], pts[(i + 1) % pts.len()]);
        let mut e = Entity::new(EntityType::Line(Line::new(
            dxf::Point::new(a.0, a.1, 0.0),
            dxf::Point::new(b.0, b.1, 0.0),
        )));
        e.common.layer = layer.into();
        d.add_entity(e);
    }
}

fn rectangle(x0: f64, y0: f64, w: f64, h: f64) -> Vec<(f64, f64)> {
    vec![(x0, y0), (x0 + w, y0), (x0 + w, y0 + h), (x0, y0 + h)]
}

/// A 200 × 120 mm plate with its lower-left corner at `(x0, y0)` and one 60 × 40 mm bay 30 mm
/// in from that corner, written as R2000 in mm by the `dxf` crate.
fn plate(path: &Path, x0: f64, y0: f64) {
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R2000;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    add_loop(&mut d, "PLATE", &rectangle(x0, y0, 200.0, 120.0));
    add_loop(
        &mut d,
        "OPENING-BAYS",
        &rectangle(x0 + 30.0, y0 + 30.0, 60.0, 40.0),
    );
    d.save_file(path).expect("the dxf crate writes the drawing");
}

struct Run {
    program: String,
    report: serde_json::Value,
    preview: String,
}

fn plan(dir: &Path, drawing: &str, extra: &[&str]) -> Run {
    let machine = mill();
    let mut args = vec![
        "plan",
        drawing,
        "--machine",
        &machine,
        "--tool-diameter",
        "6",
        "--out",
        "out",
    ];
    args.extend_from_slice(extra);
    conicut().current_dir(dir).args(&args).assert().success();
    let stem = drawing.trim_end_matches(".dxf");
    let read = |suffix: &str| fs::read_to_string(dir.join(format!("out/{stem}{suffix}"))).unwrap();
    Run {
        program: read(".nc"),
        report: serde_json::from_str(&read("-report.json")).unwrap(),
        preview: read(".svg"),
    }
}

/// The smallest and largest X and Y of the outline's contour (the moves after its `(contour)`
/// mark, leads left out), read back.
fn outline_box(program: &str) -> ([f64; 2], [f64; 2]) {
    let read = read_back(program);
    let contour = marked_moves(&read, "outline", "contour");
    assert!(!contour.is_empty(), "an outline contour");
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for m in contour.iter().map(|&i| &read.moves[i]) {
        // The plate's corners are rounded by arcs of radius r about them, each a quarter turn
        // with its ends on the box's sides: the ends alone give the box.
        for p in [m.from, m.to] {
            for k in 0..2 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
    }
    (lo, hi)
}

/// The bundled mill with its travel opened to ±`reach` mm in X and Y.
fn wide_mill(dir: &Path, reach: f64) -> String {
    let text = fs::read_to_string(mill())
        .unwrap()
        .replace("x_min = -10.0", &format!("x_min = -{reach:.1}"))
        .replace("y_min = -10.0", &format!("y_min = -{reach:.1}"))
        .replace("x_max = 400.0", &format!("x_max = {reach:.1}"))
        .replace("y_max = 250.0", &format!("y_max = {reach:.1}"));
    let path = dir.join("wide-mill.toml");
    fs::write(&path, text).unwrap();
    path.display().to_string()
}

fn bay_centre(report: &serde_json::Value) -> [f64; 2] {
    let f = report["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["name"] == "bay 1")
        .expect("bay 1 in the report");
    let e = &f["ellipse"];
    // The rectangle's largest ellipse: semi-axes w/2 and h/2 (module docs).
    assert!(
        near(e["semi_major_mm"].as_f64().unwrap(), 30.0, 1e-9),
        "{e}"
    );
    assert!(
        near(e["semi_minor_mm"].as_f64().unwrap(), 20.0, 1e-9),
        "{e}"
    );
    let c = &e["center_mm"];
    [c[0].as_f64().unwrap(), c[1].as_f64().unwrap()]
}

fn near(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol
}

#[test]
fn a_part_far_out_is_refused_as_drawn_and_cut_from_its_corner_with_zero() {
    let dir = tempfile::tempdir().unwrap();
    plate(&dir.path().join("far.dxf"), 1000.0, 40.0);
    // As drawn, x ≈ 1000 lies past the mill's 400 mm travel; the message names the way out.
    let refused = conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "far.dxf",
            "--machine",
            &mill(),
            "--tool-diameter",
            "6",
        ])
        .assert()
        .failure()
        .get_output()
        .stderr
        .clone();
    let message = String::from_utf8(refused).unwrap();
    assert!(
        message.contains("outside the machine's travel"),
        "{message}"
    );
    assert!(message.contains("--zero lower-left"), "{message}");

    let run = plan(dir.path(), "far.dxf", &["--zero", "lower-left"]);
    // The outline's corner is X0 Y0: its tool path runs from −r to the plate's size plus r.
    // (1e-4 mm: the gcode crate's f32.)
    let (lo, hi) = outline_box(&run.program);
    for (got, want) in lo.iter().chain(&hi).zip([-R, -R, 200.0 + R, 120.0 + R]) {
        assert!(near(*got, want, 1e-4), "outline box {lo:?} {hi:?}");
    }
    // The bay's ellipse sits at the rectangle's centre in program coordinates.
    let c = bay_centre(&run.report);
    assert!(near(c[0], 60.0, 1e-9) && near(c[1], 50.0, 1e-9), "{c:?}");
    let z = &run.report["work_zero"];
    assert_eq!(z["rule"], "lower-left");
    assert_eq!(z["drawing_point_mm"][0].as_f64(), Some(1000.0));
    assert_eq!(z["shift_mm"][1].as_f64(), Some(-40.0));
    assert!(run.program.contains(
        "(work zero: X0 Y0 = the lower-left corner of the outline's box, Z0 = top of the stock)"
    ));
    // The preview is in program coordinates and marks the origin with its axes and legend.
    assert!(run.preview.contains("class=\"work-zero\""));
    assert!(run.preview.contains("work zero X0 Y0"));
}

#[test]
fn every_corner_the_centre_and_a_point_land_where_asked() {
    let dir = tempfile::tempdir().unwrap();
    plate(&dir.path().join("neg.dxf"), -22.0, -15.0);
    let machine = wide_mill(dir.path(), 500.0);
    // The plate's lower-left corner in program coordinates, for each zero: the plate is
    // 200 × 120 mm with its lower-left corner at (−22, −15) in the drawing.
    let cases: [(&str, [f64; 2]); 7] = [
        ("drawing", [-22.0, -15.0]),
        ("lower-left", [0.0, 0.0]),
        ("lower-right", [-200.0, 0.0]),
        ("upper-left", [0.0, -120.0]),
        ("upper-right", [-200.0, -120.0]),
        ("centre", [-100.0, -60.0]),
        ("-12,-5", [-10.0, -10.0]),
    ];
    for (zero, corner) in cases {
        let arg = format!("--zero={zero}");
        conicut()
            .current_dir(dir.path())
            .args([
                "plan",
                "neg.dxf",
                "--machine",
                &machine,
                "--tool-diameter",
                "6",
                "--out",
                "out",
                &arg,
            ])
            .assert()
            .success();
        let program = fs::read_to_string(dir.path().join("out/neg.nc")).unwrap();
        let (lo, hi) = outline_box(&program);
        let want = [
            corner[0] - R,
            corner[1] - R,
            corner[0] + 200.0 + R,
            corner[1] + 120.0 + R,
        ];
        for (got, w) in lo.iter().chain(&hi).zip(want) {
            assert!(near(*got, w, 1e-4), "{zero}: {lo:?} {hi:?} vs {want:?}");
        }
        let report: serde_json::Value = serde_json::from_str(
            &fs::read_to_string(dir.path().join("out/neg-report.json")).unwrap(),
        )
        .unwrap();
        // The bay's centre is 60, 50 from the plate's corner.
        let c = bay_centre(&report);
        assert!(
            near(c[0], corner[0] + 60.0, 1e-9) && near(c[1], corner[1] + 50.0, 1e-9),
            "{zero}: {c:?}"
        );
        let shift = &report["work_zero"]["shift_mm"];
        assert!(near(shift[0].as_f64().unwrap(), corner[0] + 22.0, 1e-12));
        assert!(near(shift[1].as_f64().unwrap(), corner[1] + 15.0, 1e-12));
    }
}

#[test]
fn the_job_file_gives_the_zero_and_offset_and_the_command_line_wins() {
    let dir = tempfile::tempdir().unwrap();
    plate(&dir.path().join("job.dxf"), 1000.0, 40.0);
    // The job file is in inches: its zero point [39.37007874015748, 1.5748031496062993] is
    // (1000, 40) mm to rounding.
    fs::write(
        dir.path().join("job.toml"),
        "units = \"in\"\nzero = [39.37007874015748, 1.5748031496062993]\nwork_offset = \"G56\"\n\
         [[feature]]\nname = \"bay 1\"\nbay = \"bay 1\"\n",
    )
    .unwrap();
    let run = plan(dir.path(), "job.dxf", &["--job", "job.toml"]);
    let z = &run.report["work_zero"];
    assert!(near(
        z["drawing_point_mm"][0].as_f64().unwrap(),
        1000.0,
        1e-9
    ));
    assert!(near(z["drawing_point_mm"][1].as_f64().unwrap(), 40.0, 1e-9));
    let c = bay_centre(&run.report);
    assert!(near(c[0], 60.0, 1e-9) && near(c[1], 50.0, 1e-9), "{c:?}");
    // The profile's start block selects G54; the job's G56 replaces it, once.
    assert!(
        !run.program
            .lines()
            .any(|l| l.split(' ').any(|w| w == "G54"))
    );
    assert_eq!(
        run.program
            .lines()
            .filter(|l| l.split(' ').any(|w| w == "G56"))
            .count(),
        1
    );
    assert!(run.program.contains("work offset G56"));

    // The command line wins over the job file.
    let run = plan(
        dir.path(),
        "job.dxf",
        &[
            "--job",
            "job.toml",
            "--zero",
            "990,30",
            "--work-offset",
            "g58",
        ],
    );
    let c = bay_centre(&run.report);
    assert!(near(c[0], 70.0, 1e-9) && near(c[1], 60.0, 1e-9), "{c:?}");
    assert!(
        run.program
            .lines()
            .any(|l| l.split(' ').any(|w| w == "G58"))
    );
    assert!(
        run.program
            .contains("(work zero: X0 Y0 = the drawing point at x 990, y 30,")
    );
}

#[test]
fn bad_zeros_and_offsets_are_refused_in_words() {
    let dir = tempfile::tempdir().unwrap();
    plate(&dir.path().join("p.dxf"), 0.0, 0.0);
    for (flag, value, expect) in [
        ("--zero", "left", "X,Y"),
        ("--zero", "1,2,3", "X,Y"),
        ("--work-offset", "G53", "G54, G55"),
    ] {
        let out = conicut()
            .current_dir(dir.path())
            .args([
                "plan",
                "p.dxf",
                "--machine",
                &mill(),
                "--tool-diameter",
                "6",
                flag,
                value,
            ])
            .output()
            .unwrap();
        assert!(!out.status.success(), "{flag} {value}");
        let message = String::from_utf8_lossy(&out.stderr);
        assert!(message.contains(expect), "{flag} {value}: {message}");
    }
    fs::write(
        dir.path().join("bad.toml"),
        "units = \"mm\"\nzero = \"10,20\"\n[[feature]]\nname = \"b\"\nbay = \"bay 1\"\n",
    )
    .unwrap();
    let out = conicut()
        .current_dir(dir.path())
        .args([
            "plan",
            "p.dxf",
            "--machine",
            &mill(),
            "--tool-diameter",
            "6",
            "--job",
            "bad.toml",
        ])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(message.contains("zero = [x, y]"), "{message}");
    assert!(message.contains("line 2"), "{message}");
}
