//! The words a user writes for a lead shape or a cutting direction, the same on the command
//! line, in a job file and in a machine profile: one table per concept, parsed into the one enum
//! the stages use ([`LeadKind`], [`Direction`]).

use crate::plan::{Direction, LeadKind, WorkZero, ZERO_WORDS};
use crate::post::WorkOffset;
use std::str::FromStr;

/// Each lead shape with its word.
pub const LEAD_WORDS: [(&str, LeadKind); 4] = [
    ("straight", LeadKind::Straight),
    ("line", LeadKind::Line),
    ("arc", LeadKind::Arc),
    ("line-arc", LeadKind::LineArc),
];

/// Each direction with its word.
pub const DIRECTION_WORDS: [(&str, Direction); 2] = [
    ("climb", Direction::Climb),
    ("conventional", Direction::Conventional),
];

/// `"a", "b" or "c"`: the words of a table, quoted, for messages.
pub fn quoted_list<T>(words: &[(&str, T)]) -> String {
    let quoted: Vec<String> = words.iter().map(|(w, _)| format!("\"{w}\"")).collect();
    match quoted.split_last() {
        Some((last, rest)) if !rest.is_empty() => format!("{} or {last}", rest.join(", ")),
        _ => quoted.join(""),
    }
}

/// A word that names no member of its table.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("\"{word}\" is not {what}; use {allowed}")]
pub struct UnknownWord {
    pub word: String,
    /// What was asked for ("a lead shape").
    pub what: &'static str,
    /// The words allowed, quoted.
    pub allowed: String,
}

fn lookup<T: Copy>(s: &str, words: &[(&str, T)], what: &'static str) -> Result<T, UnknownWord> {
    let word = s.trim();
    words
        .iter()
        .find(|(w, _)| *w == word)
        .map(|(_, v)| *v)
        .ok_or_else(|| UnknownWord {
            word: word.to_string(),
            what,
            allowed: quoted_list(words),
        })
}

impl FromStr for LeadKind {
    type Err = UnknownWord;

    /// `straight`, `line`, `arc` or `line-arc`.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        lookup(s, &LEAD_WORDS, "a lead shape")
    }
}

impl FromStr for Direction {
    type Err = UnknownWord;

    /// `climb` or `conventional`.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        lookup(s, &DIRECTION_WORDS, "a cutting direction")
    }
}

impl FromStr for WorkZero {
    type Err = UnknownWord;

    /// `drawing`, `lower-left`, `lower-right`, `upper-left`, `upper-right`, `centre` (or
    /// `center`), or a drawing point `X,Y` in mm.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let word = s.trim();
        if word == "center" {
            return Ok(WorkZero::Centre);
        }
        if let Some((x, y)) = word.split_once(',') {
            let (x, y) = (x.trim().parse::<f64>(), y.trim().parse::<f64>());
            if let (Ok(x), Ok(y)) = (x, y)
                && x.is_finite()
                && y.is_finite()
            {
                return Ok(WorkZero::At { x, y });
            }
        }
        lookup(word, &ZERO_WORDS, "a work zero").map_err(|mut e| {
            e.allowed
                .push_str(", or a drawing point as X,Y in mm (e.g. 120,-35.5)");
            e
        })
    }
}

impl FromStr for WorkOffset {
    type Err = UnknownWord;

    /// `G54` … `G59` (either case).
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let word = s.trim();
        word.get(1..)
            .filter(|_| word.starts_with(['G', 'g']))
            .and_then(|n| n.parse::<u8>().ok())
            .and_then(WorkOffset::new)
            .ok_or_else(|| UnknownWord {
                word: word.to_string(),
                what: "a work offset",
                allowed: "G54, G55, G56, G57, G58 or G59".into(),
            })
    }
}

/// A length given on the command line: a number of millimetres, or a number with a unit
/// (`6`, `6mm`, `0.25in`, `0.25"`, `1.2 cm`; the units [`Units`](crate::geom::Units) reads).
/// The rule is the same for every length option, whatever the machine profile's units: a bare
/// number is millimetres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Length(pub f64);

/// A length that cannot be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error(
    "\"{0}\" is not a length; give a number of millimetres (6, 0.5) or a number with its unit \
     (6mm, 0.25in, 0.25\")"
)]
pub struct BadLength(pub String);

impl FromStr for Length {
    type Err = BadLength;

    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let text = s.trim();
        let bad = || BadLength(text.to_string());
        // The longest leading number, then the unit after it.
        let (value, unit) = (1..=text.len())
            .rev()
            .filter(|&k| text.is_char_boundary(k))
            .find_map(|k| {
                let number = text[..k].trim_end();
                let looks_numeric = number
                    .chars()
                    .all(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E'));
                let v = number.parse::<f64>().ok().filter(|_| looks_numeric)?;
                Some((v, text[k..].trim()))
            })
            .ok_or_else(bad)?;
        if !value.is_finite() {
            return Err(bad());
        }
        let mm_per_unit = match unit {
            "" => 1.0,
            "\"" => crate::geom::Units::Inches.mm_per_unit(),
            u => u
                .parse::<crate::geom::Units>()
                .map_err(|_| bad())?
                .mm_per_unit(),
        };
        Ok(Length(value * mm_per_unit))
    }
}

impl std::fmt::Display for Length {
    /// Millimetres, as a bare number.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_word_parses_to_its_member_and_others_are_refused() {
        for (word, kind) in LEAD_WORDS {
            assert_eq!(word.parse::<LeadKind>(), Ok(kind));
        }
        for (word, direction) in DIRECTION_WORDS {
            assert_eq!(word.parse::<Direction>(), Ok(direction));
        }
        let e = "spiral".parse::<LeadKind>().unwrap_err();
        assert_eq!(
            e.to_string(),
            "\"spiral\" is not a lead shape; use \"straight\", \"line\", \"arc\" or \"line-arc\""
        );
        assert!("Climb!".parse::<Direction>().is_err());
    }

    #[test]
    fn lengths_are_millimetres_unless_they_say_their_unit() {
        // 1 in = 25.4 mm exactly (international inch, 1959); 1 cm = 10 mm.
        for (text, mm) in [
            ("6", 6.0),
            ("6mm", 6.0),
            (" 0.25in", 6.35),
            ("0.25\"", 6.35),
            ("1.2 cm", 12.0),
            ("-0.5", -0.5),
            ("1e-3mm", 0.001),
            ("2 inches", 50.8),
        ] {
            let got = text.parse::<Length>().unwrap().0;
            assert!((got - mm).abs() < 1e-12, "{text}: {got}");
        }
        for bad in ["", "mm", "6 furlongs", "6in mm", "nan", "inf", "6,5"] {
            let e = bad.parse::<Length>().unwrap_err();
            assert!(e.to_string().contains("0.25in"), "{bad}: {e}");
        }
    }

    #[test]
    fn work_zeros_and_offsets_parse_and_others_are_refused() {
        for (word, zero) in ZERO_WORDS {
            assert_eq!(word.parse::<WorkZero>(), Ok(zero));
        }
        assert_eq!("center".parse::<WorkZero>(), Ok(WorkZero::Centre));
        assert_eq!(
            " 120, -35.5 ".parse::<WorkZero>(),
            Ok(WorkZero::At { x: 120.0, y: -35.5 })
        );
        for bad in ["left", "1,2,3", "1,", "nan,0", "inf,1"] {
            let e = bad.parse::<WorkZero>().unwrap_err();
            assert!(e.to_string().contains("X,Y"), "{bad}: {e}");
        }
        assert_eq!("G55".parse::<WorkOffset>().map(|w| w.code()), Ok(55));
        assert_eq!("g59".parse::<WorkOffset>().map(|w| w.code()), Ok(59));
        for bad in ["G53", "G60", "55", "G5.5", ""] {
            assert!(bad.parse::<WorkOffset>().is_err(), "{bad}");
        }
    }
}
