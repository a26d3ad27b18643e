//! Stage 5, fit: approximates each exact tool-centre path by moves the controller understands,
//! within the tolerance, and measures the deviation it achieved.

use crate::geom::Point;
use crate::plan::{CutSide, FeatureKind};
use serde::Serialize;

/// One feature's cut, ready for a post-processor: the tool enters at `plunge`, moves in a
/// straight line to `path[0]`, then follows `path` with straight feed moves. `path` is closed
/// (its last point equals its first).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FittedCut {
    /// The feature's name, e.g. `bay 1`, `hole 2`, `outline`.
    pub name: String,
    pub kind: FeatureKind,
    pub side: CutSide,
    /// Where the tool enters the material, in the scrap (mm).
    pub plunge: Point,
    /// Vertices of the straight feed moves of the tool centre (mm), closed.
    pub path: Vec<Point>,
    /// The tolerance the fit was asked to keep (mm).
    pub tolerance: f64,
    /// The largest distance between the emitted path and the exact tool-centre curve, measured
    /// by dense sampling in both directions (mm).
    pub measured_deviation: f64,
}
