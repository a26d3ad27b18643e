//! Solver speed. Run with `cargo bench --bench solve`.
//!
//! * `four_sided_largest`: the largest ellipse tangent to the four sides of the irregular
//!   quadrilateral (0,0), (5,0), (4,3), (1,4), no margin (target: ≤ 500 ns per solve).
//! * `three_points_two_lines`: every conic through (1,7), (8,1), (9,8) touching x = 0 and y = 0,
//!   the worked example of docs/sources.md M5 (four real ellipses).
//! * `least_squares_100`: the least-squares ellipse through 100 points measured round a 40 × 15 mm
//!   ellipse with ±0.02 mm of deterministic scatter (docs/sources.md M9's method).
//! * `geometric_fit_100`: the geometric (orthogonal-distance) fit of the same points, started
//!   from the algebraic one.
//! * `john_6` and `john_64`: the largest ellipse inside a convex hexagon and 64-gon (corners on
//!   a 50 × 20 mm ellipse at uneven angles): barrier method and exact polish.

use conicut::chain::Bay;
use conicut::geom::{Line, Point};
use conicut::solve::conics_through_and_tangent;
use conicut::solve::largest_tangent_ellipse;
use conicut::solve::least_squares_ellipse;
use conicut::solve::{geometric_fit, john_ellipse};
use criterion::{Criterion, criterion_group, criterion_main};
use std::hint::black_box;

fn four_sided_largest(c: &mut Criterion) {
    let bay = Bay::new(
        "bay 1",
        "BAYS",
        &[
            Point::new(0.0, 0.0),
            Point::new(5.0, 0.0),
            Point::new(4.0, 3.0),
            Point::new(1.0, 4.0),
        ],
        &[],
    )
    .unwrap();
    c.bench_function("four_sided_largest", |b| {
        b.iter(|| largest_tangent_ellipse(black_box(&bay), black_box(0.0)).unwrap())
    });
}

fn three_points_two_lines(c: &mut Criterion) {
    let points = [
        Point::new(1.0, 7.0),
        Point::new(8.0, 1.0),
        Point::new(9.0, 8.0),
    ];
    let lines = [
        Line::through(Point::new(0.0, 0.0), Point::new(0.0, 1.0)).unwrap(),
        Line::through(Point::new(0.0, 0.0), Point::new(1.0, 0.0)).unwrap(),
    ];
    c.bench_function("three_points_two_lines", |b| {
        b.iter(|| conics_through_and_tangent(black_box(&points), black_box(&lines)).unwrap())
    });
}

/// 100 points measured round a 40 × 15 mm ellipse with ±0.02 mm of deterministic scatter.
fn measured_points() -> Vec<Point> {
    (0..100)
        .map(|k| {
            let t = std::f64::consts::TAU * k as f64 / 100.0;
            let wobble = 0.02 * (7.3 * k as f64).sin();
            Point::new(
                12.0 + (40.0 + wobble) * t.cos(),
                -3.0 + (15.0 + wobble) * t.sin(),
            )
        })
        .collect()
}

fn least_squares_100(c: &mut Criterion) {
    let points = measured_points();
    c.bench_function("least_squares_100", |b| {
        b.iter(|| least_squares_ellipse(black_box(&points)).unwrap())
    });
}

fn geometric_fit_100(c: &mut Criterion) {
    let points = measured_points();
    let start = least_squares_ellipse(&points).unwrap().ellipse;
    c.bench_function("geometric_fit_100", |b| {
        b.iter(|| geometric_fit(black_box(&points), black_box(&start), false))
    });
}

fn polygon(n: usize) -> Vec<Point> {
    (0..n)
        .map(|k| {
            let t = std::f64::consts::TAU * (k as f64 + 0.3 * (1.7 * k as f64).sin()) / n as f64;
            Point::new(50.0 * t.cos(), 20.0 * t.sin())
        })
        .collect()
}

fn john(c: &mut Criterion) {
    for n in [6, 64] {
        let p = polygon(n);
        c.bench_function(&format!("john_{n}"), |b| {
            b.iter(|| john_ellipse(black_box(&p)).unwrap())
        });
    }
}

criterion_group!(
    benches,
    four_sided_largest,
    three_points_two_lines,
    least_squares_100,
    geometric_fit_100,
    john
);
criterion_main!(benches);
