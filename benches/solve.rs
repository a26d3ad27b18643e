//! Solver speed. Run with `cargo bench --bench solve`.
//!
//! * `four_sided_largest`: the largest ellipse tangent to the four sides of the irregular
//!   quadrilateral (0,0), (5,0), (4,3), (1,4), no margin (target: ≤ 500 ns per solve).
//! * `three_points_two_lines`: every conic through (1,7), (8,1), (9,8) touching x = 0 and y = 0,
//!   the worked example of docs/sources.md M5 (four real ellipses).

use conicut::chain::Bay;
use conicut::geom::{Line, Point};
use conicut::solve::conics_through_and_tangent;
use conicut::solve::largest_tangent_ellipse;
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

criterion_group!(benches, four_sided_largest, three_points_two_lines);
criterion_main!(benches);
