//! Shared by the tests that run the whole job on the bundled demo part: the bundled machine
//! profiles by file stem, and the settings `conicut demo` uses.

use conicut::job::JobSettings;
use conicut::post::MachineProfile;
use conicut::settings::BUNDLED_PROFILES;

/// The bundled profile `machine-profiles/{stem}.toml` (e.g. `metric-mill`, `laser`).
pub fn profile(stem: &str) -> MachineProfile {
    let wanted = format!("machine-profiles/{stem}.toml");
    let (file, text) = BUNDLED_PROFILES
        .iter()
        .find(|(f, _)| *f == wanted)
        .unwrap_or_else(|| panic!("no bundled profile {wanted}"));
    MachineProfile::from_toml(text, file).expect("the bundled profile loads")
}

/// The settings of `conicut demo` for the demo drawing with a tool (or kerf) of `tool_diameter`
/// mm: 4 mm edge margin, the demo's cut depth; the rest as on the command line.
pub fn demo_settings(tool_diameter: f64) -> JobSettings {
    JobSettings {
        margin: 4.0,
        depth: Some(conicut::demo::CUT_DEPTH),
        ..JobSettings::new("truss-bracket.dxf", tool_diameter)
    }
}
