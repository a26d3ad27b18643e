//! cargo fuzz target `gcode_pictures`: the same check as the stable harness's (tests/fuzz_harness.rs),
//! with the SVG and HTML pictures.
#![no_main]

#[path = "../../tests/support/fuzz_targets.rs"]
mod fuzz_targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| fuzz_targets::gcode_pictures(data));
