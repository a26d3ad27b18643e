//! The words a user writes for a lead shape or a cutting direction, the same on the command
//! line, in a job file and in a machine profile: one table per concept, parsed into the one enum
//! the stages use ([`LeadKind`], [`Direction`]).

use crate::plan::{Direction, LeadKind};
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
}
