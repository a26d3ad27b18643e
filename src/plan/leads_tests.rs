//! Unit tests of the leads.

use super::*;
use crate::chain::Part;
use crate::geom::{ArcSegment, Contour, Edge, Ellipse, Vec2};
use crate::plan::lead_shape::{anomaly_at_length, ellipse_speed};
use crate::plan::{Opening, plan_cuts};

fn options(d: f64, kind: LeadKind, length: f64, radius: f64) -> PlanOptions {
    let mut o = PlanOptions::plain(d);
    o.leads = LeadOptions {
        kind,
        length,
        radius,
        overcut: 1.0,
        lead_out: true,
    };
    o
}

fn circle_hole(cx: f64, cy: f64, radius: f64) -> Contour {
    Contour::new(
        vec![Element::Arc(ArcSegment::circle(Point::new(cx, cy), radius))],
        "0",
        vec![],
    )
    .unwrap()
}

/// The plan of one elliptical opening `e` named `bay`, cut inside.
fn plan_opening(e: Ellipse, opts: &PlanOptions) -> crate::plan::Plan {
    let open = Opening {
        name: "bay".into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: false,
        own: Default::default(),
    };
    plan_cuts(&Part::default(), &[open], opts).unwrap()
}

#[test]
fn arc_lead_is_tangent_and_inside_an_opening() {
    // A 40 × 20 ellipse, 6 mm tool: the arc lead of radius 4 goes to an end of the minor
    // axis, where the path's tangent is along the major axis.
    let e = Ellipse::new(Point::new(0.0, 0.0), 40.0, 20.0, 0.0).unwrap();
    let plan = plan_opening(e, &options(6.0, LeadKind::Arc, 0.0, 4.0));
    assert!(plan.warnings.is_empty(), "{:?}", plan.warnings);
    let cut = &plan.cuts[0];
    let ExactPath::EllipseParallel { start, .. } = cut.path else {
        panic!("ellipse path");
    };
    assert!((start - FRAC_PI_2).abs() < 1e-12);
    // Independent: the path's start is (0, 20 − 3) and its tangent (−1, 0) (counter-
    // clockwise at the top of the ellipse).
    let s = cut.path.start_point();
    assert!(s.distance(Point::new(0.0, 17.0)) < 1e-12);
    let Element::Arc(a) = cut.lead_in[0] else {
        panic!("an arc");
    };
    assert!(a.end_point().distance(s) < 1e-12);
    let t = a.tangent_at(1.0);
    assert!((t.x + 1.0).abs() < 1e-12 && t.y.abs() < 1e-12, "{t:?}");
    // The plunge is the arc's start: 4 below and 4 along +x from the start.
    assert!(cut.plunge.distance(Point::new(4.0, 13.0)) < 1e-12);
    // Overcut 1 mm, and the lead-out leaves towards the centre.
    assert_eq!(cut.overcut, 1.0);
    let out_end = cut.lead_out.last().unwrap().end();
    assert!(out_end.y < 17.0 - 3.9, "{out_end:?}");
}

#[test]
fn small_hole_falls_back_to_a_straight_entry_with_a_warning() {
    // Ø9 hole, 6 mm tool: the path is a 1.5 mm circle and no arc wider than the tool fits.
    let part = Part {
        holes: vec![crate::chain::InnerBoundary {
            name: "hole 1".into(),
            layer: "0".into(),
            shape: crate::chain::InnerShape::Contour(circle_hole(10.0, 10.0, 4.5)),
        }],
        ..Part::default()
    };
    let plan = plan_cuts(&part, &[], &options(6.0, LeadKind::Arc, 0.0, 4.0)).unwrap();
    let cut = &plan.cuts[0];
    assert!(cut.lead_in.is_empty());
    assert_eq!(cut.plunge, Point::new(10.0, 10.0));
    assert!(cut.lead_out.is_empty());
    assert_eq!(plan.warnings.len(), 1, "{:?}", plan.warnings);
    assert!(plan.warnings[0].starts_with("hole 1: no room for the arc lead"));
}

#[test]
fn too_narrow_a_mill_arc_is_widened_with_a_warning() {
    let e = Ellipse::new(Point::new(0.0, 0.0), 40.0, 20.0, 0.0).unwrap();
    let plan = plan_opening(e, &options(6.0, LeadKind::Arc, 0.0, 2.0));
    let Element::Arc(a) = plan.cuts[0].lead_in[0] else {
        panic!("an arc");
    };
    assert!((a.radius - 3.75).abs() < 1e-12);
    assert!(plan.warnings[0].contains("NISTIR 6556"));
}

#[test]
fn thermal_pierce_keeps_its_clearance_or_the_plan_is_refused() {
    let part = Part {
        holes: vec![crate::chain::InnerBoundary {
            name: "hole 1".into(),
            layer: "0".into(),
            shape: crate::chain::InnerShape::Contour(circle_hole(0.0, 0.0, 4.5)),
        }],
        ..Part::default()
    };
    let mut o = options(1.0, LeadKind::LineArc, 5.0, 2.5);
    o.pierce_clearance = Some(3.0);
    let plan = plan_cuts(&part, &[], &o).unwrap();
    let cut = &plan.cuts[0];
    // Independent: the pierce point's distance from the circle is 4.5 − |p|.
    assert!(4.5 - cut.plunge.distance(Point::ORIGIN) >= 3.0 - 1e-12);
    // No point of a Ø9 hole is 5 mm from its edge.
    o.pierce_clearance = Some(5.0);
    let err = plan_cuts(&part, &[], &o).unwrap_err();
    assert!(matches!(err, PlanError::NoRoomForLead { .. }), "{err}");
    assert!(err.to_string().contains("pierce_clearance"));
}

#[test]
fn inside_follows_arcs_exactly() {
    // 0.05 mm inside a Ø9 mm circle in every direction, and 0.05 mm outside (independent:
    // the distance from the centre).
    let edge = Edge::Contour(circle_hole(15.0, 15.0, 4.5));
    let c = Point::new(15.0, 15.0);
    for k in 0..720 {
        let dir = Vec2::from_angle(k as f64 * PI / 360.0);
        assert!(Edge::contains(&edge, c + dir * 4.45), "{k}");
        assert!(!Edge::contains(&edge, c + dir * 4.55), "{k}");
    }
}

#[test]
fn bad_settings_are_refused() {
    let e = Ellipse::new(Point::new(0.0, 0.0), 40.0, 20.0, 0.0).unwrap();
    let open = Opening {
        name: "bay".into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: false,
        own: Default::default(),
    };
    for (kind, length, radius) in [
        (LeadKind::Line, 0.0, 1.0),
        (LeadKind::Arc, 1.0, 0.0),
        (LeadKind::LineArc, -1.0, 1.0),
        (LeadKind::Arc, 1.0, f64::NAN),
    ] {
        let err = plan_cuts(
            &Part::default(),
            std::slice::from_ref(&open),
            &options(6.0, kind, length, radius),
        )
        .unwrap_err();
        assert!(matches!(err, PlanError::BadLead { .. }), "{err}");
    }
}

#[test]
fn arc_length_along_an_ellipse_parallel_matches_a_fine_polyline() {
    // Independent: a 200 000-chord polyline of the same parallel curve.
    let e = Ellipse::new(Point::new(1.0, 2.0), 30.0, 12.0, 0.3).unwrap();
    let inset = 3.0;
    let speed = |t: f64| ellipse_speed(&e, inset, t);
    let t1 = anomaly_at_length(&speed, 0.4, 1.0, 25.0);
    let n = 200_000;
    let mut walked = 0.0;
    let mut prev = e.inward_offset_point(0.4, inset);
    for k in 1..=n {
        let p = e.inward_offset_point(0.4 + (t1 - 0.4) * k as f64 / n as f64, inset);
        walked += prev.distance(p);
        prev = p;
    }
    assert!((walked - 25.0).abs() < 1e-6, "{walked}");
}
