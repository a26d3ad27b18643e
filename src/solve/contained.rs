//! The largest ellipse that fits inside a convex bay, whether or not it touches every side.
//!
//! The largest ellipse inside a convex polygon (its John ellipse) is unique and touches at least
//! three sides (John's theorem: at least n + 1 = 3 contact points in the plane). If it touches
//! exactly three, it is the largest ellipse inside the triangle those three side lines bound,
//! i.e. that triangle's Steiner inellipse (the maximum-area inellipse of a triangle); if it
//! touches four or more, it is the largest ellipse touching those four sides. So it is found
//! exactly by trying every set of three and four sides whose lines bound a triangle or a
//! quadrilateral, keeping the candidates that lie inside the whole bay, and taking the largest.
//! Sources: John ellipse as maximum-volume inscribed ellipsoid, Boyd & Vandenberghe, Convex
//! Optimization §8.4.2; Steiner inellipse as the John ellipse of a triangle, Wikipedia "Steiner
//! inellipse"; the worked cases in docs/sources.md M2 (corner-cut warning cases).

use super::quad_family::TangentFamily;
use super::triangle::steiner_inellipse;
use crate::geom::{Ellipse, Line, Point};

/// How far outside a side an ellipse may reach and still count as inside (relative to the bay's
/// size): covers rounding in the support function.
pub const INSIDE_RELATIVE: f64 = 1e-9;

/// The largest contained ellipse and which sides it touches (indices of the sides, side `i`
/// running from corner `i` to corner `i + 1`).
#[derive(Debug, Clone, PartialEq)]
pub struct Contained {
    pub ellipse: Ellipse,
    pub touching: Vec<usize>,
}

/// The largest ellipse inside the counter-clockwise convex polygon `corners`.
pub fn largest_contained(corners: &[Point]) -> Option<Contained> {
    let n = corners.len();
    let lines: Vec<Line> = (0..n)
        .filter_map(|i| Line::through(corners[i], corners[(i + 1) % n]))
        .collect();
    if lines.len() != n || n < 3 {
        return None;
    }
    let size = corners
        .iter()
        .map(|p| p.distance(corners[0]))
        .fold(0.0, f64::max);
    let mut best: Option<Ellipse> = None;
    let mut consider = |e: Ellipse| {
        if fits(&e, &lines, size) && best.is_none_or(|b| e.area() > b.area()) {
            best = Some(e);
        }
    };
    for i in 0..n {
        for j in i + 1..n {
            for k in j + 1..n {
                if let Some(Ok(e)) = bounded_region(&lines, &[i, j, k])
                    .map(|t| steiner_inellipse([t[0], t[1], t[2]]))
                {
                    consider(e);
                }
                for l in k + 1..n {
                    if let Some(q) = bounded_region(&lines, &[i, j, k, l]) {
                        let fam = TangentFamily::new([q[0], q[1], q[2], q[3]]);
                        if let Some(e) = fam
                            .largest_area_parameter()
                            .and_then(|t| fam.ellipse(t).ok())
                        {
                            consider(e);
                        }
                    }
                }
            }
        }
    }
    let ellipse = best?;
    let touching = (0..n)
        .filter(|&i| slack(&ellipse, &lines[i]) <= 1e-7 * size)
        .collect();
    Some(Contained { ellipse, touching })
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

/// The corners of the region bounded by the chosen side lines (taken in polygon order), when
/// it is a bounded polygon with exactly that many sides: consecutive lines meet at a corner that
/// lies strictly inside every other chosen half-plane.
fn bounded_region(lines: &[Line], chosen: &[usize]) -> Option<Vec<Point>> {
    let m = chosen.len();
    let mut pts = Vec::with_capacity(m);
    for s in 0..m {
        let (a, b) = (&lines[chosen[s]], &lines[chosen[(s + 1) % m]]);
        pts.push(a.intersection(b)?);
    }
    // Corner s lies on lines s and s+1; it must be strictly inside all the others.
    for (s, p) in pts.iter().enumerate() {
        for (r, &li) in chosen.iter().enumerate() {
            if r == s || r == (s + 1) % m {
                continue;
            }
            if lines[li].signed_distance(*p) <= 0.0 {
                return None;
            }
        }
    }
    // Counter-clockwise and convex with positive area.
    let area: f64 = (0..m)
        .map(|s| pts[s].to_vec().cross(pts[(s + 1) % m].to_vec()))
        .sum();
    if area <= 0.0 {
        return None;
    }
    // The corners are listed line by line; the region's corner between lines s and s+1 comes
    // after side s, so rotate to start the polygon at the corner that begins side 0.
    let mut q = pts.clone();
    q.rotate_right(1);
    Some(q)
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
