//! Tabs (micro-joints): short stretches of the outline left uncut so that the part stays in the
//! sheet or on the table.

use super::{PlanError, PlanOptions, PlannedCut, Tab, TabOptions};

/// Where the tabs go on `cut`.
pub fn place_tabs(
    _cut: &PlannedCut,
    _tabs: &TabOptions,
    _opts: &PlanOptions,
    _warnings: &mut Vec<String>,
) -> Result<Vec<Tab>, PlanError> {
    Ok(Vec::new())
}
