//! Planning checks: the gouge limit b²/a, and plunge points and their moves into the cut lying in
//! the scrap, never in the finished part.
//!
//! The inward parallel curve of an ellipse at distance d is regular exactly when d < b²/a, the
//! smallest radius of curvature (docs/sources.md M8; Farouki & Neff, CAGD 7 (1990)); NISTIR 6556
//! App. B.5.1 likewise stops when the tool radius is not less than the arc radius.

#[path = "support/demo_job.rs"]
mod demo_job;
use conicut::chain::{InnerShape, Part};
use conicut::geom::{Ellipse, ExactPath, Point, Segment};
use conicut::plan::{CutSide, Opening, PlanError, PlanOptions, plan_cuts};
use conicut::settings::job_file::Rule;
use conicut::solve::solve_bay;

fn plan_one(e: Ellipse, diameter: f64) -> Result<(), PlanError> {
    let part = Part::default();
    let o = Opening {
        name: "test".into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: false,
        own: Default::default(),
    };
    plan_cuts(&part, &[o], &PlanOptions::plain(diameter)).map(|_| ())
}

#[test]
fn gouge_refusal_exactly_at_the_smallest_radius_of_curvature() {
    // a = 50, b = 20: b²/a = 8 mm (docs/sources.md M8), so a 16 mm tool is refused and a tool a
    // hair smaller is accepted.
    let e = Ellipse::new(Point::new(0.0, 0.0), 50.0, 20.0, 0.3).unwrap();
    let err = plan_one(e, 16.0).unwrap_err();
    assert!(matches!(err, PlanError::EllipseTooTight { .. }));
    assert!(err.to_string().contains("b²/a = 8.0000"), "{err}");
    assert!(plan_one(e, 16.0 * (1.0 + 1e-9)).is_err());
    assert!(plan_one(e, 16.0 * (1.0 - 1e-5)).is_ok());
}

/// The demo part with every bay solved (largest, 4 mm margin, as `conicut demo` does).
fn demo() -> (Part, Vec<Opening>) {
    let part = demo_job::demo_part();
    let openings = part
        .bays
        .iter()
        .map(|b| Opening {
            name: b.name().to_string(),
            ellipse: solve_bay(b, &Rule::Largest, 4.0)
                .unwrap()
                .solution
                .ellipse(),
            side: CutSide::Inside,
            pocket: false,
            own: Default::default(),
        })
        .collect();
    (part, openings)
}

#[test]
fn plunges_and_moves_in_stay_in_the_scrap() {
    let (part, openings) = demo();
    let r = 3.0;
    let plan = plan_cuts(&part, &openings, &PlanOptions::plain(2.0 * r)).unwrap();
    let outline = part.outline.as_ref().unwrap();
    for cut in &plan.cuts {
        let start = cut.path().start_point();
        let lead = Segment::new(cut.plunge(), start);
        // Sample the move in: the tool circle around every sample must stay clear of the
        // finished part (common practice: pierce and plunge in the scrap, STANDARDS §4.3).
        for k in 0..=50 {
            let p = lead.point_at(k as f64 / 50.0);
            match cut.side() {
                CutSide::Inside => {
                    // Inside its own hole, at least the tool radius from the hole's edge.
                    let clear = match &cut.path() {
                        ExactPath::EllipseParallel { ellipse, .. } => {
                            ellipse.contains(p) && ellipse.distance_to(p).0 >= r - 1e-9
                        }
                        ExactPath::Contour(_) => {
                            let hole = part
                                .holes
                                .iter()
                                .find(|h| h.name == cut.name())
                                .expect("a drawn hole");
                            match &hole.shape {
                                InnerShape::Contour(c) => {
                                    c.contains(p) && c.distance_to(p) >= r - 1e-9
                                }
                                InnerShape::Ellipse(e) => {
                                    e.contains(p) && e.distance_to(p).0 >= r - 1e-9
                                }
                            }
                        }
                    };
                    assert!(clear, "{}: move in at {p:?} cuts the part", cut.name());
                }
                CutSide::Outside => {
                    assert!(
                        !outline.contains(p),
                        "{}: {p:?} inside the part",
                        cut.name()
                    );
                    assert!(outline.distance_to(p) >= r - 1e-9, "{}: {p:?}", cut.name());
                }
            }
            // Never inside another feature's opening either (it would cut a neighbour).
            for o in openings.iter().filter(|o| o.name != cut.name()) {
                assert!(
                    !o.ellipse.contains(p),
                    "{}: {p:?} inside {}",
                    cut.name(),
                    o.name
                );
            }
        }
    }
    // Inner features first, the outline last.
    assert_eq!(plan.cuts.last().unwrap().name(), "outline");
}
