//! Axis-aligned bounding boxes.

use super::Point;
use serde::Serialize;

/// An axis-aligned box from `min` to `max` (`min.x ≤ max.x`, `min.y ≤ max.y`), in mm.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Bounds {
    pub min: Point,
    pub max: Point,
}

impl Bounds {
    /// The box of a single point.
    pub fn at(p: Point) -> Bounds {
        Bounds { min: p, max: p }
    }

    /// The smallest box holding every point; `None` when there are none.
    pub fn of_points(points: &[Point]) -> Option<Bounds> {
        let first = *points.first()?;
        Some(
            points
                .iter()
                .fold(Bounds::at(first), |b, &p| b.union(Bounds::at(p))),
        )
    }

    /// The smallest box holding both.
    pub fn union(self, other: Bounds) -> Bounds {
        Bounds {
            min: Point::new(self.min.x.min(other.min.x), self.min.y.min(other.min.y)),
            max: Point::new(self.max.x.max(other.max.x), self.max.y.max(other.max.y)),
        }
    }

    /// The corners `(min, max)`.
    pub fn corners(self) -> (Point, Point) {
        (self.min, self.max)
    }

    /// The distance from `p` to the box (0 inside it): a lower bound of the distance from `p`
    /// to anything inside the box.
    pub fn distance_to(&self, p: Point) -> f64 {
        let dx = (self.min.x - p.x).max(p.x - self.max.x).max(0.0);
        let dy = (self.min.y - p.y).max(p.y - self.max.y).max(0.0);
        dx.hypot(dy)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn box_of_points_union_and_distance() {
        assert_eq!(Bounds::of_points(&[]), None);
        let b = Bounds::of_points(&[
            Point::new(1.0, 4.0),
            Point::new(-2.0, 0.5),
            Point::new(3.0, 2.0),
        ])
        .unwrap();
        assert_eq!(b.corners(), (Point::new(-2.0, 0.5), Point::new(3.0, 4.0)));
        let u = b.union(Bounds::at(Point::new(5.0, -1.0)));
        assert_eq!(u.corners(), (Point::new(-2.0, -1.0), Point::new(5.0, 4.0)));
        assert_eq!(b.distance_to(Point::new(0.0, 1.0)), 0.0);
        assert!((b.distance_to(Point::new(6.0, 8.0)) - 5.0).abs() < 1e-15);
    }
}
