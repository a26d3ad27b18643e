//! Every default the command line and the job pipeline fall back on, defined once, each with its
//! reason.

/// Largest distance between the emitted path and the exact curve (mm) when none is asked for.
/// Common practice: a hundredth of a millimetre is within what a shop gauges a cut part to.
pub const TOLERANCE_MM: f64 = 0.01;

/// Steepest descent of a helix or zig-zag entry (degrees). Common practice: 1–3° in steel, up
/// to 5–10° in aluminium; the lowest safe value of the common range is the default.
pub const RAMP_ANGLE_DEG: f64 = 3.0;

/// Pocket stepover as a fraction of the tool diameter when none is asked for (defined with its
/// reason beside the plan options, which use it too).
pub use crate::plan::POCKET_STEPOVER_PER_DIAMETER;

/// Pocket stepover (mm) for a tool of `tool_diameter` mm.
pub fn pocket_stepover(tool_diameter: f64) -> f64 {
    POCKET_STEPOVER_PER_DIAMETER * tool_diameter
}

/// Edge margin (mm) kept clear of the drawing's outline when none is asked for: none.
pub const MARGIN_MM: f64 = 0.0;

/// Tab width on a mill or router when none is given (mm): router tabs are a few mm long (common
/// practice, docs/sources.md P4.3).
pub const MILL_TAB_WIDTH_MM: f64 = 4.0;

/// Tab height above the floor of the cut on a mill or router when none is given (mm): about
/// 1–3 mm (common practice, docs/sources.md P4.3).
pub const MILL_TAB_HEIGHT_MM: f64 = 1.0;

/// Micro-joint (gap) width on a laser, plasma table or waterjet when none is given (mm): laser
/// sheet bridges are about 0.2–1 mm wide (common practice, docs/sources.md P4.3).
pub const THERMAL_TAB_WIDTH_MM: f64 = 0.5;

/// The demo's cutter on a mill or router (mm): a 6 mm end mill, a common size for 3 mm plate
/// (demo data, invented).
pub const DEMO_TOOL_DIAMETER_MM: f64 = 6.0;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stepover_scales_with_the_diameter() {
        assert_eq!(pocket_stepover(6.0), 0.4 * 6.0);
        assert_eq!(pocket_stepover(10.0), 4.0);
    }
}
