//! Object coordinate systems: which way an entity's extrusion points (only ±Z is read), and its
//! points in WCS millimetres; with the context for messages about one entity.

use super::ReadError;
use crate::geom::Point;

/// Largest |x| or |y| of a unit extrusion vector still taken as ±Z.
pub const EXTRUSION_TILT_LIMIT: f64 = 1e-9;

/// Context for converting one entity.
pub(super) struct Ctx<'a> {
    pub(super) file: &'a str,
    pub(super) what: String,
    pub(super) scale: f64,
}

impl Ctx<'_> {
    pub(super) fn bad(&self, reason: impl Into<String>) -> ReadError {
        ReadError::BadGeometry {
            file: self.file.to_string(),
            what: self.what.clone(),
            reason: reason.into(),
        }
    }

    pub(super) fn not_flat(&self, n: &dxf::Vector) -> ReadError {
        ReadError::NotFlat {
            file: self.file.to_string(),
            what: self.what.clone(),
            normal: [n.x, n.y, n.z],
        }
    }

    /// Which way the entity's extrusion points: `Ok(false)` for +Z, `Ok(true)` for −Z.
    pub(super) fn mirrored(&self, n: &dxf::Vector) -> Result<bool, ReadError> {
        let len = (n.x * n.x + n.y * n.y + n.z * n.z).sqrt();
        if !(len > 0.0 && len.is_finite()) {
            return Err(self.not_flat(n));
        }
        if (n.x / len).abs() <= EXTRUSION_TILT_LIMIT && (n.y / len).abs() <= EXTRUSION_TILT_LIMIT {
            Ok(n.z < 0.0)
        } else {
            Err(self.not_flat(n))
        }
    }

    /// An OCS point of an entity with extrusion ±Z, in WCS millimetres.
    pub(super) fn ocs(&self, x: f64, y: f64, mirrored: bool) -> Point {
        let x = if mirrored { -x } else { x };
        Point::new(x * self.scale, y * self.scale)
    }

    pub(super) fn wcs(&self, p: &dxf::Point) -> Point {
        Point::new(p.x * self.scale, p.y * self.scale)
    }

    pub(super) fn finite(&self, values: &[f64]) -> Result<(), ReadError> {
        if values.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(self
                .bad("holds a value that is not a finite number; correct it in the CAD program"))
        }
    }
}
