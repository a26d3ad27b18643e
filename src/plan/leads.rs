//! Leads: how the tool reaches each contour from the plunge or pierce point, and leaves it, in
//! the scrap.

use super::{PlanError, PlanOptions, PlannedCut};

/// Adds the lead-in, overcut and lead-out that `opts.leads` asks for to every cut.
pub fn add_leads(
    _cuts: &mut [PlannedCut],
    _opts: &PlanOptions,
    _warnings: &mut Vec<String>,
) -> Result<(), PlanError> {
    Ok(())
}
