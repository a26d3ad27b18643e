//! cargo fuzz target `dxf`: the same check as the stable harness's (tests/fuzz_harness.rs).
#![no_main]

#[path = "../../tests/support/fuzz_targets.rs"]
mod fuzz_targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| fuzz_targets::dxf(data));
