//! The post stage writes programs that an independent RS274 parser (the `gcode` crate) reads back
//! to the same moves, that keep the format rules of NISTIR 6556, and that refuse what the machine
//! profile forbids.

use conicut::fit::FittedCut;
use conicut::geom::Point;
use conicut::plan::{CutSide, FeatureKind};
use conicut::post::{
    BUNDLED_PROFILES, METRIC_MILL_TOML, MachineProfile, PRECEDENCE, PostError, ProgramSettings,
    SAFETY_HEADING, write_program,
};
use gcode::{Code, Value};

fn square_cut(name: &str, x0: f64, y0: f64, side: f64) -> FittedCut {
    let path = vec![
        Point::new(x0, y0),
        Point::new(x0 + side, y0),
        Point::new(x0 + side, y0 + side),
        Point::new(x0, y0 + side),
        Point::new(x0, y0),
    ];
    FittedCut::from_points(
        name,
        FeatureKind::Hole,
        CutSide::Inside,
        Point::new(x0 + side / 2.0, y0 + side / 2.0),
        &path,
        0.01,
        0.0,
    )
}

fn settings() -> ProgramSettings {
    ProgramSettings {
        title: "test plate (rev A)".into(),
        source: "plate.dxf".into(),
        tool_diameter: 6.0,
        depth: 1.5,
        tolerance: 0.01,
        cut_feed: Some(500.0),
        plunge_feed: Some(120.0),
        spindle_speed: Some(9000.0),
        stepdown: None,
        ramp_angle_deg: None,
        helical_entry: false,
        tab_height: 0.0,
    }
}

fn mill() -> MachineProfile {
    MachineProfile::metric_mill().expect("shipped profile loads")
}

/// One parsed move: the G number and its X, Y, Z, F arguments.
#[derive(Debug, Default, Clone, PartialEq)]
struct Move {
    g: u32,
    x: Option<f32>,
    y: Option<f32>,
    z: Option<f32>,
    f: Option<f32>,
}

/// The G0/G1 moves of a program as the `gcode` crate reads them.
fn moves(program: &str) -> Vec<Move> {
    let parsed = gcode::parse(program).expect("the gcode crate parses the program");
    let mut out = Vec::new();
    for block in &parsed.blocks {
        assert!(
            block.word_addresses.is_empty(),
            "bare words outside a code: {block:?}"
        );
        for code in &block.codes {
            if let Code::General(g) = code
                && g.number.minor().is_none()
                && (g.number.major() == 0 || g.number.major() == 1)
            {
                let mut m = Move {
                    g: g.number.major(),
                    ..Move::default()
                };
                for arg in &g.args {
                    let Value::Literal(v) = arg.value else {
                        panic!("variable in {arg:?}")
                    };
                    match arg.letter.to_ascii_uppercase() {
                        'X' => m.x = Some(v),
                        'Y' => m.y = Some(v),
                        'Z' => m.z = Some(v),
                        'F' => m.f = Some(v),
                        other => panic!("unexpected word {other} in a move"),
                    }
                }
                out.push(m);
            }
        }
    }
    out
}

fn close(a: Option<f32>, b: f64) -> bool {
    // The gcode crate reads values as f32 (CRATES.md §6): compare at 1e-3.
    a.is_some_and(|a| (a as f64 - b).abs() < 1e-3)
}

/// The format rules every line must keep (NISTIR 6556 §3.1, §3.3, §3.3.2.1, §3.3.4).
fn assert_format_rules(program: &str) {
    let lines: Vec<&str> = program.lines().collect();
    assert_eq!(
        lines.first(),
        Some(&"%"),
        "first line is % (NISTIR 6556 §3.1)"
    );
    assert_eq!(
        lines.last(),
        Some(&"%"),
        "last line is % (NISTIR 6556 §3.1)"
    );
    let m30 = lines.iter().position(|l| {
        l.trim_start_matches(|c: char| c == 'N' || c.is_ascii_digit())
            .trim()
            == "M30"
    });
    assert_eq!(m30, Some(lines.len() - 2), "M30 just before the final %");
    for (i, line) in lines.iter().enumerate() {
        assert!(
            line.len() < 256,
            "line {} has {} characters (§3.3)",
            i + 1,
            line.len()
        );
        assert!(line.is_ascii(), "line {} is not ASCII", i + 1);
        if *line == "%" {
            assert!(i == 0 || i == lines.len() - 1, "% inside the program");
            continue;
        }
        if let Some(inner) = line.strip_prefix('(') {
            let inner = inner
                .strip_suffix(')')
                .expect("a comment closes on its line (§3.3.4)");
            assert!(
                !inner.contains(['(', ')']),
                "nested comment on line {} (§3.3.4)",
                i + 1
            );
            continue;
        }
        assert!(
            !line.contains(['(', ')', ';']),
            "comment inside a block on line {}",
            i + 1
        );
        for word in line.split_whitespace() {
            let (letter, number) = word.split_at(1);
            assert!(
                letter.chars().all(|c| c.is_ascii_uppercase()),
                "word {word}"
            );
            assert!(
                !number.contains(['e', 'E']),
                "exponent in {word} (§3.3.2.1)"
            );
            assert!(
                number.parse::<f64>().is_ok(),
                "word {word} on line {} is not a letter and a number",
                i + 1
            );
            if let Some(rest) = number.strip_prefix('-') {
                assert!(
                    rest.chars().any(|c| ('1'..='9').contains(&c)),
                    "negative zero {word} on line {}",
                    i + 1
                );
            }
        }
    }
}

#[test]
fn square_program_parses_back_to_the_same_moves() {
    let cut = square_cut("hole 1", 10.0, 20.0, 30.0);
    let program = write_program(std::slice::from_ref(&cut), &mill(), &settings()).unwrap();
    assert_format_rules(&program);
    let m = moves(&program);

    // Expected sequence for one cut (program shape of the post stage).
    let safe = 15.0;
    let retract = 2.0;
    assert!(
        m[0].g == 0 && close(m[0].z, safe),
        "first move up to safe height: {:?}",
        m[0]
    );
    assert!(
        m[1].g == 0 && close(m[1].x, 25.0) && close(m[1].y, 35.0),
        "rapid over the plunge point: {:?}",
        m[1]
    );
    assert!(m[2].g == 0 && close(m[2].z, retract), "{:?}", m[2]);
    assert!(
        m[3].g == 1 && close(m[3].z, -1.5) && close(m[3].f, 120.0),
        "plunge: {:?}",
        m[3]
    );
    // Then the path at the cut feed, F written once, then up to the retract and the safe
    // height.
    let path_moves = &m[4..m.len() - 2];
    let points = cut.end_points();
    assert_eq!(path_moves.len(), points.len(), "{path_moves:?}");
    for (mv, p) in path_moves.iter().zip(&points) {
        assert_eq!(mv.g, 1);
        assert!(close(mv.x, p.x) && close(mv.y, p.y), "{mv:?} vs {p:?}");
    }
    assert!(close(path_moves[0].f, 500.0));
    assert!(
        path_moves[1..].iter().all(|mv| mv.f.is_none()),
        "F repeated"
    );
    let last = m.last().unwrap();
    assert!(last.g == 0 && close(last.z, safe));

    // Spindle on with S before the first feed move, off and M30 at the end.
    assert!(program.contains("\nM3 S9000\n"), "{program}");
    let off = program.find("\nM5\n").expect("spindle off");
    assert!(off > program.rfind("G1 ").unwrap());
    assert!(program.contains("\nG21 G90 G17 G94 G40\n"));
}

#[test]
fn feed_is_written_again_only_when_it_changes() {
    let cuts = [
        square_cut("a", 10.0, 10.0, 20.0),
        square_cut("b", 50.0, 10.0, 20.0),
    ];
    let program = write_program(&cuts, &mill(), &settings()).unwrap();
    assert_format_rules(&program);
    let m = moves(&program);
    let with_f: Vec<f32> = m.iter().filter_map(|mv| mv.f).collect();
    // plunge, cut, plunge, cut: each change written once.
    assert_eq!(with_f, vec![120.0, 500.0, 120.0, 500.0]);
    // Modal Z: the second cut needs no extra rapid up, the first cut ended there.
    let safe_rapids = m.iter().filter(|mv| mv.g == 0 && close(mv.z, 15.0)).count();
    assert_eq!(safe_rapids, 3, "start, end of cut a, end of cut b");
}

#[test]
fn inch_profile_converts_lengths_and_feeds() {
    let text = METRIC_MILL_TOML
        .replace("units = \"mm\"", "units = \"in\"")
        .replace("xy_decimals = 4", "xy_decimals = 5")
        .replace("z_decimals = 3", "z_decimals = 4")
        .replace("feed_decimals = 1", "feed_decimals = 2")
        .replace("safe_height = 15.0", "safe_height = 0.6")
        .replace("retract_height = 2.0", "retract_height = 0.08")
        .replace("max_feed = 2500.0", "max_feed = 100.0")
        .replace("cut_feed = 400.0", "cut_feed = 16.0")
        .replace("plunge_feed = 100.0", "plunge_feed = 4.0")
        .replace("z_min = -40.0", "z_min = -1.5")
        .replace("z_max = 80.0", "z_max = 3.0")
        .replace("x_max = 400.0", "x_max = 16.0")
        .replace("y_max = 250.0", "y_max = 10.0");
    let inch = MachineProfile::from_toml(&text, "inch-mill.toml").unwrap();
    // 25.4 mm is exactly 1 inch (international inch, 1959).
    let cut = square_cut("hole 1", 25.4, 25.4, 25.4);
    let s = ProgramSettings {
        depth: 2.54,
        cut_feed: Some(254.0),
        plunge_feed: None,
        ..settings()
    };
    let program = write_program(&[cut], &inch, &s).unwrap();
    assert_format_rules(&program);
    assert!(
        program.contains("\nG20 G90 G17 G94 G40\n"),
        "G20 for inch (NISTIR 6556 §3.5.7)"
    );
    assert!(
        program.contains("G1 X1.00000 Y1.00000 F10.00\n"),
        "{program}"
    );
    assert!(program.contains("G1 X2.00000 Y1.00000\n"));
    assert!(program.contains("G1 Z-0.1000 F4.00\n"), "{program}");
    assert!(program.contains("G0 X1.50000 Y1.50000\n"));
    assert!(program.contains("(units: in, G20, feeds in in/min)"));
}

#[test]
fn points_outside_the_travel_envelope_are_refused() {
    // The shipped profile allows X up to 400 mm.
    let cut = square_cut("bay 3", 380.0, 20.0, 30.0);
    let err = write_program(&[cut], &mill(), &settings()).unwrap_err();
    match &err {
        PostError::OutsideEnvelope {
            feature,
            axis,
            value,
            ..
        } => {
            assert_eq!(feature, "bay 3");
            assert_eq!(*axis, 'X');
            assert_eq!(value, "410.0000");
        }
        other => panic!("wrong error {other:?}"),
    }
    let text = err.to_string();
    assert!(
        text.contains("bay 3") && text.contains("410.0000") && text.contains("work zero"),
        "{text}"
    );

    // Z: a depth below z_min (-40 mm).
    let s = ProgramSettings {
        depth: 45.0,
        ..settings()
    };
    let err = write_program(&[square_cut("hole 2", 10.0, 10.0, 5.0)], &mill(), &s).unwrap_err();
    assert!(
        matches!(&err, PostError::OutsideEnvelope { axis: 'Z', value, .. } if value == "-45.000"),
        "{err:?}"
    );

    // A plunge point alone outside the envelope (Y below -10 mm).
    let mut cut = square_cut("hole 4", 10.0, 10.0, 5.0);
    cut.plunge = Point::new(12.0, -10.5);
    let err = write_program(&[cut], &mill(), &settings()).unwrap_err();
    assert!(
        matches!(
            &err,
            PostError::OutsideEnvelope {
                what: "the plunge point",
                axis: 'Y',
                ..
            }
        ),
        "{err:?}"
    );

    // A lead-out that swings outside the envelope though both its ends are inside: clockwise
    // about (5, 12) from (5, -4) to (5, 28), radius 16, it passes X = -11, below the -10 mm
    // limit. Every run of a cut is checked, arcs by their extremes.
    let mut cut = square_cut("hole 5", 10.0, 10.0, 5.0);
    cut.lead_out = vec![conicut::geom::Move::Arc {
        to: Point::new(5.0, 28.0),
        center: Point::new(5.0, 12.0),
        ccw: false,
    }];
    cut.overcut = vec![conicut::geom::Move::Line {
        to: Point::new(5.0, -4.0),
    }];
    let err = write_program(&[cut], &mill(), &settings()).unwrap_err();
    assert!(
        matches!(
            &err,
            PostError::OutsideEnvelope {
                what: "an arc of the tool path",
                axis: 'X',
                ..
            }
        ),
        "{err:?}"
    );
}

#[test]
fn feeds_and_speeds_above_the_profile_limits_are_refused() {
    let s = ProgramSettings {
        cut_feed: Some(2600.0),
        ..settings()
    };
    let err = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &mill(), &s).unwrap_err();
    assert!(
        matches!(
            &err,
            PostError::FeedTooHigh {
                which: "cut feed",
                ..
            }
        ),
        "{err:?}"
    );
    assert!(err.to_string().contains("2500.0"), "{err}");

    let s = ProgramSettings {
        plunge_feed: Some(3000.0),
        ..settings()
    };
    let err = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &mill(), &s).unwrap_err();
    assert!(
        matches!(
            &err,
            PostError::FeedTooHigh {
                which: "plunge feed",
                ..
            }
        ),
        "{err:?}"
    );

    // At the limit is allowed.
    let s = ProgramSettings {
        cut_feed: Some(2500.0),
        ..settings()
    };
    assert!(write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &mill(), &s).is_ok());

    let s = ProgramSettings {
        spindle_speed: Some(12000.0),
        ..settings()
    };
    let err = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &mill(), &s).unwrap_err();
    assert!(matches!(&err, PostError::SpindleTooFast { .. }), "{err:?}");
}

#[test]
fn bad_settings_and_bad_cuts_are_refused_without_panic() {
    let s = ProgramSettings {
        depth: -1.0,
        ..settings()
    };
    let err = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &mill(), &s).unwrap_err();
    assert!(err.to_string().contains("cut depth"), "{err}");
    let s = ProgramSettings {
        tool_diameter: f64::NAN,
        ..settings()
    };
    assert!(matches!(
        write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &mill(), &s),
        Err(PostError::BadSetting { .. })
    ));
    assert_eq!(
        write_program(&[], &mill(), &settings()),
        Err(PostError::NoCuts)
    );
    let mut cut = square_cut("hole 9", 10.0, 10.0, 5.0);
    cut.moves[1] = conicut::geom::Move::Line {
        to: Point::new(f64::NAN, 10.0),
    };
    let err = write_program(&[cut], &mill(), &settings()).unwrap_err();
    assert!(matches!(&err, PostError::NotFinite { feature, .. } if feature == "hole 9"));
}

fn bundled(file: &str) -> MachineProfile {
    let (name, text) = BUNDLED_PROFILES
        .iter()
        .find(|(name, _)| name.ends_with(file))
        .expect("a bundled profile");
    MachineProfile::from_toml(text, name).expect("bundled profile loads")
}

/// The non-comment blocks of a program, line numbers stripped.
fn blocks(program: &str) -> Vec<String> {
    program
        .lines()
        .filter(|l| *l != "%" && !l.starts_with('(') && !l.starts_with(';'))
        .map(|l| {
            l.trim_start_matches(|c: char| c == 'N' || c.is_ascii_digit())
                .trim()
                .to_string()
        })
        .collect()
}

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
        let profile = bundled(file);
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
    let laser = bundled("laser.toml");
    let s = ProgramSettings {
        tool_diameter: 0.3,
        ..settings()
    };
    let program = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &laser, &s).unwrap();
    assert!(
        program.contains(
            "(kerf width the paths allow for 0.3000 mm; the profile's kerf width is 0.2000 mm)"
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
    assert_eq!(bundled("laser.toml").kerf_width(), Some(0.2));
    assert_eq!(bundled("metric-mill.toml").kerf_width(), None);
    assert_eq!(bundled("inch-router.toml").kerf_width(), None);
    let text = BUNDLED_PROFILES[2]
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

#[test]
fn header_holds_the_job_the_safety_block_and_the_precedence_statement() {
    let mut cut = square_cut("bay 1", 10.0, 20.0, 30.0);
    cut.kind = FeatureKind::Opening;
    cut.measured_deviation = 0.00612;
    let program = write_program(&[cut], &mill(), &settings()).unwrap();
    let first_block = program
        .lines()
        .position(|l| !l.starts_with('(') && l != "%")
        .unwrap();
    let header: Vec<&str> = program.lines().take(first_block).collect();
    let has = |s: &str| header.iter().any(|l| l.contains(s));
    // User text has its parentheses replaced (NISTIR 6556 §3.3.4: no nested comments).
    assert!(has("(title: test plate [rev A])"), "{header:#?}");
    assert!(has("source drawing: plate.dxf"));
    assert!(has(&format!(
        "generated by conicut {}",
        env!("CARGO_PKG_VERSION")
    )));
    assert!(has("units: mm, G21,"));
    assert!(has(
        "tool diameter 6.0000 mm, cut depth 1.500 mm, tolerance 0.0100 mm"
    ));
    assert!(has(
        "(1 bay 1: elliptical opening, tool inside, 4 feed moves, fitted deviation 0.0061 mm)"
    ));
    let safety = header
        .iter()
        .position(|l| l.contains(SAFETY_HEADING))
        .expect("safety block");
    let precedence = header
        .iter()
        .position(|l| l.contains(PRECEDENCE))
        .expect("precedence");
    assert_eq!(
        precedence,
        first_block - 1,
        "the precedence statement ends the header"
    );
    let cautions = &header[safety + 1..precedence];
    // docs/sources.md P5: mill cautions cover the dry run, clamping, guards, eye
    // protection and keeping hands out while the spindle turns.
    let text = cautions.join(" ");
    for needle in [
        "in the air",
        "Clamp",
        "guards",
        "eye protection",
        "spindle turns",
        "tool length",
    ] {
        assert!(text.contains(needle), "no {needle:?} in {text}");
    }
    // Deterministic: the same input gives the same bytes.
    let again = write_program(
        &[{
            let mut c = square_cut("bay 1", 10.0, 20.0, 30.0);
            c.kind = FeatureKind::Opening;
            c.measured_deviation = 0.00612;
            c
        }],
        &mill(),
        &settings(),
    )
    .unwrap();
    assert_eq!(program, again);
}

#[test]
fn line_numbers_start_at_ten_in_steps_of_ten() {
    let text = METRIC_MILL_TOML.replace("line_numbers = false", "line_numbers = true");
    let p = MachineProfile::from_toml(&text, "numbered.toml").unwrap();
    let program = write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &p, &settings()).unwrap();
    assert_format_rules(&program);
    let parsed = gcode::parse(&program).unwrap();
    let numbers: Vec<u32> = parsed.blocks.iter().filter_map(|b| b.line_number).collect();
    assert!(numbers.len() > 10);
    let expected: Vec<u32> = (1..=numbers.len() as u32).map(|i| i * 10).collect();
    assert_eq!(
        numbers, expected,
        "NISTIR 6556 §3.3.1; common practice N10 step 10"
    );
}

#[test]
fn moves_that_round_to_nothing_are_left_out() {
    let mut cut = square_cut("a", 10.0, 10.0, 5.0);
    // A vertex 20 nm from its neighbour rounds to the same 4-decimal position.
    cut.moves.insert(
        1,
        conicut::geom::Move::Line {
            to: Point::new(15.00002, 10.0),
        },
    );
    let program = write_program(&[cut], &mill(), &settings()).unwrap();
    assert_eq!(program.matches("X15.0000 Y10.0000").count(), 1, "{program}");
}

mod profile_errors {
    use super::*;

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
        let laser = BUNDLED_PROFILES[2].1;
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
}

#[test]
fn depth_passes_step_down_to_the_full_depth() {
    // 3.5 mm in passes of at most 1.5 mm: floors at 1.5, 3.0 and 3.5 mm, each followed by the
    // whole contour (common practice: several passes instead of one deep cut, STANDARDS §4.3).
    let cut = square_cut("a", 10.0, 10.0, 5.0);
    let s = ProgramSettings {
        depth: 3.5,
        stepdown: Some(1.5),
        ..settings()
    };
    let program = write_program(std::slice::from_ref(&cut), &mill(), &s).unwrap();
    assert!(
        program.contains("cut depth 3.500 mm in 3 passes"),
        "{program}"
    );
    let floors: Vec<&str> = program.lines().filter(|l| l.starts_with("G1 Z-")).collect();
    assert_eq!(floors.len(), 3, "{floors:?}");
    assert!(floors[0].starts_with("G1 Z-1.500"));
    assert!(floors[1].starts_with("G1 Z-3.000"));
    assert!(floors[2].starts_with("G1 Z-3.500"));
    // Each pass runs the whole square: 4 sides a pass.
    let sides = program
        .lines()
        .filter(|l| l.contains("X15.0000 Y10.0000"))
        .count();
    assert_eq!(sides, 3);
    assert_eq!(
        conicut::post::pass_depths(3.5, Some(1.5)),
        vec![1.5, 3.0, 3.5]
    );
    assert_eq!(conicut::post::pass_depths(3.0, Some(1.5)), vec![1.5, 3.0]);
    assert_eq!(conicut::post::pass_depths(3.0, None), vec![3.0]);
    assert_eq!(conicut::post::pass_depths(1.0, Some(2.0)), vec![1.0]);
}
