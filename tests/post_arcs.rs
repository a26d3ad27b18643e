//! Arcs in programs: `G2`/`G3` in centre format, read back from the program text and checked
//! against NISTIR 6556 (T. R. Kramer, F. M. Proctor, E. R. Messina, *The NIST RS274NGC
//! Interpreter – Version 3*, NIST, 2000) and against the exact arcs they stand for.
//!
//! The program text is parsed here with our own small reader (exact decimal text, no `f32`), so
//! that the 0.002 mm / 0.0002 in radius rule is checked on the very numbers a controller reads;
//! the outside `gcode` crate reads the NIST example too.

#[path = "support/machine.rs"]
mod machine;
use conicut::fit::FittedCut;
use conicut::geom::Move;
use conicut::geom::{Point, Vec2};
use conicut::plan::{CutSide, FeatureKind};
use conicut::post::{MachineProfile, PostError, ProgramSettings, RADIUS_MARGIN, write_program};
use conicut::settings::METRIC_MILL_TOML;
use machine::{profile, profile_text, program_settings};
use proptest::prelude::*;
use std::f64::consts::{PI, TAU};

fn settings(profile: &MachineProfile) -> ProgramSettings {
    program_settings("arcs", "arcs.dxf", profile.kerf_width().unwrap_or(6.0), 1.0)
}

fn cut(start: Point, moves: Vec<Move>, plunge: Point) -> FittedCut {
    let mut c = FittedCut::from_points(
        "arc test",
        FeatureKind::Hole,
        CutSide::Inside,
        plunge,
        &[start],
        0.01,
        0.0,
    );
    c.moves = moves;
    c
}

/// One feed move read from the program text: G number, end point, and centre offsets for arcs,
/// all as exact decimal values from the text, in the program's units.
#[derive(Debug, Clone, PartialEq)]
struct Read {
    g: u32,
    from: Point,
    to: Point,
    ij: Option<Vec2>,
}

/// Reads the XY feed moves (G1, G2, G3) of a program, tracking the position through G0 moves.
/// Words are modal only in the sense conicut writes them: every move line names its G word.
fn feed_moves(program: &str) -> Vec<Read> {
    let mut at = Point::new(0.0, 0.0);
    let mut out = Vec::new();
    for line in program.lines() {
        if line.starts_with(['(', ';', '%']) {
            continue;
        }
        let mut g = None;
        let (mut x, mut y, mut i, mut j) = (None, None, None, None);
        for word in line.split_whitespace() {
            let (letter, value) = word.split_at(1);
            let v: f64 = match value.parse() {
                Ok(v) => v,
                Err(_) => continue,
            };
            match letter {
                "G" if g.is_none() => g = Some(v as u32),
                "X" => x = Some(v),
                "Y" => y = Some(v),
                "I" => i = Some(v),
                "J" => j = Some(v),
                "R" => panic!("radius form written (NISTIR 6556 §3.5.3.1): {line}"),
                _ => {}
            }
        }
        let (Some(g), Some(x), Some(y)) = (g, x, y) else {
            continue;
        };
        let to = Point::new(x, y);
        if g != 0 {
            let ij = match (i, j) {
                (Some(i), Some(j)) => Some(Vec2::new(i, j)),
                (None, None) => None,
                _ => panic!("an arc needs both I and J here: {line}"),
            };
            assert_eq!(ij.is_some(), g == 2 || g == 3, "{line}");
            out.push(Read {
                g,
                from: at,
                to,
                ij,
            });
        }
        at = to;
    }
    out
}

/// The signed sweep of a written arc (positive counter-clockwise): G3 turns counter-clockwise,
/// G2 clockwise, seen from +Z (NISTIR 6556 §3.5.3).
fn written_sweep(m: &Read) -> f64 {
    let c = m.from + m.ij.unwrap();
    let a0 = (m.from - c).angle();
    let a1 = (m.to - c).angle();
    if m.g == 3 {
        (a1 - a0).rem_euclid(TAU)
    } else {
        -(a0 - a1).rem_euclid(TAU)
    }
}

/// A point at fraction `t` of a written move, as a controller interpolates it: along a line, or
/// around the written centre with the radius going from the start radius to the end radius.
fn written_point(m: &Read, t: f64) -> Point {
    match m.ij {
        None => m.from.lerp(m.to, t),
        Some(ij) => {
            let c = m.from + ij;
            let (r0, r1) = (m.from.distance(c), m.to.distance(c));
            let a = (m.from - c).angle() + t * written_sweep(m);
            c + Vec2::from_angle(a) * (r0 + t * (r1 - r0))
        }
    }
}

/// Distance from `p` to the exact arc from angle `a0` sweeping `sweep` about `c` with radius `r`.
fn distance_to_arc(p: Point, c: Point, r: f64, a0: f64, sweep: f64) -> f64 {
    let along = if sweep >= 0.0 {
        ((p - c).angle() - a0).rem_euclid(TAU)
    } else {
        (a0 - (p - c).angle()).rem_euclid(TAU)
    };
    if along <= sweep.abs() {
        (p.distance(c) - r).abs()
    } else {
        let e0 = c + Vec2::from_angle(a0) * r;
        let e1 = c + Vec2::from_angle(a0 + sweep) * r;
        p.distance(e0).min(p.distance(e1))
    }
}

/// Distance from `p` to a polyline.
fn distance_to_polyline(p: Point, pts: &[Point]) -> f64 {
    pts.windows(2)
        .map(|w| {
            let d = w[1] - w[0];
            let len2 = d.dot(d);
            let t = if len2 > 0.0 {
                ((p - w[0]).dot(d) / len2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            p.distance(w[0].lerp(w[1], t))
        })
        .fold(f64::INFINITY, f64::min)
}

#[test]
fn nist_centre_format_example_reads_back() {
    // NISTIR 6556 §3.5.3.2: from (7, 7), `G17 G2 X10 Y16 I3 J4 Z9` has its centre at (10, 11)
    // and radius 5 (we write the arc in the XY plane, without the helix's Z).
    let profile = profile("metric-mill");
    let arc = Move::Arc {
        to: Point::new(10.0, 16.0),
        centre: Point::new(10.0, 11.0),
        ccw: false,
    };
    let program = write_program(
        &[cut(Point::new(7.0, 7.0), vec![arc], Point::new(10.0, 11.0))],
        &profile,
        &settings(&profile),
    )
    .unwrap();
    assert!(
        program.contains(
            "\nG1 X7.0000 Y7.0000 F400.0\n(contour)\nG2 X10.0000 Y16.0000 I3.0000 J4.0000\n"
        ),
        "{program}"
    );
    let reads = feed_moves(&program);
    let m = reads.iter().find(|m| m.g == 2).expect("one G2");
    let centre = m.from + m.ij.unwrap();
    assert_eq!((centre.x, centre.y), (10.0, 11.0), "NIST §3.5.3.2 centre");
    assert_eq!(m.from.distance(centre), 5.0, "NIST §3.5.3.2 radius");
    assert_eq!(m.to.distance(centre), 5.0);

    // The outside parser reads the same words (at f32, CRATES.md §6).
    let parsed = gcode::parse(&program).expect("the gcode crate parses the program");
    let g2 = parsed
        .blocks
        .iter()
        .flat_map(|b| b.codes.iter())
        .find_map(|c| match c {
            gcode::Code::General(g) if g.number.major() == 2 => Some(g),
            _ => None,
        })
        .expect("a G2 block");
    let arg = |l: char| {
        g2.args.iter().find_map(|a| match (a.letter, &a.value) {
            (x, gcode::Value::Literal(v)) if x == l => Some(*v),
            _ => None,
        })
    };
    assert_eq!(
        (arg('X'), arg('Y'), arg('I'), arg('J')),
        (Some(10.0), Some(16.0), Some(3.0), Some(4.0))
    );
}

#[test]
fn half_turns_and_more_are_split_and_directions_kept() {
    // docs/sources.md P1.2 (common practice): arcs of 180° or more are written as two.
    let profile = profile("metric-mill");
    let c = Point::new(100.0, 100.0);
    let on = |deg: f64| c + Vec2::from_angle(deg.to_radians()) * 20.0;
    let cases: [(f64, f64, bool, usize); 5] = [
        // start angle, end angle, ccw, arcs expected
        (0.0, 179.0, true, 1),
        (0.0, 180.0, true, 2),
        (0.0, 270.0, true, 2),
        (0.0, 90.0, false, 2), // clockwise from 0° to 90° turns 270°
        (10.0, 9.99, true, 2), // 359.99° counter-clockwise
    ];
    for (a0, a1, ccw, expected) in cases {
        let moves = vec![Move::Arc {
            to: on(a1),
            centre: c,
            ccw,
        }];
        let program =
            write_program(&[cut(on(a0), moves, c)], &profile, &settings(&profile)).unwrap();
        let arcs: Vec<Read> = feed_moves(&program)
            .into_iter()
            .filter(|m| m.ij.is_some())
            .collect();
        assert_eq!(arcs.len(), expected, "{a0}→{a1} ccw {ccw}: {program}");
        for m in &arcs {
            // G2 clockwise, G3 counter-clockwise (NISTIR 6556 §3.5.3).
            assert_eq!(m.g, if ccw { 3 } else { 2 });
            assert!(written_sweep(m).abs() < PI, "{m:?}");
        }
    }

    // A full circle as a cut of two half turns: four arcs, back at the start.
    let moves = vec![
        Move::Arc {
            to: on(180.0),
            centre: c,
            ccw: false,
        },
        Move::Arc {
            to: on(0.0),
            centre: c,
            ccw: false,
        },
    ];
    let program = write_program(&[cut(on(0.0), moves, c)], &profile, &settings(&profile)).unwrap();
    let reads = feed_moves(&program);
    let arcs: Vec<&Read> = reads.iter().filter(|m| m.g == 2).collect();
    assert_eq!(arcs.len(), 4, "{program}");
    assert_eq!(arcs.last().unwrap().to, Point::new(120.0, 100.0));
    let total: f64 = arcs.iter().map(|m| written_sweep(m)).sum();
    assert!((total + TAU).abs() < 1e-9, "a full clockwise turn: {total}");
}

#[test]
fn lines_only_profiles_refuse_arcs() {
    let text = METRIC_MILL_TOML.replace("arc_form = \"centre\"", "arc_form = \"lines\"");
    let lines = MachineProfile::from_toml(&text, "lines.toml").unwrap();
    let c = Point::new(50.0, 50.0);
    let moves = vec![Move::Arc {
        to: Point::new(50.0, 60.0),
        centre: c,
        ccw: true,
    }];
    let err = write_program(
        &[cut(Point::new(60.0, 50.0), moves, c)],
        &lines,
        &settings(&lines),
    )
    .unwrap_err();
    assert!(matches!(err, PostError::ArcsNotAllowed { .. }), "{err:?}");
    assert!(err.to_string().contains("Fit the path with lines"), "{err}");
    // Lines alone are fine.
    let moves = vec![Move::Line {
        to: Point::new(50.0, 60.0),
    }];
    assert!(
        write_program(
            &[cut(Point::new(60.0, 50.0), moves, c)],
            &lines,
            &settings(&lines)
        )
        .is_ok()
    );
}

#[test]
fn envelope_check_includes_the_bulge_of_arcs() {
    // The metric mill allows X up to 400 mm. Both arcs run from (390, 115) to (390, 85) about
    // (390, 100): clockwise through X = 405, counter-clockwise through X = 375.
    let profile = profile("metric-mill");
    let c = Point::new(390.0, 100.0);
    let arc = |ccw| {
        vec![Move::Arc {
            to: Point::new(390.0, 85.0),
            centre: c,
            ccw,
        }]
    };
    let start = Point::new(390.0, 115.0);
    let err =
        write_program(&[cut(start, arc(false), c)], &profile, &settings(&profile)).unwrap_err();
    match &err {
        PostError::OutsideEnvelope {
            axis, value, what, ..
        } => {
            assert_eq!((*axis, value.as_str()), ('X', "405.0000"));
            assert_eq!(*what, "an arc of the tool path");
        }
        other => panic!("wrong error {other:?}"),
    }
    assert!(write_program(&[cut(start, arc(true), c)], &profile, &settings(&profile)).is_ok());
}

/// A random arc: centre, radius, start angle, signed sweep (never a full turn).
fn arc_strategy() -> impl Strategy<Value = (Point, f64, f64, f64)> {
    (
        150.0..250.0f64,
        110.0..140.0f64,
        -3.0..2.0f64, // log10 of the radius / 1 mm: 1 µm … 100 mm
        0.0..TAU,
        prop_oneof![1e-4..0.2f64, 0.2..PI, PI - 1e-3..PI + 1e-3, PI..TAU - 1e-3],
        any::<bool>(),
    )
        .prop_map(|(x, y, lr, a0, sweep, ccw)| {
            (
                Point::new(x, y),
                10f64.powf(lr),
                a0,
                if ccw { sweep } else { -sweep },
            )
        })
}

/// Writes one random arc with `profile` and checks what a controller would read.
/// A random arc as asked: centre, radius, start angle and its exact sweep (radians), start and
/// end points (mm).
#[derive(Clone, Copy)]
struct AskedArc {
    c: Point,
    r: f64,
    a0: f64,
    exact_sweep: f64,
    start: Point,
    end: Point,
}

fn check_random_arc(profile: &MachineProfile, (c, r, a0, sweep): (Point, f64, f64, f64)) {
    let start = c + Vec2::from_angle(a0) * r;
    let end = c + Vec2::from_angle(a0 + sweep) * r;
    let ccw = sweep > 0.0;
    let moves = vec![Move::Arc {
        to: end,
        centre: c,
        ccw,
    }];
    let plunge = c + Vec2::from_angle(a0) * (r + 1.0);
    let program = write_program(&[cut(start, moves, plunge)], profile, &settings(profile))
        .expect("the arc is written");
    let units = profile.units();
    // NISTIR 6556 §3.5.3.2: 0.002 mm in G21, 0.0002 in in G20.
    let rule = match units {
        conicut::post::ProgramUnits::Millimetres => 0.002,
        conicut::post::ProgramUnits::Inches => 0.0002,
    };
    let step = 10f64.powi(-(profile.xy_decimals() as i32));
    let reads = feed_moves(&program);
    // The first feed move is the lead from the plunge point to the arc's start.
    let path = &reads[1..];
    let exact_sweep = Move::Arc {
        to: end,
        centre: c,
        ccw,
    }
    .sweep(start);
    let arcs = path.iter().filter(|m| m.ij.is_some()).count();
    // Half a turn or more is written as at least two arcs (each checked below to turn less than
    // 180°), unless the arc is so small that its halves round to lines or to nothing: with a
    // radius of 10 steps or more each half has a chord of 14 steps and a sagitta of 2.9 steps.
    if exact_sweep.abs() >= PI && units.from_mm(r) >= 10.0 * step {
        assert!(
            arcs >= 2,
            "a turn of {exact_sweep} rad in one arc: {program}"
        );
    }
    let asked = AskedArc {
        c,
        r,
        a0,
        exact_sweep,
        start,
        end,
    };
    let written = check_written_arcs(path, &asked, ccw, rule, units);
    check_written_path_both_ways(&written, &asked, units, step);
}

/// Every written arc keeps the radius rule, runs the asked way and turns less than half a turn;
/// returns the written path sampled 65 points a move (mm).
fn check_written_arcs(
    path: &[Read],
    asked: &AskedArc,
    ccw: bool,
    rule: f64,
    units: conicut::post::ProgramUnits,
) -> Vec<Point> {
    let exact_sweep = asked.exact_sweep;
    let mm = |p: Point| Point::new(units.to_mm(p.x), units.to_mm(p.y));
    let mut written = Vec::new();
    for m in path {
        if let Some(ij) = m.ij {
            let centre = m.from + ij;
            let mismatch = (m.to.distance(centre) - m.from.distance(centre)).abs();
            assert!(
                mismatch <= RADIUS_MARGIN * rule && mismatch <= rule,
                "radii differ by {mismatch} {units} (rule {rule}): {m:?}"
            );
            assert_eq!(m.g, if ccw { 3 } else { 2 }, "direction word");
            let s = written_sweep(m);
            assert!(s.abs() < PI && s.signum() == exact_sweep.signum(), "{m:?}");
        }
        for k in 0..=64 {
            written.push(mm(written_point(m, k as f64 / 64.0)));
        }
    }
    written
}

fn check_written_path_both_ways(
    written: &[Point],
    asked: &AskedArc,
    units: conicut::post::ProgramUnits,
    step: f64,
) {
    let AskedArc {
        c,
        r,
        a0,
        exact_sweep,
        start,
        end,
    } = *asked;
    // The written path (arcs as a controller interpolates them) stays within 2·√2 steps of the
    // last decimal of the exact arc, both ways. Our stated bound, from the post module's
    // construction: the end points move by up to √2/2 step, the corrected centre keeps the
    // radius close to the exact one, its rounding moves it by up to √2/2 step, and the radius is
    // interpolated across the two ends; twice that sum leaves room for the second-order terms on
    // small arcs. (A bound of √2 steps was tried and broken: 1.45 steps were seen.)
    let bound = units.to_mm(2.0 * std::f64::consts::SQRT_2 * step);
    let worst_out = written
        .iter()
        .map(|&p| distance_to_arc(p, c, r, a0, exact_sweep))
        .fold(0.0, f64::max);
    assert!(
        worst_out <= bound,
        "written path {worst_out} mm from the arc (bound {bound})"
    );
    if written.len() >= 2 {
        let worst_in = (0..=256)
            .map(|k| {
                let p = c + Vec2::from_angle(a0 + exact_sweep * k as f64 / 256.0) * r;
                distance_to_polyline(p, written)
            })
            .fold(0.0, f64::max);
        // The written path is sampled at 65 points a move: allow the sagitta of a sample chord.
        let chord_sag = r * (1.0 - (exact_sweep.abs() / 128.0).cos());
        assert!(
            worst_in <= bound + chord_sag,
            "arc {worst_in} mm from the written path (bound {bound})"
        );
    } else {
        // The whole arc rounded to no movement: it is within a rounding step of its start.
        assert!(start.distance(end) <= units.to_mm(2.0 * step));
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn random_arcs_keep_the_radius_rule_metric_4_decimals(arc in arc_strategy()) {
        check_random_arc(&profile("metric-mill"), arc);
    }

    #[test]
    fn random_arcs_keep_the_radius_rule_metric_3_decimals(arc in arc_strategy()) {
        // The plasma profile writes 3 decimals: naive rounding of I, J could break the rule
        // (docs/sources.md P1.6: worst 2.36 µm), the bisector correction keeps it.
        check_random_arc(&profile("plasma"), arc);
    }

    #[test]
    fn random_arcs_keep_the_radius_rule_inch_5_decimals(arc in arc_strategy()) {
        check_random_arc(&profile("inch-router"), arc);
    }

    #[test]
    fn random_arcs_keep_the_radius_rule_inch_4_decimals(arc in arc_strategy()) {
        // 4 decimals in inch is the least a centre-format profile may ask for (§1.6).
        let text = profile_text("inch-router").1.replace("xy_decimals = 5", "xy_decimals = 4");
        check_random_arc(&MachineProfile::from_toml(&text, "inch-4.toml").unwrap(), arc);
    }
}
