//! The largest ellipse that fits inside a convex bay, whether or not it touches every side: the
//! polygon's John ellipse ([`super::john`]), which touches three, four or five sides.

use super::john::{JohnResiduals, john_ellipse};
use crate::geom::{Ellipse, Line, Point};

/// How far outside a side an ellipse may reach and still count as inside (relative to the bay's
/// size): covers rounding in the support function.
pub const INSIDE_RELATIVE: f64 = 1e-9;

/// The largest contained ellipse, which sides it touches (indices of the sides, side `i`
/// running from corner `i` to corner `i + 1`) and how well it meets its conditions.
#[derive(Debug, Clone, PartialEq)]
pub struct Contained {
    pub ellipse: Ellipse,
    pub touching: Vec<usize>,
    pub residuals: JohnResiduals,
}

/// The largest ellipse inside the counter-clockwise convex polygon `corners`.
pub fn largest_contained(corners: &[Point]) -> Option<Contained> {
    let j = john_ellipse(corners)?;
    Some(Contained {
        ellipse: j.ellipse,
        touching: j.touching,
        residuals: j.residuals,
    })
}

/// How far the ellipse stays inside the line's half-plane (the line's normal points in):
/// `n_in·c − h(n_in)`, ≥ 0 when inside.
fn slack(e: &Ellipse, line: &Line) -> f64 {
    line.signed_distance(e.centre()) - e.support(line.normal())
}

/// Whether `e` lies inside the counter-clockwise convex polygon `corners` (up to
/// [`INSIDE_RELATIVE`] of its size).
pub fn lies_inside(e: &Ellipse, corners: &[Point]) -> bool {
    let n = corners.len();
    let size = corners
        .iter()
        .map(|p| p.distance(corners[0]))
        .fold(0.0, f64::max);
    let lines: Vec<Line> = (0..n)
        .filter_map(|i| Line::through(corners[i], corners[(i + 1) % n]))
        .collect();
    lines.len() == n && fits(e, &lines, size)
}

fn fits(e: &Ellipse, lines: &[Line], size: f64) -> bool {
    lines.iter().all(|l| slack(e, l) >= -INSIDE_RELATIVE * size)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pts(v: &[(f64, f64)]) -> Vec<Point> {
        v.iter().map(|&(x, y)| Point::new(x, y)).collect()
    }

    #[test]
    fn corner_cut_quadrilaterals_keep_the_triangle_steiner_ellipse() {
        // docs/sources.md M2 warning cases: the largest contained ellipse of (1,0),(10,0),(0,10),
        // (0,1) and of (1,0),(10,0),(0,10),(0,2) is the Steiner inellipse of (0,0),(10,0),(0,10):
        // centre (10/3, 10/3), a = 10/√6, b = 10/(3√2), area 30.2299894040, touching 3 sides.
        for q in [
            pts(&[(1.0, 0.0), (10.0, 0.0), (0.0, 10.0), (0.0, 1.0)]),
            pts(&[(1.0, 0.0), (10.0, 0.0), (0.0, 10.0), (0.0, 2.0)]),
        ] {
            let c = largest_contained(&q).unwrap();
            assert!((c.ellipse.area() - 30.2299894040).abs() < 1e-9);
            assert!((c.ellipse.a() - 10.0 / 6f64.sqrt()).abs() < 1e-12);
            assert!((c.ellipse.b() - 10.0 / (3.0 * 2f64.sqrt())).abs() < 1e-12);
            assert_eq!(c.touching.len(), 3);
        }
    }

    #[test]
    fn square_gives_the_incircle_touching_all_four() {
        let c = largest_contained(&pts(&[(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)])).unwrap();
        assert!((c.ellipse.a() - 1.0).abs() < 1e-12 && (c.ellipse.b() - 1.0).abs() < 1e-12);
        assert_eq!(c.touching.len(), 4);
    }

    #[test]
    fn irregular_quadrilateral_touching_four_sides_agrees_with_the_family() {
        // docs/sources.md M2: for irregular_1 the largest contained ellipse (column C) equals the
        // largest touching all four sides, area 10.4764362070.
        let c = largest_contained(&pts(&[(0.0, 0.0), (5.0, 0.0), (4.0, 3.0), (1.0, 4.0)])).unwrap();
        assert!((c.ellipse.area() - 10.4764362070).abs() < 1e-9);
        assert_eq!(c.touching.len(), 4);
    }

    #[test]
    fn inside_test_sees_an_ellipse_poking_out() {
        let sq = pts(&[(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)]);
        let fits = Ellipse::new(Point::new(1.0, 1.0), 1.0, 0.5, 0.3).unwrap();
        let pokes = Ellipse::new(Point::new(1.0, 1.0), 1.2, 0.5, 0.0).unwrap();
        assert!(lies_inside(&fits, &sq));
        assert!(!lies_inside(&pokes, &sq));
    }

    #[test]
    fn regular_hexagon_gives_its_incircle() {
        // A regular hexagon's largest inscribed ellipse is its incircle (symmetry and uniqueness of
        // the John ellipse), radius = apothem = √3/2 for unit circumradius.
        let hex: Vec<Point> = (0..6)
            .map(|k| {
                let a = std::f64::consts::PI / 3.0 * k as f64;
                Point::new(a.cos(), a.sin())
            })
            .collect();
        let c = largest_contained(&hex).unwrap();
        assert!((c.ellipse.a() - 3f64.sqrt() / 2.0).abs() < 1e-9);
        assert!((c.ellipse.b() - 3f64.sqrt() / 2.0).abs() < 1e-9);
    }
}
