//! Random four-sided bays in a plate (written by the outside `dxf` crate, R2000, mm), random
//! tools, tolerances and bundled profiles, through the whole job: it never panics; it either
//! writes a program (which the job's own read-back and `conicut check` have passed: deviation
//! within the tolerance, no gouge, nothing off the scrap) with no NaN anywhere in its outputs and
//! the same bytes when run again, or refuses in plain words (never an internal error).
//!
//! Cases: `CONICUT_PROPTEST_CASES` (default 6 in CI; the long run sets it in the thousands).

#[path = "support/machine.rs"]
mod machine;

use conicut::pipeline::run_job;
use conicut::settings::JobSettings;
use dxf::LwPolylineVertex;
use dxf::entities::{Entity, EntityType, LwPolyline};
use dxf::enums::{AcadVersion, Units};
use proptest::prelude::*;

fn cases() -> u32 {
    std::env::var("CONICUT_PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(6)
}

fn polyline(layer: &str, corners: &[(f64, f64)]) -> Entity {
    let mut p = LwPolyline::default();
    p.set_is_closed(true);
    for &(x, y) in corners {
        p.vertices.push(LwPolylineVertex {
            x,
            y,
            ..Default::default()
        });
    }
    let mut e = Entity::new(EntityType::LwPolyline(p));
    e.common.layer = layer.into();
    e
}

/// A 200 × 120 mm plate with its lower-left corner at (30, 30) (clear of the bundled profiles'
/// travel limits for any lead) with one bay: the rectangle (90..170) × (60..120) with each
/// corner moved by the given offsets (mm).
fn drawing(moves: &[(f64, f64); 4]) -> Vec<u8> {
    let mut d = dxf::Drawing::new();
    d.header.version = AcadVersion::R2000;
    d.header.default_drawing_units = Units::Millimeters;
    d.add_entity(polyline(
        "PLATE",
        &[(30.0, 30.0), (230.0, 30.0), (230.0, 150.0), (30.0, 150.0)],
    ));
    let base = [(90.0, 60.0), (170.0, 60.0), (170.0, 120.0), (90.0, 120.0)];
    let corners: Vec<(f64, f64)> = base
        .iter()
        .zip(moves)
        .map(|(&(x, y), &(dx, dy))| (x + dx, y + dy))
        .collect();
    d.add_entity(polyline("OPENING-BAYS", &corners));
    let mut out = Vec::new();
    d.save(&mut out).expect("the dxf crate writes");
    out
}

const PROFILES: [&str; 5] = ["metric-mill", "inch-router", "laser", "plasma", "waterjet"];

proptest! {
    #![proptest_config(ProptestConfig::with_cases(cases()))]

    #[test]
    fn any_bay_tool_tolerance_and_profile_plans_cleanly_or_says_why(
        moves in prop::array::uniform4((-15.0f64..15.0, -12.0f64..12.0)),
        profile in 0usize..5,
        tool in 1.0f64..12.0,
        tol_exponent in -3.0f64..-1.0,
        margin in 0.0f64..6.0,
    ) {
        let stem = PROFILES[profile];
        let m = machine::machine(stem);
        let thermal = m.profile.kerf_width().is_some();
        let mut s = JobSettings::new("random.dxf", tool);
        if thermal {
            s.tool_diameter = None; // the profile's kerf
        }
        s.tolerance = 10f64.powf(tol_exponent);
        s.margin = margin;
        let bytes = drawing(&moves);
        let what = format!("{stem}, tool {tool}, tolerance {}, margin {margin}, {moves:?}", s.tolerance);
        match run_job(&bytes, &m, &s) {
            Ok(out) => {
                let report = out.report.to_json();
                for (name, text) in [("program", &out.program), ("preview", &out.preview), ("report", &report)] {
                    prop_assert!(!text.contains("NaN"), "{what}: {name}");
                }
                // Every number the program writes is finite.
                for line in out.program.lines().filter(|l| !l.starts_with('(') && *l != "%") {
                    for word in line.split_whitespace() {
                        let value = &word[1..];
                        prop_assert!(
                            value.parse::<f64>().is_ok_and(f64::is_finite),
                            "{what}: {word} in {line}"
                        );
                    }
                }
                let again = run_job(&bytes, &m, &s).expect("the same job again");
                prop_assert_eq!(&again.program, &out.program, "{}", what);
                prop_assert_eq!(&again.preview, &out.preview, "{}", what);
            }
            Err(e) => {
                let text = e.to_string();
                prop_assert!(!text.contains("bug") && !text.contains("fault in conicut"), "{what}: {text}");
            }
        }
    }
}
