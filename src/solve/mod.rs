//! Stage 3, solve: finds the ellipse each feature asks for.
//!
//! Today: the largest ellipse tangent to all four sides of a four-sided bay, with an optional edge
//! margin (the sides moved inward before solving), in closed form along the Newton line
//! ([`TangentFamily`]).

mod candidate;
mod conic;
mod constraints;
mod contained;
mod feature;
mod geometric_fit;
mod john;
mod least_squares;
mod pentagon;
mod quad_family;
mod quad_rules;
mod triangle;

use crate::chain::Bay;
use crate::geom::{Ellipse, Line, Point, Vec2};
use serde::Serialize;

pub use candidate::{Candidate, Solution};
pub use conic::{
    Conic, ConicError, ConicKind, DualConic, NotAnEllipse, ellipse_from_conjugate_semi_diameters,
};
pub use constraints::{ConicSolution, ConstraintError, conics_through_and_tangent};
pub use feature::{BaySolution, Failure, solve_bay};
pub use geometric_fit::{GeometricFit, geometric_fit};
pub use john::{John, JohnResiduals, john_ellipse};
pub use least_squares::{LeastSquaresEllipse, LeastSquaresError, least_squares_ellipse};
pub use quad_family::TangentFamily;
pub use quad_rules::Rule;

/// Relative size below which a bay counts as degenerate: a side shorter than this fraction of the
/// bay's diameter, or an area below this fraction of the diameter squared.
pub const DEGENERATE_RELATIVE: f64 = 1e-9;

/// Why a bay's ellipse could not be found.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SolveError {
    #[error(
        "{bay} has {sides} sides; only four-sided bays can be solved so far. Redraw it as a closed \
         contour of four straight edges on the bay layer"
    )]
    UnsupportedSideCount { bay: String, sides: usize },
    #[error(
        "{bay} is not convex at the corner near ({x:.3}, {y:.3}) mm; a tangent ellipse needs a \
         convex bay. Check the corner order and that no edge bends inwards"
    )]
    NotConvex { bay: String, x: f64, y: f64 },
    #[error("{bay} is degenerate ({reason}); check its corners in the drawing")]
    Degenerate { bay: String, reason: String },
    #[error(
        "an edge margin of {margin} mm leaves no room in {bay}: moving its sides inward by that \
         much {reason}. Use a smaller --margin"
    )]
    MarginTooLarge {
        bay: String,
        margin: f64,
        reason: String,
    },
    #[error("no tangent ellipse was found for {bay}: {reason}")]
    NoSolution { bay: String, reason: String },
}

/// The elliptical opening solved for one bay.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BayOpening {
    /// The bay's name, e.g. `bay 1`.
    pub bay: String,
    pub ellipse: Ellipse,
    /// The edge margin used (mm): the ellipse touches the bay's sides moved inward by this much.
    pub margin: f64,
    /// Corners of the bay after the margin, counter-clockwise (mm).
    pub solved_corners: Vec<Point>,
    /// Where the ellipse touches each (moved) side, in side order.
    pub touch_points: Vec<Point>,
    /// Position along the Newton line: 0 at the midpoint of the first diagonal, 1 at the second's.
    pub family_parameter: f64,
    /// The largest relative tangency residual `|nᵀΣn − (β − n·c)²| / nᵀΣn` over the sides.
    pub tangency_residual: f64,
}

/// The largest ellipse tangent to all four sides of `bay` after moving each side inward by
/// `margin` (mm, ≥ 0).
pub fn largest_tangent_ellipse(bay: &Bay, margin: f64) -> Result<BayOpening, SolveError> {
    let name = || bay.name().to_string();
    if bay.corners().len() != 4 {
        return Err(SolveError::UnsupportedSideCount {
            bay: name(),
            sides: bay.corners().len(),
        });
    }
    let corners = ccw_convex_corners(bay.name(), bay.corners())?;
    let corners = if margin > 0.0 {
        inset_convex_polygon(bay.name(), &corners, margin)?
    } else {
        corners
    };
    let quad = [corners[0], corners[1], corners[2], corners[3]];
    let family = TangentFamily::new(quad);
    let t = family
        .largest_area_parameter()
        .ok_or_else(|| SolveError::NoSolution {
            bay: name(),
            reason: "the area polynomial has no maximum inside the bay".into(),
        })?;
    let ellipse = family.ellipse(t).map_err(|e| SolveError::NoSolution {
        bay: name(),
        reason: e.to_string(),
    })?;
    let (touch_points, tangency_residual) = touch_points(&ellipse, &corners);
    Ok(BayOpening {
        bay: name(),
        ellipse,
        margin,
        solved_corners: corners,
        touch_points,
        family_parameter: t,
        tangency_residual,
    })
}

/// Where `ellipse` touches each side of the counter-clockwise polygon `corners`, and the largest
/// relative tangency residual, from the support function: the ellipse touches the line
/// `n·x = β` (|n| = 1, n outward) iff `n·c + sqrt(nᵀΣn) = β`, at `c + Σn / sqrt(nᵀΣn)`.
pub fn touch_points(ellipse: &Ellipse, corners: &[Point]) -> (Vec<Point>, f64) {
    let (sxx, sxy, syy) = ellipse.shape_matrix();
    let c = ellipse.centre();
    let mut worst: f64 = 0.0;
    let mut points = Vec::with_capacity(corners.len());
    for i in 0..corners.len() {
        let (p, q) = (corners[i], corners[(i + 1) % corners.len()]);
        let Some(line) = Line::through(p, q) else {
            continue;
        };
        let n = -line.normal(); // outward for a counter-clockwise polygon
        let sn = Vec2::new(sxx * n.x + sxy * n.y, sxy * n.x + syy * n.y);
        let h2 = n.dot(sn);
        let beta = -line.offset();
        let gap = beta - n.dot(c.to_vec());
        worst = worst.max((h2 - gap * gap).abs() / h2);
        points.push(c + sn / h2.sqrt());
    }
    (points, worst)
}

/// The corners in counter-clockwise order, checked to form a strictly convex, non-degenerate
/// polygon.
pub fn ccw_convex_corners(bay: &str, corners: &[Point]) -> Result<Vec<Point>, SolveError> {
    let n = corners.len();
    let degenerate = |reason: String| SolveError::Degenerate {
        bay: bay.to_string(),
        reason,
    };
    if n < 3 {
        return Err(degenerate(format!("only {n} corners")));
    }
    if corners.iter().any(|p| !p.is_finite()) {
        return Err(degenerate("a corner is not a finite number".into()));
    }
    // The bounding box's diagonal: within a factor √2 of the diameter, and cheap.
    let diameter = match crate::geom::bounds_of(corners) {
        Some((lo, hi)) => lo.distance(hi),
        None => 0.0,
    };
    let area: f64 = (0..n)
        .map(|i| 0.5 * corners[i].to_vec().cross(corners[(i + 1) % n].to_vec()))
        .sum();
    if area.abs() <= DEGENERATE_RELATIVE * diameter * diameter {
        return Err(degenerate("it encloses no area".into()));
    }
    let mut pts = corners.to_vec();
    if area < 0.0 {
        pts.reverse();
    }
    for i in 0..n {
        let (p, q, r) = (pts[(i + n - 1) % n], pts[i], pts[(i + 1) % n]);
        let (e1, e2) = (q - p, r - q);
        if e2.length() <= DEGENERATE_RELATIVE * diameter {
            return Err(degenerate(format!(
                "two corners coincide near ({:.3}, {:.3}) mm",
                q.x, q.y
            )));
        }
        // The turn at every corner must be strictly to the left.
        if e1.cross(e2) <= DEGENERATE_RELATIVE * e1.length() * e2.length() {
            return Err(SolveError::NotConvex {
                bay: bay.to_string(),
                x: q.x,
                y: q.y,
            });
        }
    }
    // A strictly left-turning closed polygon with positive area can still wind twice (a
    // pentagram); the total turn must be one full turn. Four turns each below π add up to less
    // than 4π, so triangles and quadrilaterals cannot wind twice.
    if n <= 4 {
        return Ok(pts);
    }
    let turn: f64 = (0..n)
        .map(|i| {
            let (p, q, r) = (pts[(i + n - 1) % n], pts[i], pts[(i + 1) % n]);
            let (e1, e2) = (q - p, r - q);
            e1.cross(e2).atan2(e1.dot(e2))
        })
        .sum();
    if (turn - std::f64::consts::TAU).abs() > 1e-6 {
        return Err(SolveError::NotConvex {
            bay: bay.to_string(),
            x: pts[0].x,
            y: pts[0].y,
        });
    }
    Ok(pts)
}

/// Moves every side of a counter-clockwise convex polygon inward by `margin` and returns the new
/// corners (intersections of consecutive moved sides). Fails when a side would vanish or turn
/// round, i.e. the margin is too large for the polygon.
pub fn inset_convex_polygon(
    bay: &str,
    corners: &[Point],
    margin: f64,
) -> Result<Vec<Point>, SolveError> {
    let n = corners.len();
    let too_large = |reason: &str| SolveError::MarginTooLarge {
        bay: bay.to_string(),
        margin,
        reason: reason.to_string(),
    };
    let lines: Vec<Line> = (0..n)
        .map(|i| {
            Line::through(corners[i], corners[(i + 1) % n])
                .map(|l| l.shifted(margin))
                .ok_or_else(|| SolveError::Degenerate {
                    bay: bay.to_string(),
                    reason: "a side has zero length".into(),
                })
        })
        .collect::<Result<_, _>>()?;
    let mut out = Vec::with_capacity(n);
    for i in 0..n {
        let prev = &lines[(i + n - 1) % n];
        let p = prev
            .intersection(&lines[i])
            .ok_or_else(|| too_large("makes two sides parallel"))?;
        out.push(p);
    }
    for i in 0..n {
        let old = corners[(i + 1) % n] - corners[i];
        let new = out[(i + 1) % n] - out[i];
        if new.dot(old) <= 0.0 || new.length() <= DEGENERATE_RELATIVE * old.length() {
            return Err(too_large("closes up one of its sides"));
        }
    }
    ccw_convex_corners(bay, &out).map_err(|_| too_large("leaves no convex region"))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn bay(corners: &[(f64, f64)]) -> Bay {
        Bay::new(
            "bay 1",
            "B",
            &corners
                .iter()
                .map(|&(x, y)| Point::new(x, y))
                .collect::<Vec<_>>(),
            &[],
        )
        .unwrap()
    }

    #[test]
    fn square_inset_by_margin_is_smaller_square() {
        let b = bay(&[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0)]);
        let o = largest_tangent_ellipse(&b, 2.0).unwrap();
        assert!((o.ellipse.a() - 3.0).abs() < 1e-12 && (o.ellipse.b() - 3.0).abs() < 1e-12);
        assert!(o.solved_corners[0].distance(Point::new(2.0, 2.0)) < 1e-12);
    }

    #[test]
    fn clockwise_bay_is_accepted() {
        let b = bay(&[(0.0, 0.0), (0.0, 2.0), (4.0, 2.0), (4.0, 0.0)]);
        let o = largest_tangent_ellipse(&b, 0.0).unwrap();
        assert!((o.ellipse.a() - 2.0).abs() < 1e-12 && (o.ellipse.b() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn bad_bays_get_reasons() {
        // A dart or a flat loop never becomes a bay: `Bay::new` refuses it with the reason, as
        // the chainer does for a drawn loop.
        let corners =
            |c: &[(f64, f64)]| -> Vec<Point> { c.iter().map(|&(x, y)| Point::new(x, y)).collect() };
        let problem = |c: &[(f64, f64)]| match Bay::new("bay 1", "B", &corners(c), &[]) {
            Err(crate::chain::ChainError::Bay(e)) => Some(e.problem.clone()),
            _ => None,
        };
        let dart = [(0.0, 0.0), (4.0, 0.0), (1.0, 1.0), (0.0, 4.0)];
        assert_eq!(problem(&dart), Some(crate::chain::BayProblem::NotConvex));
        let flat = [(0.0, 0.0), (1.0, 0.0), (2.0, 0.0), (3.0, 0.0)];
        assert!(
            matches!(
                problem(&flat),
                Some(
                    crate::chain::BayProblem::TooFewSides { .. }
                        | crate::chain::BayProblem::Degenerate { .. }
                )
            ),
            "{:?}",
            problem(&flat)
        );
        let tri = bay(&[(0.0, 0.0), (1.0, 0.0), (0.0, 1.0)]);
        assert!(matches!(
            largest_tangent_ellipse(&tri, 0.0),
            Err(SolveError::UnsupportedSideCount { sides: 3, .. })
        ));
        let small = bay(&[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0)]);
        let err = largest_tangent_ellipse(&small, 5.0).unwrap_err();
        assert!(matches!(err, SolveError::MarginTooLarge { .. }), "{err}");
        assert!(err.to_string().contains("--margin"));
    }
}
