//! Lead settings (issue 4) on the demo part through `conicut::pipeline::run_job`: small-hole
//! fallbacks, sizes from the request, the job file and the profile, refusals, and the scrap check
//! refusing a tampered program.
//!
//! The programs are read back with an outside RS274 reader (the `gcode` crate, values as `f32`,
//! read back within 1e-4 mm) and a small interpreter of our own in `support/gcode_read.rs` and
//! `support/lead_checks.rs` (modal position, G20/G21, centre-format arcs, the cut's
//! section comments); nothing is taken from the planner. The finished edges are built there from
//! the drawing's definition (`conicut::demo`: the 240 × 140 mm plate with 10 mm corner radii and
//! the four Ø9 mm bolt holes) and from the solved ellipses the report states.
//!
//! Sources of the rules checked:
//! * lead and pierce in the scrap, pierce point at least one kerf plus the crater from the
//!   finished contour, short lead-outs on holes: docs/sources.md P4.3 (common practice);
//! * arc leads tangent to the contour, lead arcs wider than the tool on mills: NISTIR 6556
//!   App. B.3.1;
//! * the distance of a point from a rounded rectangle: the rounded rectangle is the set of
//!   points within the corner radius of the inner rectangle, so its signed distance is the inner
//!   rectangle's less the corner radius (plane geometry);
//! * the distance of a point from an ellipse: `Ellipse::distance_to` (Eberly's method, checked
//!   against dense sampling in `src/geom/ellipse.rs`).

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/lead_checks.rs"]
mod lead_checks;
#[path = "support/machine.rs"]
mod machine;
use conicut::check::scrap::{ScrapRules, check_scrap};
use conicut::check::trace;
use conicut::demo::{BOLT_HOLE_CENTRES, BOLT_HOLE_RADIUS, demo_dxf_bytes};
use conicut::geom::{Ellipse, Point, Vec2};
use conicut::pipeline::{JobError, JobOutput, JobSettings, LeadRequest, run_job};
use conicut::plan::{CutSide, LeadKind, Opening, PlanError, PlanOptions, plan_cuts};
use conicut::post::MachineProfile;
use conicut::settings::Machine;
use lead_checks::*;
use machine::{machine, profile_text};

/// The report's warning about feature `name`.
fn warning_for<'a>(out: &'a JobOutput, name: &str) -> &'a str {
    out.report
        .warnings
        .iter()
        .find(|w| w.starts_with(&format!("{name}: ")))
        .unwrap_or_else(|| panic!("a warning for {name}: {:?}", out.report.warnings))
}

#[test]
fn small_holes_fall_back_to_a_straight_entry_from_the_centre_with_a_warning() {
    // Ø9 bolt holes and a 6 mm end mill: the tool centre runs on a 1.5 mm circle, and no arc
    // wider than the tool (NISTIR 6556 App. B.3.1) fits inside it.
    let out = run_and_check("metric-mill", kind_only(LeadKind::Arc), false);
    for k in 1..=4 {
        let w = warning_for(&out, &format!("hole {k}"));
        assert!(w.contains("no room for the arc lead"), "{w}");
        assert!(w.contains("straight move from"), "{w}");
    }
    // The openings have room: no warnings for them.
    assert!(
        !out.report.warnings.iter().any(|w| w.starts_with("bay ")),
        "{:?}",
        out.report.warnings
    );
    // Plasma: the 5 mm line + 2.5 mm arc does not fit in a Ø9 hole either. The lead shrinks
    // until it fits, then its straight part grows back towards the centre until the pierce
    // point is 3.5 mm (the profile's clearance) from the edge: "a lead-in from near the centre,
    // an arc radius under the hole radius" (docs/sources.md P4.3, common practice).
    let out = run_and_check("plasma", LeadRequest::default(), false);
    for k in 1..=4 {
        let w = warning_for(&out, &format!("hole {k}"));
        assert!(w.contains("shrunk") && w.contains("lengthened"), "{w}");
    }
    for cut in read_cuts(&out.program)
        .iter()
        .filter(|c| c.name.starts_with("hole"))
    {
        let lead = cut.first_run("lead-in");
        let (centre, _) = lead.last().and_then(|m| m.arc).expect("an arc lead");
        let radius = lead.last().unwrap().end_xy().distance(centre);
        assert!(
            radius < BOLT_HOLE_RADIUS,
            "{}: arc radius {radius}",
            cut.name
        );
        // The pierce point (checked against every edge by run_and_check) lies within 1 mm of
        // the centre: 4.5 mm hole radius less the 3.5 mm clearance.
        let pierce = cut.first_run("entry").last().unwrap().end_xy();
        let nearest = BOLT_HOLE_CENTRES
            .iter()
            .map(|&(x, y)| pierce.distance(Point::new(x, y)))
            .fold(f64::INFINITY, f64::min);
        assert!(
            nearest <= 1.0 + 1e-3,
            "{}: pierce {nearest} from the centre",
            cut.name
        );
    }
}

#[test]
fn overcut_and_lead_sizes_from_the_request_override_the_profile() {
    let request = LeadRequest {
        kind: Some(LeadKind::LineArc),
        length: Some(3.0),
        radius: Some(3.5),
        overcut: Some(1.25),
        lead_out: Some(true),
    };
    let out = run_and_check("laser", request, false);
    let cuts = read_cuts(&out.program);
    let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
    // The outline has room: the line part is the asked 3 mm, the arc the asked 3.5 mm radius.
    let lead = outline.first_run("lead-in");
    assert!((lead[0].length() - 3.0).abs() < 1e-3, "{lead:?}");
    let (c, _) = lead.last().unwrap().arc.unwrap();
    assert!((lead.last().unwrap().start_xy().distance(c) - 3.5).abs() < 1e-3);
    // No lead-out when none is asked for.
    let request = LeadRequest {
        lead_out: Some(false),
        ..LeadRequest::default()
    };
    let out = run_and_check("waterjet", request, false);
    assert!(
        read_cuts(&out.program)
            .iter()
            .all(|c| c.first_run("lead-out").is_empty())
    );
}

#[test]
fn job_file_lead_keys_apply_and_the_command_line_overrides_them() {
    // The demo's job file with lead keys added at its top: a 3 mm straight lead along the
    // normal, no overcut, no lead-out, on the laser (whose profile asks for line-arc leads).
    let text = include_str!("../demo-parts/truss-bracket-job.toml").replacen(
        "units = \"mm\"",
        "units = \"mm\"\nlead = \"line\"\nlead_length = 3.0\novercut = 0\nlead_out = false",
        1,
    );
    let job = conicut::settings::job_file::parse_job_file(&text, "job.toml")
        .expect("the job file parses");
    let m = machine("laser");
    let with_job = |leads: LeadRequest| JobSettings {
        job: Some(job.clone()),
        ..settings(&m.profile, leads)
    };
    let out = run_job(
        &conicut::demo::demo_dxf_bytes(),
        &m,
        &with_job(LeadRequest::default()),
    )
    .expect("the job runs");
    let cuts = read_cuts(&out.program);
    let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
    let lead = outline.first_run("lead-in");
    assert_eq!(lead.len(), 1, "{lead:?}");
    assert!(lead[0].arc.is_none() && (lead[0].length() - 3.0).abs() < 1e-3);
    assert!(cuts.iter().all(|c| c.first_run("lead-out").is_empty()));
    assert!(cuts.iter().all(|c| c.first_run("overcut").is_empty()));
    // An arc lead asked for on the command line wins over the file's line.
    let out = run_job(
        &conicut::demo::demo_dxf_bytes(),
        &m,
        &with_job(kind_only(LeadKind::Arc)),
    )
    .expect("the job runs");
    let cuts = read_cuts(&out.program);
    let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
    assert!(outline.first_run("lead-in").iter().any(|m| m.arc.is_some()));
}

#[test]
fn bad_lead_settings_are_refused() {
    let m = machine("metric-mill");
    for request in [
        LeadRequest {
            length: Some(-1.0),
            ..LeadRequest::default()
        },
        LeadRequest {
            overcut: Some(f64::NAN),
            ..LeadRequest::default()
        },
        LeadRequest {
            kind: Some(LeadKind::Line),
            length: Some(0.0),
            ..LeadRequest::default()
        },
    ] {
        let err = run_job(&demo_dxf_bytes(), &m, &settings(&m.profile, request)).unwrap_err();
        assert!(
            matches!(
                err,
                JobError::Plan {
                    error: PlanError::BadLead { .. },
                    ..
                }
            ),
            "{err}"
        );
        assert!(err.to_string().contains("truss-bracket.dxf"), "{err}");
    }
}

#[test]
fn a_pierce_clearance_no_hole_can_give_is_refused_clearly() {
    // No point of a Ø9 mm hole is 5 mm from its edge.
    let (file, text) = profile_text("plasma");
    let text = text.replace("pierce_clearance = 3.5", "pierce_clearance = 5.0");
    let m = Machine::from_toml(&text, file).unwrap();
    let err = run_job(
        &demo_dxf_bytes(),
        &m,
        &settings(&m.profile, LeadRequest::default()),
    )
    .unwrap_err();
    let message = err.to_string();
    assert!(message.contains("hole"), "{message}");
    assert!(message.contains("pierce_clearance"), "{message}");
}

#[test]
fn profile_lead_keys_are_checked() {
    let (file, mill) = profile_text("metric-mill");
    // A pierce clearance belongs to the kinds that pierce.
    let text = format!("pierce_clearance = 1.0\n{mill}");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("pierce_clearance"), "{err}");
    assert_eq!(err.line, Some(1));
    // An unknown shape, a negative radius, and an arc lead without a radius.
    let text = mill.replace("lead = \"arc\"", "lead = \"spiral\"");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("lead"), "{err}");
    assert!(err.to_string().contains("line-arc"), "{err}");
    let text = mill.replace("lead_radius = 4.0", "lead_radius = -4.0");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("lead_radius"), "{err}");
    let text = mill.replace("lead_radius = 4.0", "lead_radius = 0.0");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("lead_radius"), "{err}");
    // Left out, the lead keys give the straight entry of earlier versions.
    let text: String = mill
        .lines()
        .filter(|l| {
            !["lead", "lead_radius", "lead_length", "overcut", "lead_out"]
                .iter()
                .any(|k| l.starts_with(&format!("{k} ")))
        })
        .collect::<Vec<_>>()
        .join("\n");
    let leads = Machine::from_toml(&text, file).unwrap().defaults.leads;
    assert_eq!(leads.kind, LeadKind::Straight);
    assert!(!leads.lead_out && leads.overcut == 0.0);
}

#[test]
fn the_scrap_check_refuses_a_program_whose_lead_enters_the_part() {
    let m = machine("metric-mill");
    let out = run_job(
        &demo_dxf_bytes(),
        &m,
        &settings(&m.profile, kind_only(LeadKind::Arc)),
    )
    .unwrap();
    // The finished edges for the check, from the drawing and the report (not the job's plan):
    // the part as chained from the drawing and the openings as the report states them.
    let part = demo_job::demo_part();
    let openings: Vec<Opening> = out
        .report
        .features
        .iter()
        .filter_map(|f| {
            let e = f.ellipse.as_ref()?;
            Some(Opening {
                name: f.name.clone(),
                ellipse: Ellipse::new(
                    Point::new(e.centre_mm[0], e.centre_mm[1]),
                    e.semi_major_mm,
                    e.semi_minor_mm,
                    e.angle_deg.to_radians(),
                )
                .ok()?,
                side: CutSide::Inside,
                pocket: false,
                own: Default::default(),
            })
        })
        .collect();
    let edges = plan_cuts(&part, &openings, &PlanOptions::plain(6.0))
        .unwrap()
        .cuts;
    let rules = ScrapRules {
        tool_radius: 3.0,
        tolerance: 0.01,
        rounding: 0.0001,
        pierce_clearance: None,
        skip_above_stock: true,
    };
    assert_eq!(
        check_scrap(&trace(&out.program).unwrap(), &edges, &rules),
        Ok(())
    );

    // Tamper: after bay 1's "(lead-in)" comment, a detour to a point 1 mm outside its ellipse
    // (in the part) and back.
    let bay = &openings.iter().find(|o| o.name == "bay 1").unwrap().ellipse;
    let bad = bay.centre() + Vec2::from_angle(bay.angle()) * (bay.a() + 1.0);
    let mut lines: Vec<String> = out.program.lines().map(str::to_string).collect();
    let at = lines
        .iter()
        .position(|l| l == "(cut 2 of 9: bay 1)")
        .unwrap();
    let lead = at + lines[at..].iter().position(|l| l == "(lead-in)").unwrap();
    let plunge = bay_plunge(&lines[at..lead]);
    lines.insert(lead + 1, format!("G1 X{:.4} Y{:.4}", bad.x, bad.y));
    lines.insert(lead + 2, format!("G1 X{:.4} Y{:.4}", plunge.x, plunge.y));
    let tampered = lines.join("\n");
    let v = check_scrap(&trace(&tampered).unwrap(), &edges, &rules).unwrap_err();
    assert_eq!(v.feature, "bay 1");
    assert_eq!(v.part, "lead-in");
    assert_eq!(v.line, lead + 2, "the detour's line (1-based)");
    assert!(
        v.problem.contains("part side") || v.problem.contains("finished edge of \"bay 1\""),
        "{}",
        v.problem
    );
}

/// The plunge point of a cut: the XY of its rapid move.
fn bay_plunge(lines: &[String]) -> Point {
    let rapid = lines
        .iter()
        .find(|l| l.starts_with("G0 X"))
        .expect("a rapid to the plunge point");
    let word = |c: char| -> f64 {
        rapid
            .split_whitespace()
            .find_map(|w| w.strip_prefix(c))
            .and_then(|v| v.parse().ok())
            .expect("a coordinate")
    };
    Point::new(word('X'), word('Y'))
}
