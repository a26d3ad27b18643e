//! Entry into the material on mills and routers: helical, zig-zag and straight entries.
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
//! * **Helical entry** (common practice, docs/sources.md P4.3: helix diameter at least
//!   half the tool's, ramps of about 1–3° in steel): every helix move is an arc about the plunge
//!   point of radius D/4 (a bore of 1.5 D), descends no steeper than the ramp angle measured along
//!   the arc (radius × sweep, not the chord), keeps the tool centre at least r from the feature's
//!   finished edge and on its scrap side (less the output rounding), ends at the pass's floor and
//!   goes once more round there, and turns the way the cut does. On hand-made cuts the number of
//!   half turns and of zig-zag legs is computed here by hand from the drop, the angle and the
//!   length of the path.
//! * **Zig-zag entry** where a helix has no room (a Ø9 mm hole and a 7 mm tool: 4.5 − 3.5 = 1 mm
//!   of room, less than 7/4 mm): straight legs back and forth along the lead-in, none steeper than
//!   the angle; **straight entry** (`--entry straight`) plunges straight down at the plunge point.

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/entry_checks.rs"]
mod entry_checks;
#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/machine.rs"]
mod machine;
use conicut::fit::FittedCut;
use conicut::geom::Move;
use conicut::geom::Point;
use conicut::pipeline::JobSettings;
use conicut::plan::{CutSide, FeatureKind};
use conicut::post::{ProgramSettings, write_program};
use entry_checks::*;
use gcode_read::{ReadMove, read_back};
use machine::profile;
use std::f64::consts::{PI, TAU};

// ---------------------------------------------------------------------------------------------
// Entry.

#[test]
fn helical_entries_are_arcs_of_a_quarter_diameter_no_steeper_than_the_ramp() {
    let d = 6.0;
    let r = d / 2.0;
    let out = run(&demo_settings(d), "metric-mill");
    let trace = read_back(&out.program);
    let zh = z_half_step("metric-mill");
    let pass_floors = floors(conicut::demo::CUT_DEPTH, STEPDOWN);
    assert!(
        out.program
            .contains("(entry: helix of radius 1.5000 mm about the plunge point")
    );
    let names = feature_names(&trace);
    assert_eq!(names.len(), 9, "{names:?}");
    let mut helices = 0;
    for name in &names {
        let edge = edge_of(&out, name);
        let passes = entries(&trace, name);
        assert_eq!(
            passes.len(),
            pass_floors.len(),
            "{name}: one entry per pass"
        );
        for (k, entry) in passes.iter().enumerate() {
            let ctx = format!("{name}, pass {}", k + 1);
            let prev = if k == 0 { 0.0 } else { pass_floors[k - 1] };
            let arcs = check_ramp(&ctx, entry, prev, pass_floors[k], RAMP_DEG, zh);
            // With a 6 mm tool every feature of the demo leaves room for the helix: the bolt
            // holes exactly (4.5 − 3 = 1.5 mm = D/4).
            assert!(!arcs.is_empty(), "{ctx}: a helix");
            helices += 1;
            let plunge = xy(entry[0].from);
            for m in &arcs {
                let (c, ccw) = m.arc.expect("an arc");
                let c = Point::new(c[0], c[1]);
                assert!(
                    c.distance(plunge) <= 1e-4,
                    "{ctx}: helix about {c:?}, not {plunge:?}"
                );
                for p in [xy(m.from), xy(m.to)] {
                    assert!(
                        (p.distance(c) - d / 4.0).abs() <= XY_ROUND,
                        "{ctx}: helix radius {} is not D/4",
                        p.distance(c)
                    );
                }
                assert!(ccw, "{ctx}: a climb cut's helix runs counter-clockwise");
            }
            // The helix goes right down to the floor, and round once more there.
            let at_floor: f64 = arcs
                .iter()
                .filter(|m| (m.from[2] + pass_floors[k]).abs() <= zh && m.from[2] == m.to[2])
                .map(|m| sweep(m).abs())
                .sum();
            assert!(at_floor >= TAU - 1e-6, "{ctx}: {at_floor} rad at the floor");
            for p in samples(&arcs) {
                assert!(edge.scrap_side(p), "{ctx}: helix point {p:?} off the scrap");
                let dist = edge.distance(p);
                assert!(
                    dist >= r - XY_ROUND,
                    "{ctx}: the helix brings the tool centre {dist} mm from the edge"
                );
            }
        }
    }
    assert_eq!(helices, 9 * pass_floors.len());
}

#[test]
fn zig_zag_where_a_helix_has_no_room_and_straight_plunges_when_asked() {
    // A 7 mm tool in a Ø9 mm hole: 4.5 − 3.5 = 1 mm of room, less than the helix's 1.75 mm.
    let d = 7.0;
    let r = d / 2.0;
    let out = run(&demo_settings(d), "metric-mill");
    let trace = read_back(&out.program);
    let zh = z_half_step("metric-mill");
    let pass_floors = floors(conicut::demo::CUT_DEPTH, STEPDOWN);
    for name in feature_names(&trace) {
        let edge = edge_of(&out, &name);
        for (k, entry) in entries(&trace, &name).iter().enumerate() {
            let ctx = format!("{name}, pass {}", k + 1);
            let prev = if k == 0 { 0.0 } else { pass_floors[k - 1] };
            let arcs = check_ramp(&ctx, entry, prev, pass_floors[k], RAMP_DEG, zh);
            if !matches!(edge, Edge::Circle(..)) {
                assert!(!arcs.is_empty(), "{ctx}: room for a helix");
                continue;
            }
            assert!(arcs.is_empty(), "{ctx}: no room for a helix");
            // Legs back and forth between the plunge point and the contour's start.
            let legs: Vec<&&ReadMove> = entry.iter().filter(|m| xy_length(m) > 0.0).collect();
            assert!(
                legs.len() >= 3 && legs.len() % 2 == 1,
                "{ctx}: {} legs",
                legs.len()
            );
            let (a, b) = (xy(legs[0].from), xy(legs[0].to));
            assert!(
                (a.distance(b) - (conicut::demo::BOLT_HOLE_RADIUS - r)).abs() <= 1e-3,
                "{ctx}: the legs run from the centre to the contour"
            );
            for (j, leg) in legs.iter().enumerate() {
                let (from, to) = if j % 2 == 0 { (a, b) } else { (b, a) };
                assert!(xy(leg.from).distance(from) <= 1e-3 && xy(leg.to).distance(to) <= 1e-3);
                assert!(leg.to[2] < leg.from[2], "{ctx}: every leg descends");
            }
            for p in samples(&legs.iter().map(|m| **m).collect::<Vec<_>>()) {
                assert!(
                    edge.distance(p) >= r - XY_ROUND,
                    "{ctx}: {p:?} too near the edge"
                );
            }
        }
    }

    // --entry straight: no ramp angle, one straight plunge per pass at the plunge point.
    let straight = JobSettings {
        ramp_angle_deg: None,
        helical_entry: false,
        ..demo_settings(6.0)
    };
    let out = run(&straight, "metric-mill");
    assert!(
        out.program
            .contains("(entry: straight plunge at the plunge feed")
    );
    let trace = read_back(&out.program);
    for name in feature_names(&trace) {
        for (k, entry) in entries(&trace, &name).iter().enumerate() {
            let down: Vec<_> = entry.iter().filter(|m| m.to[2] < m.from[2]).collect();
            assert_eq!(down.len(), 1, "{name}, pass {}: one plunge", k + 1);
            assert_eq!(xy(down[0].from), xy(down[0].to), "{name}: straight down");
            assert!((down[0].to[2] + pass_floors[k]).abs() <= zh);
        }
    }
}

/// A closed circle of radius `radius` about `c` as two arcs from its rightmost point, the tool
/// centre path of a hole, entered from the centre.
fn circle_cut(name: &str, c: Point, radius: f64, ccw: bool, room: f64) -> FittedCut {
    let start = Point::new(c.x + radius, c.y);
    let mut cut = FittedCut::from_points(
        name,
        FeatureKind::Hole,
        CutSide::Inside,
        c,
        &[start, start],
        TOL,
        0.0,
    );
    cut.moves = vec![
        Move::Arc {
            to: Point::new(c.x - radius, c.y),
            centre: c,
            ccw,
        },
        Move::Arc {
            to: start,
            centre: c,
            ccw,
        },
    ];
    cut.scrap_left = ccw;
    cut.entry_room = room;
    cut
}

fn program_settings(d: f64, ramp: Option<f64>) -> ProgramSettings {
    ProgramSettings {
        tolerance: TOL,
        ramp_angle_deg: ramp,
        helical_entry: true,
        ..machine::program_settings("entry test", "entry.dxf", d, 3.0)
    }
}

#[test]
fn written_entries_on_hand_made_cuts() {
    let mill = profile("metric-mill");
    let zh = z_half_step("metric-mill");
    let d = 6.0;
    let c = Point::new(50.0, 40.0);
    // A hole of radius 5: the tool centre runs on radius 2, room 5 − 3 = 2 ≥ D/4 = 1.5.
    for ccw in [true, false] {
        let cut = circle_cut("hole", c, 2.0, ccw, 2.0);
        let program = write_program(&[cut], &mill, &program_settings(d, Some(2.0)))
            .expect("the program is written");
        let word = if ccw { "climb" } else { "conventional" };
        assert!(program.contains(&format!("(direction: {word}, spindle M3")));
        let trace = read_back(&program);
        let entry = &entries(&trace, "hole")[0];
        let arcs = check_ramp("hand-made hole", entry, 0.0, 3.0, 2.0, zh);
        // 3 mm at 2° along a path of π·1.5 mm per half turn: ⌈3 / (tan 2° · 1.5π)⌉ = 19 half
        // turns, then one more turn at the floor (two halves, each written as two arcs).
        let descending: f64 = arcs
            .iter()
            .filter(|m| m.to[2] < m.from[2])
            .map(|m| sweep(m).abs())
            .sum();
        let half_turns = (3.0 / (2f64.to_radians().tan() * 1.5 * PI)).ceil();
        assert_eq!(half_turns, 19.0);
        assert!((descending - half_turns * PI).abs() < 1e-6, "{descending}");
        assert!(arcs.iter().all(|m| m.arc.is_some_and(|(_, s)| s == ccw)));
    }

    // Room 1.0 < 1.5: a zig-zag along the lead-in from the centre to the start (2 mm), an odd
    // number of legs: ⌈3 / (tan 3° · 2)⌉ = 29 legs (already odd).
    let cut = circle_cut("small hole", c, 2.0, true, 1.0);
    let program = write_program(&[cut], &mill, &program_settings(d, Some(3.0))).expect("written");
    let trace = read_back(&program);
    let entry = &entries(&trace, "small hole")[0];
    assert!(check_ramp("small hole", entry, 0.0, 3.0, 3.0, zh).is_empty());
    let legs = entry.iter().filter(|m| xy_length(m) > 0.0).count();
    assert_eq!(
        legs,
        (3.0 / (3f64.to_radians().tan() * 2.0)).ceil() as usize
    );
    assert_eq!(legs, 29);

    // A cut entered on its own path (plunge point = start, no lead-in to ramp along): the ramp
    // runs back and forth along the contour's first move and ends at the start; no straight
    // plunge.
    let start = Point::new(10.0, 10.0);
    let square = [
        start,
        Point::new(10.0, 30.0),
        Point::new(30.0, 30.0),
        Point::new(30.0, 10.0),
        start,
    ];
    let cut = FittedCut::from_points(
        "outline",
        FeatureKind::Outline,
        CutSide::Outside,
        start,
        &square,
        TOL,
        0.0,
    );
    let program = write_program(&[cut], &mill, &program_settings(d, Some(3.0))).expect("written");
    let trace = read_back(&program);
    let entry = &entries(&trace, "outline")[0];
    check_ramp("on-path entry", entry, 0.0, 3.0, 3.0, zh);
    let legs: Vec<_> = entry.iter().filter(|m| xy_length(m) > 0.0).collect();
    // ⌈3 / (tan 3° · 20)⌉ = 3, made even: 4 legs of the 20 mm first side.
    assert_eq!(legs.len(), 4);
    assert!(legs.iter().all(|m| (xy_length(m) - 20.0).abs() < 1e-9));
    assert_eq!(xy(legs[3].to), start, "the ramp ends at the start");
    let contour = &contours(&trace, "outline")[0];
    assert_eq!(xy(contour[0].from), start);
    assert!((contour[0].from[2] + 3.0).abs() <= zh);
}
