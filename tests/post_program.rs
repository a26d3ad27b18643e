//! The post stage writes programs that an independent RS274 parser (the `gcode` crate) reads back
//! to the same moves, that keep the format rules of NISTIR 6556, and that refuse what the machine
//! profile forbids.

#[path = "support/machine.rs"]
mod machine;
#[path = "support/post_checks.rs"]
mod post_checks;
use conicut::geom::Point;
use conicut::plan::FeatureKind;
use conicut::post::{
    MachineProfile, PRECEDENCE, PostError, ProgramSettings, SAFETY_HEADING, write_program,
};
use conicut::settings::METRIC_MILL_TOML;
use post_checks::*;

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
        centre: Point::new(5.0, 12.0),
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
    let err = small_square_with(ProgramSettings {
        cut_feed: Some(2600.0),
        ..settings()
    })
    .unwrap_err();
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

    let err = small_square_with(ProgramSettings {
        plunge_feed: Some(3000.0),
        ..settings()
    })
    .unwrap_err();
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
    assert!(
        small_square_with(ProgramSettings {
            cut_feed: Some(2500.0),
            ..settings()
        })
        .is_ok()
    );

    let err = small_square_with(ProgramSettings {
        spindle_speed: Some(12000.0),
        ..settings()
    })
    .unwrap_err();
    assert!(matches!(&err, PostError::SpindleTooFast { .. }), "{err:?}");
}

/// A 5 mm square hole at (10, 10) written for the metric mill with settings `s`.
fn small_square_with(s: ProgramSettings) -> Result<String, PostError> {
    write_program(&[square_cut("a", 10.0, 10.0, 5.0)], &mill(), &s)
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
