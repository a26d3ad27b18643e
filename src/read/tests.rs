use super::*;
use crate::geom::{ArcSegment, Point};
use dxf::entities::EntityType;
use dxf::entities::{self as de, Entity as DxfEntity};
use dxf::enums::AcadVersion;
use std::f64::consts::TAU;

fn opts(units: Option<Units>) -> ReadOptions<'static> {
    ReadOptions {
        file_name: "test.dxf",
        units,
    }
}

fn bytes_of(entities: Vec<EntityType>, version: AcadVersion) -> Vec<u8> {
    let mut d = dxf::Drawing::new();
    d.header.version = version;
    d.header.default_drawing_units = dxf::enums::Units::Millimeters;
    for e in entities {
        let mut ent = DxfEntity::new(e);
        ent.common.layer = "CUT".into();
        d.add_entity(ent);
    }
    let mut out = Vec::new();
    d.save(&mut out).unwrap();
    out
}

fn read_one(e: EntityType) -> Result<Drawing, ReadError> {
    read_dxf(&bytes_of(vec![e], AcadVersion::R2000), &opts(None))
}

fn close(p: Point, x: f64, y: f64) -> bool {
    (p.x - x).abs() < 1e-9 && (p.y - y).abs() < 1e-9
}

#[test]
fn arc_degrees_become_radians() {
    // DXF reference: ARC group codes 50/51 are degrees, counter-clockwise.
    let arc = de::Arc::new(dxf::Point::new(1.0, 2.0, 0.0), 3.0, 350.0, 10.0);
    let d = read_one(EntityType::Arc(arc)).unwrap();
    let EntityKind::Arc(a) = d.entities[0].kind else {
        panic!("not an arc: {:?}", d.entities[0].kind)
    };
    assert!((a.sweep - 20f64.to_radians()).abs() < 1e-12);
    assert!(close(
        a.start_point(),
        1.0 + 3.0 * 350f64.to_radians().cos(),
        2.0 + 3.0 * 350f64.to_radians().sin()
    ));
    assert!(close(
        a.end_point(),
        1.0 + 3.0 * 10f64.to_radians().cos(),
        2.0 + 3.0 * 10f64.to_radians().sin()
    ));
}

#[test]
fn mirrored_circle_and_lwpolyline_follow_the_arbitrary_axis_algorithm() {
    // docs/sources.md P2.3: N = (0,0,−1) maps OCS (x, y) to WCS (−x, y); bulges flip sign.
    let mut c = de::Circle::new(dxf::Point::new(5.0, 7.0, 0.0), 2.0);
    c.normal = dxf::Vector::new(0.0, 0.0, -1.0);
    let d = read_one(EntityType::Circle(c)).unwrap();
    assert_eq!(
        d.entities[0].kind,
        EntityKind::Circle {
            centre: Point::new(-5.0, 7.0),
            radius: 2.0
        }
    );

    let mut p = de::LwPolyline {
        extrusion_direction: dxf::Vector::new(0.0, 0.0, -1.0),
        ..Default::default()
    };
    for (x, y, b) in [(0.0, 0.0, 0.5), (10.0, 0.0, 0.0)] {
        p.vertices.push(dxf::LwPolylineVertex {
            x,
            y,
            bulge: b,
            ..Default::default()
        });
    }
    let d = read_one(EntityType::LwPolyline(p)).unwrap();
    let EntityKind::Polyline { vertices, closed } = &d.entities[0].kind else {
        panic!("not a polyline")
    };
    assert!(!closed);
    assert_eq!(vertices[0], (Point::new(0.0, 0.0), -0.5));
    assert_eq!(vertices[1], (Point::new(-10.0, 0.0), 0.0));
    // The arc from (0,0) to (−10,0) with bulge −0.5 turns clockwise: as seen in the OCS the arc
    // bulged to the right of travel (y < 0); mirrored in x it still lies at y < 0.
    let a = ArcSegment::from_bulge(vertices[0].0, vertices[1].0, vertices[0].1).unwrap();
    assert!(a.point_at(0.5).y < 0.0);
}

#[test]
fn mirrored_ellipse_minor_axis_flips() {
    // docs/sources.md P2.3: M = (50,0,0), ratio 0.4, N = (0,0,−1): P(π/2) = (0, −20),
    // the parameter runs clockwise seen from +Z.
    let el = de::Ellipse {
        center: dxf::Point::new(0.0, 0.0, 0.0),
        major_axis: dxf::Vector::new(50.0, 0.0, 0.0),
        minor_axis_ratio: 0.4,
        normal: dxf::Vector::new(0.0, 0.0, -1.0),
        start_parameter: 0.0,
        end_parameter: std::f64::consts::FRAC_PI_2,
    };
    let d = read_one(EntityType::Ellipse(el)).unwrap();
    let EntityKind::Ellipse {
        ellipse,
        start,
        end,
    } = d.entities[0].kind
    else {
        panic!("not an ellipse")
    };
    assert!((ellipse.a() - 50.0).abs() < 1e-12 && (ellipse.b() - 20.0).abs() < 1e-12);
    // Counter-clockwise from the DXF end point (0, −20) to the DXF start point (50, 0).
    assert!(
        close(ellipse.point(start), 0.0, -20.0),
        "{:?}",
        ellipse.point(start)
    );
    assert!(
        close(ellipse.point(end), 50.0, 0.0),
        "{:?}",
        ellipse.point(end)
    );
    assert!((end - start - std::f64::consts::FRAC_PI_2).abs() < 1e-12);
    // The midpoint of the piece is in the fourth quadrant, as the DXF curve's P(π/4) is.
    let mid = ellipse.point(0.5 * (start + end));
    assert!(mid.x > 0.0 && mid.y < 0.0);
}

#[test]
fn ellipse_parameters_follow_the_axis_normalisation() {
    // Major axis pointing to −x: the normalised ellipse has angle 0, so DXF t maps to t + π.
    let el = de::Ellipse {
        center: dxf::Point::new(10.0, 0.0, 0.0),
        major_axis: dxf::Vector::new(-30.0, 0.0, 0.0),
        minor_axis_ratio: 0.5,
        start_parameter: 0.0,
        end_parameter: 1.0,
        ..Default::default()
    };
    let d = read_one(EntityType::Ellipse(el)).unwrap();
    let EntityKind::Ellipse {
        ellipse,
        start,
        end,
    } = d.entities[0].kind
    else {
        panic!("not an ellipse")
    };
    assert!(ellipse.angle().abs() < 1e-15);
    assert!(close(ellipse.point(start), -20.0, 0.0));
    let p1 = Point::new(10.0 - 30.0 * 1f64.cos(), -15.0 * 1f64.sin());
    assert!(close(ellipse.point(end), p1.x, p1.y));
}

#[test]
fn full_ellipse_is_exactly_zero_to_two_pi() {
    let el = de::Ellipse {
        major_axis: dxf::Vector::new(0.0, 8.0, 0.0),
        minor_axis_ratio: 0.25,
        start_parameter: 0.0,
        end_parameter: TAU,
        ..Default::default()
    };
    let d = read_one(EntityType::Ellipse(el)).unwrap();
    assert!(d.entities[0].kind.is_full_ellipse());
}

#[test]
fn tilted_extrusion_is_refused_naming_the_entity() {
    let mut c = de::Circle::new(dxf::Point::new(0.0, 0.0, 0.0), 2.0);
    c.normal = dxf::Vector::new(0.0, 0.6, 0.8);
    let e = read_one(EntityType::Circle(c)).unwrap_err();
    let msg = e.to_string();
    assert!(matches!(e, ReadError::NotFlat { .. }), "{msg}");
    assert!(msg.contains("CIRCLE on layer CUT (handle"), "{msg}");
}

#[test]
fn zero_length_line_is_noted_not_kept() {
    let l = de::Line::new(
        dxf::Point::new(1.0, 1.0, 0.0),
        dxf::Point::new(1.0, 1.0, 0.0),
    );
    let d = read_one(EntityType::Line(l)).unwrap();
    assert!(d.entities.is_empty());
    assert_eq!(d.notes.len(), 1);
    assert!(d.notes[0].contains("LINE (zero length)"), "{}", d.notes[0]);
}

#[test]
fn binary_dxf_is_refused() {
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R2000;
    let mut out = Vec::new();
    d.save_binary(&mut out).unwrap();
    let e = read_dxf(&out, &opts(Some(Units::Millimetres))).unwrap_err();
    assert_eq!(
        e,
        ReadError::Binary {
            file: "test.dxf".into()
        }
    );
}

#[test]
fn text_that_is_not_dxf_is_refused() {
    let e = read_dxf(b"hello\nworld\n", &opts(Some(Units::Millimetres))).unwrap_err();
    assert!(matches!(e, ReadError::NotDxf { .. }), "{e}");
}

#[test]
fn bad_number_names_line_and_entity() {
    let bytes = bytes_of(
        vec![EntityType::Circle(de::Circle::new(
            dxf::Point::new(5.0, 5.0, 0.0),
            1.25,
        ))],
        AcadVersion::R2000,
    );
    let text = String::from_utf8(bytes).unwrap();
    let bad = text.replacen("\r\n 40\r\n1.25\r\n", "\r\n 40\r\nnot-a-number\r\n", 1);
    assert_ne!(
        bad, text,
        "the test must find the radius in the written file"
    );
    let e = read_dxf(bad.as_bytes(), &opts(None)).unwrap_err();
    let ReadError::BadNumber { line, code, .. } = &e else {
        panic!("{e}")
    };
    assert_eq!(*code, 40);
    assert_eq!(bad.lines().nth(line - 1), Some("not-a-number"));
    assert!(e.to_string().contains("CIRCLE on layer CUT"), "{e}");
}

#[test]
fn entity_the_library_drops_silently_is_detected() {
    // An unknown group code as the last pair of the last entity: the dxf crate 0.6.2 stops
    // reading entities there and still returns Ok (CRATES.md §2, gotcha 3).
    let text = "0\nSECTION\n2\nHEADER\n9\n$INSUNITS\n70\n4\n0\nENDSEC\n\
0\nSECTION\n2\nENTITIES\n\
0\nLINE\n5\n20\n8\nCUT\n10\n0\n20\n0\n11\n5\n21\n0\n\
0\nCIRCLE\n5\n21\n8\nCUT\n10\n5\n20\n5\n40\n1\n1080\nodd\n\
0\nENDSEC\n0\nEOF\n";
    let crate_view = dxf::Drawing::load(&mut text.as_bytes()).unwrap();
    assert_eq!(
        crate_view.entities().count(),
        1,
        "premise: the crate drops the circle"
    );
    let e = read_dxf(text.as_bytes(), &opts(None)).unwrap_err();
    assert_eq!(
        e,
        ReadError::EntityLost {
            file: "test.dxf".into(),
            line: 29,
            what: "CIRCLE on layer CUT (handle 21, line 29)".into()
        }
    );
}

#[test]
fn crate_load_errors_carry_the_line() {
    let text = "0\nSECTION\n2\nENTITIES\n0\nLINE\n10\n1\n0\nENDSEC\n0\nEOF\n";
    // A section name the crate does not expect in that place makes it fail with a line.
    let broken = text.replace("0\nEOF\n", "5\nEOF\n");
    let e = read_dxf(broken.as_bytes(), &opts(Some(Units::Millimetres))).unwrap_err();
    let ReadError::Load { line, .. } = &e else {
        panic!("{e}")
    };
    assert!(line.is_some(), "{e}");
}

#[test]
fn r12_polyline_with_bulge_and_spline_frame_points() {
    // Written as text (R12 style, no handles): one frame control point (flag 16) is skipped.
    let text = "0\nSECTION\n2\nENTITIES\n\
0\nPOLYLINE\n8\nCUT\n66\n1\n10\n0\n20\n0\n30\n0\n70\n1\n\
0\nVERTEX\n8\nCUT\n10\n0\n20\n0\n42\n1\n\
0\nVERTEX\n8\nCUT\n10\n99\n20\n99\n70\n16\n\
0\nVERTEX\n8\nCUT\n10\n10\n20\n0\n\
0\nSEQEND\n8\nCUT\n\
0\nENDSEC\n0\nEOF\n";
    let d = read_dxf(text.as_bytes(), &opts(Some(Units::Inches))).unwrap();
    assert_eq!(d.units_from, UnitsSource::UserFlag);
    assert_eq!(d.entities.len(), 1);
    assert_eq!(d.entities[0].handle, "L5");
    assert_eq!(
        d.entities[0].kind,
        EntityKind::Polyline {
            vertices: vec![(Point::new(0.0, 0.0), 1.0), (Point::new(254.0, 0.0), 0.0)],
            closed: true
        }
    );
}
