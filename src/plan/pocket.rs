//! Pockets: an elliptical pocket cleared by rings at a stepover before its finishing contour.

use super::{ExactPath, PlanError, PlanOptions};
use crate::geom::Ellipse;

/// The clearing rings of the pocket `e` for a tool of radius `r`, innermost first.
pub fn clearing_rings(
    _name: &str,
    _e: &Ellipse,
    _r: f64,
    _opts: &PlanOptions,
) -> Result<Vec<ExactPath>, PlanError> {
    Ok(Vec::new())
}
