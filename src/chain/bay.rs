//! Checking a closed loop on the bay layer and turning it into a [`Bay`].

use super::{BayError, BayProblem, ChainError, fmt_handles};
use crate::geom::{Element, Point, Segment, Vec2};
use serde::Serialize;

/// Consecutive sides whose directions differ by at most this angle (radians) are one side.
///
/// 1e-4 rad (about 0.0057°): merging two pieces of total length L that bend by δ moves the
/// dropped corner at most L·δ/4 off the merged side, 5 µm for a 200 mm side; yet it is far above
/// the bend left by coordinates rounded to 1e-12 mm or by inch-to-mm conversion.
pub const COLLINEAR_ANGLE_LIMIT: f64 = 1e-4;

/// A bay: a convex polygon of straight edges on the bay layer, construction geometry that an
/// elliptical opening must fit. Corners run counter-clockwise from the lowest corner (the
/// leftmost of equally low ones), collinear pieces merged; built only by the checks below.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bay {
    /// A name for messages and reports, e.g. `bay 2`.
    name: String,
    layer: String,
    corners: Vec<Point>,
    handles: Vec<String>,
}

impl Bay {
    /// The bay with these corners (in either order), checked as a loop on the bay layer is: at
    /// least three sides, each longer than 1e-9 mm, strictly convex. Collinear corners are
    /// merged and the corners come back counter-clockwise from the lowest one.
    pub fn new(
        name: &str,
        layer: &str,
        corners: &[Point],
        handles: &[String],
    ) -> Result<Bay, ChainError> {
        let n = corners.len();
        let sides: Vec<Element> = (0..n)
            .map(|i| Element::Line(Segment::new(corners[i], corners[(i + 1) % n])))
            .collect();
        make_bay(name, layer, &sides, handles, 0.0)
    }

    /// The bay moved by `v` (still convex, its corners in the same order).
    pub fn translated(&self, v: Vec2) -> Bay {
        Bay {
            name: self.name.clone(),
            layer: self.layer.clone(),
            corners: self.corners.iter().map(|&p| p + v).collect(),
            handles: self.handles.clone(),
        }
    }

    /// A name for messages and reports, e.g. `bay 2`.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The DXF layer the bay was drawn on.
    pub fn layer(&self) -> &str {
        &self.layer
    }

    /// The corners, counter-clockwise from the lowest.
    pub fn corners(&self) -> &[Point] {
        &self.corners
    }

    /// DXF entity handles of the bay's pieces, for messages.
    pub fn handles(&self) -> &[String] {
        &self.handles
    }
}

/// Checks a closed loop from the bay layer and returns the bay: straight sides only, each
/// longer than `max_gap`, collinear neighbours merged, at least three sides, enclosing
/// more than `max_gap × perimeter` of area (thinner than the largest gap counts as
/// flat), strictly convex and winding once. Corners come back counter-clockwise, starting from
/// the lowest corner (the leftmost of equally low ones).
pub(super) fn make_bay(
    name: &str,
    layer: &str,
    elements: &[Element],
    handles: &[String],
    max_gap: f64,
) -> Result<Bay, ChainError> {
    let at = Where {
        name,
        layer,
        handles,
    };
    let min_side = max_gap.max(1e-9);
    let mut corners = straight_corners(elements, min_side, &at)?;
    merge_corners(&mut corners, &at)?;
    orient_counter_clockwise(&mut corners, min_side, &at)?;
    check_convex(&corners, &at)?;
    start_at_lowest(&mut corners);
    Ok(Bay {
        name: name.to_string(),
        layer: layer.to_string(),
        corners,
        handles: unique_handles(handles),
    })
}

/// The bay being checked, for its errors.
struct Where<'a> {
    name: &'a str,
    layer: &'a str,
    handles: &'a [String],
}

impl Where<'_> {
    fn err(&self, at: Point, problem: BayProblem) -> ChainError {
        ChainError::Bay(Box::new(BayError {
            bay: self.name.to_string(),
            layer: self.layer.to_string(),
            handles: fmt_handles(self.handles),
            at,
            problem,
        }))
    }
}

/// The start of each side; refuses arcs and sides not longer than `min_side`.
fn straight_corners(
    elements: &[Element],
    min_side: f64,
    at: &Where,
) -> Result<Vec<Point>, ChainError> {
    let mut corners = Vec::with_capacity(elements.len());
    for e in elements {
        match e {
            Element::Arc(a) => {
                return Err(at.err(a.start_point(), BayProblem::Arc));
            }
            Element::Line(s) => corners.push(s.start),
        }
    }
    for (i, e) in elements.iter().enumerate() {
        if e.length() <= min_side {
            return Err(at.err(corners[i], BayProblem::ShortSide { length: e.length() }));
        }
    }
    Ok(corners)
}

/// Collinear sides merged; refuses a bay turning straight back or left with fewer than 3 sides.
fn merge_corners(corners: &mut Vec<Point>, at: &Where) -> Result<(), ChainError> {
    merge_collinear(corners).map_err(|p| {
        at.err(
            p,
            BayProblem::Degenerate {
                reason: "its outline turns back on itself there".into(),
            },
        )
    })?;
    if corners.len() < 3 {
        return Err(at.err(
            corners[0],
            BayProblem::TooFewSides {
                sides: corners.len(),
            },
        ));
    }
    Ok(())
}

/// Refuses a bay enclosing no more than `min_side × perimeter`; makes the corners run
/// counter-clockwise.
fn orient_counter_clockwise(
    corners: &mut [Point],
    min_side: f64,
    at: &Where,
) -> Result<(), ChainError> {
    let n = corners.len();
    let area: f64 = (0..n)
        .map(|i| 0.5 * corners[i].to_vec().cross(corners[(i + 1) % n].to_vec()))
        .sum();
    let perimeter: f64 = (0..n)
        .map(|i| corners[i].distance(corners[(i + 1) % n]))
        .sum();
    if area.abs() <= min_side * perimeter {
        return Err(at.err(
            corners[0],
            BayProblem::Degenerate {
                reason: format!(
                    "it encloses (almost) no area ({:.3e} mm² for a perimeter of {perimeter:.3} mm)",
                    area.abs()
                ),
            },
        ));
    }
    if area < 0.0 {
        corners.reverse();
    }
    Ok(())
}

/// Every corner turns left, and the turns add up to one turn.
fn check_convex(corners: &[Point], at: &Where) -> Result<(), ChainError> {
    let n = corners.len();
    let mut turning = 0.0;
    for i in 0..n {
        let (a, b, c) = (corners[(i + n - 1) % n], corners[i], corners[(i + 1) % n]);
        let (u, v) = (b - a, c - b);
        if u.cross(v) <= 0.0 {
            return Err(at.err(b, BayProblem::NotConvex));
        }
        turning += u.cross(v).atan2(u.dot(v));
    }
    if (turning - std::f64::consts::TAU).abs() > 1e-6 {
        // All turns left but more than once round: the sides cross each other (a star).
        return Err(at.err(corners[0], BayProblem::NotConvex));
    }
    Ok(())
}

/// Starts the corners at the lowest one (the leftmost of equally low ones).
fn start_at_lowest(corners: &mut [Point]) {
    let first = (0..corners.len())
        .min_by(|&i, &j| {
            (corners[i].y, corners[i].x)
                .partial_cmp(&(corners[j].y, corners[j].x))
                .unwrap_or(std::cmp::Ordering::Equal)
        })
        .unwrap_or(0);
    corners.rotate_left(first);
}

/// The handles without repeats, in order.
fn unique_handles(handles: &[String]) -> Vec<String> {
    let mut hs: Vec<String> = Vec::new();
    for h in handles {
        if !hs.contains(h) {
            hs.push(h.clone());
        }
    }
    hs
}

/// Removes corners where the outline goes straight on (within
/// [`COLLINEAR_ANGLE_LIMIT`]); returns `Err(corner)` where it turns straight back.
fn merge_collinear(corners: &mut Vec<Point>) -> Result<(), Point> {
    let max_sine = COLLINEAR_ANGLE_LIMIT.sin();
    loop {
        let n = corners.len();
        if n < 3 {
            return Ok(());
        }
        let mut removed = false;
        for i in 0..n {
            let (a, b, c) = (corners[(i + n - 1) % n], corners[i], corners[(i + 1) % n]);
            let (u, v) = (b - a, c - b);
            let sine = u.cross(v) / (u.length() * v.length());
            if sine.abs() <= max_sine {
                if u.dot(v) < 0.0 {
                    return Err(b);
                }
                corners.remove(i);
                removed = true;
                break;
            }
        }
        if !removed {
            return Ok(());
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::{ArcSegment, Segment};

    fn poly(pts: &[(f64, f64)]) -> Vec<Element> {
        let n = pts.len();
        (0..n)
            .map(|i| {
                let (a, b) = (pts[i], pts[(i + 1) % n]);
                Element::Line(Segment::new(Point::new(a.0, a.1), Point::new(b.0, b.1)))
            })
            .collect()
    }

    fn bay(pts: &[(f64, f64)]) -> Result<Bay, ChainError> {
        let els = poly(pts);
        let handles: Vec<String> = (0..els.len()).map(|i| format!("{:X}", 0x20 + i)).collect();
        make_bay("bay 1", "OPENING-BAYS", &els, &handles, 0.01)
    }

    #[test]
    fn clockwise_bay_comes_back_counter_clockwise_from_its_lowest_corner() {
        let b = bay(&[(0.0, 10.0), (10.0, 10.0), (12.0, 1.0), (1.0, 0.0)]).unwrap();
        assert_eq!(
            b.corners,
            [
                Point::new(1.0, 0.0),
                Point::new(12.0, 1.0),
                Point::new(10.0, 10.0),
                Point::new(0.0, 10.0)
            ]
        );
    }

    #[test]
    fn collinear_pieces_merge_within_the_angle_limit() {
        // The bottom side is drawn in two pieces bent by 5e-5 rad (below 1e-4).
        let bend = 5e-5_f64;
        let mid = (6.0, 6.0 * bend.tan());
        let b = bay(&[(0.0, 0.0), mid, (12.0, 0.0), (12.0, 8.0), (0.0, 8.0)]).unwrap();
        assert_eq!(b.corners.len(), 4);
        // A bend of 2e-4 rad is a real corner: five corners, still convex.
        let mid = (6.0, -6.0 * 2e-4_f64.tan());
        let b = bay(&[(0.0, 0.0), mid, (12.0, 0.0), (12.0, 8.0), (0.0, 8.0)]).unwrap();
        assert_eq!(b.corners.len(), 5);
    }

    #[test]
    fn non_convex_bay_names_the_reflex_corner() {
        let e = bay(&[
            (0.0, 0.0),
            (10.0, 0.0),
            (5.0, 3.0),
            (10.0, 10.0),
            (0.0, 10.0),
        ])
        .unwrap_err();
        let ChainError::Bay(b) = &e else {
            panic!("{e}")
        };
        assert_eq!(b.problem, BayProblem::NotConvex);
        assert_eq!(b.at, Point::new(5.0, 3.0));
        assert!(e.to_string().contains("bay 1"), "{e}");
    }

    #[test]
    fn star_whose_turns_are_all_left_is_not_convex() {
        // A pentagram: every turn is to the left, but it winds twice.
        let pts: Vec<(f64, f64)> = (0..5)
            .map(|k| {
                let t = std::f64::consts::FRAC_PI_2 + k as f64 * 4.0 * std::f64::consts::PI / 5.0;
                (10.0 * t.cos(), 10.0 * t.sin())
            })
            .collect();
        assert!(matches!(bay(&pts), Err(ChainError::Bay(b)) if b.problem == BayProblem::NotConvex));
    }

    #[test]
    fn arcs_short_sides_flat_bays_and_two_sides_are_refused() {
        let mut els = poly(&[(0.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0)]);
        els[1] = Element::Arc(
            ArcSegment::from_bulge(Point::new(10.0, 0.0), Point::new(10.0, 10.0), 0.2).unwrap(),
        );
        let hs = vec!["A".to_string(); 4];
        assert!(matches!(
            make_bay("bay 2", "B", &els, &hs, 0.01),
            Err(ChainError::Bay(b)) if b.problem == BayProblem::Arc
        ));
        // Repeated corner: a zero-length side.
        assert!(matches!(
            bay(&[(0.0, 0.0), (10.0, 0.0), (10.0, 0.0), (10.0, 10.0)]),
            Err(ChainError::Bay(b)) if matches!(b.problem, BayProblem::ShortSide { .. })
        ));
        // Flat: 20 mm long, 0.001 mm high.
        assert!(matches!(
            bay(&[(0.0, 0.0), (20.0, 0.0), (10.0, 0.001)]),
            Err(ChainError::Bay(b)) if matches!(b.problem, BayProblem::Degenerate { .. })
        ));
        // Four corners on one line: turns straight back.
        assert!(matches!(
            bay(&[(0.0, 0.0), (5.0, 0.0), (10.0, 0.0), (5.0, 0.0 + 1e-9)]),
            Err(ChainError::Bay(b))
                if matches!(b.problem, BayProblem::Degenerate { .. } | BayProblem::TooFewSides { .. })
        ));
    }
}
