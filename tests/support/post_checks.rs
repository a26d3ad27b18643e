//! Shared by the tests of the program writer (`tests/post_program.rs`,
//! `tests/post_cut_through.rs`): hand-made square cuts, the settings and profile they are written
//! with, the G0/G1 moves read back with the `gcode` crate, the format rules of NISTIR 6556, and
//! the non-comment blocks of a program.

#![allow(dead_code)]

use crate::machine::program_settings;
use conicut::fit::FittedCut;
use conicut::geom::Point;
use conicut::plan::{CutSide, FeatureKind};
use conicut::post::{MachineProfile, ProgramSettings};
use gcode::{Code, Value};

pub fn square_cut(name: &str, x0: f64, y0: f64, side: f64) -> FittedCut {
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

pub fn settings() -> ProgramSettings {
    ProgramSettings {
        cut_feed: Some(500.0),
        plunge_feed: Some(120.0),
        spindle_speed: Some(9000.0),
        ..program_settings("test plate (rev A)", "plate.dxf", 6.0, 1.5)
    }
}

pub fn mill() -> MachineProfile {
    MachineProfile::metric_mill().expect("shipped profile loads")
}

/// One parsed move: the G number and its X, Y, Z, F arguments.
#[derive(Debug, Default, Clone, PartialEq)]
pub struct Move {
    pub g: u32,
    pub x: Option<f32>,
    pub y: Option<f32>,
    pub z: Option<f32>,
    pub f: Option<f32>,
}

/// The G0/G1 moves of a program as the `gcode` crate reads them.
pub fn moves(program: &str) -> Vec<Move> {
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

pub fn close(a: Option<f32>, b: f64) -> bool {
    // The gcode crate reads values as f32 (CRATES.md §6): compare at 1e-3.
    a.is_some_and(|a| (a as f64 - b).abs() < 1e-3)
}

/// The format rules every line must keep (NISTIR 6556 §3.1, §3.3, §3.3.2.1, §3.3.4).
pub fn assert_format_rules(program: &str) {
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

/// The non-comment blocks of a program, line numbers stripped.
pub fn blocks(program: &str) -> Vec<String> {
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
