//! Stage 2, chain: joins the drawing's entities into closed contours and sorts them into the
//! part outline, its holes, and bays (construction geometry on the bay layer).
//!
//! # Limits
//!
//! * Largest gap ([`ChainOptions::max_gap`], the `--gap-tolerance` flag, default
//!   [`DEFAULT_MAX_GAP`] = 0.01 mm): piece ends this close are joined, and snapped to one shared
//!   point. A bay side or a bay's mean width not above it is degenerate.
//! * Collinear sides of a bay merge when their directions differ by at most
//!   [`COLLINEAR_ANGLE_LIMIT`] = 1e-4 rad.
//! * Polyline pieces at most 1e-9 mm long are zero-length.
//! * Crossings between contours are looked for on chords that lie within
//!   [`CROSSING_CHECK_SAGITTA`] = 0.001 mm of the arcs and ellipses.

mod bay;
mod build;
mod classify;
mod contour;
mod crossing;
mod error;
mod gather;
mod join;

pub use bay::{Bay, COLLINEAR_ANGLE_LIMIT};
pub use build::{
    CROSSING_CHECK_SAGITTA, ChainOptions, DEFAULT_BAY_LAYER, DEFAULT_MAX_GAP, build_part,
};
pub use contour::{InnerBoundary, InnerShape, LayerRole, LayerUse, Part};

pub use error::{BayError, BayProblem, ChainError, OpenContour};

use error::fmt_handles;
