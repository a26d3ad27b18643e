//! The finishing pass on mills and routers: roughing at r + s, the finish once at full depth, tabs
//! on both cuts, pockets, and the refusals.
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
//! * **Finishing pass** (docs/sources.md P4.3: 0.1–0.5 mm radial): the roughing contour
//!   lies at r + s from the edge (± the tolerance) in every depth pass, the finishing contour at r
//!   once, at the full depth; the header says so; tabs stay on both cuts of the outline.
//! * **Refusals**: an allowance that is not positive; one that would push the roughing path of an
//!   ellipse past b²/a (the radius of curvature at the ends of the major axis, the textbook value)
//!   with the largest allowance that fits named, or a contour's roughing offset past its smallest
//!   arc; any allowance on a laser. A conventional direction on a laser is ignored with a
//!   warning, and the laser cuts holes counter-clockwise all the same (§4.1).

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/entry_checks.rs"]
mod entry_checks;
#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/machine.rs"]
mod machine;
use conicut::chain::Part;
use conicut::geom::Element;
use conicut::geom::ExactPath;
use conicut::geom::{Ellipse, Point};
use conicut::pipeline::{JobError, JobSettings, run_job};
use conicut::plan::{CutSide, Direction, Opening, PlanError, PlanOptions, plan_cuts};
use conicut::settings::SettingsError;
use entry_checks::*;
use gcode_read::{ReadMove, read_back};
use machine::machine;
use std::f64::consts::TAU;

// ---------------------------------------------------------------------------------------------
// Finishing pass.

#[test]
fn finishing_pass_roughs_at_r_plus_s_in_every_pass_and_finishes_once_at_full_depth() {
    let d = 6.0;
    let r = d / 2.0;
    let s = 0.3;
    let depth = conicut::demo::CUT_DEPTH;
    let pass_floors = floors(depth, STEPDOWN);
    let zh = z_half_step("metric-mill");
    let out = run(
        &JobSettings {
            finish_allowance: Some(s),
            ..demo_settings(d)
        },
        "metric-mill",
    );
    assert!(
        out.program
            .contains("(finishing pass: the roughing cuts leave 0.3000 mm of radial stock,")
    );
    assert!(out.program.contains("9 finishing cuts then"));
    let trace = read_back(&out.program);
    let names = feature_names(&trace);
    assert_eq!(names.len(), 18, "{names:?}");
    for pair in names.chunks(2) {
        let (rough, finish) = (&pair[0], &pair[1]);
        assert_eq!(
            rough,
            &format!("{finish} roughing"),
            "roughing just before finishing"
        );
        assert!(
            out.program.contains(&format!("{rough}: ")),
            "{rough} in the header"
        );
        let edge = edge_of(&out, finish);
        let rough_runs = contours(&trace, rough);
        let finish_runs = contours(&trace, finish);
        assert_eq!(rough_runs.len(), pass_floors.len(), "{rough}: every pass");
        assert_eq!(finish_runs.len(), 1, "{finish}: once");
        for (k, run) in rough_runs.iter().enumerate() {
            assert!(
                (run[0].from[2] + pass_floors[k]).abs() <= zh,
                "{rough}, pass {k}"
            );
        }
        assert!(
            (finish_runs[0][0].from[2] + depth).abs() <= zh,
            "{finish}: full depth"
        );
        for (label, runs, want) in [(rough, &rough_runs, r + s), (finish, &finish_runs, r)] {
            for run in runs.iter() {
                let flat: Vec<&ReadMove> = run
                    .iter()
                    .copied()
                    .filter(|m| m.from[2] == m.to[2] && xy_length(m) > 0.0)
                    .collect();
                for p in samples(&flat) {
                    let dist = edge.distance(p);
                    assert!(
                        (dist - want).abs() <= TOL,
                        "{label}: {p:?} lies {dist} mm from the edge, not {want} ± {TOL}"
                    );
                }
            }
        }
        // One entry for the finishing cut, from the top of the stock to the full depth, no
        // steeper than the ramp.
        let finish_entries = entries(&trace, finish);
        assert_eq!(finish_entries.len(), 1);
        check_ramp(finish, &finish_entries[0], 0.0, depth, RAMP_DEG, zh);
    }
    let header_line = |name: &str| {
        out.program
            .lines()
            .find(|l| l.contains(&format!(" {name}: ")))
            .unwrap_or_else(|| panic!("{name} in the header"))
            .to_string()
    };
    assert!(header_line("bay 2 roughing").contains("roughing, leaves 0.3000 mm"));
    assert!(header_line("bay 2").contains("finishing, once at full depth"));
}

#[test]
fn both_cuts_of_the_outline_keep_the_same_tabs() {
    let d = 6.0;
    let s = 0.3;
    let out = run(
        &JobSettings {
            finish_allowance: Some(s),
            tabs: Some(conicut::pipeline::TabRequest {
                count: Some(4),
                ..Default::default()
            }),
            ..demo_settings(d)
        },
        "metric-mill",
    );
    let trace = read_back(&out.program);
    let depth = conicut::demo::CUT_DEPTH;
    // The middle of every raised stretch of the last contour run (the tool above the floor).
    let tab_middles = |name: &str| -> Vec<Point> {
        let runs = contours(&trace, name);
        let last = runs.last().expect("a contour");
        let mut out = Vec::new();
        let mut group: Vec<&ReadMove> = Vec::new();
        for m in last.iter().copied().chain(std::iter::once(&ReadMove {
            line: 0,
            rapid: false,
            from: [0.0, 0.0, -depth],
            to: [0.0, 0.0, -depth],
            arc: None,
            feed: 0.0,
        })) {
            let raised = m.from[2] > -depth + 1e-6 && m.to[2] > -depth + 1e-6;
            if raised && xy_length(m) > 0.0 {
                group.push(m);
            } else if !raised && !group.is_empty() {
                let pts = samples(&group);
                out.push(pts[pts.len() / 2]);
                group.clear();
            }
        }
        out
    };
    let rough = tab_middles("outline roughing");
    let finish = tab_middles("outline");
    assert_eq!(finish.len(), 4, "{finish:?}");
    assert_eq!(rough.len(), 4, "{rough:?}");
    // Each roughing tab lies beside a finishing tab: s apart across the path (the roughing path
    // runs s further out), plus the sampling step along it.
    for p in &finish {
        let nearest = rough
            .iter()
            .map(|q| q.distance(*p))
            .fold(f64::INFINITY, f64::min);
        assert!(
            nearest <= s + 2.0 * STEP,
            "{p:?}: nearest roughing tab {nearest} mm away"
        );
    }
}

#[test]
fn a_finishing_pass_keeps_pocket_clearing_on_the_roughing_cut() {
    let e = Ellipse::new(Point::new(0.0, 0.0), 30.0, 20.0, 0.0).expect("an ellipse");
    let openings = [Opening {
        name: "pocket".into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: true,
        own: Default::default(),
    }];
    let (d, s) = (6.0, 0.5);
    let plain = plan_cuts(&Part::default(), &openings, &PlanOptions::plain(d)).expect("plans");
    let plan = plan_cuts(
        &Part::default(),
        &openings,
        &PlanOptions {
            finish_allowance: Some(s),
            ..PlanOptions::plain(d)
        },
    )
    .expect("plans");
    assert_eq!(plan.cuts.len(), 2);
    let (rough, finish) = (&plan.cuts[0], &plan.cuts[1]);
    assert_eq!(rough.name(), "pocket roughing");
    assert!(!rough.full_depth_only() && finish.full_depth_only());
    assert!(finish.clearing().is_empty());
    assert_eq!(rough.allowance(), s);
    assert!(matches!(
        rough.path(),
        ExactPath::EllipseParallel { inset, .. } if *inset == 3.0 + s
    ));
    assert_eq!(finish.path(), plain.cuts[0].path());
    assert!(!plain.cuts[0].clearing().is_empty(), "the pocket has rings");
    // Every ring the roughing cut keeps lies at least r + s from the edge: sampled densely, the
    // distance measured by this file's own ellipse distance.
    for ring in rough.clearing() {
        let pts: Vec<Point> = match ring {
            ExactPath::EllipseParallel { ellipse, inset, .. } => (0..720)
                .map(|k| ellipse.inward_offset_point(TAU * k as f64 / 720.0, *inset))
                .collect(),
            ExactPath::Contour(c) => c.elements().iter().map(Element::start).collect(),
        };
        for p in pts {
            let dist = ellipse_distance(e.centre(), e.a(), e.b(), e.angle(), p);
            assert!(dist >= 3.0 + s - 1e-6, "a ring at {dist} mm cuts the stock");
        }
    }
    // Rings inside the roughing contour are all kept.
    let kept = plain.cuts[0]
        .clearing()
        .iter()
        .filter(|ring| match ring {
            ExactPath::EllipseParallel { inset, .. } => *inset >= 3.0 + s,
            ExactPath::Contour(_) => true,
        })
        .count();
    assert_eq!(rough.clearing().len(), kept);
}

// ---------------------------------------------------------------------------------------------
// Refusals.

#[test]
fn bad_allowances_are_refused_with_what_to_do() {
    for bad in [0.0, -0.2, f64::NAN] {
        let err = run_job(
            &conicut::demo::demo_dxf_bytes(),
            &machine("metric-mill"),
            &JobSettings {
                finish_allowance: Some(bad),
                ..demo_settings(6.0)
            },
        )
        .expect_err("refused");
        assert!(
            matches!(
                &err,
                JobError::Plan {
                    error: PlanError::BadFinishAllowance(_),
                    ..
                }
            ),
            "{err:?}"
        );
        assert!(err.to_string().contains("positive number of millimetres"));
    }

    // b²/a = 10² / 20 = 5 mm (the radius of curvature at the ends of the major axis, any
    // calculus text); a 6 mm tool leaves 5 − 3 = 2 mm, less the planner's gouge margin of a
    // millionth of the path's distance: at most 1.9999 mm, named in the message.
    let e = Ellipse::new(Point::new(0.0, 0.0), 20.0, 10.0, 0.0).expect("an ellipse");
    let openings = [Opening {
        name: "slot".into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: false,
        own: Default::default(),
    }];
    let with = |s: f64| PlanOptions {
        finish_allowance: Some(s),
        ..PlanOptions::plain(6.0)
    };
    let err = plan_cuts(&Part::default(), &openings, &with(2.5)).expect_err("too big");
    assert!(
        matches!(&err, PlanError::AllowanceTooBig { feature, limit, .. }
            if feature == "slot" && (limit - 5.0).abs() < 1e-12),
        "{err:?}"
    );
    let text = err.to_string();
    assert!(text.contains("at most 1.9999 mm"), "{text}");
    assert!(text.contains("b²/a = 5.0000 mm"), "{text}");
    assert!(plan_cuts(&Part::default(), &openings, &with(2.0)).is_err());
    let plan = plan_cuts(&Part::default(), &openings, &with(1.9999)).expect("fits");
    assert!(matches!(
        plan.cuts[0].path(),
        ExactPath::EllipseParallel { inset, .. } if (inset - 4.9999).abs() < 1e-12
    ));

    // On the demo the bolt holes (radius 4.5 mm) are the tightest: a roughing path 3 + 2 = 5 mm
    // in from a 4.5 mm circle does not exist. The error names the hole and what to do.
    let err = run_job(
        &conicut::demo::demo_dxf_bytes(),
        &machine("metric-mill"),
        &JobSettings {
            finish_allowance: Some(2.0),
            ..demo_settings(6.0)
        },
    )
    .expect_err("refused");
    assert!(
        matches!(&err, JobError::Plan { error: PlanError::RoughingDoesNotFit { feature, distance, .. }, .. }
            if feature.starts_with("hole") && *distance == 5.0),
        "{err:?}"
    );
    assert!(err.to_string().contains("use a smaller allowance"), "{err}");
}

#[test]
fn lasers_refuse_a_finishing_pass_and_keep_the_usual_direction() {
    let laser = machine("laser");
    let kerf = laser.profile.kerf_width().expect("a kerf");
    let settings = JobSettings {
        finish_allowance: Some(0.3),
        ..demo_settings(kerf)
    };
    let err = run_job(&conicut::demo::demo_dxf_bytes(), &laser, &settings).expect_err("refused");
    assert!(
        matches!(
            err,
            JobError::Settings {
                error: SettingsError::FinishCutsThrough { .. },
                ..
            }
        ),
        "{err:?}"
    );
    assert!(err.to_string().contains("mills and routers only"), "{err}");

    let asked = JobSettings {
        direction: Direction::Conventional,
        ..demo_settings(kerf)
    };
    let out = run(&asked, "laser");
    assert!(
        out.report
            .warnings
            .iter()
            .any(|w| w.contains("conventional") && w.contains("ignored")),
        "{:?}",
        out.report.warnings
    );
    assert!(
        out.program
            .contains("(direction: holes counter-clockwise, outline clockwise")
    );
    // §4.1: thermal cuts run holes counter-clockwise and the outline clockwise.
    for (name, cut) in read_cuts(&out) {
        let hole = !matches!(edge_of(&out, &name), Edge::Outline);
        assert_eq!(cut.area2 > 0.0, hole, "{name}");
    }
}
