//! One part drawn by the outside `dxf` crate in every DXF version it writes that conicut reads
//! (R12, R2000, R2010, R2018), in millimetres, in inches, with no units (R12), and placed far
//! from the origin; planned for a mill and a laser; every program read back by the outside
//! `gcode` crate (tests/support/gcode_read.rs) and held to the bundled profiles' travel.
//!
//! The part: a 200 × 120 mm plate (a closed polyline whose lower-right corner is a quarter
//! circle of radius 10, drawn by a bulge), a rectangle bay of 60 × 40 (four LINEs), a
//! triangle bay (three LINEs), a Ø16 CIRCLE, a slot of two ARCs and two LINEs, an ELLIPSE hole
//! (R2000 and later), a Ø12 circle drawn as a rational quadratic SPLINE (R2000 and later), a Ø10
//! circle whose extrusion is (0, 0, −1), a Ø8 circle placed by a block INSERT, and a Ø10 circle
//! on a layer that is off (never cut).
//!
//! Reference values: the rectangle bay's largest ellipse has semi-axes w/2 and h/2 at its
//! centre (docs/sources.md M2, the rectangle row); the triangle's is its Steiner inellipse, of
//! area π/(3√3) times the triangle's (docs/sources.md M3); a circle of radius R cut inside with
//! a tool of radius r leaves the contour at R − r. The spline circle is that of
//! tests/support/nurbs_circle.rs (its source named there). The extruded circle: under the
//! arbitrary axis algorithm (docs/sources.md P2.3) the normal (0, 0, −1) has OCS x = −WCS x, so
//! the centre is written as (−x, y).

#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/nurbs_circle.rs"]
mod nurbs_circle;

use assert_cmd::Command;
use dxf::entities::{
    Arc, Circle, Ellipse, Entity, EntityType, Insert, Line, LwPolyline, Polyline, Spline, Vertex,
};
use dxf::enums::{AcadVersion, Units};
use dxf::tables::Layer;
use dxf::{Block, LwPolylineVertex};
use gcode_read::{marked_moves, read_back};
use std::f64::consts::PI;
use std::fs;

/// Millimetres per drawing unit, and the drawing's offset from the origin (mm).
#[derive(Clone, Copy)]
struct Place {
    mm_per_unit: f64,
    offset: (f64, f64),
}

fn on(layer: &str, kind: EntityType) -> Entity {
    let mut e = Entity::new(kind);
    e.common.layer = layer.into();
    e
}

/// The part in version `v`, at `place`; the triangle's corners (mm, in the drawing's frame).
fn part(v: AcadVersion, place: Place) -> dxf::Drawing {
    let s = 1.0 / place.mm_per_unit;
    let at =
        |x: f64, y: f64| dxf::Point::new((x + place.offset.0) * s, (y + place.offset.1) * s, 0.0);
    let mut d = dxf::Drawing::new();
    d.header.version = v;
    d.header.default_drawing_units = if place.mm_per_unit == 25.4 {
        Units::Inches
    } else {
        Units::Millimeters
    };
    // The plate: corners (0,0), (190,0), arc to (200,10), (200,120), (0,120); the bulge of a
    // quarter circle is tan(90°/4).
    let plate = [
        (0.0, 0.0, 0.0),
        (190.0, 0.0, (PI / 8.0).tan()),
        (200.0, 10.0, 0.0),
        (200.0, 120.0, 0.0),
        (0.0, 120.0, 0.0),
    ];
    if v == AcadVersion::R12 {
        let mut p = Polyline::default();
        p.set_is_closed(true);
        for (x, y, bulge) in plate {
            let mut vertex = Vertex::new(at(x, y));
            vertex.bulge = bulge;
            p.add_vertex(&mut d, vertex);
        }
        d.add_entity(on("PLATE", EntityType::Polyline(p)));
    } else {
        let mut p = LwPolyline::default();
        p.set_is_closed(true);
        for (x, y, bulge) in plate {
            let q = at(x, y);
            p.vertices.push(LwPolylineVertex {
                x: q.x,
                y: q.y,
                bulge,
                ..Default::default()
            });
        }
        d.add_entity(on("PLATE", EntityType::LwPolyline(p)));
    }
    let lines = |d: &mut dxf::Drawing, layer: &str, pts: &[(f64, f64)]| {
        for i in 0..pts.len() {
            let (a, b) = (pts[i], pts[(i + 1) % pts.len()]);
            d.add_entity(on(
                layer,
                EntityType::Line(Line::new(at(a.0, a.1), at(b.0, b.1))),
            ));
        }
    };
    lines(
        &mut d,
        "OPENING-BAYS",
        &[(10.0, 10.0), (70.0, 10.0), (70.0, 50.0), (10.0, 50.0)],
    );
    lines(&mut d, "OPENING-BAYS", &TRIANGLE);
    d.add_entity(on(
        "HOLES",
        EntityType::Circle(Circle::new(at(120.0, 30.0), 8.0 * s)),
    ));
    // A slot: half circles of radius 6 about (120, 90) and (160, 90).
    d.add_entity(on(
        "HOLES",
        EntityType::Arc(Arc::new(at(160.0, 90.0), 6.0 * s, 270.0, 90.0)),
    ));
    d.add_entity(on(
        "HOLES",
        EntityType::Arc(Arc::new(at(120.0, 90.0), 6.0 * s, 90.0, 270.0)),
    ));
    lines_open(&mut d, &at, (120.0, 84.0), (160.0, 84.0));
    lines_open(&mut d, &at, (160.0, 96.0), (120.0, 96.0));
    if v != AcadVersion::R12 {
        // An ellipse of semi-axes 12 and 5 about (160, 30), its major axis at 30°.
        let major = (
            12.0 * s * 30f64.to_radians().cos(),
            12.0 * s * 30f64.to_radians().sin(),
        );
        let e = Ellipse {
            center: at(160.0, 30.0),
            major_axis: dxf::Vector::new(major.0, major.1, 0.0),
            minor_axis_ratio: 5.0 / 12.0,
            start_parameter: 0.0,
            end_parameter: 2.0 * PI,
            ..Default::default()
        };
        d.add_entity(on("HOLES", EntityType::Ellipse(e)));
    }
    if v != AcadVersion::R12 {
        // A circle of radius 6 about (60, 95) as a rational quadratic spline.
        let mut sp = Spline {
            degree_of_curve: 2,
            control_points: nurbs_circle::control(60.0, 95.0, 6.0)
                .into_iter()
                .map(|(x, y)| at(x, y))
                .collect(),
            weight_values: nurbs_circle::weights(),
            knot_values: nurbs_circle::KNOTS.to_vec(),
            ..Default::default()
        };
        sp.set_is_rational(true);
        sp.set_is_closed(true);
        d.add_entity(on("HOLES", EntityType::Spline(sp)));
    }
    // A circle of radius 5 about (90, 100) seen from below: extrusion (0, 0, −1), OCS x = −x.
    let c = at(90.0, 100.0);
    let mut below = Circle::new(dxf::Point::new(-c.x, c.y, 0.0), 5.0 * s);
    below.normal = dxf::Vector::new(0.0, 0.0, -1.0);
    d.add_entity(on("HOLES", EntityType::Circle(below)));
    // A circle on a layer that is off: never cut.
    d.add_layer(Layer {
        name: "HIDDEN".into(),
        is_layer_on: false,
        ..Default::default()
    });
    d.add_entity(on(
        "HIDDEN",
        EntityType::Circle(Circle::new(at(185.0, 100.0), 5.0 * s)),
    ));
    // A block of one Ø8 circle on layer 0, inserted at (30, 100) on HOLES.
    d.add_block(Block {
        name: "PIN".into(),
        entities: vec![on(
            "0",
            EntityType::Circle(Circle::new(dxf::Point::new(0.0, 0.0, 0.0), 4.0 * s)),
        )],
        ..Default::default()
    });
    d.add_entity(on(
        "HOLES",
        EntityType::Insert(Insert {
            name: "PIN".into(),
            location: at(30.0, 100.0),
            ..Default::default()
        }),
    ));
    d
}

fn lines_open(
    d: &mut dxf::Drawing,
    at: &dyn Fn(f64, f64) -> dxf::Point,
    a: (f64, f64),
    b: (f64, f64),
) {
    d.add_entity(on(
        "HOLES",
        EntityType::Line(Line::new(at(a.0, a.1), at(b.0, b.1))),
    ));
}

const TRIANGLE: [(f64, f64); 3] = [(85.0, 60.0), (110.0, 60.0), (90.0, 75.0)];

/// The bundled profiles' XY travel (from machine-profiles/*.toml).
const TRAVEL: [(&str, [f64; 4]); 2] = [
    ("metric-mill", [-10.0, 400.0, -10.0, 250.0]),
    ("laser", [-20.0, 3000.0, -20.0, 1500.0]),
];

#[test]
fn one_part_in_every_version_unit_and_place_cuts_the_same() {
    let root = env!("CARGO_MANIFEST_DIR");
    let places = [
        (
            "mm",
            Place {
                mm_per_unit: 1.0,
                offset: (0.0, 0.0),
            },
        ),
        (
            "in",
            Place {
                mm_per_unit: 25.4,
                offset: (0.0, 0.0),
            },
        ),
        (
            "far",
            Place {
                mm_per_unit: 1.0,
                offset: (5000.0, -3000.0),
            },
        ),
    ];
    let versions = [
        AcadVersion::R12,
        AcadVersion::R2000,
        AcadVersion::R2010,
        AcadVersion::R2018,
    ];
    for v in versions {
        for (what, place) in places {
            let dir = tempfile::tempdir().unwrap();
            part(v, place).save_file(dir.path().join("p.dxf")).unwrap();
            for (machine, travel) in TRAVEL {
                let mut args = vec![
                    "plan".to_string(),
                    "p.dxf".into(),
                    "--machine".into(),
                    format!("{root}/machine-profiles/{machine}.toml"),
                    "--out".into(),
                    "out".into(),
                    "--zero".into(),
                    "lower-left".into(),
                ];
                if machine == "metric-mill" {
                    args.extend(["--tool-diameter".into(), "3".into()]);
                }
                if v == AcadVersion::R12 {
                    // R12 has no units field: said on the command line.
                    args.extend(["--units".into(), what.replace("far", "mm")]);
                }
                let out = Command::cargo_bin("conicut")
                    .unwrap()
                    .current_dir(dir.path())
                    .args(&args)
                    .output()
                    .unwrap();
                let case = format!("{v:?} {what} {machine}");
                assert!(
                    out.status.success(),
                    "{case}: {}",
                    String::from_utf8_lossy(&out.stderr)
                );
                check(
                    &dir.path().join("out"),
                    &case,
                    travel,
                    v != AcadVersion::R12,
                );
            }
        }
    }
}

/// The report and the program of one run against the reference values.
fn check(out: &std::path::Path, case: &str, travel: [f64; 4], has_ellipse: bool) {
    let report: serde_json::Value =
        serde_json::from_str(&fs::read_to_string(out.join("p-report.json")).unwrap()).unwrap();
    let width = report["tool_diameter_mm"].as_f64().unwrap();
    let features = report["features"].as_array().unwrap();
    let f = |v: &serde_json::Value| v.as_f64().unwrap();
    // The rectangle bay: semi-axes 30 and 20 at (40, 30); the plate's corner is X0 Y0.
    let ellipses: Vec<&serde_json::Value> = features
        .iter()
        .filter(|x| x["kind"] == "opening")
        .map(|x| &x["ellipse"])
        .collect();
    assert_eq!(ellipses.len(), 2, "{case}");
    let rect = ellipses
        .iter()
        .find(|e| (f(&e["center_mm"][0]) - 40.0).abs() < 1e-6)
        .unwrap_or_else(|| panic!("{case}: the rectangle's ellipse in {ellipses:?}"));
    assert!((f(&rect["semi_major_mm"]) - 30.0).abs() < 1e-9, "{case}");
    assert!((f(&rect["semi_minor_mm"]) - 20.0).abs() < 1e-9, "{case}");
    assert!((f(&rect["center_mm"][1]) - 30.0).abs() < 1e-9, "{case}");
    // The triangle: area π/(3√3) × 187.5 mm² (its area is ½ |25 × 15 − 0 × 5| = 187.5).
    let tri = ellipses
        .iter()
        .find(|e| (f(&e["center_mm"][0]) - 40.0).abs() >= 1e-6)
        .unwrap();
    let want = PI / (3.0 * 3f64.sqrt()) * 187.5;
    assert!(
        (f(&tri["area_mm2"]) - want).abs() < 1e-9 * want,
        "{case}: {}",
        tri["area_mm2"]
    );
    // Holes: the Ø16 circle, the slot, the block's Ø8 circle, the extruded Ø10 circle, and the
    // ellipse and the spline circle where the version has them; the circle on the layer that is
    // off is not cut.
    let holes = features.iter().filter(|x| x["kind"] == "hole").count();
    assert_eq!(holes, 4 + 2 * usize::from(has_ellipse), "{case}");
    let hidden = report["layers"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| l["name"] == "HIDDEN")
        .unwrap_or_else(|| panic!("{case}: layer HIDDEN in {}", report["layers"]));
    assert_eq!(hidden["role"], "not-cut", "{case}");
    assert_eq!(hidden["reason"], "off", "{case}");
    // Read back: each circle's contour at R − r from its centre; everything within travel.
    let program = fs::read_to_string(out.join("p.nc")).unwrap();
    let read = read_back(&program);
    let mut circles = vec![
        ((120.0, 30.0), 8.0),
        ((90.0, 100.0), 5.0),
        ((30.0, 100.0), 4.0),
    ];
    if has_ellipse {
        circles.push(((60.0, 95.0), 6.0));
    }
    for ((cx, cy), radius) in circles {
        let contour = read
            .features
            .iter()
            .map(|(n, _)| marked_moves(&read, n, "contour"))
            .find(|m| {
                !m.is_empty()
                    && m.iter().all(|&i| {
                        let p = read.moves[i].to;
                        (p[0] - cx).hypot(p[1] - cy) < radius
                    })
            })
            .unwrap_or_else(|| panic!("{case}: the contour of the circle at ({cx}, {cy})"));
        for &i in &contour {
            let p = read.moves[i].to;
            let d = (p[0] - cx).hypot(p[1] - cy);
            assert!(
                (d - (radius - width / 2.0)).abs() < 0.01 + 2e-4,
                "{case}: circle at ({cx}, {cy}): {d}"
            );
        }
    }
    for m in &read.moves {
        for p in [m.from, m.to] {
            assert!(
                p[0] >= travel[0] - 1e-3
                    && p[0] <= travel[1] + 1e-3
                    && p[1] >= travel[2] - 1e-3
                    && p[1] <= travel[3] + 1e-3,
                "{case}: {p:?} outside the travel"
            );
        }
    }
}
