//! The fuzz targets: what each reader of outside text is held to on any input at all. Shared by
//! the stable harness `tests/fuzz_harness.rs` (CI: a short, repeatable run) and the cargo-fuzz
//! targets in `fuzz/fuzz_targets/` (long coverage-guided runs; DEVELOPERS.md says how).
//!
//! Each target must never panic, and what it gives back must be well formed: an error with a
//! message, or a result whose JSON form parses (no NaN written as a bare number, nothing cut
//! short).

#![allow(dead_code)]

use conicut::check::program::{Pictures, check_program};
use conicut::pipeline::{against_rules, machine_rules, planned_cuts, resolve, solve_job};
use conicut::plan::PlannedCut;
use conicut::settings::job_file::parse_job_file;
use conicut::settings::{BUNDLED_PROFILES, JobSettings, Machine};
use std::sync::OnceLock;

/// A DXF drawing: read, chained and every feature solved, as `conicut solve` does.
pub fn dxf(bytes: &[u8]) {
    let s = JobSettings::new("fuzz.dxf", 6.0);
    match solve_job(bytes, &s) {
        Ok(listing) => {
            let json = listing.to_json();
            serde_json::from_str::<serde_json::Value>(&json).expect("the listing's JSON parses");
        }
        Err(e) => assert!(!e.to_string().is_empty()),
    }
}

/// A job file.
pub fn job(bytes: &[u8]) {
    let text = String::from_utf8_lossy(bytes);
    if let Err(e) = parse_job_file(&text, "fuzz-job.toml") {
        assert!(!e.to_string().is_empty());
    }
}

/// A machine profile.
pub fn profile(bytes: &[u8]) {
    let text = String::from_utf8_lossy(bytes);
    if let Err(e) = Machine::from_toml(&text, "fuzz-profile.toml") {
        assert!(!e.to_string().is_empty());
    }
}

/// What a program is checked against: the metric mill's rules and the demo's cuts on it (6 mm
/// tool), worked out once.
struct Demo {
    machine: conicut::check::program::MachineRules,
    against: conicut::check::against::AgainstRules,
    cuts: Vec<PlannedCut>,
}

fn demo_on_the_mill() -> &'static Demo {
    static DEMO: OnceLock<Demo> = OnceLock::new();
    DEMO.get_or_init(|| {
        let (name, text) = BUNDLED_PROFILES[0];
        let machine = Machine::from_toml(text, name).expect("the bundled profile");
        let s = JobSettings::new("truss-bracket.dxf", 6.0);
        let resolved = resolve(&s, &machine).expect("the demo's settings");
        let cuts = planned_cuts(
            &conicut::demo::demo_dxf_bytes(),
            &machine.profile,
            &s,
            &resolved,
        )
        .expect("the demo plans");
        Demo {
            machine: machine_rules(&machine.profile),
            against: against_rules(&s, &resolved, &machine.profile, false),
            cuts,
        }
    })
}

/// `bytes` as a program, checked against the demo with the pictures asked for.
fn check_demo(bytes: &[u8], pictures: &Pictures) -> conicut::check::program::ProgramCheck {
    let text = String::from_utf8_lossy(bytes);
    let demo = demo_on_the_mill();
    let checked = check_program(&text, &demo.machine, &demo.cuts, &demo.against, pictures);
    serde_json::from_str::<serde_json::Value>(&checked.to_json()).expect("the check's JSON parses");
    checked
}

/// A G-code program: read and checked against the demo on the metric mill, as `conicut check`
/// does, without pictures (the cargo-fuzz target `gcode`: the reader and the checker, fast).
pub fn gcode(bytes: &[u8]) {
    check_demo(
        bytes,
        &Pictures {
            svg: false,
            html: None,
        },
    );
}

/// The same with the SVG and HTML pictures, as `conicut check --svg --html` (the cargo-fuzz
/// target `gcode_pictures`: slower, the pictures' fixed part costs most of each run).
pub fn gcode_pictures(bytes: &[u8]) {
    let checked = check_demo(
        bytes,
        &Pictures {
            svg: true,
            html: Some("fuzz".into()),
        },
    );
    let page = checked.view.expect("the page asked for");
    let open = r#"<script id="data" type="application/json">"#;
    let start = page.find(open).expect("the data element") + open.len();
    let end = start
        + page[start..]
            .find("</script>")
            .expect("the data ends in its element");
    serde_json::from_str::<serde_json::Value>(&page[start..end]).expect("the page's data parses");
}
