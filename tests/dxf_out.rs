//! `plan --dxf-out`: the drawing office's copy of the drawing with the solved ellipses, read back
//! by the outside `dxf` crate and by a second reader written here (group codes straight from the
//! text: ELLIPSE 10/20 centre, 11/21 major axis end relative to it, 40 ratio; DXF reference,
//! ELLIPSE entity), both matching the solver's report to 1e-9 and the closed forms.
//!
//! The drawing: an R12 file in inches (no units field: `--units in`), a 10 × 6 in plate with a
//! 4 × 2 in rectangle bay whose largest ellipse has semi-axes 2 and 1 in at its centre
//! (docs/sources.md M2, the rectangle row), and a triangle bay whose largest ellipse is its
//! Steiner inellipse, centred on the centroid (docs/sources.md M3). Everything is drawn 20 in
//! right and 10 in up from the origin and planned with the work zero at the plate's lower-left
//! corner, so the copy must take the shift back off.

use assert_cmd::Command;
use dxf::entities::{Entity, EntityType, Line};
use dxf::enums::AcadVersion;
use std::fs;

/// Where the drawing sits (in): everything is drawn this far from the origin.
const AT: (f64, f64) = (20.0, 10.0);

fn line(d: &mut dxf::Drawing, layer: &str, a: (f64, f64), b: (f64, f64)) {
    let mut e = Entity::new(EntityType::Line(Line::new(
        dxf::Point::new(a.0 + AT.0, a.1 + AT.1, 0.0),
        dxf::Point::new(b.0 + AT.0, b.1 + AT.1, 0.0),
    )));
    e.common.layer = layer.into();
    d.add_entity(e);
}

fn closed(d: &mut dxf::Drawing, layer: &str, pts: &[(f64, f64)]) {
    for i in 0..pts.len() {
        line(d, layer, pts[i], pts[(i + 1) % pts.len()]);
    }
}

const TRIANGLE: [(f64, f64); 3] = [(6.5, 1.0), (9.0, 1.0), (7.0, 4.5)];

/// The (centre, semi-major, semi-minor) of each ELLIPSE on `layer`, read from the text alone.
fn ellipses_in_text(text: &str, layer: &str) -> Vec<([f64; 2], f64, f64)> {
    let lines: Vec<&str> = text.lines().map(str::trim).collect();
    let mut out = Vec::new();
    let mut k = 0;
    while k + 1 < lines.len() {
        if lines[k] == "0" && lines[k + 1] == "ELLIPSE" {
            let mut j = k + 2;
            let (mut on, mut c, mut m, mut ratio) = (false, [0.0f64; 2], [0.0f64; 2], 0.0f64);
            while j + 1 < lines.len() && lines[j] != "0" {
                let v = lines[j + 1];
                match lines[j] {
                    "8" => on = v == layer,
                    "10" => c[0] = v.parse().unwrap(),
                    "20" => c[1] = v.parse().unwrap(),
                    "11" => m[0] = v.parse().unwrap(),
                    "21" => m[1] = v.parse().unwrap(),
                    "40" => ratio = v.parse().unwrap(),
                    _ => {}
                }
                j += 2;
            }
            if on {
                let a = m[0].hypot(m[1]);
                out.push((c, a, a * ratio));
            }
            k = j;
        } else {
            k += 1;
        }
    }
    out
}

#[test]
fn the_solved_ellipses_go_into_a_copy_of_the_drawing_in_its_own_units_and_frame() {
    let dir = tempfile::tempdir().unwrap();
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R12;
    closed(
        &mut d,
        "PLATE",
        &[(0.0, 0.0), (10.0, 0.0), (10.0, 6.0), (0.0, 6.0)],
    );
    closed(
        &mut d,
        "OPENING-BAYS",
        &[(1.0, 1.0), (5.0, 1.0), (5.0, 3.0), (1.0, 3.0)],
    );
    closed(&mut d, "OPENING-BAYS", &TRIANGLE);
    d.save_file(dir.path().join("p.dxf")).unwrap();
    Command::cargo_bin("conicut")
        .unwrap()
        .current_dir(dir.path())
        .args(["plan", "p.dxf", "--machine", "laser", "--units", "in"])
        .args([
            "--margin",
            "0",
            "--zero",
            "lower-left",
            "--dxf-out",
            "--out",
            "out",
        ])
        .assert()
        .success();
    let text = fs::read_to_string(dir.path().join("out/p-solved.dxf")).unwrap();
    // Written as R2000 or later, never R12 (which has no ELLIPSE), in inches.
    assert!(!text.contains("AC1009"), "still R12");
    assert!(text.contains("AC1015") || text.contains("AC1018") || text.contains("AC1021"));
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(dir.path().join("out/p-report.json")).unwrap())
            .unwrap();
    let shift = &report["work_zero"]["shift_mm"];
    assert!(shift[0].as_f64().unwrap().abs() > 1.0, "the zero moved");
    // The outside crate's reading.
    let copy = dxf::Drawing::load_file(dir.path().join("out/p-solved.dxf")).unwrap();
    assert_eq!(copy.header.default_drawing_units, dxf::enums::Units::Inches);
    let mut by_crate: Vec<([f64; 2], f64, f64)> = copy
        .entities()
        .filter(|e| e.common.layer == "CONICUT-SOLVED")
        .filter_map(|e| match &e.specific {
            EntityType::Ellipse(el) => {
                let a = el.major_axis.x.hypot(el.major_axis.y);
                Some(([el.center.x, el.center.y], a, a * el.minor_axis_ratio))
            }
            _ => None,
        })
        .collect();
    let points = copy
        .entities()
        .filter(|e| {
            e.common.layer == "CONICUT-SOLVED" && matches!(e.specific, EntityType::ModelPoint(_))
        })
        .count();
    assert_eq!(points, 2, "a centre point for each");
    // The original lines are kept.
    let lines = copy
        .entities()
        .filter(|e| matches!(e.specific, EntityType::Line(_)))
        .count();
    assert_eq!(lines, 11);
    let mut by_text = ellipses_in_text(&text, "CONICUT-SOLVED");
    assert_eq!(by_crate.len(), 2);
    assert_eq!(by_text.len(), 2);
    let key = |e: &([f64; 2], f64, f64)| e.0[0];
    by_crate.sort_by(|a, b| key(a).total_cmp(&key(b)));
    by_text.sort_by(|a, b| key(a).total_cmp(&key(b)));
    // The report's ellipses (program mm) in the drawing's frame and inches.
    let mut from_report: Vec<([f64; 2], f64, f64)> = report["features"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["kind"] == "opening")
        .map(|f| {
            let e = &f["ellipse"];
            let g = |v: &serde_json::Value| v.as_f64().unwrap();
            (
                [
                    (g(&e["center_mm"][0]) - g(&shift[0])) / 25.4,
                    (g(&e["center_mm"][1]) - g(&shift[1])) / 25.4,
                ],
                g(&e["semi_major_mm"]) / 25.4,
                g(&e["semi_minor_mm"]) / 25.4,
            )
        })
        .collect();
    from_report.sort_by(|a, b| key(a).total_cmp(&key(b)));
    for ((c, t), r) in by_crate.iter().zip(&by_text).zip(&from_report) {
        for (x, y) in [(c.0[0], r.0[0]), (c.0[1], r.0[1]), (c.1, r.1), (c.2, r.2)] {
            assert!((x - y).abs() < 1e-9, "crate {c:?} report {r:?}");
        }
        for (x, y) in [(t.0[0], r.0[0]), (t.0[1], r.0[1]), (t.1, r.1), (t.2, r.2)] {
            assert!((x - y).abs() < 1e-9, "text {t:?} report {r:?}");
        }
    }
    // The closed forms: the rectangle's (semi-axes 2 and 1 about (3, 2) from the plate's
    // corner), the triangle's
    // Steiner inellipse about the centroid.
    let rect = by_crate[0];
    assert!((rect.0[0] - 3.0 - AT.0).abs() < 1e-9 && (rect.0[1] - 2.0 - AT.1).abs() < 1e-9);
    assert!((rect.1 - 2.0).abs() < 1e-9 && (rect.2 - 1.0).abs() < 1e-9);
    let tri = by_crate[1];
    let g = [
        TRIANGLE.iter().map(|p| p.0).sum::<f64>() / 3.0,
        TRIANGLE.iter().map(|p| p.1).sum::<f64>() / 3.0,
    ];
    assert!((tri.0[0] - g[0] - AT.0).abs() < 1e-9 && (tri.0[1] - g[1] - AT.1).abs() < 1e-9);
    let area = 0.5 * ((9.0 - 6.5) * (4.5 - 1.0) - (7.0 - 6.5) * 0.0f64).abs();
    let want = std::f64::consts::PI / (3.0 * 3f64.sqrt()) * area;
    assert!((std::f64::consts::PI * tri.1 * tri.2 - want).abs() < 1e-9 * want);
}
