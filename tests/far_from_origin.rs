//! Far from the drawing's origin every solver gives the answer it gives near it: random bays
//! (three to six sides, every rule) and random point sets (five points; fits to noisy points,
//! algebraic and geometric), moved by up to 10 km, solve to ellipses moved by the same amount,
//! semi-axes to 1e-12 relative, the turn to 1e-12 of the size (the turn θ times (a − b) / a: how
//! far it moves the curve) and the centre to 1e-12 of the size (plus the rounding of writing a
//! coordinate 10 km out, a few times 2⁻²⁹ mm).
//!
//! The corners and points lie on a grid of 2⁻²⁰ mm and the moves are whole millimetres, so the
//! moved input is exactly the same shape (nothing is lost in writing it down): any difference is
//! the solver's own.
//!
//! Cases: `CONICUT_PROPTEST_CASES` (default 6 in CI; the long run sets it in the thousands).

use conicut::chain::Bay;
use conicut::geom::{Ellipse, Point, Vec2};
use conicut::solve::{
    Rule, conics_through_and_tangent, geometric_fit, least_squares_ellipse, solve_bay,
};
use proptest::prelude::*;

fn cases() -> u32 {
    std::env::var("CONICUT_PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(6)
        * 8
}

const GRID: f64 = 1048576.0; // 2²⁰

fn on_grid(v: f64) -> f64 {
    (v * GRID).round() / GRID
}

/// Whether two ellipses are the same up to the move `shift`.
fn moved_with(here: &Ellipse, there: &Ellipse, shift: Vec2) -> Result<(), String> {
    let rel = |x: f64, y: f64| (x / y - 1.0).abs();
    let far = shift.length().max(1.0);
    let off = (there.centre() - shift).distance(here.centre());
    let turn = (there.angle() - here.angle()).rem_euclid(std::f64::consts::PI);
    let turn = turn.min(std::f64::consts::PI - turn);
    // A turn by θ moves the curve by about (a − b)·θ: that, relative to the size, is compared
    // (the angle of a near-circle is ill-defined by itself).
    let turned = turn * (here.a() - here.b()) / here.a();
    if rel(there.a(), here.a()) > 1e-12
        || rel(there.b(), here.b()) > 1e-12
        || off > 1e-12 * here.a() + 8.0 * f64::EPSILON * far
        || turned > 1e-12
    {
        return Err(format!(
            "near {here:?}\nfar {there:?} (moved by {shift:?}): centre off by {off:e} mm"
        ));
    }
    Ok(())
}

/// A convex polygon of `n` corners on an ellipse of semi-axes 5–100 mm at random sorted angles,
/// its corners on the grid.
fn polygon(n: usize) -> impl Strategy<Value = Vec<(f64, f64)>> {
    (
        5.0..100.0f64,
        0.2..1.0f64,
        0.0..std::f64::consts::TAU,
        proptest::collection::vec(0.0..1.0f64, n),
    )
        .prop_map(move |(a, ratio, turn, mut u)| {
            u.sort_by(f64::total_cmp);
            let (c, s) = (turn.cos(), turn.sin());
            u.iter()
                .enumerate()
                // Each corner in its own slice of the turn, so the polygon stays clearly convex.
                .map(|(k, f)| {
                    let t = std::f64::consts::TAU * (k as f64 + 0.2 + 0.6 * f) / n as f64;
                    let (x, y) = (a * t.cos(), a * ratio * t.sin());
                    (on_grid(c * x - s * y), on_grid(s * x + c * y))
                })
                .collect()
        })
}

fn shift() -> impl Strategy<Value = Vec2> {
    (-10_000_000i64..=10_000_000, -10_000_000i64..=10_000_000)
        .prop_map(|(x, y)| Vec2::new(x as f64, y as f64))
}

fn rules(corners: usize, size: f64) -> Vec<Rule> {
    let mut r = vec![Rule::LargestInside];
    match corners {
        3 => r.extend([Rule::Largest]),
        4 => r.extend([
            Rule::Largest,
            Rule::Roundest,
            Rule::Area(0.3 * size * size),
            Rule::SemiAxesSquared(0.4 * size * size),
            // On the grid too, so that the moved point is exactly the same point.
            Rule::CentreNear(Point::new(on_grid(0.1 * size), on_grid(-0.05 * size))),
        ]),
        5 => r.push(Rule::Largest),
        _ => {}
    }
    r
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(), ..ProptestConfig::default() })]

    #[test]
    fn bays_solve_the_same_far_away(
        corners in (3usize..=6).prop_flat_map(polygon),
        shift in shift(),
        margin in prop_oneof![Just(0.0), 0.1..2.0f64],
    ) {
        let margin = on_grid(margin);
        let pts: Vec<Point> = corners.iter().map(|&(x, y)| Point::new(x, y)).collect();
        let Ok(here_bay) = Bay::new("bay 1", "B", &pts, &[]) else {
            return Ok(());
        };
        let far: Vec<Point> = pts.iter().map(|p| *p + shift).collect();
        let there_bay = Bay::new("bay 1", "B", &far, &[]).expect("the same shape, moved");
        let size = pts.iter().map(|p| p.distance(pts[0])).fold(0.0, f64::max);
        for rule in rules(here_bay.corners().len(), size) {
            let far_rule = match &rule {
                Rule::CentreNear(p) => Rule::CentreNear(*p + shift),
                r => *r,
            };
            let here = solve_bay(&here_bay, &rule, margin);
            let there = solve_bay(&there_bay, &far_rule, margin);
            match (here, there) {
                (Ok(h), Ok(t)) => {
                    let (h, t) = (h.solution.ellipse(), t.solution.ellipse());
                    prop_assert!(moved_with(&h, &t, shift).is_ok(), "{rule:?}: {}",
                        moved_with(&h, &t, shift).unwrap_err());
                }
                (Err(_), Err(_)) => {}
                (h, t) => prop_assert!(false, "{rule:?}: near {:?}, far {:?}", h.is_ok(), t.is_ok()),
            }
        }
    }

    #[test]
    fn point_sets_solve_and_fit_the_same_far_away(
        corners in polygon(5),
        noisy in polygon(40),
        shift in shift(),
    ) {
        // Five points: the one conic through them.
        let pts: Vec<Point> = corners.iter().map(|&(x, y)| Point::new(x, y)).collect();
        let far: Vec<Point> = pts.iter().map(|p| *p + shift).collect();
        let here = conics_through_and_tangent(&pts, &[]).unwrap();
        let there = conics_through_and_tangent(&far, &[]).unwrap();
        prop_assert_eq!(here.len(), there.len());
        for (h, t) in here.iter().zip(&there) {
            if let (Ok(h), Ok(t)) = (h.ellipse, t.ellipse) {
                prop_assert!(moved_with(&h, &t, shift).is_ok(), "{}", moved_with(&h, &t, shift).unwrap_err());
            }
        }
        // Three of them and two lines below and left of them (axis-parallel, so that the moved
        // lines are exactly the same lines: a line is held as n·x = c, and a tilted one moved 10
        // km is rounded in c): every conic through the three touching the two.
        let (lo_x, lo_y) = pts[..3]
            .iter()
            .fold((f64::INFINITY, f64::INFINITY), |(x, y), p| (x.min(p.x), y.min(p.y)));
        let lines = |v: Vec2| {
            let (x, y) = (lo_x - 3.0 + v.x, lo_y - 2.0 + v.y);
            [
                conicut::geom::Line::through(Point::new(x, y), Point::new(x, y + 1.0)).unwrap(),
                conicut::geom::Line::through(Point::new(x, y), Point::new(x + 1.0, y)).unwrap(),
            ]
        };
        let here = conics_through_and_tangent(&pts[..3], &lines(Vec2::new(0.0, 0.0)));
        let there = conics_through_and_tangent(&far[..3], &lines(shift));
        if let (Ok(here), Ok(there)) = (here, there) {
            prop_assert_eq!(here.len(), there.len());
            for (h, t) in here.iter().zip(&there) {
                if let (Ok(h), Ok(t)) = (h.ellipse, t.ellipse) {
                    prop_assert!(moved_with(&h, &t, shift).is_ok(), "3+2: {}",
                        moved_with(&h, &t, shift).unwrap_err());
                }
            }
        }
        // Forty points around a polygon's corners: both least-squares fits.
        let pts: Vec<Point> = noisy.iter().map(|&(x, y)| Point::new(x, y)).collect();
        let far: Vec<Point> = pts.iter().map(|p| *p + shift).collect();
        let (Ok(h), Ok(t)) = (least_squares_ellipse(&pts), least_squares_ellipse(&far)) else {
            return Ok(());
        };
        prop_assert!(moved_with(&h.ellipse, &t.ellipse, shift).is_ok(), "algebraic: {}",
            moved_with(&h.ellipse, &t.ellipse, shift).unwrap_err());
        let (gh, gt) = (geometric_fit(&pts, &h.ellipse, false), geometric_fit(&far, &t.ellipse, false));
        prop_assert!(moved_with(&gh.ellipse, &gt.ellipse, shift).is_ok(), "geometric: {}",
            moved_with(&gh.ellipse, &gt.ellipse, shift).unwrap_err());
    }
}
