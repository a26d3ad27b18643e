//! Leads, overcut, lead-out and pierce points (issue 4), on the demo part through
//! `conicut::pipeline::run_job`, for every bundled profile and every lead shape.
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
use conicut::pipeline::LeadRequest;
use conicut::plan::{Direction, LeadKind};
use conicut::settings::Machine;
use lead_checks::*;
use machine::machine;

const KINDS: [LeadKind; 4] = [
    LeadKind::Straight,
    LeadKind::Line,
    LeadKind::Arc,
    LeadKind::LineArc,
];

/// Runs and checks the demo on profile `stem` with every lead shape.
fn every_kind_on(stem: &str) {
    for kind in KINDS {
        run_and_check(stem, kind_only(kind), false);
    }
}

#[test]
fn leads_on_the_metric_mill() {
    every_kind_on("metric-mill");
}

#[test]
fn leads_on_the_metric_mill_in_lines_only() {
    for kind in [LeadKind::Arc, LeadKind::LineArc] {
        run_and_check("metric-mill", kind_only(kind), true);
    }
}

#[test]
fn leads_with_pockets_and_a_finishing_pass() {
    // Two bays as pockets (demo-parts/truss-bracket-pocket-job.toml): their lead-in starts at
    // the last clearing ring; and every cut split into a roughing cut 0.3 mm off the edge and a
    // finishing cut (common practice: 0.1–0.5 mm radial, docs/sources.md P4.3).
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("demo-parts/truss-bracket-pocket-job.toml"))
        .expect("the pocket job file");
    let job = conicut::settings::job_file::parse_job_file(&text, "truss-bracket-pocket-job.toml")
        .expect("the job file parses");
    for kind in [LeadKind::Arc, LeadKind::LineArc] {
        let out = run_and_check_with("metric-mill", kind_only(kind), |s| {
            s.job = Some(job.clone());
            s.finish_allowance = Some(0.3);
        });
        let cuts = read_cuts(&out.program);
        assert_eq!(
            cuts.len(),
            18,
            "a roughing and a finishing cut for each feature"
        );
        let pocket = cuts.iter().find(|c| c.name == "pocket 2 roughing").unwrap();
        assert!(!pocket.first_run("clearing").is_empty());
        // The lead-in starts where the clearing ends, and ends in an arc.
        let clearing_end = pocket.first_run("clearing").last().unwrap().end_xy();
        let lead = pocket.first_run("lead-in");
        assert!(lead[0].start_xy().distance(clearing_end) < 1e-9);
        assert!(lead.last().unwrap().arc.is_some());
    }
}

#[test]
fn leads_on_the_metric_mill_conventional() {
    // Conventional milling runs every cut the other way (NISTIR 6556 App. B.2.1): the leads
    // still lie in the scrap and join the path along its tangent.
    for kind in [LeadKind::Arc, LeadKind::Line, LeadKind::LineArc] {
        let out = run_and_check_with("metric-mill", kind_only(kind), |s| {
            s.direction = Direction::Conventional;
        });
        // Independent of the planner: a counter-clockwise outline (G3 on its contour).
        let cuts = read_cuts(&out.program);
        let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
        assert!(
            outline
                .first_run("contour")
                .iter()
                .all(|m| m.arc.is_none_or(|(_, ccw)| ccw))
        );
    }
}

#[test]
fn leads_on_the_inch_router() {
    every_kind_on("inch-router");
}

#[test]
fn leads_on_the_laser() {
    every_kind_on("laser");
}

#[test]
fn leads_on_the_plasma_table() {
    every_kind_on("plasma");
}

#[test]
fn leads_on_the_waterjet() {
    every_kind_on("waterjet");
}

#[test]
fn profile_defaults_give_arc_leads_on_mills_and_line_arc_on_thermal_tables() {
    // common practice, docs/sources.md P4.3: arc leads on mills (radius above the 3 mm
    // tool radius, NISTIR 6556 App. B.3.1), line + arc on laser, plasma and waterjet.
    for (stem, kind) in [
        ("metric-mill", LeadKind::Arc),
        ("inch-router", LeadKind::Arc),
        ("laser", LeadKind::LineArc),
        ("plasma", LeadKind::LineArc),
        ("waterjet", LeadKind::LineArc),
    ] {
        let Machine {
            profile: p,
            defaults,
        } = machine(stem);
        let leads = defaults.leads;
        assert_eq!(leads.kind, kind, "{stem}");
        assert!(leads.lead_out && leads.overcut > 0.0, "{stem}");
        if p.spindle().is_some() {
            assert!(leads.radius > 3.0, "{stem}: above the demo tool's radius");
            assert_eq!(defaults.pierce_clearance, None);
        } else {
            // At least one kerf from the edge (§4.3).
            let kerf = p.kerf_width().unwrap();
            assert!(defaults.pierce_clearance.unwrap() >= kerf, "{stem}");
        }
        run_and_check(stem, LeadRequest::default(), false);
    }
    // The inch router's values are in inches: 0.16 in = 4.064 mm.
    assert!((machine("inch-router").defaults.leads.radius - 4.064).abs() < 1e-12);
}
