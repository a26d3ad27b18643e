//! Small helpers of the conic tests (`tests/conic_constraints.rs`, `tests/conic_properties.rs`):
//! points, lines from `a x + b y + c = 0`, tangents of an ellipse, and the support-function
//! residual of docs/sources.md M0.

#![allow(dead_code)]

use conicut::geom::{Ellipse, Line, Point, Vec2};

pub fn p(x: f64, y: f64) -> Point {
    Point::new(x, y)
}

/// The line `a x + b y + c = 0`.
pub fn line_abc(a: f64, b: f64, c: f64) -> Line {
    let len = a.hypot(b);
    let n = Vec2::new(a / len, b / len);
    let q = Point::ORIGIN + n * (-c / len);
    Line::through(q, q + n.perp()).unwrap()
}

/// The tangent line of `e` at eccentric anomaly `t`.
pub fn tangent(e: &Ellipse, t: f64) -> Line {
    let q = e.point(t);
    Line::through(q, q + e.derivative(t)).unwrap()
}

pub fn deg(x: f64) -> f64 {
    x.to_radians()
}

/// Residual of the support-function test (docs/sources.md M0), independent of the conic code: the
/// distance from the line to the nearer of the two tangents of `e` with the same normal.
pub fn support_gap(e: &Ellipse, l: &Line) -> f64 {
    let n = l.normal();
    let c = n.dot(e.centre().to_vec());
    let h = e.support(n);
    (c + h - l.offset()).abs().min((c - h - l.offset()).abs())
}

pub fn assert_close(got: f64, want: f64, tol: f64, what: &str) {
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got}, want {want} (tolerance {tol})"
    );
}
