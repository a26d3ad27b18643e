//! Infinite lines and finite segments.

use super::{PARALLEL_SINE, Point, Vec2};
use serde::Serialize;

/// A finite straight piece from `start` to `end`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Segment {
    pub start: Point,
    pub end: Point,
}

impl Segment {
    pub const fn new(start: Point, end: Point) -> Self {
        Segment { start, end }
    }

    /// The segment moved by `v`.
    pub fn translated(&self, v: Vec2) -> Segment {
        Segment::new(self.start + v, self.end + v)
    }

    pub fn length(&self) -> f64 {
        self.start.distance(self.end)
    }

    pub fn direction(&self) -> Vec2 {
        self.end - self.start
    }

    /// The infinite line through this segment, or `None` when the segment has zero length.
    pub fn line(&self) -> Option<Line> {
        Line::through(self.start, self.end)
    }

    /// The point at fraction `t` (0 at the start, 1 at the end).
    pub fn point_at(&self, t: f64) -> Point {
        self.start.lerp(self.end, t)
    }

    /// The shortest distance from `p` to any point of the segment.
    pub fn distance_to(&self, p: Point) -> f64 {
        let d = self.direction();
        let l2 = d.length_squared();
        if l2 == 0.0 {
            return p.distance(self.start);
        }
        let t = ((p - self.start).dot(d) / l2).clamp(0.0, 1.0);
        p.distance(self.point_at(t))
    }
}

/// An infinite, oriented straight line `{x : n·x = c}` with unit normal `n`.
///
/// The direction of travel is `n` turned a quarter turn clockwise, so the normal points to the
/// *left* of travel: for a counter-clockwise polygon built with [`Line::through`] from each side,
/// the normals point into the polygon.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Line {
    normal: Vec2,
    offset: f64,
}

impl Line {
    /// The line through `p` and `q`, travelling from `p` to `q`. `None` if they coincide.
    pub fn through(p: Point, q: Point) -> Option<Line> {
        let dir = (q - p).normalized()?;
        let normal = dir.perp();
        Some(Line {
            normal,
            offset: normal.dot(p.to_vec()),
        })
    }

    /// The unit normal, pointing to the left of the direction of travel.
    pub fn normal(&self) -> Vec2 {
        self.normal
    }

    /// The unit direction of travel.
    pub fn direction(&self) -> Vec2 {
        -self.normal.perp()
    }

    /// `c` in `n·x = c`.
    pub fn offset(&self) -> f64 {
        self.offset
    }

    /// Signed distance of `p` from the line, positive on the normal's (left) side.
    pub fn signed_distance(&self, p: Point) -> f64 {
        self.normal.dot(p.to_vec()) - self.offset
    }

    /// The same line moved by `d` towards its normal (to the left of travel).
    pub fn shifted(&self, d: f64) -> Line {
        Line {
            normal: self.normal,
            offset: self.offset + d,
        }
    }

    /// Homogeneous coordinates `(n.x, n.y, −c)`: the point `(x, y, 1)` lies on the line when the
    /// dot product vanishes.
    pub fn homogeneous(&self) -> [f64; 3] {
        [self.normal.x, self.normal.y, -self.offset]
    }

    /// The crossing point of two lines, or `None` when they are parallel (sine of the angle
    /// between them below [`PARALLEL_SINE`]).
    pub fn intersection(&self, other: &Line) -> Option<Point> {
        let det = self.normal.cross(other.normal);
        if det.abs() < PARALLEL_SINE {
            return None;
        }
        let x = (self.offset * other.normal.y - other.offset * self.normal.y) / det;
        let y = (self.normal.x * other.offset - other.normal.x * self.offset) / det;
        Some(Point::new(x, y))
    }

    /// The foot of the perpendicular from `p`.
    pub fn project(&self, p: Point) -> Point {
        p - self.normal * self.signed_distance(p)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normal_points_left_of_travel() {
        let l = Line::through(Point::new(0.0, 0.0), Point::new(2.0, 0.0)).unwrap();
        assert!(l.signed_distance(Point::new(1.0, 1.0)) > 0.0);
        assert_eq!(l.direction(), Vec2::new(1.0, 0.0));
    }

    #[test]
    fn intersection_of_axes_and_parallels() {
        let x = Line::through(Point::new(0.0, 0.0), Point::new(1.0, 0.0)).unwrap();
        let y = Line::through(Point::new(3.0, -1.0), Point::new(3.0, 5.0)).unwrap();
        let p = x.intersection(&y).unwrap();
        assert!((p.x - 3.0).abs() < 1e-15 && p.y.abs() < 1e-15);
        assert!(x.intersection(&x.shifted(1.0)).is_none());
    }

    #[test]
    fn segment_distance_clamps_to_ends() {
        let s = Segment::new(Point::new(0.0, 0.0), Point::new(1.0, 0.0));
        assert_eq!(s.distance_to(Point::new(2.0, 0.0)), 1.0);
        assert_eq!(s.distance_to(Point::new(0.5, 2.0)), 2.0);
    }
}
