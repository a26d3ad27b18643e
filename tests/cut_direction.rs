//! The direction of cut on mills and routers: climb and conventional, one-sided fits, and plans
//! reversed exactly.
//!
//! Every program is read back with the outside `gcode` crate (`support/gcode_read.rs`, which
//! shares no code with the writer; it holds values as `f32`, within about 1e-5 mm at the demo's
//! coordinates), and its moves are measured against edges computed in `support/entry_checks.rs`
//! from the demo's published dimensions (`conicut::demo`: the 240 × 140 mm plate with 10 mm
//! corner radii, the Ø9 mm bolt holes) and from the ellipses the report states; the
//! point-to-ellipse distance is that file's own (a dense scan of the parameter, then
//! golden-section refinement), not the crate's.
//!
//! What is checked, and against what:
//!
//! * **Direction** (NISTIR 6556 App. B.2.1; docs/sources.md P4.1: with a clockwise spindle,
//!   climb milling keeps the tool on the left of its travel with the material on the right, so
//!   holes run counter-clockwise (G3) and outlines clockwise (G2); conventional milling the
//!   reverse): the sense of every arc
//!   and the signed area of every contour as written, the plunge points and the contour starts
//!   the same both ways, every contour within the tolerance of the distance r from its edge. With
//!   `--scrap-side-only` the written contour never comes nearer the edge than r (less the output
//!   rounding), in both directions.

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/entry_checks.rs"]
mod entry_checks;
#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/machine.rs"]
mod machine;
use conicut::chain::Part;
use conicut::geom::ExactPath;
use conicut::geom::{Ellipse, Point};
use conicut::pipeline::JobSettings;
use conicut::plan::{CutSide, Direction, Opening, PlanOptions, plan_cuts};
use entry_checks::*;
use gcode_read::read_back;

// ---------------------------------------------------------------------------------------------
// Direction.

#[test]
fn climb_and_conventional_run_opposite_ways_within_the_tolerance() {
    let d = 6.0;
    let r = d / 2.0;
    let climb = run(&demo_settings(d), "metric-mill");
    let conventional = run(
        &JobSettings {
            direction: Direction::Conventional,
            ..demo_settings(d)
        },
        "metric-mill",
    );
    assert!(climb.program.contains("(direction: climb, spindle M3"));
    assert!(
        conventional
            .program
            .contains("(direction: conventional, spindle M3")
    );
    let a = read_cuts(&climb);
    let b = read_cuts(&conventional);
    assert_eq!(a.len(), b.len());
    for ((name, up), (name_b, down)) in a.iter().zip(&b) {
        assert_eq!(name, name_b, "the same order both ways");
        let edge = edge_of(&climb, name);
        // NISTIR 6556 App. B.2.1 / §4.1: climb with M3 = holes counter-clockwise (G3), the outline
        // clockwise (G2); conventional the reverse.
        let hole = !matches!(edge, Edge::Outline);
        assert_eq!(up.area2 > 0.0, hole, "{name}: climb area {}", up.area2);
        assert_eq!(
            down.area2 > 0.0,
            !hole,
            "{name}: conventional area {}",
            down.area2
        );
        if hole {
            assert!(up.ccw_arcs > 0 && up.cw_arcs == 0, "{name}: climb G3 only");
            assert!(
                down.cw_arcs > 0 && down.ccw_arcs == 0,
                "{name}: conventional G2 only"
            );
        } else {
            assert!(
                up.cw_arcs == 4 && up.ccw_arcs == 0,
                "{name}: climb corners G2"
            );
            assert!(
                down.ccw_arcs == 4 && down.cw_arcs == 0,
                "{name}: conventional G3"
            );
        }
        assert!(
            (up.area2 + down.area2).abs() <= 1e-3 * up.area2.abs(),
            "{name}: same loop"
        );
        assert!(
            up.plunge.distance(down.plunge) < 1e-9,
            "{name}: same plunge point"
        );
        assert!(up.start.distance(down.start) < 1e-9, "{name}: same start");
        for (label, cut) in [("climb", up), ("conventional", down)] {
            for &p in &cut.points {
                let dist = edge.distance(p);
                assert!(
                    (dist - r).abs() <= TOL,
                    "{name} ({label}): {p:?} lies {dist} mm from the edge, not {r} ± {TOL}"
                );
            }
        }
    }
    // The helices turn with the cut.
    let trace = read_back(&conventional.program);
    let entry = &entries(&trace, "bay 1")[0];
    assert!(entry.iter().any(|m| m.arc.is_some()));
    assert!(entry.iter().all(|m| m.arc.is_none_or(|(_, ccw)| !ccw)));
}

#[test]
fn scrap_side_only_keeps_the_deviation_off_the_part_both_ways() {
    let d = 6.0;
    let r = d / 2.0;
    // Straight moves only, so that every curve is a polygon that uses its one-sided band; the
    // written points are rounded to four decimals, at most √2/2 · 10⁻⁴ mm (the job's budget for
    // lines), here 1e-4 mm.
    let rounding = 1e-4;
    for direction in [Direction::Climb, Direction::Conventional] {
        let out = run(
            &JobSettings {
                direction,
                scrap_side_only: true,
                lines_only: true,
                ..demo_settings(d)
            },
            "metric-mill",
        );
        for (name, cut) in read_cuts(&out) {
            let edge = edge_of(&out, &name);
            assert_eq!(cut.ccw_arcs + cut.cw_arcs, 0, "lines only");
            let mut furthest: f64 = 0.0;
            for &p in &cut.points {
                assert!(
                    edge.scrap_side(p),
                    "{name} ({direction:?}): {p:?} on the part"
                );
                let dist = edge.distance(p);
                assert!(
                    dist >= r - rounding && dist <= r + TOL,
                    "{name} ({direction:?}): {p:?} lies {dist} mm from the edge"
                );
                furthest = furthest.max(dist - r);
            }
            // The curves really use the band (not a check that cannot fail): the polygons of
            // the holes and ellipses reach well into the scrap side.
            if !matches!(edge, Edge::Outline) {
                assert!(furthest > 0.25 * TOL, "{name} ({direction:?}): {furthest}");
            }
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Plans: exact reversal, pockets.

#[test]
fn conventional_plans_are_the_climb_plans_reversed_exactly() {
    let part = Part {
        outline: Some(square(0.0, 0.0, 100.0, true)),
        ..Part::default()
    };
    let e = Ellipse::new(Point::new(50.0, 50.0), 30.0, 15.0, 0.3).expect("an ellipse");
    let openings = [
        Opening {
            name: "opening".into(),
            ellipse: e,
            side: CutSide::Inside,
            pocket: false,
            own: Default::default(),
        },
        Opening {
            name: "pocket".into(),
            ellipse: Ellipse::new(Point::new(20.0, 80.0), 12.0, 8.0, 0.0).expect("an ellipse"),
            side: CutSide::Inside,
            pocket: true,
            own: Default::default(),
        },
    ];
    let opts = |direction| PlanOptions {
        direction,
        ..PlanOptions::plain(6.0)
    };
    let climb = plan_cuts(&part, &openings, &opts(Direction::Climb)).expect("plans");
    let conv = plan_cuts(&part, &openings, &opts(Direction::Conventional)).expect("plans");
    assert_eq!(climb.cuts.len(), conv.cuts.len());
    for (a, b) in climb.cuts.iter().zip(&conv.cuts) {
        assert!(a.scrap_left() && !b.scrap_left(), "{}", a.name());
        assert_eq!(b.path(), &a.path().reversed(), "{}", a.name());
        assert_eq!(
            &b.path().reversed(),
            a.path(),
            "{}: reversing twice",
            a.name()
        );
        assert_eq!(a.plunge(), b.plunge(), "{}", a.name());
        // The same start (a reversed contour's first point is its last piece's end, computed
        // again from the arc's angle: equal to rounding).
        assert!(
            a.path().start_point().distance(b.path().start_point()) < 1e-12,
            "{}",
            a.name()
        );
        assert_eq!(a.clearing().len(), b.clearing().len());
        for (p, q) in a.clearing().iter().zip(b.clearing()) {
            assert_eq!(*q, p.reversed());
        }
        match (&a.path(), &b.path()) {
            (
                ExactPath::EllipseParallel { clockwise: x, .. },
                ExactPath::EllipseParallel { clockwise: y, .. },
            ) => assert!(
                !x && *y,
                "{}: inside cuts counter-clockwise when climbing",
                a.name()
            ),
            (ExactPath::Contour(x), ExactPath::Contour(y)) => {
                assert!(
                    !x.is_ccw() && y.is_ccw(),
                    "the outline: clockwise when climbing"
                );
                assert!((x.signed_area() + y.signed_area()).abs() < 1e-9);
            }
            _ => panic!("{}: the same kind of path both ways", a.name()),
        }
    }
}
