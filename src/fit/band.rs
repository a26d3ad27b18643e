//! The tolerance band around an exact convex curve, and which side of it the scrap is on.
//!
//! Every curve the fitters work on is convex and travelled so that it turns left
//! (counter-clockwise). A point of the band is named by the curve parameter `t` and its signed
//! *outward* offset `s` (positive to the right of travel, away from the centres of curvature).
//! The band is `lo ≤ s ≤ hi`. Within it the curve's normals do not cross as long as the inner edge
//! stays short of the smallest radius of curvature on the concave side, so a point of the band
//! lies at signed distance `s` from the exact curve along the normal through it; that is what
//! turns "the emitted path stays between the band's edges" into "within the tolerance".

use crate::geom::{Ellipse, Point, Vec2};

/// A convex curve travelled counter-clockwise with its parallel curves.
pub(crate) trait ConvexCurve {
    /// The point at parameter `t` of the parallel curve at outward offset `s` (mm).
    fn point(&self, t: f64, s: f64) -> Point;

    /// Whether the closed curve (period 2π in `t`) is symmetric about two perpendicular axes, the
    /// reflections being `t ↦ −t` and `t ↦ π − t` (so the points at `t = 0` and `t = π/2` lie on
    /// the axes), for every offset `s`. The arc spline then fits one quarter and mirrors it.
    fn symmetric(&self) -> bool {
        false
    }
}

/// The parallel curve `O_d(t) = P(t) − d N(t)` of an ellipse (`d` = `inset`, positive inside),
/// counter-clockwise in the eccentric anomaly `t`. Its parallel curve at outward offset `s` is
/// `O_{d−s}`: the family shares the ellipse's normals.
pub(crate) struct EllipseCurve {
    pub ellipse: Ellipse,
    pub inset: f64,
}

impl ConvexCurve for EllipseCurve {
    fn point(&self, t: f64, s: f64) -> Point {
        self.ellipse.inward_offset_point(t, self.inset - s)
    }

    /// The ellipse's axes: `P(−t)` and `P(π − t)` mirror `P(t)` about the major and minor axis,
    /// and so do the normals, hence every parallel curve.
    fn symmetric(&self) -> bool {
        true
    }
}

/// A circle about `center` of radius `radius`, counter-clockwise in the polar angle `t`.
pub(crate) struct CircleCurve {
    pub centre: Point,
    pub radius: f64,
}

impl ConvexCurve for CircleCurve {
    fn point(&self, t: f64, s: f64) -> Point {
        self.centre + Vec2::from_angle(t) * (self.radius + s)
    }
}

/// The band `lo ≤ s ≤ hi` in outward offsets (mm), `lo ≤ 0 ≤ hi`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Band {
    pub lo: f64,
    pub hi: f64,
}

/// The share of the band the constructions aim for; the rest (a millionth of the band) absorbs
/// the accuracy of the searches that place vertices and measure spans (≈1e-12 of a span).
pub(crate) const BAND_SHARE: f64 = 1.0 - 1e-6;

/// How much of the room inside the curve (its smallest radius of curvature on the concave side)
/// the band's inner edge may take, so that the normals stay apart across the band.
const REACH_SHARE: f64 = 0.99;

impl Band {
    /// The band for `tolerance` on a counter-clockwise curve whose concave side has `reach`
    /// (its smallest radius of curvature). Two-sided: `±tolerance`. One-sided, all deviation on
    /// the scrap side: `[−tolerance, 0]` when the scrap lies inside (left of the counter-clockwise
    /// travel), `[0, tolerance]` when it lies outside. The inner edge is kept within 99 % of the
    /// reach; the band is then narrower than asked, never wider. Both edges are pulled in by
    /// [`BAND_SHARE`].
    pub fn new(tolerance: f64, scrap_side_only: bool, scrap_inside: bool, reach: f64) -> Band {
        let (lo, hi) = match (scrap_side_only, scrap_inside) {
            (false, _) => (-tolerance, tolerance),
            (true, true) => (-tolerance, 0.0),
            (true, false) => (0.0, tolerance),
        };
        let lo = lo.max(-REACH_SHARE * reach);
        Band {
            lo: lo * BAND_SHARE,
            hi: hi * BAND_SHARE,
        }
    }

    /// The middle of the band.
    pub fn mid(&self) -> f64 {
        0.5 * (self.lo + self.hi)
    }

    /// Half the band's width.
    pub fn half_width(&self) -> f64 {
        0.5 * (self.hi - self.lo)
    }
}
