//! Length units: the one place the inch is defined.
//!
//! Millimetres are the working unit everywhere (see the module notes in [`crate::geom`]); a file
//! written or read in inches converts at its edge with [`MM_PER_INCH`].

/// Millimetres per inch (exact by definition, international yard and pound agreement of 1959).
pub const MM_PER_INCH: f64 = 25.4;
