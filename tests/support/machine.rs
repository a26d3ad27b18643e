//! The bundled machine profiles by file stem, and the program settings the post tests start
//! from (every optional setting left to the profile).

#![allow(dead_code)]

use conicut::post::{MachineProfile, ProgramSettings};
use conicut::settings::{BUNDLED_PROFILES, Machine};

/// The file name and text of the bundled profile `machine-profiles/{stem}.toml`.
pub fn profile_text(stem: &str) -> (&'static str, &'static str) {
    let wanted = format!("machine-profiles/{stem}.toml");
    BUNDLED_PROFILES
        .iter()
        .copied()
        .find(|(f, _)| *f == wanted)
        .unwrap_or_else(|| panic!("no bundled profile {wanted}"))
}

/// The bundled profile `machine-profiles/{stem}.toml` (e.g. `metric-mill`, `laser`).
pub fn profile(stem: &str) -> MachineProfile {
    let (file, text) = profile_text(stem);
    MachineProfile::from_toml(text, file).expect("the bundled profile loads")
}

/// The bundled machine `machine-profiles/{stem}.toml`: its profile and its planner defaults.
pub fn machine(stem: &str) -> Machine {
    let (file, text) = profile_text(stem);
    Machine::from_toml(text, file).expect("the bundled profile loads")
}

/// Program settings titled `title` from drawing `source`: a tool (or kerf) of `tool_diameter` mm,
/// cut `depth` mm deep, 0.01 mm tolerance; feeds, speed, stepdown, ramp angle from the profile,
/// no helical entry, no tabs.
pub fn program_settings(
    title: &str,
    source: &str,
    tool_diameter: f64,
    depth: f64,
) -> ProgramSettings {
    ProgramSettings {
        title: title.into(),
        source: source.into(),
        tool_diameter,
        depth,
        tolerance: 0.01,
        cut_feed: None,
        plunge_feed: None,
        spindle_speed: None,
        stepdown: None,
        ramp_angle_deg: None,
        helical_entry: false,
        tab_height: 0.0,
        work_zero: None,
        work_offset: None,
    }
}
