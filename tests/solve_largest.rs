//! The largest ellipse tangent to the four sides of a bay, checked against values published or
//! computed independently of this crate.
//!
//! Reference values: docs/sources.md M2, computed there three ways that agree
//! to at least 8 significant digits: (A) the closed form along the Newton line, (B) a direct
//! 5-parameter maximisation of log(ab) under the four tangency conditions (SLSQP, 40 random
//! starts), (C) the maximum-volume inscribed ellipse (Boyd & Vandenberghe, Convex Optimization,
//! §8.4.2) where it touches all four sides. Published statements used: A. Horwitz, "An area
//! inequality for ellipses inscribed in quadrilaterals", J. Math. Inequalities 4(3) (2010):
//! area ratio ≤ π/4 with equality exactly for parallelograms, touching the side midpoints.

#[path = "support/bay.rs"]
mod bay;
use bay::bay;
use conicut::geom::{Ellipse, Point};
use conicut::solve::{BayOpening, largest_tangent_ellipse};
use proptest::prelude::*;
use std::f64::consts::PI;

fn solve(corners: &[(f64, f64)]) -> BayOpening {
    largest_tangent_ellipse(&bay(corners), 0.0).expect("solvable bay")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

/// Asserts centre, semi-axes and area to 1e-9 relative, and the angle (degrees) when given.
fn assert_ellipse(e: &Ellipse, centre: (f64, f64), a: f64, b: f64, angle_deg: Option<f64>) {
    let c = e.centre();
    assert!(
        (c.x - centre.0).abs() <= 1e-9 * (1.0 + centre.0.abs())
            && (c.y - centre.1).abs() <= 1e-9 * (1.0 + centre.1.abs()),
        "centre {c:?} vs {centre:?}"
    );
    assert!(rel(e.a(), a) < 1e-9, "a = {} vs {a}", e.a());
    assert!(rel(e.b(), b) < 1e-9, "b = {} vs {b}", e.b());
    assert!(rel(e.area(), PI * a * b) < 1e-9);
    if let Some(t) = angle_deg {
        assert!(
            (e.angle().to_degrees() - t).abs() < 1e-7,
            "angle {} vs {t}",
            e.angle().to_degrees()
        );
    }
}

#[test]
fn square_gives_the_incircle() {
    // docs/sources.md M2 row "square": the inscribed circle, radius = half the side.
    let o = solve(&[(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)]);
    assert_ellipse(&o.ellipse, (1.0, 1.0), 1.0, 1.0, None);
}

#[test]
fn rectangle_gives_half_sides() {
    // docs/sources.md M2 row "rectangle": semi-axes are half the sides, area 2π.
    let o = solve(&[(0.0, 0.0), (4.0, 0.0), (4.0, 2.0), (0.0, 2.0)]);
    assert_ellipse(&o.ellipse, (2.0, 1.0), 2.0, 1.0, Some(0.0));
}

#[test]
fn parallelogram_is_the_affine_image_of_the_square_incircle() {
    // docs/sources.md M2 row "parallelogram": a², b² = (21 ± √185)/8, ab = 2, area = π/4 of the
    // parallelogram's (Horwitz 2010), touching the side midpoints.
    let o = solve(&[(0.0, 0.0), (4.0, 0.0), (5.0, 2.0), (1.0, 2.0)]);
    let a = ((21.0 + 185f64.sqrt()) / 8.0).sqrt();
    let b = ((21.0 - 185f64.sqrt()) / 8.0).sqrt();
    assert!(rel(a, 2.07970762695) < 1e-11 && rel(b, 0.961673638200) < 1e-11);
    assert_ellipse(&o.ellipse, (2.5, 1.0), a, b, Some(8.55136448453));
    assert!(rel(o.ellipse.area(), PI / 4.0 * 8.0) < 1e-12);
    let midpoints = [(2.0, 0.0), (4.5, 1.0), (3.0, 2.0), (0.5, 1.0)];
    for (p, m) in o.touch_points.iter().zip(midpoints) {
        assert!(p.distance(Point::new(m.0, m.1)) < 1e-9, "{p:?} vs {m:?}");
    }
}

#[test]
fn isosceles_trapezoid() {
    // docs/sources.md M2 row "isosceles trapezoid": centre = vertex centroid, a = √3, b = 1, with the
    // tangency points tabled there.
    let o = solve(&[(0.0, 0.0), (6.0, 0.0), (4.0, 2.0), (2.0, 2.0)]);
    assert_ellipse(&o.ellipse, (3.0, 1.0), 3f64.sqrt(), 1.0, Some(0.0));
    let touch = [(3.0, 0.0), (4.5, 1.5), (3.0, 2.0), (1.5, 1.5)];
    for (p, m) in o.touch_points.iter().zip(touch) {
        assert!(p.distance(Point::new(m.0, m.1)) < 1e-9);
    }
}

#[test]
fn kite() {
    // docs/sources.md M2 row "kite": t* = (5 − √13)/3.
    let o = solve(&[(-1.0, 0.0), (0.0, -1.0), (3.0, 0.0), (0.0, 1.0)]);
    assert_ellipse(
        &o.ellipse,
        (0.535183758488, 0.0),
        1.37549006933,
        0.681774333275,
        Some(0.0),
    );
    assert!(rel(o.ellipse.area(), 2.94610335916) < 1e-9);
}

#[test]
fn irregular_quadrilaterals() {
    // docs/sources.md M2 rows "irregular_1" (t* = (46 − √1297)/21) and "irregular_2"
    // (t* = (√5779 − 73)/6), with the tangency points tabled there.
    let o = solve(&[(0.0, 0.0), (5.0, 0.0), (4.0, 3.0), (1.0, 4.0)]);
    assert_ellipse(
        &o.ellipse,
        (2.47552922806, 1.73776461403),
        1.99186373579,
        1.67418742395,
        Some(-25.5678182518),
    );
    assert!(rel(o.family_parameter, (46.0 - 1297f64.sqrt()) / 21.0) < 1e-12);
    assert!(rel(o.ellipse.area(), 10.4764362070) < 1e-9);
    let touch = [
        (2.7364421178, 0.0),
        (4.3259478655, 2.0221564035),
        (2.9255958120, 3.3581347293),
        (0.5824457479, 2.3297829917),
    ];
    for (p, m) in o.touch_points.iter().zip(touch) {
        assert!(p.distance(Point::new(m.0, m.1)) < 1e-9, "{p:?} vs {m:?}");
    }

    let o = solve(&[(0.0, 0.0), (7.0, 1.0), (5.0, 5.0), (-1.0, 3.0)]);
    assert_ellipse(
        &o.ellipse,
        (2.75164452333, 2.24835547667),
        3.35663072805,
        1.83652832117,
        Some(8.49828416731),
    );
    assert!(rel(o.family_parameter, (5779f64.sqrt() - 73.0) / 6.0) < 1e-12);
    assert!(rel(o.ellipse.area(), 19.3664968112) < 1e-9);
}

#[test]
fn corner_cut_trapezoid_is_tangent_to_all_four_sides() {
    // docs/sources.md M2 warning case "corner_cut_triangle": the largest ellipse touching all four
    // sides (not the larger one that touches only three): a = 9/(2√2), b = √5, angle 45°.
    let o = solve(&[(1.0, 0.0), (10.0, 0.0), (0.0, 10.0), (0.0, 1.0)]);
    assert_ellipse(
        &o.ellipse,
        (2.75, 2.75),
        9.0 / (2.0 * 2f64.sqrt()),
        5f64.sqrt(),
        Some(45.0),
    );
}

#[test]
fn newton_line_for_the_tabled_quadrilaterals() {
    // docs/sources.md M1: the centre lies on the Newton line x − 2y + 1 = 0 (irregular_1) and
    // x + y = 5 (irregular_2).
    let c = solve(&[(0.0, 0.0), (5.0, 0.0), (4.0, 3.0), (1.0, 4.0)])
        .ellipse
        .centre();
    assert!((c.x - 2.0 * c.y + 1.0).abs() < 1e-12);
    let c = solve(&[(0.0, 0.0), (7.0, 1.0), (5.0, 5.0), (-1.0, 3.0)])
        .ellipse
        .centre();
    assert!((c.x + c.y - 5.0).abs() < 1e-12);
}

/// Discriminant of the line through `p` with direction `d` against the ellipse, relative to
/// `A (C + 1)`: the line meets the ellipse in exactly one point when it is zero.
fn relative_discriminant(e: &Ellipse, p: Point, q: Point) -> f64 {
    let (sxx, sxy, syy) = e.shape_matrix();
    let det = sxx * syy - sxy * sxy;
    // Q = Σ⁻¹
    let (qxx, qxy, qyy) = (syy / det, -sxy / det, sxx / det);
    let quad = |u: (f64, f64), v: (f64, f64)| {
        u.0 * (qxx * v.0 + qxy * v.1) + u.1 * (qxy * v.0 + qyy * v.1)
    };
    let d = (q.x - p.x, q.y - p.y);
    let r = (p.x - e.centre().x, p.y - e.centre().y);
    let (a, b, c1) = (quad(d, d), quad(d, r), quad(r, r));
    let disc = b * b - a * (c1 - 1.0);
    disc.abs() / (a * c1)
}

/// A random convex quadrilateral: four points in order on a randomly stretched, rotated and
/// moved circle, at least 0.3 rad apart.
fn convex_quad() -> impl Strategy<Value = Vec<(f64, f64)>> {
    (
        prop::array::uniform4(0.3f64..1.2),
        0.0f64..6.3,
        0.2f64..5.0,
        -3.0f64..3.0,
        -1.0f64..1.0,
        (-500.0f64..500.0, -500.0f64..500.0),
        0.5f64..200.0,
    )
        .prop_filter("angles sum below a full turn", |(gaps, ..)| {
            gaps.iter().take(3).sum::<f64>() < std::f64::consts::TAU - 0.3
        })
        .prop_map(|(gaps, start, stretch, rot, shear, (tx, ty), scale)| {
            let mut ang = start;
            (0..4)
                .map(|i| {
                    if i > 0 {
                        ang += gaps[i - 1];
                    }
                    let (x, y) = (ang.cos() * stretch + shear * ang.sin(), ang.sin());
                    let (s, c) = rot.sin_cos();
                    (scale * (c * x - s * y) + tx, scale * (s * x + c * y) + ty)
                })
                .collect()
        })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(1000))]

    /// Every side line meets the solved ellipse in exactly one point, on the side itself; the
    /// centre lies on the line through the diagonals' midpoints (Newton's theorem); the area is at
    /// most π/4 of the quadrilateral's (Horwitz 2010).
    #[test]
    fn solved_ellipse_touches_every_side_once(q in convex_quad()) {
        let o = solve(&q);
        let e = &o.ellipse;
        let p: Vec<Point> = q.iter().map(|&(x, y)| Point::new(x, y)).collect();
        for i in 0..4 {
            let (s, t) = (p[i], p[(i + 1) % 4]);
            let disc = relative_discriminant(e, s, t);
            prop_assert!(disc < 1e-9, "side {i}: relative discriminant {disc}");
        }
        for (i, tp) in o.touch_points.iter().enumerate() {
            // The touching point lies between the side's end points (the corners are stored CCW).
            let (s, t) = (o.solved_corners[i], o.solved_corners[(i + 1) % 4]);
            let along = (*tp - s).dot(t - s) / (t - s).length_squared();
            prop_assert!(along > -1e-9 && along < 1.0 + 1e-9, "touch point off side {i}: {along}");
        }
        let m1 = p[0].midpoint(p[2]);
        let m2 = p[1].midpoint(p[3]);
        let c = e.centre();
        let scale = (m2 - m1).length() * (c - m1).length() + 1e-12 * (p[0] - p[2]).length_squared();
        prop_assert!(((c - m1).cross(m2 - m1)).abs() <= 1e-9 * scale.max(1e-300));
        let area_q: f64 = (0..4).map(|i| 0.5 * p[i].to_vec().cross(p[(i + 1) % 4].to_vec())).sum::<f64>().abs();
        prop_assert!(e.area() <= PI / 4.0 * area_q * (1.0 + 1e-12));
    }
}

/// `largest-inside` on a bay drawn as a fine polyline circle: solved up to 4096 sides (its
/// incircle), refused in words beyond.
#[test]
fn largest_inside_takes_up_to_4096_sides_and_says_so_beyond() {
    use conicut::solve::{Rule, solve_bay};
    let circle = |n: usize| -> Vec<(f64, f64)> {
        (0..n)
            .map(|k| {
                let t = 2.0 * PI * k as f64 / n as f64;
                (50.0 * t.cos(), 50.0 * t.sin())
            })
            .collect()
    };
    let s = solve_bay(&bay(&circle(4096)), &Rule::LargestInside, 0.0).unwrap();
    let r = 50.0 * (PI / 4096.0).cos();
    assert!(rel(s.solution.ellipse().a(), r) < 1e-9 && rel(s.solution.ellipse().b(), r) < 1e-9);
    let e = solve_bay(&bay(&circle(4097)), &Rule::LargestInside, 0.0).unwrap_err();
    assert!(
        e.reason.contains("4097 sides") && e.reason.contains("up to 4096 sides"),
        "{}",
        e.reason
    );
}
