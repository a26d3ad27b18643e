//! The programs of cut-through kinds (laser, plasma, waterjet): the pierce sequence (rapid over
//! the pierce point, pierce height, process on, dwell, cut height, feed, process off), the kerf
//! in the header and in millimetres, and the comment and dwell styles a profile may choose.

#[path = "support/machine.rs"]
mod machine;
#[path = "support/post_checks.rs"]
mod post_checks;
use conicut::post::{MachineProfile, ProgramSettings, write_program};
use conicut::settings::METRIC_MILL_TOML;
use machine::{profile, profile_text};
use post_checks::*;

#[test]
fn laser_plasma_and_waterjet_pierce_dwell_and_cut_at_height() {
    // Sequence from the brief for cut-through kinds (docs/sources.md P4.3, common
    // practice): rapid at safe height over the pierce point, down to the pierce height, process
    // on, pierce dwell G4 P in seconds (NISTIR 6556 §3.5.4), down to the cut height, feed along the
    // path, process off, up to the safe height.
    for (file, on, off, safe, pierce, cut_z, dwell) in [
        ("laser.toml", "M3", "M5", "10.000", "1.500", "0.800", "0.50"),
        ("plasma.toml", "M3", "M5", "15.00", "3.80", "1.50", "0.80"),
        (
            "waterjet.toml",
            "M3",
            "M5",
            "25.000",
            "3.000",
            "2.000",
            "2.00",
        ),
    ] {
        let profile = profile(file.trim_end_matches(".toml"));
        let cuts = [
            square_cut("hole 1", 10.0, 20.0, 30.0),
            square_cut("hole 2", 60.0, 20.0, 30.0),
        ];
        let s = ProgramSettings {
            tool_diameter: profile.kerf_width().unwrap(),
            depth: 0.0,
            ..settings()
        };
        let program = write_program(&cuts, &profile, &s).unwrap();
        assert_format_rules(&program);
        let b = blocks(&program);
        let at = |i: usize| b[i].as_str();
        let first = b.iter().position(|l| l.starts_with("G0 X")).unwrap();
        assert_eq!(at(first - 1), format!("G0 Z{safe}"), "{file}: {b:#?}");
        assert!(at(first).starts_with("G0 X25.") && at(first).contains(" Y35."));
        assert_eq!(at(first + 1), format!("G0 Z{pierce}"), "{file}");
        assert_eq!(at(first + 2), on, "{file}");
        assert_eq!(at(first + 3), format!("G4 P{dwell}"), "{file}");
        assert!(
            at(first + 4).starts_with(&format!("G1 Z{cut_z} F")),
            "{file}"
        );
        assert!(at(first + 5).starts_with("G1 X10.") && at(first + 5).contains(" F"));
        // Four sides of the square, then off and up.
        assert_eq!(at(first + 10), off, "{file}: {b:#?}");
        assert_eq!(at(first + 11), format!("G0 Z{safe}"), "{file}");
        // Two cuts: the process is switched on and off once per cut, the dwell once per pierce.
        assert_eq!(b.iter().filter(|l| *l == on).count(), 2, "{file}");
        assert_eq!(b.iter().filter(|l| *l == off).count(), 2, "{file}");
        assert_eq!(b.iter().filter(|l| l.starts_with("G4 ")).count(), 2);
        // Cut-through kinds never go below the sheet, and never write a spindle speed.
        for m in moves(&program) {
            assert!(m.z.is_none_or(|z| z > 0.0), "{file}: {m:?}");
        }
        assert!(!b.iter().any(|l| l.contains(" S")), "{file}");
        assert!(program.contains("kerf width the paths allow for"), "{file}");
        assert!(program.contains("cut through, no depth"), "{file}");
    }
}

#[test]
fn a_kerf_other_than_the_profiles_is_noted_in_the_header() {
    let laser = profile("laser");
    let s = ProgramSettings {
        tool_diameter: 0.3,
        ..settings()
    };
    let program = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &laser, &s).unwrap();
    assert!(
        program.contains(
            "(kerf width the paths allow for 0.3000 mm, the profile's kerf width is 0.2000 mm)"
        ),
        "{program}"
    );
    // A cut-through kind needs a positive kerf but no depth.
    let s = ProgramSettings {
        tool_diameter: 0.0,
        ..settings()
    };
    let err = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &laser, &s).unwrap_err();
    assert!(err.to_string().contains("kerf width"), "{err}");
}

#[test]
fn kerf_width_is_given_in_millimetres() {
    assert_eq!(profile("laser").kerf_width(), Some(0.2));
    assert_eq!(profile("metric-mill").kerf_width(), None);
    assert_eq!(profile("inch-router").kerf_width(), None);
    let text = profile_text("laser")
        .1
        .replace("units = \"mm\"", "units = \"in\"")
        .replace("kerf_width = 0.2 ", "kerf_width = 0.01")
        .replace("xy_decimals = 4", "xy_decimals = 5");
    let inch_laser = MachineProfile::from_toml(&text, "inch-laser.toml").unwrap();
    // 0.01 in = 0.254 mm exactly (international inch, 1959).
    assert!((inch_laser.kerf_width().unwrap() - 0.254).abs() < 1e-12);
}

#[test]
fn semicolon_comments_and_millisecond_dwells_are_profile_options() {
    let text = METRIC_MILL_TOML
        .replace(
            "comment_style = \"parentheses\"",
            "comment_style = \"semicolon\"",
        )
        .replace("dwell_unit = \"seconds\"", "dwell_unit = \"milliseconds\"");
    let p = MachineProfile::from_toml(&text, "semicolon.toml").unwrap();
    let program = write_program(&[square_cut("a (x)", 10.0, 10.0, 5.0)], &p, &settings()).unwrap();
    assert!(!program.lines().any(|l| l.starts_with('(')), "{program}");
    assert!(program.contains("\n; SAFETY - read before running this program\n"));
    // The metric mill waits 2 s for its spindle: 2000 ms.
    assert!(program.contains("\nG4 P2000\n"), "{program}");
    // The outside parser reads `;` comments and finds the same moves as with parentheses.
    let parens = write_program(
        &[square_cut("a (x)", 10.0, 10.0, 5.0)],
        &mill(),
        &settings(),
    )
    .unwrap();
    assert_eq!(moves(&program), moves(&parens));
    assert!(parens.contains("\nG4 P2.00\n"));
}
