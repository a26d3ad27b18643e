//! cargo fuzz target `gcode`: the same check as the stable harness's (tests/fuzz_harness.rs), without
//! pictures (`gcode_pictures` has them).
#![no_main]

#[path = "../../tests/support/fuzz_targets.rs"]
mod fuzz_targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| fuzz_targets::gcode(data));
