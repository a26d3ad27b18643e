//! Machine profile errors: every bad key, type, value or syntax is refused with the file, the
//! line and the key, and what is wanted.

#[path = "support/machine.rs"]
mod machine;
use conicut::post::MachineProfile;
use conicut::settings::METRIC_MILL_TOML;
use machine::profile_text;

#[test]
fn unknown_key_reports_line_and_key() {
    let text = METRIC_MILL_TOML.replace("cut_feed = 400.0", "cut_fed = 400.0");
    let line = text.lines().position(|l| l.starts_with("cut_fed")).unwrap() + 1;
    let err = MachineProfile::from_toml(&text, "shop.toml").unwrap_err();
    assert_eq!(err.file, "shop.toml");
    assert_eq!(err.line, Some(line));
    assert_eq!(err.key.as_deref(), Some("cut_fed"));
    let msg = err.to_string();
    assert!(
        msg.contains(&format!("shop.toml, line {line}, key `cut_fed`")),
        "{msg}"
    );
}

#[test]
fn wrong_type_reports_line_and_key() {
    let text = METRIC_MILL_TOML.replace("max_feed = 2500.0", "max_feed = \"fast\"");
    let line = text
        .lines()
        .position(|l| l.starts_with("max_feed"))
        .unwrap()
        + 1;
    let err = MachineProfile::from_toml(&text, "shop.toml").unwrap_err();
    assert_eq!(
        (err.line, err.key.as_deref()),
        (Some(line), Some("max_feed")),
        "{err}"
    );
}

#[test]
fn bad_units_value_reports_line_and_key() {
    let text = METRIC_MILL_TOML.replace("units = \"mm\"", "units = \"cm\"");
    let line = text.lines().position(|l| l.starts_with("units")).unwrap() + 1;
    let err = MachineProfile::from_toml(&text, "shop.toml").unwrap_err();
    assert_eq!(
        (err.line, err.key.as_deref()),
        (Some(line), Some("units")),
        "{err}"
    );
}

#[test]
fn missing_key_is_named() {
    let text: String = METRIC_MILL_TOML
        .lines()
        .filter(|l| !l.starts_with("plunge_feed"))
        .map(|l| format!("{l}\n"))
        .collect();
    let err = MachineProfile::from_toml(&text, "shop.toml").unwrap_err();
    assert_eq!(err.key.as_deref(), Some("plunge_feed"), "{err}");
    assert!(err.to_string().contains("missing"), "{err}");
}

#[test]
fn values_are_validated_with_line_and_key() {
    let cases = [
        ("cut_feed = 400.0", "cut_feed = -5.0", "cut_feed"),
        ("cut_feed = 400.0", "cut_feed = 3000.0", "cut_feed"),
        ("xy_decimals = 4", "xy_decimals = 7", "xy_decimals"),
        (
            "retract_height = 2.0",
            "retract_height = 20.0",
            "retract_height",
        ),
        ("x_max = 400.0", "x_max = -20.0", "travel.x_min"),
        ("safe_height = 15.0", "safe_height = 90.0", "safe_height"),
        (
            "start_block = [\"G54\"]",
            "start_block = [\"G54\", \"M30\"]",
            "start_block",
        ),
        (
            "spindle_on = \"M3\"",
            "spindle_on = \"M3 (on\"",
            "spindle_on",
        ),
        ("arc_form = \"centre\"", "arc_form = \"radius\"", "arc_form"),
        ("xy_decimals = 4", "xy_decimals = 2", "xy_decimals"),
        (
            "max_feed = 2500.0",
            "max_feed = 2500.0\npierce_height = 3.0",
            "pierce_height",
        ),
        ("rapid_feed = 5000.0", "rapid_feed = 2000.0", "max_feed"),
        ("acceleration = 500.0", "acceleration = 0.0", "acceleration"),
    ];
    for (from, to, key) in cases {
        let text = METRIC_MILL_TOML.replace(from, to);
        assert_ne!(text, METRIC_MILL_TOML, "{from} not in the profile");
        let err = MachineProfile::from_toml(&text, "shop.toml").unwrap_err();
        assert_eq!(err.key.as_deref(), Some(key), "{to}: {err}");
        let (table, bare) = key.rsplit_once('.').unwrap_or(("", key));
        let expected_line = text
            .lines()
            .position(|l| l.starts_with(&format!("{bare} ")))
            .map(|i| i + 1);
        assert!(table.is_empty() || text.contains(&format!("[{table}]")));
        assert_eq!(err.line, expected_line, "{to}: {err}");
    }
}

#[test]
fn keys_of_other_kinds_are_refused_and_own_keys_required() {
    // A laser takes beam_on / beam_off, not a plasma's torch words nor a spindle.
    let laser = profile_text("laser").1;
    let text = laser.replace("beam_on = ", "torch_on = ");
    let err = MachineProfile::from_toml(&text, "laser.toml").unwrap_err();
    assert_eq!(err.key.as_deref(), Some("torch_on"), "{err}");
    assert!(err.to_string().contains("plasma profiles"), "{err}");
    assert!(err.to_string().contains("beam_on and beam_off"), "{err}");
    let text = format!("spindle_speed = 100.0\n{laser}");
    let err = MachineProfile::from_toml(&text, "laser.toml").unwrap_err();
    assert_eq!(
        (err.key.as_deref(), err.line),
        (Some("spindle_speed"), Some(1)),
        "{err}"
    );
    // A missing kerf width is named, with the kind that needs it.
    let text: String = laser
        .lines()
        .filter(|l| !l.starts_with("kerf_width"))
        .map(|l| format!("{l}\n"))
        .collect();
    let err = MachineProfile::from_toml(&text, "laser.toml").unwrap_err();
    assert_eq!(err.key.as_deref(), Some("kerf_width"), "{err}");
    assert!(err.to_string().contains("a laser profile needs"), "{err}");
    // Heights in order: the pierce starts above the cut height.
    let text = laser.replace("cut_height = 0.8", "cut_height = 2.0");
    let err = MachineProfile::from_toml(&text, "laser.toml").unwrap_err();
    assert_eq!(err.key.as_deref(), Some("cut_height"), "{err}");
}

#[test]
fn toml_syntax_error_reports_the_line() {
    let text = METRIC_MILL_TOML.replace("spindle_speed = 8000.0", "spindle_speed = = 8000");
    let line = text
        .lines()
        .position(|l| l.starts_with("spindle_speed"))
        .unwrap()
        + 1;
    let err = MachineProfile::from_toml(&text, "shop.toml").unwrap_err();
    assert_eq!(err.line, Some(line), "{err}");
}

#[test]
fn the_program_extension_is_nc_unless_the_profile_names_a_plain_one() {
    let p = MachineProfile::from_toml(METRIC_MILL_TOML, "shop.toml").unwrap();
    assert_eq!(p.program_extension(), "nc");
    let text = METRIC_MILL_TOML.replace(
        "line_numbers = false",
        "line_numbers = false\nprogram_extension = \".tap\"",
    );
    assert!(text.contains("program_extension"), "the key was added");
    let p = MachineProfile::from_toml(&text, "shop.toml").unwrap();
    assert_eq!(p.program_extension(), "tap");
    for bad in ["", "n/c", "toolongext", "n c"] {
        let text = METRIC_MILL_TOML.replace(
            "line_numbers = false",
            &format!("line_numbers = false\nprogram_extension = \"{bad}\""),
        );
        let err = MachineProfile::from_toml(&text, "shop.toml").unwrap_err();
        assert_eq!(
            err.key.as_deref(),
            Some("program_extension"),
            "{bad}: {err}"
        );
        assert!(err.to_string().contains("letters or digits"), "{err}");
    }
}
