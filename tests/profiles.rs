//! The machine profiles shipped in `machine-profiles/`: each loads, says its values are invented,
//! and writes a short program that matches its committed snapshot byte for byte, parses with an
//! outside RS274 reader (the `gcode` crate) and keeps the format rules of NISTIR 6556.
//!
//! The snapshots are `tests/snapshots/<profile>.ngc`. After an intended change to the program
//! writer or a profile, regenerate them with
//!
//! ```sh
//! CONICUT_UPDATE_SNAPSHOTS=1 cargo test --test profiles
//! ```
//!
//! and read the difference before committing it.

#[path = "support/machine.rs"]
mod machine;
use conicut::fit::FittedCut;
use conicut::geom::Move;
use conicut::geom::Point;
use conicut::plan::{CutSide, FeatureKind};
use conicut::post::{
    Cutter, MachineKind, MachineProfile, PRECEDENCE, SAFETY_HEADING, write_program,
};
use conicut::settings::BUNDLED_PROFILES;
use machine::program_settings;
use std::path::Path;

/// A small oval hole made of two straight flats and six arcs, counter-clockwise from its right
/// end, about (60, 42) mm.
///
/// It is a four-centre oval (end arcs of radius 6 mm about (±14.4, 0), side arcs of radius 30 mm
/// about (0, ∓19.2); the centres are 24 mm = 30 − 6 apart, so the arcs meet tangentially on the
/// lines through their centres, at (±18, ±4.8)), with its upper half raised by 4 mm and joined by
/// vertical flats where the end arcs are vertical. Semi-axes 20.4 mm and 10.8 + 2 mm.
fn oval_cut() -> FittedCut {
    let (cx, cy) = (60.0, 40.0);
    let p = |x: f64, y: f64| Point::new(cx + x, cy + y);
    let arc = |to: Point, centre: Point| Move::Arc {
        to,
        centre,
        ccw: true,
    };
    let moves = vec![
        Move::Line { to: p(20.4, 4.0) },
        arc(p(18.0, 8.8), p(14.4, 4.0)),
        arc(p(-18.0, 8.8), p(0.0, 4.0 - 19.2)),
        arc(p(-20.4, 4.0), p(-14.4, 4.0)),
        Move::Line { to: p(-20.4, 0.0) },
        arc(p(-18.0, -4.8), p(-14.4, 0.0)),
        arc(p(18.0, -4.8), p(0.0, 19.2)),
        arc(p(20.4, 0.0), p(14.4, 0.0)),
    ];
    let mut cut = FittedCut::from_points(
        "oval 1",
        FeatureKind::Opening,
        CutSide::Inside,
        p(0.0, 2.0),
        &[p(20.4, 0.0)],
        0.01,
        0.0,
    );
    cut.moves = moves;
    cut
}

fn program_for(profile: &MachineProfile) -> String {
    let settings = program_settings(
        "snapshot oval",
        "oval.dxf",
        profile.kerf_width().unwrap_or(6.0),
        3.0,
    );
    write_program(&[oval_cut()], profile, &settings).expect("the oval is written")
}

fn profiles() -> Vec<(String, MachineProfile)> {
    BUNDLED_PROFILES
        .iter()
        .map(|(file, text)| {
            let stem = Path::new(file)
                .file_stem()
                .and_then(|s| s.to_str())
                .expect("a file name")
                .to_string();
            let p = MachineProfile::from_toml(text, file)
                .unwrap_or_else(|e| panic!("{file} does not load: {e}"));
            (stem, p)
        })
        .collect()
}

#[test]
fn every_kind_has_a_bundled_profile_that_says_its_values_are_invented() {
    let all = profiles();
    let kinds: Vec<MachineKind> = all.iter().map(|(_, p)| p.kind()).collect();
    for kind in [
        MachineKind::Mill,
        MachineKind::Router,
        MachineKind::Laser,
        MachineKind::Plasma,
        MachineKind::Waterjet,
    ] {
        assert!(kinds.contains(&kind), "no bundled {kind} profile");
    }
    for ((file, text), (stem, p)) in BUNDLED_PROFILES.iter().zip(&all) {
        // House rule: invented numbers only in sample profiles, and the file says so.
        assert!(
            text.contains("invented"),
            "{file} does not say its values are invented"
        );
        // Named by the kind of machine.
        assert!(
            stem.contains(p.kind().as_str()),
            "{file} is not named after its kind"
        );
        // Cut-through kinds carry a kerf width; mills and routers take the tool from the user.
        match p.cutter() {
            Cutter::Spindle(_) => assert!(p.kerf_width().is_none()),
            Cutter::Process(_) => assert!(p.kerf_width().is_some_and(|k| k > 0.0)),
        }
        assert!(p.acceleration() > 0.0 && p.rapid_feed() >= p.max_feed());
    }
}

#[test]
fn each_profile_writes_its_snapshot() {
    let update = std::env::var_os("CONICUT_UPDATE_SNAPSHOTS").is_some();
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/snapshots");
    let mut stale = Vec::new();
    for (stem, profile) in profiles() {
        let program = program_for(&profile);
        let path = dir.join(format!("{stem}.ngc"));
        if update {
            std::fs::create_dir_all(&dir).expect("snapshot folder");
            std::fs::write(&path, &program).expect("snapshot written");
            continue;
        }
        let committed = std::fs::read_to_string(&path).unwrap_or_else(|e| {
            panic!(
                "tests/snapshots/{stem}.ngc cannot be read ({e}); \
                 run CONICUT_UPDATE_SNAPSHOTS=1 cargo test --test profiles"
            )
        });
        if committed != program {
            let line = committed
                .lines()
                .zip(program.lines())
                .position(|(a, b)| a != b)
                .map_or(
                    committed.lines().count().min(program.lines().count()),
                    |i| i,
                );
            stale.push(format!(
                "{stem}.ngc differs from line {}: committed {:?}, written {:?}",
                line + 1,
                committed.lines().nth(line),
                program.lines().nth(line)
            ));
        }
    }
    assert!(
        stale.is_empty(),
        "snapshots differ (regenerate with CONICUT_UPDATE_SNAPSHOTS=1 if intended):\n{}",
        stale.join("\n")
    );
}

/// The format rules of NISTIR 6556 and DESIGN.md, for one program written with `profile`.
fn check_format(stem: &str, profile: &MachineProfile, program: &str) {
    let lines: Vec<&str> = program.lines().collect();
    // §3.1: the first and last lines are `%`; M2/M30 ends the program, just before the `%`.
    assert_eq!(lines.first(), Some(&"%"), "{stem}");
    assert_eq!(lines.last(), Some(&"%"), "{stem}");
    let words = |l: &str| -> Vec<String> {
        l.split_whitespace()
            .filter(|w| !w.starts_with('N'))
            .map(str::to_string)
            .collect()
    };
    assert_eq!(words(lines[lines.len() - 2]), vec!["M30"], "{stem}");
    for (n, line) in lines.iter().enumerate() {
        // §3.3: at most 256 characters a line.
        assert!(line.len() <= 256, "{stem} line {} too long", n + 1);
        assert!(line.is_ascii(), "{stem} line {}", n + 1);
        if *line == "%" {
            assert!(
                n == 0 || n == lines.len() - 1,
                "{stem}: % inside the program"
            );
            continue;
        }
        if let Some(inner) = line.strip_prefix('(') {
            // §3.3.4: one comment, closed on its line, not nested.
            let inner = inner.strip_suffix(')').expect("comment closed on its line");
            assert!(!inner.contains(['(', ')']), "{stem}: nested comment {line}");
            continue;
        }
        assert!(
            !line.contains(['(', ')', ';']),
            "{stem}: comment in a block: {line}"
        );
        for word in line.split_whitespace() {
            let (letter, value) = word.split_at(1);
            assert!(
                letter.chars().all(|c| c.is_ascii_uppercase()),
                "{stem}: {word}"
            );
            // §3.3.2.1: no exponent form; DESIGN.md: fixed decimals, never `-0`.
            assert!(!value.contains(['e', 'E']), "{stem}: exponent in {word}");
            assert!(value.parse::<f64>().is_ok(), "{stem}: {word} in {line}");
            if let Some(rest) = value.strip_prefix('-') {
                assert!(
                    rest.chars().any(|c| ('1'..='9').contains(&c)),
                    "{stem}: -0 in {line}"
                );
            }
            let decimals = value.split('.').nth(1).map_or(0, str::len);
            let expected = match letter {
                "X" | "Y" | "I" | "J" => Some(profile.xy_decimals()),
                "Z" => Some(profile.z_decimals()),
                "F" => Some(profile.feed_decimals()),
                _ => None,
            };
            if let Some(d) = expected {
                assert_eq!(decimals, d, "{stem}: {word} in {line}");
            }
            // NISTIR 6556 §3.5.3.1: the radius form is never written.
            assert_ne!(letter, "R", "{stem}: {line}");
        }
    }
    // §3.3.1: line numbers, when written, are N10, N20, … on every block.
    let blocks: Vec<&&str> = lines
        .iter()
        .filter(|l| **l != "%" && !l.starts_with('('))
        .collect();
    if profile.line_numbers() {
        for (i, l) in blocks.iter().enumerate() {
            assert!(l.starts_with(&format!("N{} ", 10 * (i + 1))), "{stem}: {l}");
        }
    } else {
        assert!(blocks.iter().all(|l| !l.starts_with('N')), "{stem}");
    }
}

#[test]
fn every_profile_program_parses_and_keeps_the_format_rules() {
    for (stem, profile) in profiles() {
        let program = program_for(&profile);
        check_format(&stem, &profile, &program);

        // The outside parser reads every block, with no words left outside a code.
        let parsed = gcode::parse(&program)
            .unwrap_or_else(|e| panic!("{stem}: the gcode crate cannot parse it: {e:?}"));
        let codes: Vec<String> = parsed
            .blocks
            .iter()
            .inspect(|b| assert!(b.word_addresses.is_empty(), "{stem}: bare words {b:?}"))
            .flat_map(|b| b.codes.iter())
            .filter_map(|c| match c {
                gcode::Code::General(g) => Some(format!("G{}", g.number)),
                gcode::Code::Miscellaneous(m) => Some(format!("M{}", m.number)),
                _ => None,
            })
            .collect();
        // The oval is six arcs counter-clockwise (G3), none clockwise.
        assert_eq!(codes.iter().filter(|c| *c == "G3").count(), 6, "{stem}");
        assert!(!codes.iter().any(|c| c == "G2"), "{stem}");
        assert_eq!(codes.last().map(String::as_str), Some("M30"), "{stem}");
        let units = match profile.units() {
            conicut::post::ProgramUnits::Millimetres => "G21",
            conicut::post::ProgramUnits::Inches => "G20",
        };
        assert!(codes.iter().any(|c| c == units), "{stem}: no {units}");

        // The header: safety block for the kind, ending with the precedence statement.
        let header: Vec<&str> = program
            .lines()
            .skip(1)
            .take_while(|l| l.starts_with('('))
            .collect();
        let safety = header
            .iter()
            .position(|l| l.contains(SAFETY_HEADING))
            .unwrap_or_else(|| panic!("{stem}: no safety block"));
        assert_eq!(
            header.last().copied(),
            Some(format!("({PRECEDENCE})").as_str()),
            "{stem}"
        );
        assert!(header.len() - safety >= 5, "{stem}: too few cautions");
    }
}
