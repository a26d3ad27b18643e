//! Plane geometry shared by every stage: points, vectors, lines, segments, circular arcs,
//! ellipses and their parallel curves, bounding boxes, closed contours of lines and arcs, exact tool-centre paths and the
//! edges they make, feed moves (lines and arcs) and runs of them, the numeric helpers they need
//! (real polynomial roots on an interval, golden-section and Brent searches, a repeatable
//! pseudo-random generator), and the one
//! inch-to-millimetre factor.
//!
//! # Units and conventions
//!
//! Millimetres and radians throughout. The plane is the drawing's XY plane seen from +Z: y up,
//! counter-clockwise positive. Converting units happens only where files are read and written.
//!
//! A [`Point`] is a place and a [`Vec2`] a displacement; `Point - Point` is a `Vec2`, `Point + Vec2`
//! is a `Point`, and there is no `Point + Point`.

mod arc;
mod bounds;
mod contour;
pub mod decimal;
mod ellipse;
pub mod grid;
mod line;
pub mod moves;
mod parallel;
mod path;
pub mod random;
pub mod roots;
pub mod search;
pub mod units;
mod vector;

pub use arc::ArcSegment;
pub use bounds::Bounds;
pub use contour::{Contour, ContourError, Element, JOIN_LIMIT, bounds_of, bounds_of_elements};
pub use ellipse::{Ellipse, EllipseError};
pub use grid::BoxGrid;
pub use line::{Line, Segment};
pub use moves::Move;
pub use parallel::{OffsetTooDeep, ParallelCurve};
pub use path::{Edge, ExactPath};
pub use units::Units;
pub use vector::{Point, Vec2};

/// Relative tolerance below which two lines count as parallel (sine of the angle between them).
pub const PARALLEL_SINE: f64 = 1e-12;
