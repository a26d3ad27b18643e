//! Shared by the tests that run the whole job on the bundled demo part: the settings
//! `conicut demo` uses, and the demo drawing read and chained as a user's file would be.

#![allow(dead_code)]

use conicut::chain::{ChainOptions, Part, build_part};
use conicut::pipeline::JobSettings;
use conicut::read::{Drawing, ReadOptions, read_dxf};

/// The settings of `conicut demo` for the demo drawing with a tool (or kerf) of `tool_diameter`
/// mm: 4 mm edge margin, the demo's cut depth; the rest as on the command line.
pub fn demo_settings(tool_diameter: f64) -> JobSettings {
    JobSettings {
        margin: 4.0,
        depth: Some(conicut::demo::CUT_DEPTH),
        ..JobSettings::new("truss-bracket.dxf", tool_diameter)
    }
}

/// The demo drawing as `conicut::demo::demo_dxf_bytes()` writes it, read as
/// `truss-bracket.dxf` with the units it states.
pub fn demo_drawing() -> Drawing {
    read_dxf(
        &conicut::demo::demo_dxf_bytes(),
        &ReadOptions {
            file_name: "truss-bracket.dxf",
            units: None,
        },
    )
    .expect("the demo drawing reads")
}

/// The demo drawing chained into a part with the default options.
pub fn demo_part() -> Part {
    build_part(&demo_drawing(), &ChainOptions::default()).expect("the demo drawing chains")
}
