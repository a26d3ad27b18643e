//! Every combination of `--lines-only`, `--scrap-side-only` and `--direction conventional`, with
//! tools of 1–12 mm and tolerances of 0.1–0.0001 mm, on the demo on the metric mill: the job ends
//! (no endless move list), any refusal names what to change and is never an internal error, and
//! every program written stays small and is the same when planned again.
//!
//! Once, the three flags together made a lead-out of ten million points (the band polygon of a
//! lead arc whose end lay off a one-sided band; `src/fit/lines.rs`), and `--lines-only` refused
//! a plain rectangle bay with a 2.9–4 mm tool as "this is a bug".
//!
//! Cases: `CONICUT_PROPTEST_CASES` (default 4 per combination in CI).

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/machine.rs"]
mod machine;

use conicut::demo::demo_dxf_bytes;
use conicut::pipeline::run_job;
use conicut::plan::Direction;
use proptest::prelude::*;

fn cases() -> u32 {
    std::env::var("CONICUT_PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(4)
}

/// Program lines no demo job comes near (the demo on the finest tolerance with lines only
/// writes a few thousand).
const MOST_LINES: usize = 200_000;

fn check(lines_only: bool, scrap_side_only: bool, conventional: bool, tool: f64, tol: f64) {
    let m = machine::machine("metric-mill");
    let s = conicut::settings::JobSettings {
        lines_only,
        scrap_side_only,
        direction: if conventional {
            Direction::Conventional
        } else {
            Direction::Climb
        },
        tolerance: tol,
        ..demo_job::demo_settings(tool)
    };
    let what = format!(
        "lines only {lines_only}, scrap side only {scrap_side_only}, conventional {conventional}, \
         tool {tool} mm, tolerance {tol} mm"
    );
    match run_job(&demo_dxf_bytes(), &m, &s) {
        Ok(out) => {
            let lines = out.program.lines().count();
            assert!(lines < MOST_LINES, "{what}: {lines} lines");
            assert!(
                out.preview.len() < 5_000_000,
                "{what}: a preview of {} bytes",
                out.preview.len()
            );
            assert!(
                !out.program.contains("NaN") && !out.preview.contains("NaN"),
                "{what}"
            );
            let again = run_job(&demo_dxf_bytes(), &m, &s).expect("the same job again");
            assert_eq!(again.program, out.program, "{what}: the same program twice");
        }
        Err(e) => {
            let text = e.to_string();
            assert!(
                !text.contains("bug") && !text.contains("fault in conicut"),
                "{what}: {text}"
            );
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases()))]

    #[test]
    fn every_combination_ends_and_refuses_only_with_a_reason(
        flags in 0u8..8,
        tool in 1.0f64..12.0,
        tol_exponent in -4.0f64..-1.0,
    ) {
        check(flags & 1 != 0, flags & 2 != 0, flags & 4 != 0, tool, 10f64.powf(tol_exponent));
    }
}

#[test]
fn the_three_flags_together_and_the_small_tools_of_the_old_report() {
    check(true, true, true, 6.0, 0.01);
    for tool in [2.9, 3.0, 3.5, 4.0] {
        check(true, false, false, tool, 0.01);
    }
}
