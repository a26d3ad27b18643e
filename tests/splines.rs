//! SPLINEs cut as holes: a closed rational spline that is exactly a circle, and an open cubic
//! closed by a LINE, in drawings written by the outside `dxf` crate as R2000, R2010 and R2018
//! (mm), each program read back by the outside `gcode` crate (tests/support/gcode_read.rs).
//!
//! Reference values: the rational quadratic B-spline circle of tests/support/nurbs_circle.rs
//! (its source named there) is a circle of radius R exactly. Cut inside with a
//! 3 mm tool, its contour lies at R − 1.5 from the centre, to the tolerance (0.01 mm), the
//! spline's arcs (1e-5 mm, `conicut::read::SPLINE_TOLERANCE`) and the read-back's f32 (1e-4 mm).

#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/nurbs_circle.rs"]
mod nurbs_circle;

use assert_cmd::Command;
use dxf::entities::{Entity, EntityType, Line, Spline};
use dxf::enums::AcadVersion;
use gcode_read::{marked_moves, read_back};
use std::fs;

fn on(layer: &str, kind: EntityType) -> Entity {
    let mut e = Entity::new(kind);
    e.common.layer = layer.into();
    e
}

fn line(layer: &str, a: (f64, f64), b: (f64, f64)) -> Entity {
    on(
        layer,
        EntityType::Line(Line::new(
            dxf::Point::new(a.0, a.1, 0.0),
            dxf::Point::new(b.0, b.1, 0.0),
        )),
    )
}

fn spline(degree: i32, control: &[(f64, f64)], weights: &[f64], knots: &[f64]) -> Entity {
    let mut s = Spline {
        degree_of_curve: degree,
        control_points: control
            .iter()
            .map(|&(x, y)| dxf::Point::new(x, y, 0.0))
            .collect(),
        weight_values: weights.to_vec(),
        knot_values: knots.to_vec(),
        ..Default::default()
    };
    s.set_is_rational(weights.iter().any(|&w| w != 1.0));
    on("HOLES", EntityType::Spline(s))
}

/// The plate, the circle spline of radius 12 about (60, 50), and a D: an open cubic from
/// (120, 30) over to (120, 70) closed by a LINE back down.
fn drawing(version: AcadVersion) -> dxf::Drawing {
    let mut d = dxf::Drawing::new();
    d.header.version = version;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    let plate = [(0.0, 0.0), (200.0, 0.0), (200.0, 100.0), (0.0, 100.0)];
    for i in 0..4 {
        d.add_entity(line("PLATE", plate[i], plate[(i + 1) % 4]));
    }
    d.add_entity(spline(
        2,
        &nurbs_circle::control(60.0, 50.0, 12.0),
        &nurbs_circle::weights(),
        &nurbs_circle::KNOTS,
    ));
    d.add_entity(spline(
        3,
        &[
            (120.0, 30.0),
            (150.0, 25.0),
            (165.0, 50.0),
            (150.0, 75.0),
            (120.0, 70.0),
        ],
        &[],
        &[0.0, 0.0, 0.0, 0.0, 0.5, 1.0, 1.0, 1.0, 1.0],
    ));
    d.add_entity(line("HOLES", (120.0, 70.0), (120.0, 30.0)));
    d
}

#[test]
fn closed_and_joined_splines_are_cut_as_holes_in_every_version() {
    let root = env!("CARGO_MANIFEST_DIR");
    for version in [AcadVersion::R2000, AcadVersion::R2010, AcadVersion::R2018] {
        let dir = tempfile::tempdir().unwrap();
        drawing(version)
            .save_file(dir.path().join("s.dxf"))
            .unwrap();
        let machine = format!("{root}/machine-profiles/metric-mill.toml");
        Command::cargo_bin("conicut")
            .unwrap()
            .current_dir(dir.path())
            .args([
                "plan",
                "s.dxf",
                "--machine",
                &machine,
                "--tool-diameter",
                "3",
                "--out",
                "out",
            ])
            .assert()
            .success();
        let program = fs::read_to_string(dir.path().join("out/s.nc")).unwrap();
        let read = read_back(&program);
        let holes: Vec<&String> = read
            .features
            .iter()
            .map(|(n, _)| n)
            .filter(|n| n.starts_with("hole"))
            .collect();
        assert_eq!(holes.len(), 2, "{version:?}: {holes:?}");
        // The circle's contour: every arc end and middle at 12 − 1.5 from (60, 50).
        let circle = holes
            .iter()
            .map(|n| marked_moves(&read, n, "contour"))
            .find(|m| m.iter().all(|&i| read.moves[i].to[0] < 100.0))
            .expect("the circle's contour");
        for &i in &circle {
            let m = &read.moves[i];
            let d = (m.to[0] - 60.0).hypot(m.to[1] - 50.0);
            assert!((d - 10.5).abs() <= 0.01 + 1e-5 + 1e-4, "{version:?}: {d}");
            if let Some((c, _)) = m.arc {
                assert!(
                    (c[0] - 60.0).hypot(c[1] - 50.0) < 1e-3,
                    "{version:?}: centre {c:?}"
                );
            }
        }
        // The D: its contour keeps right of the LINE at x = 120 by the tool radius.
        let d_shape = holes
            .iter()
            .map(|n| marked_moves(&read, n, "contour"))
            .find(|m| m.iter().all(|&i| read.moves[i].to[0] > 100.0))
            .expect("the D's contour");
        let min_x = d_shape
            .iter()
            .map(|&i| read.moves[i].to[0])
            .fold(f64::INFINITY, f64::min);
        assert!((min_x - 121.5).abs() < 1e-3, "{version:?}: {min_x}");
    }
}
