//! Ellipses touching the three sides of a triangle.
//!
//! The tangent ellipses form a two-parameter family, one for each centre strictly inside the
//! medial triangle (the triangle of the side midpoints). With the centre `c` fixed, tangency to a
//! side line `n·x = β` (unit outward `n`) is `nᵀΣn = (β − n·c)²` (the support function), which
//! is *linear* in the three entries of the shape matrix Σ: three sides give a 3×3 linear system
//! with one solution, an ellipse exactly when Σ comes out positive definite.
//!
//! The largest is the Steiner inellipse: centred at the centroid `G`, touching the sides at
//! their midpoints, area `π/(3√3)` of the triangle's; conjugate semi-diameters
//! `p = mid(BC) − G`, `q = (C − B)/(2√3)` (the affine image of the equilateral case). Sources:
//! Wikipedia, "Steiner inellipse"; A. Horwitz, J. Math. Inequalities 4(3) (2010), eq. (1);
//! values in docs/sources.md M3.

use crate::geom::{Ellipse, EllipseError, Line, Point};
use nalgebra::{Matrix3, Vector3};

/// The Steiner inellipse of the triangle `t` (any orientation).
pub fn steiner_inellipse(t: [Point; 3]) -> Result<Ellipse, EllipseError> {
    let [a, b, c] = t;
    let g = Point::new((a.x + b.x + c.x) / 3.0, (a.y + b.y + c.y) / 3.0);
    let p = b.midpoint(c) - g;
    let q = (c - b) / (2.0 * 3f64.sqrt());
    Ellipse::from_shape_matrix(
        g,
        p.x * p.x + q.x * q.x,
        p.x * p.y + q.x * q.y,
        p.y * p.y + q.y * q.y,
    )
}

/// Why no tangent ellipse has the requested centre.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum CentreError {
    #[error("the triangle is degenerate (its corners are collinear)")]
    Degenerate,
    #[error(
        "no ellipse touching the three sides has its centre at ({x:.3}, {y:.3}): a tangent \
         ellipse's centre must lie strictly inside the triangle of the side midpoints"
    )]
    OutsideMedialTriangle { x: f64, y: f64 },
}

/// The ellipse touching the three sides of the triangle `t` with centre `c`.
pub fn tangent_ellipse_with_centre(t: [Point; 3], c: Point) -> Result<Ellipse, CentreError> {
    let area2 = (t[1] - t[0]).cross(t[2] - t[0]);
    if area2.abs()
        <= 1e-12
            * (t[1] - t[0])
                .length_squared()
                .max((t[2] - t[0]).length_squared())
    {
        return Err(CentreError::Degenerate);
    }
    let t = if area2 < 0.0 { [t[0], t[2], t[1]] } else { t };
    let outside = CentreError::OutsideMedialTriangle { x: c.x, y: c.y };
    let mut m = Matrix3::zeros();
    let mut rhs = Vector3::zeros();
    for i in 0..3 {
        let line = Line::through(t[i], t[(i + 1) % 3]).ok_or(CentreError::Degenerate)?;
        // Counter-clockwise: the line's normal points in; the outward normal is its negative.
        let n = -line.normal();
        let gap = line.signed_distance(c); // β − n·c for the outward normal n
        if gap <= 0.0 {
            return Err(outside);
        }
        m[(i, 0)] = n.x * n.x;
        m[(i, 1)] = 2.0 * n.x * n.y;
        m[(i, 2)] = n.y * n.y;
        rhs[i] = gap * gap;
    }
    let s = m.lu().solve(&rhs).ok_or(CentreError::Degenerate)?;
    Ellipse::from_shape_matrix(c, s[0], s[1], s[2]).map_err(|_| outside)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tri() -> [Point; 3] {
        [
            Point::new(0.0, 0.0),
            Point::new(6.0, 0.0),
            Point::new(2.0, 4.0),
        ]
    }

    #[test]
    fn steiner_matches_reference_and_the_centre_rule() {
        // docs/sources.md M3 (steiner_apollonius.py): T = (0,0), (6,0), (2,4).
        let e = steiner_inellipse(tri()).unwrap();
        assert!((e.a() - 1.80157654880780).abs() < 1e-12);
        assert!((e.b() - 1.28187785208836).abs() < 1e-12);
        assert!((e.angle().to_degrees() + 16.8450337629899).abs() < 1e-10);
        // Marden's theorem: the foci are the roots of p′(z) for p(z) = (z − z1)(z − z2)(z − z3)
        // (Kalman, Amer. Math. Monthly 115 (2008)); values from docs/sources.md M3.
        let c = (e.a() * e.a() - e.b() * e.b()).sqrt();
        let d = crate::geom::Vec2::from_angle(e.angle()) * c;
        let (f1, f2) = (e.centre() + d, e.centre() - d);
        assert!(f1.distance(Point::new(3.87823601401598, 0.966499651533108)) < 1e-12);
        assert!(f2.distance(Point::new(1.45509731931735, 1.70016701513356)) < 1e-12);
        // The tangent ellipse centred at the centroid is the Steiner inellipse.
        let g = tangent_ellipse_with_centre(tri(), e.centre()).unwrap();
        assert!((g.a() - e.a()).abs() < 1e-12 && (g.b() - e.b()).abs() < 1e-12);
    }

    #[test]
    fn centre_outside_the_medial_triangle_is_refused() {
        // The medial triangle of T has corners (3,0), (4,2), (1,2).
        assert!(tangent_ellipse_with_centre(tri(), Point::new(2.7, 1.2)).is_ok());
        let err = tangent_ellipse_with_centre(tri(), Point::new(1.0, 0.5)).unwrap_err();
        assert!(matches!(err, CentreError::OutsideMedialTriangle { .. }));
    }
}
