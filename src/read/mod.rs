//! Stage 1, read: turns the bytes of an ASCII DXF file into plane entities in millimetres, in
//! world coordinates (WCS), with the layer, handle and line each came from.
//!
//! # What is read
//!
//! LINE, ARC, CIRCLE, LWPOLYLINE, POLYLINE (2-D and flat 3-D; bulges kept; spline frame
//! control points skipped; meshes noted and skipped), ELLIPSE and POINT, in model space.
//! Everything else (TEXT, INSERT, SPLINE, HATCH, DIMENSION, …) and paper-space entities are
//! listed in [`Drawing::notes`] with their type, layer and handles, never dropped silently.
//! Zero-length LINEs and zero-radius ARCs and CIRCLEs are degenerate leftovers of editing: they are
//! skipped with a note (they enclose nothing and join nothing).
//!
//! # Units
//!
//! Coordinates are converted to millimetres here and nowhere else. The drawing's unit comes
//! from `$INSUNITS` (1 inch, 2 foot, 4 mm, 5 cm, 6 m; see [`Units`]); when the header has none
//! (0 or missing, as in most R12 files) the caller must say which unit with
//! [`ReadOptions::units`]; when both are given and disagree, the file is refused. Nothing is
//! guessed. DXF angles: ARC angles are degrees, ELLIPSE parameters radians; both come out in
//! radians.
//!
//! # Object coordinate systems
//!
//! ARC, CIRCLE, LWPOLYLINE and 2-D POLYLINE store points in the entity's object coordinate
//! system (OCS), set by its extrusion direction N. Only N = ±Z is accepted: a unit normal whose
//! x and y components are both at most [`EXTRUSION_TILT_LIMIT`] in size. For N = (0, 0, −1) the
//! Arbitrary Axis Algorithm (DXF reference) gives the OCS axes Ax = (−1, 0, 0), Ay = (0, 1, 0),
//! so an OCS point (x, y) is the WCS point (−x, y); an arc that runs counter-clockwise about N
//! runs clockwise seen from +Z, so its WCS start angle is π − start and its sweep changes sign;
//! bulges change sign (docs/sources.md P2.3). LINE, ELLIPSE and POINT store WCS points;
//! an ELLIPSE with N = −Z has its minor axis along N × M = −(Z × M), so its parameter runs
//! clockwise seen from +Z. Any other N is refused, naming the entity. Elevations (z) are
//! dropped; a LINE or 3-D POLYLINE whose z varies by more than [`FLAT_Z_LIMIT`] drawing units
//! is refused (it does not lie in a plane parallel to XY).
//!
//! # Trusting the DXF library
//!
//! The `dxf` crate can drop an entity holding a value it cannot parse and still return `Ok`.
//! [`read_dxf`] therefore reads the text a second time itself: it checks that every numeric
//! value in the ENTITIES section is a finite number (naming the line when not), and matches the
//! entity records it finds one by one with what the crate loaded, refusing the file when one
//! went missing.

mod blocks;
mod convert;
mod dropped;
mod entity;
mod error;
mod load;
mod notes;
mod ocs;
pub mod points;
mod prepass;
mod raw;
mod spline;
mod units;

pub use blocks::{MAX_NESTING, SIMILARITY_TOLERANCE};
pub use convert::{FLAT_Z_LIMIT, FULL_ARC_SLACK_DEG, FULL_ELLIPSE_SLACK};
pub use entity::{Drawing, Entity, EntityKind, Layer};
pub use error::ReadError;
pub use load::{library_panicking, load_for_copy, read_dxf};
pub use ocs::EXTRUSION_TILT_LIMIT;
pub use points::{PointsError, PointsProblem, parse_points_csv};
pub use prepass::{KEPT_HEADER_VARIABLES, KEPT_TABLES};
pub use spline::{MAX_SPLINE_ARCS, SPLINE_TOLERANCE};
pub use units::{Units, UnitsSource, UnknownUnits};

/// What the caller knows about the file beyond its bytes.
#[derive(Debug, Clone, Copy)]
pub struct ReadOptions<'a> {
    /// The file's name, for messages.
    pub file_name: &'a str,
    /// The unit the user says the drawing is in (the `--units` flag), if any.
    pub units: Option<Units>,
}

#[cfg(test)]
mod tests;
