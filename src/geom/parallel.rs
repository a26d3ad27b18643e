//! The parallel curve of an ellipse at a signed distance, and the curvature limit it must keep.
//!
//! The inward parallel curve `O_d(t) = P(t) − d N(t)` has the derivative `P′(t) (1 − d κ(t))`.
//! The ellipse's curvature is largest at the ends of its major axis, `κ = a/b²`, so the curve is
//! regular (no cusps, travelled the same way as the ellipse) exactly when `d < b²/a`, the
//! smallest radius of curvature. Outward (`d < 0`) every distance is regular.

use super::{Ellipse, Point};

/// An inward offset at or beyond the smallest radius of curvature (less the margin asked for).
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[error(
    "an inward offset of {inset} mm is not below the smallest radius of curvature b²/a = \
     {limit} mm"
)]
pub struct OffsetTooDeep {
    /// The offset asked for (mm, positive inside).
    pub inset: f64,
    /// The smallest radius of curvature, b²/a (mm).
    pub limit: f64,
}

/// An ellipse and a signed offset from it (mm; positive inside, negative outside).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ParallelCurve {
    ellipse: Ellipse,
    inset: f64,
}

impl ParallelCurve {
    /// The deepest inward offset whose parallel curve is regular: the ellipse's smallest radius
    /// of curvature, `b²/a`.
    pub fn limit_of(ellipse: &Ellipse) -> f64 {
        ellipse.min_radius_of_curvature()
    }

    /// The parallel curve at `inset`, refused when an inward offset comes within the share
    /// `margin` of `b²/a` or beyond: `inset ≥ (1 − margin) · b²/a` (or `inset` is NaN).
    pub fn new(ellipse: Ellipse, inset: f64, margin: f64) -> Result<Self, OffsetTooDeep> {
        let limit = Self::limit_of(&ellipse);
        if inset.is_nan() || inset >= limit * (1.0 - margin) {
            return Err(OffsetTooDeep { inset, limit });
        }
        Ok(ParallelCurve { ellipse, inset })
    }

    /// The offset at `inset` whether or not it is regular (level sets of the distance to the edge
    /// past `b²/a` are trimmed by their callers).
    pub fn any(ellipse: Ellipse, inset: f64) -> Self {
        ParallelCurve { ellipse, inset }
    }

    pub fn ellipse(&self) -> &Ellipse {
        &self.ellipse
    }

    /// The signed offset (mm, positive inside).
    pub fn inset(&self) -> f64 {
        self.inset
    }

    /// The smallest radius of curvature of the ellipse, `b²/a`.
    pub fn limit(&self) -> f64 {
        Self::limit_of(&self.ellipse)
    }

    /// How far the offset may still deepen before the curve stops being regular: `b²/a − inset`
    /// (negative past the limit).
    pub fn reach(&self) -> f64 {
        self.limit() - self.inset
    }

    /// Whether the curve is regular, `inset ≤ b²/a` (at the limit its curvature at the ends of
    /// the major axis is infinite but it has no cusps).
    pub fn is_regular(&self) -> bool {
        self.inset <= self.limit()
    }

    /// The point at eccentric anomaly `t`: `O_d(t) = P(t) − d N(t)`.
    pub fn point(&self, t: f64) -> Point {
        self.ellipse.inward_offset_point(t, self.inset)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_an_inward_offset_at_the_smallest_radius_of_curvature() {
        // a = 4, b = 2: b²/a = 1.
        let e = Ellipse::new(Point::new(1.0, 2.0), 4.0, 2.0, 0.3).unwrap();
        assert_eq!(ParallelCurve::limit_of(&e), 1.0);
        let ok = ParallelCurve::new(e, 0.9, 1e-6).unwrap();
        assert!((ok.reach() - 0.1).abs() < 1e-15 && ok.is_regular());
        assert_eq!(
            ParallelCurve::new(e, 1.0, 0.0),
            Err(OffsetTooDeep {
                inset: 1.0,
                limit: 1.0
            })
        );
        assert!(ParallelCurve::new(e, 1.0 - 1e-9, 1e-6).is_err());
        assert!(ParallelCurve::new(e, f64::NAN, 0.0).is_err());
        assert!(ParallelCurve::new(e, -50.0, 0.0).is_ok());
        assert!(!ParallelCurve::any(e, 1.5).is_regular());
        let p = ParallelCurve::any(e, 0.5).point(0.0);
        assert!((p.distance(e.centre()) - 3.5).abs() < 1e-12);
    }
}
