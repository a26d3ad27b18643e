//! Circular arcs.

use super::{Point, Vec2};
use serde::Serialize;
use std::f64::consts::TAU;

/// A circular arc: centre, radius, start angle and signed sweep (radians, positive
/// counter-clockwise). A sweep of ±2π is a full circle that starts and ends at the same point.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ArcSegment {
    #[serde(rename = "center")]
    pub centre: Point,
    pub radius: f64,
    pub start_angle: f64,
    pub sweep: f64,
}

impl ArcSegment {
    /// The arc moved by `v`.
    pub fn translated(&self, v: Vec2) -> ArcSegment {
        ArcSegment {
            centre: self.centre + v,
            ..*self
        }
    }

    /// A full circle, counter-clockwise from angle 0.
    pub fn circle(centre: Point, radius: f64) -> Self {
        ArcSegment {
            centre,
            radius,
            start_angle: 0.0,
            sweep: TAU,
        }
    }

    /// The arc from `start` to `end` whose DXF bulge is `bulge` (tan of a quarter of the included
    /// angle, negative for clockwise). `None` for a zero bulge or coincident end points.
    pub fn from_bulge(start: Point, end: Point, bulge: f64) -> Option<Self> {
        let chord = end - start;
        let c = chord.length();
        if bulge == 0.0 || c == 0.0 || !bulge.is_finite() {
            return None;
        }
        let sweep = 4.0 * bulge.atan();
        // Distance from the chord midpoint to the centre, signed towards the chord's left.
        let h = c / 2.0 / (sweep / 2.0).tan();
        let centre = start.midpoint(end) + chord.perp() / c * h;
        let radius = centre.distance(start);
        let start_angle = (start - centre).angle();
        Some(ArcSegment {
            centre,
            radius,
            start_angle,
            sweep,
        })
    }

    pub fn end_angle(&self) -> f64 {
        self.start_angle + self.sweep
    }

    pub fn is_full_circle(&self) -> bool {
        (self.sweep.abs() - TAU).abs() < 1e-12
    }

    pub fn is_ccw(&self) -> bool {
        self.sweep > 0.0
    }

    /// The point at angle `angle` on the circle.
    pub fn point_at_angle(&self, angle: f64) -> Point {
        self.centre + Vec2::from_angle(angle) * self.radius
    }

    /// The point at fraction `t` of the sweep (0 at the start, 1 at the end).
    pub fn point_at(&self, t: f64) -> Point {
        self.point_at_angle(self.start_angle + t * self.sweep)
    }

    pub fn start_point(&self) -> Point {
        self.point_at_angle(self.start_angle)
    }

    pub fn end_point(&self) -> Point {
        self.point_at_angle(self.end_angle())
    }

    /// Unit tangent in the direction of travel at fraction `t`.
    pub fn tangent_at(&self, t: f64) -> Vec2 {
        let r = Vec2::from_angle(self.start_angle + t * self.sweep).perp();
        if self.sweep >= 0.0 { r } else { -r }
    }

    pub fn length(&self) -> f64 {
        self.radius * self.sweep.abs()
    }

    /// The same arc travelled the other way.
    pub fn reversed(&self) -> Self {
        ArcSegment {
            centre: self.centre,
            radius: self.radius,
            start_angle: self.end_angle(),
            sweep: -self.sweep,
        }
    }

    /// Whether the direction at `angle` from the centre lies within the swept range.
    pub fn contains_angle(&self, angle: f64) -> bool {
        if self.sweep.abs() >= TAU {
            return true;
        }
        let rel = if self.sweep >= 0.0 {
            (angle - self.start_angle).rem_euclid(TAU)
        } else {
            (self.start_angle - angle).rem_euclid(TAU)
        };
        rel <= self.sweep.abs()
    }

    /// The shortest distance from `p` to any point of the arc.
    pub fn distance_to(&self, p: Point) -> f64 {
        let v = p - self.centre;
        let r = v.length();
        // A full circle holds every direction (no angle to work out).
        if r > 0.0 && (self.is_full_circle() || self.contains_angle(v.angle())) {
            (r - self.radius).abs()
        } else {
            p.distance(self.start_point())
                .min(p.distance(self.end_point()))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bulge_one_is_a_half_circle_to_the_right_when_travelling_ccw() {
        // Bulge 1: a semicircle; positive bulge turns counter-clockwise, so the arc bulges to the
        // right of the chord (DXF reference, VERTEX group 42).
        let a = ArcSegment::from_bulge(Point::new(0.0, 0.0), Point::new(2.0, 0.0), 1.0).unwrap();
        assert!((a.radius - 1.0).abs() < 1e-15);
        assert!((a.centre.x - 1.0).abs() < 1e-15 && a.centre.y.abs() < 1e-15);
        assert!(a.point_at(0.5).y < 0.0);
        assert!(a.end_point().distance(Point::new(2.0, 0.0)) < 1e-15);
    }

    #[test]
    fn distance_to_arc_uses_ends_outside_the_sweep() {
        let a = ArcSegment {
            centre: Point::ORIGIN,
            radius: 1.0,
            start_angle: 0.0,
            sweep: std::f64::consts::FRAC_PI_2,
        };
        assert!((a.distance_to(Point::new(2.0, 0.0)) - 1.0).abs() < 1e-15);
        assert!((a.distance_to(Point::new(0.0, -1.0)) - 2f64.sqrt()).abs() < 1e-15);
    }
}
