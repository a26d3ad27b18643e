//! The fitters (issue 4): arc splines and band polygons on ellipses' parallel curves, one- and
//! two-sided, and contours of lines and arcs. Every check here is made with geometry computed in
//! this file (the ellipse's own point-distance and inside test, circle and segment distances),
//! independently of the crate's measurement; move counts are compared with the asymptotic
//! estimates computed by `support/fit_estimates.rs` and with the greedy constructions published in
//! docs/sources.md P0 and P3.4.

#[path = "support/fit_estimates.rs"]
mod fit_estimates;

use conicut::fit::{FitError, FitOptions, FittedCut, MoveKind, PART_SIDE_SLACK, fit_cut};
use conicut::geom::Move;
use conicut::geom::{ArcSegment, Ellipse, Point, Segment};
use conicut::geom::{Contour, Element};
use conicut::geom::{Edge, ExactPath};
use conicut::plan::{CutSide, FeatureKind, PlannedCut};
use std::f64::consts::{FRAC_PI_2, PI, TAU};

fn ellipse_cut(e: Ellipse, inset: f64) -> PlannedCut {
    // As planned: holes (inset > 0) and plain ellipses counter-clockwise, bosses (outside,
    // inset < 0) clockwise, so the scrap is on the left of travel.
    let kind = if inset < 0.0 {
        FeatureKind::Boss
    } else {
        FeatureKind::Opening
    };
    PlannedCut::around_ellipse("test", kind, e, inset)
}

fn options(tolerance: f64, moves: MoveKind, scrap_side_only: bool) -> FitOptions {
    FitOptions {
        tolerance,
        moves,
        scrap_side_only,
    }
}

fn shapes() -> [Ellipse; 3] {
    [
        Ellipse::new(Point::ORIGIN, 50.0, 20.0, 0.0).unwrap(),
        Ellipse::new(Point::new(120.0, -40.0), 30.0, 18.0, 0.7).unwrap(),
        Ellipse::new(Point::new(-5.0, 300.0), 80.0, 25.0, -1.2).unwrap(),
    ]
}

/// Insets for a shape: the ellipse itself, a tool radius of 60 % of b²/a inside, 3 mm outside.
fn insets(e: &Ellipse) -> [f64; 3] {
    [0.0, 0.6 * e.min_radius_of_curvature(), -3.0]
}

/// Points along a fitted path: `per_line` per line and `per_arc` per arc (ends included).
fn path_samples(cut: &FittedCut, per_line: usize, per_arc: usize) -> Vec<Point> {
    let mut out = vec![cut.start];
    let mut from = cut.start;
    for m in &cut.moves {
        let n = match m {
            Move::Line { .. } => per_line,
            Move::Arc { .. } => per_arc,
        };
        for k in 1..=n {
            out.push(m.point_at(from, k as f64 / n as f64));
        }
        from = m.end();
    }
    out
}

/// The moves as segments and arcs (this file's own geometry).
fn pieces(cut: &FittedCut) -> Vec<Element> {
    let mut from = cut.start;
    cut.moves
        .iter()
        .map(|m| {
            let piece = match *m {
                Move::Line { to } => Element::Line(Segment::new(from, to)),
                Move::Arc { to, centre, ccw } => {
                    let a0 = (from - centre).angle();
                    let a1 = (to - centre).angle();
                    let sweep = if ccw {
                        (a1 - a0).rem_euclid(TAU)
                    } else {
                        -(a0 - a1).rem_euclid(TAU)
                    };
                    Element::Arc(ArcSegment {
                        centre,
                        radius: from.distance(centre),
                        start_angle: a0,
                        sweep,
                    })
                }
            };
            from = m.end();
            piece
        })
        .collect()
}

/// Largest distance from the exact curve's samples to the path. Both run the same way, so each
/// sample's nearest piece is first looked for among the seven around the previous sample's; a
/// sample whose nearest piece there is farther than the largest distance so far gets a full scan
/// of the pieces. The result is the exact maximum: a sample that is not scanned in full lies at
/// most that far from the path, so it cannot raise the maximum.
fn curve_to_path(curve: &[Point], path: &[Element]) -> f64 {
    let n = path.len();
    let mut worst: f64 = 0.0;
    let mut near = 0usize;
    for q in curve {
        let window = (0..7).map(|k| (near + n + k - 3) % n);
        let (mut best, mut best_i) = window
            .map(|i| (path[i].distance_to(*q), i))
            .fold((f64::INFINITY, near), |a, b| if b.0 < a.0 { b } else { a });
        if best > worst {
            for (i, p) in path.iter().enumerate() {
                let d = p.distance_to(*q);
                if d < best {
                    (best, best_i) = (d, i);
                }
            }
        }
        near = best_i;
        worst = worst.max(best);
    }
    worst
}

/// `(scrap side, part side, both ways)` deviation of a fitted ellipse cut, measured here: a path
/// point at distance δ from the ellipse, inside (σ = δ) or outside (σ = −δ), lies σ − d inside the
/// parallel curve at inset d (the family shares the normals; valid within the reach b²/a inside,
/// everywhere outside). The left of travel is inside for counter-clockwise cuts, outside for
/// clockwise ones. The other direction samples the exact curve 40 times per move (at least 4000
/// points) and takes the nearest piece of the path.
fn ellipse_sides(e: &Ellipse, inset: f64, clockwise: bool, cut: &FittedCut) -> (f64, f64, f64) {
    let (mut scrap, mut part) = (0.0f64, 0.0f64);
    for p in path_samples(cut, 24, 200) {
        let (delta, _) = e.distance_to(p);
        let sigma = if e.contains(p) { delta } else { -delta };
        assert!(sigma < e.min_radius_of_curvature(), "beyond the reach");
        let inward = sigma - inset;
        let left = if clockwise { -inward } else { inward };
        if left > 0.0 {
            scrap = scrap.max(left);
        } else {
            part = part.max(-left);
        }
    }
    let n = (40 * cut.moves.len()).max(4000);
    let curve: Vec<Point> = (0..n)
        .map(|i| e.inward_offset_point(TAU * i as f64 / n as f64, inset))
        .collect();
    let back = curve_to_path(&curve, &pieces(cut));
    (scrap, part, scrap.max(part).max(back))
}

#[test]
fn estimates_reproduce_the_published_integrals() {
    // docs/sources.md P3.4 (shop-scripts/ellipse_counts.py, cross-checked with mpmath at
    // 30 digits): for a = 50, b = 20, ∫√κ ds = 34.00150, ∫|κ′|^{1/3} ds = 22.29415, perimeter
    // 230.1311 mm.
    let sqrt_k = fit_estimates::sqrt_curvature_integral(50.0, 20.0, 0.0);
    let cbrt_dk = fit_estimates::cbrt_curvature_rate_integral(50.0, 20.0, 0.0);
    let perimeter = fit_estimates::perimeter(50.0, 20.0, 0.0);
    assert!((sqrt_k - 34.00150).abs() < 1e-5, "{sqrt_k}");
    assert!((cbrt_dk - 22.29415).abs() < 1e-5, "{cbrt_dk}");
    assert!((perimeter - 230.1311).abs() < 1e-4, "{perimeter}");
    // §0 table: 85.0 band lines, 120.2 inscribed lines, 20.7 arcs at 0.01 mm.
    assert!((fit_estimates::band_lines(50.0, 20.0, 0.0, 0.02) - 85.00).abs() < 0.01);
    assert!((fit_estimates::band_lines(50.0, 20.0, 0.0, 0.01) - 120.21).abs() < 0.01);
    assert!((fit_estimates::spline_arcs(50.0, 20.0, 0.0, 0.01) - 20.71).abs() < 0.01);
    // The perimeter of the parallel curve at d is the ellipse's less 2πd (Steiner's formula for
    // parallel convex curves, from memory; the turning of the tangent is 2π).
    let p3 = fit_estimates::perimeter(50.0, 20.0, 3.0);
    assert!((p3 - (perimeter - TAU * 3.0)).abs() < 1e-6, "{p3}");
}

/// Every shape, offset, tolerance 0.1 to 0.001 mm and band, fitted with `kind`: within the band
/// both ways (and on the scrap side when one-sided), measured here; the crate's own measurement
/// agrees; closed; only moves of the kind asked for.
fn ellipse_fits_stay_within_the_band_both_ways(kind: MoveKind) {
    for e in shapes() {
        for inset in insets(&e) {
            let clockwise = inset < 0.0;
            let cut = ellipse_cut(e, inset);
            for tol in [0.1, 0.01, 0.001] {
                for one_sided in [false, true] {
                    let fitted = fit_cut(&cut, &options(tol, kind, one_sided)).unwrap();
                    let (scrap, part, both) = ellipse_sides(&e, inset, clockwise, &fitted);
                    let case = format!(
                        "a {} b {} inset {inset} tol {tol} {kind:?} one-sided {one_sided}",
                        e.a(),
                        e.b()
                    );
                    assert!(both <= tol, "{case}: deviation {both}");
                    if one_sided {
                        assert!(scrap <= tol, "{case}: scrap side {scrap}");
                        assert!(part <= PART_SIDE_SLACK, "{case}: part side {part}");
                        assert!(fitted.part_side_deviation <= PART_SIDE_SLACK, "{case}");
                    }
                    // The crate's own figure is a measurement of the same thing.
                    assert!(fitted.measured_deviation <= tol, "{case}");
                    assert!(
                        (fitted.measured_deviation - both).abs() <= 0.05 * tol,
                        "{case}: own {} vs here {both}",
                        fitted.measured_deviation
                    );
                    // Closed: the path ends where it starts.
                    assert_eq!(fitted.moves.last().map(Move::end), Some(fitted.start));
                    match kind {
                        MoveKind::Lines => assert!(
                            fitted.moves.iter().all(|m| matches!(m, Move::Line { .. })),
                            "{case}"
                        ),
                        MoveKind::Arcs => assert!(
                            fitted.moves.iter().all(|m| matches!(m, Move::Arc { .. })),
                            "{case}"
                        ),
                    }
                }
            }
        }
    }
}

#[test]
fn ellipse_arc_fits_stay_within_the_band_both_ways() {
    ellipse_fits_stay_within_the_band_both_ways(MoveKind::Arcs);
}

#[test]
fn ellipse_line_fits_stay_within_the_band_both_ways() {
    ellipse_fits_stay_within_the_band_both_ways(MoveKind::Lines);
}

#[test]
fn finest_tolerance_stays_within_the_band() {
    // 0.0001 mm on the 50 × 20 ellipse and its 3 mm parallel curves, both move kinds and bands.
    let e = shapes()[0];
    for inset in [0.0, 3.0, -3.0] {
        let cut = ellipse_cut(e, inset);
        for kind in [MoveKind::Arcs, MoveKind::Lines] {
            for one_sided in [false, true] {
                let fitted = fit_cut(&cut, &options(1e-4, kind, one_sided)).unwrap();
                let (scrap, part, both) = ellipse_sides(&e, inset, inset < 0.0, &fitted);
                assert!(both <= 1e-4, "inset {inset} {kind:?} {one_sided}: {both}");
                if one_sided {
                    assert!(scrap <= 1e-4 && part <= PART_SIDE_SLACK, "{scrap} {part}");
                }
            }
        }
    }
}

#[test]
fn arcs_have_consistent_geometry() {
    for e in shapes() {
        for inset in insets(&e) {
            for tol in [0.1, 0.01, 0.001] {
                for one_sided in [false, true] {
                    let fitted = fit_cut(
                        &ellipse_cut(e, inset),
                        &options(tol, MoveKind::Arcs, one_sided),
                    )
                    .unwrap();
                    let mut from = fitted.start;
                    for m in &fitted.moves {
                        let Move::Arc { to, centre, ccw } = *m else {
                            panic!("not an arc")
                        };
                        // Start and end on one circle (to 1e-9 mm), sweep below 180°, turning
                        // the way the cut runs.
                        let (r0, r1) = (from.distance(centre), to.distance(centre));
                        assert!((r0 - r1).abs() <= 1e-9, "radii {r0} {r1}");
                        assert!(m.sweep(from).abs() < PI, "sweep {}", m.sweep(from));
                        assert_eq!(ccw, inset >= 0.0);
                        from = to;
                    }
                }
            }
        }
    }
}

/// The changes of direction (degrees) at the joints of a closed run of arcs, computed here from
/// the arcs' radii (the tangent at an arc's end is perpendicular to the radius there): entry `i`
/// where move `i` meets move `i + 1`, the last entry the closing joint, where the last move
/// meets the first at the start.
fn joint_kinks(cut: &FittedCut) -> Vec<f64> {
    let points = cut.end_points();
    let n = cut.moves.len();
    let tangent = |i: usize, at_end: bool| {
        let Move::Arc { centre, ccw, .. } = cut.moves[i] else {
            panic!("not an arc")
        };
        let p = if at_end { points[i + 1] } else { points[i] };
        let r = p - centre;
        let t = conicut::geom::Vec2::new(-r.y, r.x) / r.length();
        if ccw { t } else { -t }
    };
    (0..n)
        .map(|i| {
            let (a, b) = (tangent(i, true), tangent((i + 1) % n, false));
            a.cross(b).atan2(a.dot(b)).abs().to_degrees()
        })
        .collect()
}

/// `(largest kink, largest inner kink, closing kink)` of a closed run of arcs (see
/// [`joint_kinks`]).
fn kinks_here(cut: &FittedCut) -> (f64, f64, f64) {
    let k = joint_kinks(cut);
    let (closing, inner) = k.split_last().expect("moves");
    let inner = inner.iter().copied().fold(0.0, f64::max);
    (inner.max(*closing), inner, *closing)
}

#[test]
fn kinks_are_reported_and_small() {
    // docs/sources.md P3.4: the greedy arc spline of the 50 × 20 ellipse has kinks of up
    // to 1.36° at 0.01 mm and 0.28° at 0.001 mm, all from its short closing span; evening the
    // spans out removes most of it, and a joint at a vertex of the major axis (the start, at
    // anomaly 0) kinks by itself, 1.39° at 0.01 mm before this construction. The brief asks for
    // well under 1° at 0.01 mm, the closing joint included (common practice: up to about 0.5°
    // passes unnoticed). The reported figure counts the closing joint.
    let e = shapes()[0];
    for (tol, limit) in [(0.01, 0.5), (0.001, 0.15), (0.0001, 0.05)] {
        let fitted = fit_cut(&ellipse_cut(e, 0.0), &options(tol, MoveKind::Arcs, false)).unwrap();
        let (here, inner, closing) = kinks_here(&fitted);
        assert!(
            (fitted.largest_kink_deg - here).abs() < 1e-9,
            "reported {} vs here {here}",
            fitted.largest_kink_deg
        );
        assert!(here < limit, "tol {tol}: largest kink {here}°");
        assert!(
            closing <= inner + 1e-9,
            "tol {tol}: closing {closing}° inner {inner}°"
        );
        println!(
            "tol {tol}: {} arcs, largest kink {here:.3}°, closing joint {closing:.3}°",
            fitted.moves.len(),
        );
    }
    // Every shape and offset at 0.01 and 0.001 mm: two-sided under 1°; both bands with a closing
    // joint no worse than the largest inner one. One-sided kinks are printed for the report.
    for e in shapes() {
        for inset in insets(&e) {
            for tol in [0.01, 0.001] {
                let cut = ellipse_cut(e, inset);
                let case = format!("a {} b {} inset {inset} tol {tol}", e.a(), e.b());
                let two = fit_cut(&cut, &options(tol, MoveKind::Arcs, false)).unwrap();
                let one = fit_cut(&cut, &options(tol, MoveKind::Arcs, true)).unwrap();
                let (k2, inner2, closing2) = kinks_here(&two);
                let (k1, inner1, closing1) = kinks_here(&one);
                assert!(k2 < 1.0, "{case}: {k2}°");
                assert!(closing2 <= inner2 + 1e-9, "{case}: {closing2}° {inner2}°");
                assert!(
                    closing1 <= inner1 + 1e-9,
                    "{case}, one-sided: {closing1}° {inner1}°"
                );
                assert!((two.largest_kink_deg - k2).abs() < 1e-9, "{case}");
                assert!((one.largest_kink_deg - k1).abs() < 1e-9, "{case}");
                println!("{case}: kinks two-sided {k2:.3}°, one-sided {k1:.3}°");
            }
        }
    }
}

/// Asserts `count ≤ max(target × (1 + share), target + 1)`.
fn within(count: usize, target: f64, share: f64, case: &str) {
    let allowed = (target * (1.0 + share)).max(target + 1.0);
    assert!(
        count as f64 <= allowed,
        "{case}: {count} moves, target {target:.2}, allowed {allowed:.2}"
    );
}

/// Every offset, tolerance (0.1 to 0.0001 mm) and band of the count targets for one shape, with
/// the target's band width `W` (2ε two-sided, ε one-sided) and a name for messages.
fn count_cases(e: Ellipse) -> Vec<(f64, f64, bool, f64, String)> {
    let mut cases = Vec::new();
    for inset in insets(&e) {
        for tol in [0.1, 0.01, 0.001, 0.0001] {
            for one_sided in [false, true] {
                let width = if one_sided { tol } else { 2.0 * tol };
                let case = format!(
                    "a {} b {} inset {inset} tol {tol} one-sided {one_sided}",
                    e.a(),
                    e.b()
                );
                cases.push((inset, tol, one_sided, width, case));
            }
        }
    }
    cases
}

/// Target (issue 4): lines within 3 % (or one move) of ∫√(κ/8W) ds, W the band's width.
/// Estimates: support/fit_estimates.rs.
fn line_counts_meet_the_targets(e: Ellipse) {
    for (inset, tol, one_sided, width, case) in count_cases(e) {
        let cut = ellipse_cut(e, inset);
        let lines = fit_cut(&cut, &options(tol, MoveKind::Lines, one_sided)).unwrap();
        let target = fit_estimates::band_lines(e.a(), e.b(), inset, width);
        within(lines.moves.len(), target, 0.03, &format!("lines, {case}"));
    }
}

/// Target (issue 4): arcs within 25 % (or one move) of ∫(|κ′|/(72√3 w))^{1/3} ds, w half the
/// band's width (ε two-sided, ε/2 one-sided). Estimates: support/fit_estimates.rs.
fn arc_counts_meet_the_targets(e: Ellipse) {
    for (inset, tol, one_sided, width, case) in count_cases(e) {
        let cut = ellipse_cut(e, inset);
        let arcs = fit_cut(&cut, &options(tol, MoveKind::Arcs, one_sided)).unwrap();
        let target = fit_estimates::spline_arcs(e.a(), e.b(), inset, width / 2.0);
        within(arcs.moves.len(), target, 0.25, &format!("arcs, {case}"));
    }
}

// One test per shape, so that each stays short.
#[test]
fn line_counts_meet_the_targets_50x20() {
    line_counts_meet_the_targets(shapes()[0]);
}

#[test]
fn line_counts_meet_the_targets_30x18() {
    line_counts_meet_the_targets(shapes()[1]);
}

#[test]
fn line_counts_meet_the_targets_80x25() {
    line_counts_meet_the_targets(shapes()[2]);
}

#[test]
fn arc_counts_meet_the_targets_50x20() {
    arc_counts_meet_the_targets(shapes()[0]);
}

#[test]
fn arc_counts_meet_the_targets_30x18() {
    arc_counts_meet_the_targets(shapes()[1]);
}

#[test]
fn arc_counts_meet_the_targets_80x25() {
    arc_counts_meet_the_targets(shapes()[2]);
}

#[test]
fn counts_equal_the_published_greedy_constructions() {
    // docs/sources.md P3.4, built by shop-scripts/ellipse_construct.py for a = 50, b = 20:
    // band chords (chords of the +ε offset curve with sagitta 2ε) 86 and 269, inscribed chords
    // (the one-sided band of a counter-clockwise hole: vertices on the curve, sagitta ε) 121 and
    // 381, greedy arcs through curve points with minimax radius 21 and 45, at 0.01 and 0.001 mm.
    // The crate's arc spline is built differently (evened out, quadrant-symmetric, the start
    // vertex covered by a tangent arc split into two moves) and needs as many moves.
    let cut = ellipse_cut(shapes()[0], 0.0);
    for (tol, band, inscribed, arcs) in [(0.01, 86, 121, 21), (0.001, 269, 381, 45)] {
        let count = |kind, one_sided| {
            fit_cut(&cut, &options(tol, kind, one_sided))
                .unwrap()
                .moves
                .len()
        };
        assert_eq!(count(MoveKind::Lines, false), band, "band lines at {tol}");
        assert_eq!(
            count(MoveKind::Lines, true),
            inscribed,
            "inscribed at {tol}"
        );
        assert_eq!(count(MoveKind::Arcs, false), arcs, "arcs at {tol}");
    }
}

/// An ellipse cut as `ellipse_cut`, started at anomaly `start`.
fn ellipse_cut_from(e: Ellipse, inset: f64, start: f64) -> PlannedCut {
    let clockwise = inset < 0.0;
    let (kind, side) = if clockwise {
        (FeatureKind::Boss, CutSide::Outside)
    } else {
        (FeatureKind::Opening, CutSide::Inside)
    };
    PlannedCut::new(
        "test",
        kind,
        side,
        ExactPath::EllipseParallel {
            ellipse: e,
            inset,
            start,
            clockwise,
        },
        e.centre(),
        Edge::Ellipse(e),
    )
}

#[test]
fn any_start_anomaly_works() {
    // Starts on the axes (the ends of the major and minor axes) use the quadrant-symmetric
    // construction, others the general one. Every fit stays within the tolerance both ways
    // (measured here), starts and ends on the exact curve at the start anomaly (two-sided band:
    // its middle is the curve), meets the move-count target of `arc_counts_meet_the_targets`,
    // and closes with a joint no worse than its largest inner one.
    let starts = [
        FRAC_PI_2,
        PI,
        3.0 * FRAC_PI_2,
        -FRAC_PI_2,
        0.05,
        -0.05,
        0.7,
        2.0,
    ];
    for e in &shapes()[..2] {
        for inset in [0.0, 0.6 * e.min_radius_of_curvature(), -3.0] {
            let tolerances: &[f64] = if inset == 0.0 {
                &[0.01, 0.001]
            } else {
                &[0.01]
            };
            for &tol in tolerances {
                for start in starts {
                    let case = format!(
                        "a {} b {} inset {inset} tol {tol} start {start}",
                        e.a(),
                        e.b()
                    );
                    let cut = ellipse_cut_from(*e, inset, start);
                    let fitted = fit_cut(&cut, &options(tol, MoveKind::Arcs, false))
                        .unwrap_or_else(|err| panic!("{case}: {err}"));
                    let (_, _, both) = ellipse_sides(e, inset, inset < 0.0, &fitted);
                    assert!(both <= tol, "{case}: deviation {both}");
                    let first = e.inward_offset_point(start, inset);
                    assert!(
                        fitted.start.distance(first) < 1e-9,
                        "{case}: starts elsewhere"
                    );
                    assert_eq!(fitted.moves.last().map(Move::end), Some(fitted.start));
                    let target = fit_estimates::spline_arcs(e.a(), e.b(), inset, tol);
                    within(fitted.moves.len(), target, 0.25, &case);
                    let (_, inner, closing) = kinks_here(&fitted);
                    assert!(
                        closing <= inner + 1e-9,
                        "{case}: closing {closing}° inner {inner}°"
                    );
                }
            }
        }
    }
}

#[test]
fn axis_starts_give_quadrant_symmetric_splines() {
    // The parallel curves of an ellipse are symmetric about both axes; started on an axis, the
    // spline is too (computed here in the ellipse's own frame, to 1e-9 mm): the centres of its
    // arcs mirrored about either axis are centres of its arcs, and so are its end points, the
    // start apart (the arc through it may be split there into two moves).
    for e in shapes() {
        let axis = conicut::geom::Vec2::new(e.angle().cos(), e.angle().sin());
        let local = |p: Point| {
            let d = p - e.centre();
            (d.dot(axis), axis.cross(d))
        };
        let mirrored_in = |set: &[(f64, f64)], (x, y): (f64, f64)| {
            [(x, -y), (-x, y)]
                .iter()
                .all(|&(mx, my)| set.iter().any(|&(u, v)| (u - mx).hypot(v - my) < 1e-9))
        };
        for inset in insets(&e) {
            for start in [0.0, FRAC_PI_2] {
                for (tol, one_sided) in [(0.01, false), (0.001, false), (0.01, true)] {
                    let case = format!("a {} inset {inset} start {start} tol {tol}", e.a());
                    let cut = ellipse_cut_from(e, inset, start);
                    let fitted = fit_cut(&cut, &options(tol, MoveKind::Arcs, one_sided)).unwrap();
                    let centres: Vec<(f64, f64)> = fitted
                        .moves
                        .iter()
                        .map(|m| match *m {
                            Move::Arc { centre, .. } => local(centre),
                            Move::Line { .. } => panic!("{case}: not an arc"),
                        })
                        .collect();
                    for &c in &centres {
                        assert!(mirrored_in(&centres, c), "{case}: centre {c:?}");
                    }
                    let ends: Vec<(f64, f64)> =
                        fitted.moves.iter().map(|m| local(m.end())).collect();
                    let start_point = local(fitted.start);
                    let mut with_start = ends.clone();
                    with_start.push(start_point);
                    for &p in ends.iter().filter(|&&p| p != start_point) {
                        assert!(mirrored_in(&with_start, p), "{case}: end point {p:?}");
                    }
                }
            }
        }
    }
}

fn contour_cut(elements: Vec<Element>, kind: FeatureKind, side: CutSide) -> PlannedCut {
    let n = elements.len();
    let contour = Contour::new(elements, "0", vec![String::new(); n]).unwrap();
    PlannedCut::new(
        "contour",
        kind,
        side,
        ExactPath::Contour(contour.clone()),
        Point::ORIGIN,
        Edge::Contour(contour),
    )
}

/// A rounded rectangle `w × h` with corner radius `r`, lower-left corner at the origin,
/// counter-clockwise from the middle of the bottom side.
fn rounded_rectangle(w: f64, h: f64, r: f64) -> Vec<Element> {
    let line = |x0, y0, x1, y1| Element::Line(Segment::new(Point::new(x0, y0), Point::new(x1, y1)));
    let corner = |cx, cy, a0: f64| {
        Element::Arc(ArcSegment {
            centre: Point::new(cx, cy),
            radius: r,
            start_angle: a0,
            sweep: PI / 2.0,
        })
    };
    vec![
        line(w / 2.0, 0.0, w - r, 0.0),
        corner(w - r, r, -PI / 2.0),
        line(w, r, w, h - r),
        corner(w - r, h - r, 0.0),
        line(w - r, h, r, h),
        corner(r, h - r, PI / 2.0),
        line(0.0, h - r, 0.0, r),
        corner(r, r, PI),
        line(r, 0.0, w / 2.0, 0.0),
    ]
}

/// `(scrap side, part side, both ways)` for a contour cut, given the contour's signed distance
/// function `sdf` (positive on the scrap side): the path's samples by `sdf`, the other way by
/// distances from the contour's samples to the path's pieces.
fn contour_sides(c: &Contour, sdf: impl Fn(Point) -> f64, cut: &FittedCut) -> (f64, f64, f64) {
    let (mut scrap, mut part) = (0.0f64, 0.0f64);
    for p in path_samples(cut, 24, 200) {
        let d = sdf(p);
        if d > 0.0 {
            scrap = scrap.max(d);
        } else {
            part = part.max(-d);
        }
    }
    let curve: Vec<Point> = c
        .elements()
        .iter()
        .flat_map(|e| {
            (0..=400).map(move |k| match e {
                Element::Line(s) => s.point_at(k as f64 / 400.0),
                Element::Arc(a) => a.point_at(k as f64 / 400.0),
            })
        })
        .collect();
    let back = curve_to_path(&curve, &pieces(cut));
    (scrap, part, scrap.max(part).max(back))
}

/// Signed distance from the rounded rectangle `w × h`, corner radius `r`, lower-left at the
/// origin, positive outside (the usual box formula shrunk by `r`, then grown by it).
fn rounded_rectangle_sdf(w: f64, h: f64, r: f64, p: Point) -> f64 {
    let qx = (p.x - w / 2.0).abs() - (w / 2.0 - r);
    let qy = (p.y - h / 2.0).abs() - (h / 2.0 - r);
    qx.max(0.0).hypot(qy.max(0.0)) + qx.max(qy).min(0.0) - r
}

#[test]
fn contour_arcs_stay_exact_and_polygons_stay_in_the_band() {
    let circle = vec![Element::Arc(ArcSegment::circle(Point::new(10.0, 5.0), 6.0))];
    let hole = contour_cut(circle, FeatureKind::Hole, CutSide::Inside);
    // An outline runs clockwise (scrap outside, on the left of clockwise travel).
    let outline_elements: Vec<Element> = rounded_rectangle(120.0, 80.0, 9.0)
        .iter()
        .rev()
        .map(Element::reversed)
        .collect();
    let outline = contour_cut(outline_elements, FeatureKind::Outline, CutSide::Outside);
    // Scrap inside the hole, outside the outline.
    let hole_sdf = |p: Point| 6.0 - p.distance(Point::new(10.0, 5.0));
    let outline_sdf = |p: Point| rounded_rectangle_sdf(120.0, 80.0, 9.0, p);
    let cases: [(&PlannedCut, &dyn Fn(Point) -> f64); 2] =
        [(&hole, &hole_sdf), (&outline, &outline_sdf)];
    for (cut, sdf) in cases {
        let ExactPath::Contour(c) = &cut.path() else {
            unreachable!()
        };
        // Arcs: every contour arc becomes arcs about its own centre, below 180° each, lines stay
        // lines; the path is the contour (to rounding).
        let fitted = fit_cut(cut, &options(0.01, MoveKind::Arcs, true)).unwrap();
        let (_, _, both) = contour_sides(c, sdf, &fitted);
        assert!(both < 1e-9, "{}: arcs not exact, {both}", cut.name());
        let mut from = fitted.start;
        for m in &fitted.moves {
            if let Move::Arc { to, centre, .. } = *m {
                assert!(m.sweep(from).abs() < PI);
                assert!((from.distance(centre) - to.distance(centre)).abs() < 1e-9);
            }
            from = m.end();
        }
        for tol in [0.1, 0.01, 0.001] {
            for one_sided in [false, true] {
                let fitted = fit_cut(cut, &options(tol, MoveKind::Lines, one_sided)).unwrap();
                let (scrap, part, both) = contour_sides(c, sdf, &fitted);
                let case = format!("{} tol {tol} one-sided {one_sided}", cut.name());
                assert!(both <= tol, "{case}: {both}");
                if one_sided {
                    assert!(scrap <= tol && part <= PART_SIDE_SLACK, "{case}: {part}");
                }
            }
        }
    }
    // The full circle as arcs: three arcs of 120° about the circle's centre.
    let fitted = fit_cut(&hole, &options(0.01, MoveKind::Arcs, false)).unwrap();
    assert_eq!(fitted.moves.len(), 3);
    // The band polygon of a circle of radius R in ±ε: a chord between vertices on R + ε that
    // touches R − ε turns by 2 acos((R − ε)/(R + ε)), so a full turn needs at least
    // π / acos((R − ε)/(R + ε)) chords (derived here); fixing the start on the circle itself costs
    // at most one more.
    for tol in [0.1, 0.01, 0.001] {
        let fitted = fit_cut(&hole, &options(tol, MoveKind::Lines, false)).unwrap();
        let least = PI / ((6.0 - tol) / (6.0 + tol)).acos();
        let n = fitted.moves.len() as f64;
        assert!(
            n >= least && n <= least.ceil() + 1.0,
            "tol {tol}: {n} vs {least}"
        );
    }
}

#[test]
fn unfittable_requests_are_refused_with_a_reason() {
    let e = shapes()[0];
    for tol in [0.0, -1.0, f64::NAN, f64::INFINITY, 1e-6] {
        assert!(matches!(
            fit_cut(&ellipse_cut(e, 3.0), &options(tol, MoveKind::Arcs, false)),
            Err(FitError::BadTolerance(_))
        ));
    }
    // A tool at b²/a = 8 mm or more would leave cusps: not a convex curve to fit.
    assert!(matches!(
        fit_cut(&ellipse_cut(e, 8.0), &options(0.01, MoveKind::Lines, false)),
        Err(FitError::IrregularPath { .. })
    ));
}
