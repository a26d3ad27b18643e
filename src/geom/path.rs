//! Exact tool-centre paths and the finished edges they make.

use super::{Bounds, Contour, Ellipse, Point};
use serde::Serialize;

/// The finished edge a cut makes: what leads, pierces and clearing moves must keep away from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum Edge {
    Ellipse(Ellipse),
    Contour(Contour),
}

impl Edge {
    /// The distance from `p` to the edge (mm).
    pub fn distance_to(&self, p: Point) -> f64 {
        match self {
            Edge::Ellipse(e) => e.distance_to(p).0,
            Edge::Contour(c) => c.distance_to(p),
        }
    }

    /// The axis-aligned box holding the edge and everything inside it; `None` for an empty
    /// contour.
    pub fn bounding_box(&self) -> Option<Bounds> {
        match self {
            Edge::Ellipse(e) => Some(e.bounding_box()),
            Edge::Contour(c) => c.bounding_box(),
        }
    }

    /// Whether `p` is inside the closed edge.
    pub fn contains(&self, p: Point) -> bool {
        match self {
            Edge::Ellipse(e) => e.contains(p),
            Edge::Contour(c) => c.contains(p),
        }
    }
}

/// An exact tool-centre path.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum ExactPath {
    /// The parallel curve `O_d(t) = P(t) − d N(t)` of `ellipse` at signed distance `inset`
    /// (positive inside, negative outside), travelled once from anomaly `start`,
    /// counter-clockwise unless `clockwise`.
    EllipseParallel {
        ellipse: Ellipse,
        inset: f64,
        start: f64,
        clockwise: bool,
    },
    /// A closed contour of lines and arcs that is itself the tool-centre path.
    Contour(Contour),
}

impl ExactPath {
    /// The point where the cut starts and ends.
    pub fn start_point(&self) -> Point {
        match self {
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                start,
                ..
            } => ellipse.inward_offset_point(*start, *inset),
            ExactPath::Contour(c) => c.start_point().unwrap_or(Point::ORIGIN),
        }
    }

    /// The same path travelled the other way from the same start point (exact: the ellipse's
    /// parallel curve with the other sense, a contour's pieces in reverse order, each reversed).
    pub fn reversed(&self) -> ExactPath {
        match self {
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                start,
                clockwise,
            } => ExactPath::EllipseParallel {
                ellipse: *ellipse,
                inset: *inset,
                start: *start,
                clockwise: !clockwise,
            },
            ExactPath::Contour(c) => ExactPath::Contour(c.reversed()),
        }
    }
}
