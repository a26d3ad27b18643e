//! The committed demo drawing `demo-parts/truss-bracket.dxf` must be exactly what
//! `conicut::demo::demo_dxf_bytes()` writes.
//!
//! After changing the demo on purpose, regenerate the file with
//! `CONICUT_REGENERATE_DEMO=1 cargo test --test demo_part` and commit it; the test then
//! passes on the next run without the variable.

use conicut::chain::{ChainOptions, build_part};
use conicut::demo::{BAYS, demo_dxf_bytes};
use conicut::read::{ReadOptions, read_dxf};
use std::path::PathBuf;

fn demo_path() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("demo-parts/truss-bracket.dxf")
}

#[test]
fn committed_demo_matches_the_generator() {
    let generated = demo_dxf_bytes();
    let path = demo_path();
    if std::env::var("CONICUT_REGENERATE_DEMO").as_deref() == Ok("1") {
        std::fs::write(&path, &generated).expect("write the demo drawing");
    }
    let committed = std::fs::read(&path).unwrap_or_else(|e| {
        panic!(
            "cannot read {}: {e}; run with CONICUT_REGENERATE_DEMO=1 to create it",
            path.display()
        )
    });
    assert!(
        committed == generated,
        "{} differs from demo_dxf_bytes(); if the change is intended, run \
         CONICUT_REGENERATE_DEMO=1 cargo test --test demo_part",
        path.display()
    );
}

#[test]
fn committed_demo_reads_back_as_the_scenario() {
    let bytes = std::fs::read(demo_path()).expect("demo drawing present");
    let drawing = read_dxf(
        &bytes,
        &ReadOptions {
            file_name: "truss-bracket.dxf",
            units: None,
        },
    )
    .expect("demo reads");
    assert!(drawing.notes.is_empty(), "{:?}", drawing.notes);
    let part = build_part(&drawing, &ChainOptions::default()).expect("demo chains");
    assert!(part.warnings.is_empty(), "{:?}", part.warnings);
    assert!(part.outline.is_some());
    assert_eq!(part.holes.len(), 4);
    assert_eq!(part.bays.len(), 4);
    for (bay, expected) in part.bays.iter().zip(BAYS) {
        let got: Vec<(f64, f64)> = bay.corners.iter().map(|p| (p.x, p.y)).collect();
        assert_eq!(got, expected, "{}", bay.name);
    }
}
