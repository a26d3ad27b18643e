//! The stages that run across features in parallel (planning the leads, fitting, the read-back
//! and the scrap check) give the same bytes, and the same first error, as a serial run.

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/machine.rs"]
mod machine;

use conicut::demo::sheet::sheet_dxf;
use conicut::pipeline::{JobOutput, JobSettings, run_job};
use conicut::settings::Machine;

/// Runs the job on a rayon pool of `threads` threads.
fn on_threads<T: Send>(threads: usize, job: impl FnOnce() -> T + Send) -> T {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .expect("a thread pool")
        .install(job)
}

fn assert_same(serial: &JobOutput, parallel: &JobOutput, what: &str) {
    assert_eq!(serial.program, parallel.program, "{what}: program");
    assert_eq!(serial.preview, parallel.preview, "{what}: preview");
    assert_eq!(
        serial.report.to_json(),
        parallel.report.to_json(),
        "{what}: report"
    );
}

#[test]
fn a_sheet_on_a_laser_is_the_same_on_one_thread_and_on_four() {
    let dxf = sheet_dxf(120, 3);
    let laser = machine::machine("laser");
    let kerf = laser.profile.kerf_width().expect("a kerf");
    let s = JobSettings::new("sheet.dxf", kerf);
    let run = |threads| {
        on_threads(threads, || {
            run_job(dxf.as_bytes(), &laser, &s).map_err(|e| e.to_string())
        })
    };
    let serial = run(1).expect("the sheet is cut");
    assert_eq!(
        serial.report.features.len(),
        120 + 40 + 1,
        "bays, holes, outline"
    );
    for threads in [2, 4] {
        assert_same(
            &serial,
            &run(threads).expect("the sheet is cut"),
            "laser sheet",
        );
    }
}

#[test]
fn the_demo_on_a_mill_is_the_same_on_one_thread_and_on_four() {
    let mill: Machine = machine::machine("metric-mill");
    let s = demo_job::demo_settings(6.0);
    let dxf = conicut::demo::demo_dxf_bytes();
    let run = |threads| {
        on_threads(threads, || {
            run_job(&dxf, &mill, &s).map_err(|e| e.to_string())
        })
    };
    assert_same(&run(1).unwrap(), &run(4).unwrap(), "demo");
}

#[test]
fn the_first_error_is_the_same_on_one_thread_and_on_four() {
    // A pierce clearance of 5 mm leaves no pierce point in any of the four Ø9 mm bolt holes:
    // the lead planner (which runs the cuts in parallel) refuses, naming the first hole in cut
    // order whichever thread finds a failing one first.
    let (file, text) = machine::profile_text("plasma");
    let text = text.replace("pierce_clearance = 3.5", "pierce_clearance = 5.0");
    let plasma = Machine::from_toml(&text, file).expect("the changed profile loads");
    let kerf = plasma.profile.kerf_width().expect("a kerf");
    let s = demo_job::demo_settings(kerf);
    let dxf = conicut::demo::demo_dxf_bytes();
    let run = |threads| {
        on_threads(threads, || {
            run_job(&dxf, &plasma, &s).map_err(|e| e.to_string())
        })
    };
    let serial = run(1).expect_err("no hole has room for the pierce");
    assert!(serial.contains("hole 1"), "{serial}");
    for _ in 0..5 {
        assert_eq!(run(4).expect_err("refused"), serial);
    }
}
