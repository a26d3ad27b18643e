//! One ellipse, side by side with the general-purpose flatteners `lyon_geom` and `kurbo` at the
//! same tolerance. Run with `cargo bench --bench flatten`; the table is printed to standard
//! error, then criterion times each.
//!
//! For every shape (50×20, 50×49, 100×10, 30×3 mm), offset (0, and 3 mm inside: the tool-centre
//! path of a 6 mm cutter, which only conicut computes; the flatteners get the ellipse itself)
//! and tolerance (0.1 … 0.0001 mm): the moves, the moves over the theoretical minimum (lines
//! `∫√κ ds / √(16ε)`, arcs `∫|κ′|^{1/3} ds / (72√3 ε)^{1/3}`, from `tests/support/
//! fit_estimates.rs`), the deviation measured against the exact curve over the tolerance (by
//! `fit::measure_deviation`, both ways), and the time per ellipse (the fastest of five runs of
//! enough repetitions to last about 20 ms). conicut's time includes its own measurement of the
//! fit, which the flatteners do not make.
//!
//! `kurbo` turns the ellipse into cubic Béziers first (`path_elements` at a tenth of the
//! tolerance) and flattens those (at nine tenths); `lyon_geom` flattens the elliptic arc
//! directly.

#[path = "../tests/support/fit_estimates.rs"]
mod fit_estimates;

use conicut::fit::{FitOptions, MoveKind, fit_cut, measure_deviation};
use conicut::geom::{Ellipse, ExactPath, Move, Point};
use conicut::plan::{FeatureKind, PlannedCut};
use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use kurbo::Shape;
use std::hint::black_box;
use std::time::Instant;

const SHAPES: [(f64, f64); 4] = [(50.0, 20.0), (50.0, 49.0), (100.0, 10.0), (30.0, 3.0)];
const TOLERANCES: [f64; 4] = [0.1, 0.01, 0.001, 0.0001];

fn ellipse(a: f64, b: f64) -> Ellipse {
    Ellipse::new(Point::ORIGIN, a, b, 0.0).expect("a valid ellipse")
}

fn conicut_fit(e: Ellipse, inset: f64, tol: f64, moves: MoveKind) -> Option<(Point, Vec<Move>)> {
    let cut = PlannedCut::around_ellipse("bench", FeatureKind::Opening, e, inset);
    let options = FitOptions {
        tolerance: tol,
        moves,
        scrap_side_only: false,
    };
    fit_cut(&cut, &options).ok().map(|f| (f.start, f.moves))
}

fn lyon_points(a: f64, b: f64, tol: f64) -> Vec<Point> {
    let arc = lyon_geom::Arc {
        center: lyon_geom::point(0.0, 0.0),
        radii: lyon_geom::vector(a, b),
        start_angle: lyon_geom::Angle::radians(0.0),
        sweep_angle: lyon_geom::Angle::radians(std::f64::consts::TAU),
        x_rotation: lyon_geom::Angle::radians(0.0),
    };
    let mut out = vec![Point::new(a, 0.0)];
    arc.for_each_flattened(tol, &mut |s: &lyon_geom::LineSegment<f64>| {
        out.push(Point::new(s.to.x, s.to.y));
    });
    out
}

fn kurbo_points(a: f64, b: f64, tol: f64) -> Vec<Point> {
    let e = kurbo::Ellipse::new((0.0, 0.0), (a, b), 0.0);
    let mut out = Vec::new();
    kurbo::flatten(e.path_elements(0.1 * tol), 0.9 * tol, |el| match el {
        kurbo::PathEl::MoveTo(p) | kurbo::PathEl::LineTo(p) => out.push(Point::new(p.x, p.y)),
        _ => {}
    });
    out
}

/// A polyline as line moves from its first point.
fn as_moves(points: &[Point]) -> (Point, Vec<Move>) {
    let moves = points[1..].iter().map(|&to| Move::Line { to }).collect();
    (points[0], moves)
}

/// Seconds per call: the fastest of five runs of enough calls to last about 20 ms.
fn time_per_call(mut f: impl FnMut()) -> f64 {
    let t = Instant::now();
    f();
    let once = t.elapsed().as_secs_f64().max(1e-7);
    let reps = ((0.02 / once) as usize).clamp(1, 100_000);
    (0..5)
        .map(|_| {
            let t = Instant::now();
            for _ in 0..reps {
                f();
            }
            t.elapsed().as_secs_f64() / reps as f64
        })
        .fold(f64::INFINITY, f64::min)
}

fn row(label: &str, moves: usize, minimum: f64, dev: f64, tol: f64, seconds: f64) -> String {
    format!(
        "  {label:<16} {moves:>6} {:>7.3} {:>8.3} {:>10.4}",
        moves as f64 / minimum,
        dev / tol,
        seconds * 1e3
    )
}

fn print_table() {
    eprintln!(
        "  {:<16} {:>6} {:>7} {:>8} {:>10}",
        "", "moves", "÷ min", "dev÷tol", "ms/ellipse"
    );
    for (a, b) in SHAPES {
        for inset in [0.0, 3.0] {
            if inset >= b * b / a {
                eprintln!(
                    "{a}×{b} inset {inset}: no parallel curve (b²/a = {:.3} mm)",
                    b * b / a
                );
                continue;
            }
            let e = ellipse(a, b);
            let exact = ExactPath::EllipseParallel {
                ellipse: e,
                inset,
                start: 0.0,
                clockwise: false,
            };
            for tol in TOLERANCES {
                eprintln!("{a}×{b} mm, inset {inset} mm, tolerance {tol} mm");
                let lines_min = fit_estimates::band_lines(a, b, inset, 2.0 * tol);
                let arcs_min = fit_estimates::spline_arcs(a, b, inset, tol);
                for (label, kind, min) in [
                    ("conicut arcs", MoveKind::Arcs, arcs_min),
                    ("conicut lines", MoveKind::Lines, lines_min),
                ] {
                    match conicut_fit(e, inset, tol, kind) {
                        Some((start, moves)) => {
                            let dev = measure_deviation(start, &moves, &exact);
                            let t = time_per_call(|| {
                                black_box(conicut_fit(e, inset, tol, kind));
                            });
                            eprintln!("{}", row(label, moves.len(), min, dev, tol, t));
                        }
                        None => eprintln!("  {label:<16} refused"),
                    }
                }
                if inset == 0.0 {
                    for (label, flatten) in [
                        ("lyon_geom", lyon_points as fn(f64, f64, f64) -> Vec<Point>),
                        ("kurbo", kurbo_points),
                    ] {
                        let pts = flatten(a, b, tol);
                        let (start, moves) = as_moves(&pts);
                        let dev = measure_deviation(start, &moves, &exact);
                        let t = time_per_call(|| {
                            black_box(flatten(a, b, tol));
                        });
                        eprintln!("{}", row(label, moves.len(), lines_min, dev, tol, t));
                    }
                }
            }
        }
    }
}

fn side_by_side(c: &mut Criterion) {
    print_table();
    let mut group = c.benchmark_group("flatten_50x20");
    for tol in TOLERANCES {
        let e = ellipse(50.0, 20.0);
        group.bench_with_input(BenchmarkId::new("conicut_arcs", tol), &tol, |bench, &t| {
            bench.iter(|| conicut_fit(e, 0.0, t, MoveKind::Arcs))
        });
        group.bench_with_input(BenchmarkId::new("conicut_lines", tol), &tol, |bench, &t| {
            bench.iter(|| conicut_fit(e, 0.0, t, MoveKind::Lines))
        });
        group.bench_with_input(BenchmarkId::new("lyon_geom", tol), &tol, |bench, &t| {
            bench.iter(|| lyon_points(50.0, 20.0, t))
        });
        group.bench_with_input(BenchmarkId::new("kurbo", tol), &tol, |bench, &t| {
            bench.iter(|| kurbo_points(50.0, 20.0, t))
        });
    }
    group.finish();
}

criterion_group!(benches, side_by_side);
criterion_main!(benches);
