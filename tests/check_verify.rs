//! The checker's one entry, `check::verify`, and its own deviation measurement
//! (`check::deviation`), which shares no code with the fit's (`fit::measure_with_sides`).
//!
//! * The two measurements agree on the same moves within [`AGREEMENT`] of the tolerance on
//!   ellipse parallel curves (inside and outside, lines and arcs, both senses) and on contours of
//!   lines and arcs. They use different methods (dense sampling there; bracketed maximisation,
//!   the level-set distance to the parallel curve and exact projection here), so a wrong one
//!   shows as a disagreement.
//! * `verify` passes a program as written, and refuses it when one point is moved by more than
//!   the tolerance (naming the line), when a cut's index comment is removed, and when a
//!   one-sided contour is moved onto the part side beyond the rounding allowance.
//!
//! The program's moves are RS274/NGC G1 and centre-format G2/G3 (docs/sources.md P1.2); the
//! parallel curves are regular for an inset below b²/a (docs/sources.md M8); the deviation is the
//! two-way distance between the written path and the exact curve.

use conicut::check::{self, Finding, VerifyRules, deviation};
use conicut::fit::{self, FitOptions, FittedCut, MoveKind};
use conicut::geom::{ArcSegment, Contour, Edge, Element, Ellipse, ExactPath, Point, Segment};
use conicut::plan::{CutSide, FeatureKind, PlannedCut};
use conicut::post::{ProgramSettings, write_program};
use conicut::settings::{JobSettings, resolve};

#[path = "support/machine.rs"]
mod machine;

/// The largest disagreement allowed between the two measurements, as a fraction of the
/// tolerance. The fit's sampling (16 points per line, 64 per arc) can fall short of a chord's
/// peak by about 0.4 % of it (its own doc comment), the checker's search is exact to about
/// 1e-12 mm on smooth lobes; 1 % leaves room for the fit's window search on the exact curve.
/// (Measured: at most 0.074 % of the tolerance over these cases.)
const AGREEMENT: f64 = 0.01;

fn fitted(cut: &PlannedCut, tolerance: f64, moves: MoveKind, one_sided: bool) -> FittedCut {
    fit::fit_cut(
        cut,
        &FitOptions {
            tolerance,
            moves,
            scrap_side_only: one_sided,
        },
    )
    .expect("the cut fits")
}

/// Both measurements of `f` against `cut`'s path: (checker both ways, fit both ways, checker
/// part side, fit part side).
fn both_measurements(cut: &PlannedCut, f: &FittedCut) -> (f64, f64, f64, f64) {
    let mine = deviation::measure(f.start, &f.moves, cut.path(), cut.scrap_left()).expect("moves");
    let (theirs, sides) = fit::measure_with_sides(f.start, &f.moves, cut.path(), cut.scrap_left());
    (mine.both_ways, theirs, mine.part_side, sides.part_side)
}

fn ellipse_cuts() -> Vec<PlannedCut> {
    let mut out = Vec::new();
    for (a, b, angle) in [(30.0, 18.0, 0.3), (22.0, 10.0, -1.1), (40.0, 39.0, 1.5)] {
        let e = Ellipse::new(Point::new(12.0, -7.0), a, b, angle).unwrap();
        out.push(PlannedCut::around_ellipse(
            "hole",
            FeatureKind::Opening,
            e,
            3.0,
        ));
        out.push(PlannedCut::around_ellipse(
            "boss",
            FeatureKind::Boss,
            e,
            -4.0,
        ));
        // A conventional cut: the same path the other way, the scrap on the right.
        let reversed =
            PlannedCut::around_ellipse("conventional", FeatureKind::Opening, e, 2.0).reversed();
        assert!(!reversed.scrap_left());
        out.push(reversed);
    }
    out
}

/// A rounded rectangle, counter-clockwise: four lines and four quarter arcs of radius `r`,
/// `w` × `h` overall, lower left corner at (5, 3).
fn rounded_rectangle(w: f64, h: f64, r: f64) -> Contour {
    let (x0, y0) = (5.0, 3.0);
    let line = |ax: f64, ay: f64, bx: f64, by: f64| {
        Element::Line(Segment::new(Point::new(ax, ay), Point::new(bx, by)))
    };
    let arc = |cx: f64, cy: f64, start: f64| {
        Element::Arc(ArcSegment {
            centre: Point::new(cx, cy),
            radius: r,
            start_angle: start,
            sweep: std::f64::consts::FRAC_PI_2,
        })
    };
    let (x1, y1) = (x0 + w, y0 + h);
    let q = std::f64::consts::FRAC_PI_2;
    Contour::new(
        vec![
            line(x0 + r, y0, x1 - r, y0),
            arc(x1 - r, y0 + r, -q),
            line(x1, y0 + r, x1, y1 - r),
            arc(x1 - r, y1 - r, 0.0),
            line(x1 - r, y1, x0 + r, y1),
            arc(x0 + r, y1 - r, q),
            line(x0, y1 - r, x0, y0 + r),
            arc(x0 + r, y0 + r, 2.0 * q),
        ],
        "0",
        Vec::new(),
    )
    .unwrap()
}

fn contour_cut() -> PlannedCut {
    let c = rounded_rectangle(50.0, 30.0, 7.0);
    PlannedCut::new(
        "pocket edge",
        FeatureKind::Opening,
        CutSide::Inside,
        ExactPath::Contour(c.clone()),
        Point::new(30.0, 18.0),
        Edge::Contour(c),
    )
}

#[test]
fn the_two_measurements_agree_on_ellipses_and_contours() {
    let mut worst: f64 = 0.0;
    for tol in [0.01, 0.05] {
        let mut cuts = ellipse_cuts();
        cuts.push(contour_cut());
        for cut in &cuts {
            for (kind, one_sided) in [
                (MoveKind::Lines, false),
                (MoveKind::Arcs, false),
                (MoveKind::Lines, true),
            ] {
                let f = fitted(cut, tol, kind, one_sided);
                let (mine, theirs, my_part, their_part) = both_measurements(cut, &f);
                let case = format!("{} {kind:?} one-sided {one_sided} tol {tol}", cut.name());
                assert!(mine <= tol * (1.0 + 1e-9), "{case}: checker {mine}");
                assert!(
                    (mine - theirs).abs() <= AGREEMENT * tol,
                    "{case}: checker {mine}, fit {theirs}"
                );
                assert!(
                    (my_part - their_part).abs() <= AGREEMENT * tol,
                    "{case}: part side: checker {my_part}, fit {their_part}"
                );
                worst = worst.max((mine - theirs).abs() / tol);
                worst = worst.max((my_part - their_part).abs() / tol);
            }
        }
    }
    println!(
        "largest disagreement: {:.4} % of the tolerance",
        100.0 * worst
    );
}

#[test]
fn a_stretch_of_the_path_left_out_is_measured_from_the_path_side() {
    // Dropping the last third of a closed fit leaves the moves near the path, but the path's
    // last third far from the moves: only the path-to-moves direction sees it.
    let cut = &ellipse_cuts()[0];
    let f = fitted(cut, 0.01, MoveKind::Lines, false);
    let kept = &f.moves[..2 * f.moves.len() / 3];
    let d = deviation::measure(f.start, kept, cut.path(), true).unwrap();
    assert!(d.both_ways > 5.0, "{d:?}");
    assert!(d.worst_move < kept.len());
}

const TOLERANCE: f64 = 0.01;

/// A hole cut around a 30 × 18 mm ellipse, written for the metric mill profile; the rounding
/// allowance as the job computes it.
fn written(kind: MoveKind, one_sided: bool) -> (PlannedCut, String, f64) {
    let mill = machine::machine("metric-mill");
    let profile = &mill.profile;
    let mut request = JobSettings::new("oval.dxf", 6.0);
    request.lines_only = kind == MoveKind::Lines;
    let rounding = resolve(&request, &mill)
        .expect("the settings resolve")
        .budget
        .rounding;
    let e = Ellipse::new(Point::new(60.0, 40.0), 30.0, 18.0, 0.0).unwrap();
    let cut = PlannedCut::around_ellipse("oval", FeatureKind::Opening, e, 3.0);
    let f = fitted(&cut, TOLERANCE - rounding, kind, one_sided);
    let settings = ProgramSettings {
        tolerance: TOLERANCE,
        ..machine::program_settings("verify", "oval.dxf", 6.0, 2.0)
    };
    let program = write_program(&[f], profile, &settings).expect("written");
    (cut, program, rounding)
}

fn rules(rounding: f64, one_sided: bool) -> VerifyRules {
    VerifyRules {
        tolerance: TOLERANCE,
        rounding,
        scrap_side_only: one_sided,
        tool_radius: 3.0,
        pierce_clearance: None,
        skip_above_stock: true,
    }
}

/// The 1-based program lines of the contour moves (after the `(contour)` comment) that set X.
fn contour_lines(program: &str) -> Vec<usize> {
    let lines: Vec<&str> = program.lines().collect();
    let from = lines
        .iter()
        .position(|l| l.contains("(contour)"))
        .expect("a contour comment");
    (from + 1..lines.len())
        .take_while(|&i| !lines[i].contains('('))
        .filter(|&i| lines[i].contains('X'))
        .map(|i| i + 1)
        .collect()
}

/// `program` with the X word of line `line` (1-based) set to `f(x)`, written with the same
/// number of decimals.
fn set_x(program: &str, line: usize, f: impl Fn(f64) -> f64) -> String {
    let mut lines: Vec<String> = program.lines().map(String::from).collect();
    let text = &lines[line - 1];
    let at = text.find('X').unwrap() + 1;
    let end = text[at..]
        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
        .map_or(text.len(), |k| at + k);
    let old = &text[at..end];
    let decimals = old.split_once('.').map_or(0, |(_, d)| d.len());
    let new = format!("{:.*}", decimals, f(old.parse().unwrap()));
    lines[line - 1] = format!("{}{}{}", &text[..at], new, &text[end..]);
    lines.join("\n") + "\n"
}

fn x_of(program: &str, line: usize) -> f64 {
    let text = program.lines().nth(line - 1).unwrap();
    let at = text.find('X').unwrap() + 1;
    let end = text[at..]
        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
        .map_or(text.len(), |k| at + k);
    text[at..end].parse().unwrap()
}

#[test]
fn a_program_as_written_passes_with_its_figures() {
    for kind in [MoveKind::Lines, MoveKind::Arcs] {
        let (cut, program, rounding) = written(kind, false);
        let v = check::verify(
            &program,
            std::slice::from_ref(&cut),
            &rules(rounding, false),
        )
        .unwrap_or_else(|f| panic!("{kind:?}: {f}"));
        assert_eq!(v.cuts.len(), 1);
        assert!(v.cuts[0].both_ways <= TOLERANCE && v.cuts[0].both_ways > 0.0);
        assert!(v.cuts[0].part_side <= v.cuts[0].both_ways);
        let (lo, hi) = v.bounds.expect("moves");
        // The path is 27 mm out from the centre along the major axis.
        assert!(lo[0] <= 60.0 - 27.0 + TOLERANCE && hi[0] >= 60.0 + 27.0 - TOLERANCE);
    }
}

#[test]
fn a_point_moved_by_more_than_the_tolerance_is_refused_at_its_line() {
    for kind in [MoveKind::Lines, MoveKind::Arcs] {
        let (cut, program, rounding) = written(kind, false);
        let lines = contour_lines(&program);
        let line = lines[lines.len() / 3];
        let tampered = set_x(&program, line, |x| x + 5.0 * TOLERANCE);
        let found = check::verify(
            &tampered,
            std::slice::from_ref(&cut),
            &rules(rounding, false),
        )
        .expect_err("a moved point is refused");
        let hit = found.0.iter().find_map(|f| match f {
            Finding::ToleranceExceeded {
                feature,
                line: at,
                measured,
                ..
            } => Some((feature.clone(), *at, *measured)),
            _ => None,
        });
        let (feature, at, measured) = hit.unwrap_or_else(|| panic!("{kind:?}: {found}"));
        assert_eq!(feature, "oval");
        assert!(measured > TOLERANCE, "{kind:?}: {measured}");
        // The worst point lies on a move that ends or starts at the moved point.
        let next = lines.iter().find(|&&l| l > line).copied().unwrap_or(line);
        assert!(
            at == line || at == next,
            "{kind:?}: line {at}, moved {line}"
        );
    }
}

#[test]
fn a_cut_without_its_index_comment_is_not_found() {
    let (cut, program, rounding) = written(MoveKind::Arcs, false);
    let without: String = program
        .lines()
        .filter(|l| !l.contains("(cut 1 of 1:"))
        .map(|l| format!("{l}\n"))
        .collect();
    assert_ne!(without, program, "the writer's index comment is there");
    let found = check::verify(
        &without,
        std::slice::from_ref(&cut),
        &rules(rounding, false),
    )
    .expect_err("refused");
    assert!(
        found.0.contains(&Finding::NotFound {
            feature: "oval".into()
        }),
        "{found}"
    );
    assert!(found.to_string().contains("was not found in the program"));
}

#[test]
fn a_one_sided_contour_moved_onto_the_part_side_is_refused() {
    let (cut, program, rounding) = written(MoveKind::Lines, true);
    check::verify(&program, std::slice::from_ref(&cut), &rules(rounding, true))
        .expect("the one-sided program as written passes");
    // The leftmost vertex, near anomaly π where the path's normal is −X: put it 0.004 mm
    // outside the path (the part side of a hole), less than the tolerance.
    let lines = contour_lines(&program);
    let line = *lines
        .iter()
        .min_by(|&&p, &&q| x_of(&program, p).total_cmp(&x_of(&program, q)))
        .unwrap();
    let outside = 60.0 - 27.0 - 0.004;
    let tampered = set_x(&program, line, |_| outside);
    let found = check::verify(
        &tampered,
        std::slice::from_ref(&cut),
        &rules(rounding, true),
    )
    .expect_err("onto the part side");
    let part = found.0.iter().find_map(|f| match f {
        Finding::OntoPartSide {
            part_side,
            line: at,
            ..
        } => Some((*part_side, *at)),
        _ => None,
    });
    let (part_side, at) = part.unwrap_or_else(|| panic!("{found}"));
    assert!(part_side > 0.003 && part_side < TOLERANCE, "{part_side}");
    assert!(at > 0);
    assert!(found.to_string().contains("onto the part side"));
    // The same program held to the two-sided rule passes: it is the one-sided rule that fails.
    check::verify(
        &tampered,
        std::slice::from_ref(&cut),
        &rules(rounding, false),
    )
    .expect("within the two-sided tolerance");
}
