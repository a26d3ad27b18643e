//! The checker's own reader of RS274/NGC-style programs: words into blocks, blocks into moves in
//! millimetres, every rule it holds the text to a [`ProgramFinding`] with its line.
//!
//! It shares no code with the writer (`post`). What it follows (NISTIR 6556, Kramer, Proctor
//! and Messina, "The NIST RS274NGC Interpreter – Version 3", 2000; section numbers below are
//! that report's):
//!
//! * `%` lines, comments in parentheses and after `;`, `N` line numbers, `O` program numbers,
//!   block delete `/` at the start of a line (§3.3; the block is followed as if the switch were
//!   off, and reported); a whole turn (an arc ending where it starts) is read as its two halves;
//!   `G80` and `G49` (cancelling what the reader never follows) are taken as no change;
//! * `G0 G1 G2 G3` (arcs by `I J`, or by `R`: §3.5.3), `G4 P` (dwell, in seconds, or in
//!   milliseconds where the profile says so), `G17`, `G20 G21`, `G90 G91` (distance mode),
//!   `G90.1 G91.1` (arc centre absolute or incremental; incremental unless told), `G40`,
//!   `G54`–`G59`, `G61 G64`, `G94`;
//! * `M0 M1` (stops), `M2 M30` (end), `M3 M4 M5` (spindle, or the beam, torch or jet), `M6`,
//!   `M7 M8 M9`, `F`, `S`, `T`.
//!
//! Rules (each a finding that must be fixed unless marked a warning):
//!
//! * a word it does not follow (another plane, cutter compensation in the controller, canned
//!   cycles, a rotary axis, an unknown letter or code): the moves after it cannot be measured;
//!   an unknown `M` code is a warning;
//! * two words of one modal group on a line (§3.4, Table 4; M7 with M8 is allowed), or two of
//!   one letter among X Y Z I J R F S P;
//! * a feed rate that is not positive, a spindle speed below zero;
//! * a move before the units word (G20 or G21): the reader would have to guess the units;
//! * a feed move (G1, G2, G3) with no feed rate in force (§3.5.1);
//! * an arc whose start and end radius differ by more than 0.002 mm, or 0.0002 in in inch mode
//!   (§3.5.3.2), or an `R` arc whose chord is longer than its diameter;
//! * an `R` arc within [`R_NEAR_HALF_TURN`] of a half or a whole turn: a warning, since a small
//!   change of its end moves its centre a lot (§3.5.3.1 advises against such arcs);
//! * a number with an exponent (`1.5E3`): RS274/NGC numbers have none (§3.3.2);
//! * a `;` inside a parenthesised comment (a warning: some dialects read it as a comment start);
//! * a block-delete line that moves the machine: what is cut depends on a switch on the panel
//!   (a warning when the line does not move it).

use super::{Trace, TraceMove, bounds_of};
use crate::geom::units::MM_PER_INCH;
use serde::Serialize;

/// The rules whose findings leave the moves after them unknown: the program cannot be followed
/// past them (the others are broken rules of a program that can still be measured).
pub const UNREADABLE: [&str; 5] = ["comment", "character", "number", "unsupported", "motion"];

/// The most findings of one rule listed for one line.
pub const MAX_SAME_FINDINGS: usize = 3;

/// An `R` arc whose sweep is within this many degrees of 180° or 360° is a warning.
pub const R_NEAR_HALF_TURN: f64 = 1.0;

/// The largest difference of an arc's start and end radius, in mm mode (§3.5.3.2).
pub const ARC_RADIUS_RULE_MM: f64 = 0.002;

/// The same in inch mode (in).
pub const ARC_RADIUS_RULE_INCH: f64 = 0.0002;

/// How much a finding matters.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Severity {
    /// The program must not be run as it is.
    MustFix,
    /// Look at it before running.
    Warning,
}

impl Severity {
    pub fn word(self) -> &'static str {
        match self {
            Severity::MustFix => "must fix",
            Severity::Warning => "warning",
        }
    }
}

/// One thing wrong with a program, at its line.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProgramFinding {
    /// 1-based line of the program; 0 for the program as a whole.
    pub line: usize,
    pub severity: Severity,
    /// A short name of the rule (`arc-radius`, `gouge`, …).
    pub rule: &'static str,
    pub message: String,
}

impl ProgramFinding {
    pub fn must_fix(line: usize, rule: &'static str, message: String) -> Self {
        ProgramFinding {
            line,
            severity: Severity::MustFix,
            rule,
            message,
        }
    }

    pub fn warning(line: usize, rule: &'static str, message: String) -> Self {
        ProgramFinding {
            line,
            severity: Severity::Warning,
            rule,
            message,
        }
    }
}

/// What the reader needs to know of the machine that is not in the program text.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Dialect {
    /// `G4 P` counts milliseconds (else seconds).
    pub dwell_in_ms: bool,
    /// Words that switch the spindle or process on besides `M3` and `M4` (each a whole line's
    /// set of words, e.g. `["M7", "M3"]`), and off besides `M5`.
    pub on_words: Vec<Vec<String>>,
    pub off_words: Vec<Vec<String>>,
}

/// One dwell of the program.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Dwell {
    pub line: usize,
    pub seconds: f64,
    /// The index of the move after it.
    pub before_move: usize,
}

/// The spindle (or the beam, torch or jet) switched on or off.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Switch {
    pub line: usize,
    pub on: bool,
    /// The index of the move after it.
    pub before_move: usize,
}

/// A program read: what it does and what is wrong with its text.
#[derive(Debug, Clone, PartialEq)]
pub struct Reading {
    pub trace: Trace,
    pub findings: Vec<ProgramFinding>,
}

/// Reads `program` (see the module docs). Never fails: what it cannot follow is a finding.
pub fn read_program(program: &str, dialect: &Dialect) -> Reading {
    let mut r = Reader {
        dialect,
        st: State::default(),
        moves: Vec::new(),
        features: Vec::new(),
        cut_numbers: Vec::new(),
        marks: Vec::new(),
        mismatch: 0.0,
        dwells: Vec::new(),
        speeds: Vec::new(),
        switches: Vec::new(),
        findings: Vec::new(),
        end_line: None,
    };
    for (i, raw) in program.lines().enumerate() {
        let t = raw.trim();
        if !(t.is_empty() || t == "%") {
            r.line(t, i + 1);
        }
    }
    r.finish()
}

/// A word: its letter, its value, and whether the value was written with an exponent.
struct Word {
    letter: char,
    value: Option<f64>,
    text: String,
}

#[derive(Default)]
struct State {
    inch: Option<bool>,
    incremental: bool,
    arc_absolute: bool,
    pos: [f64; 3],
    motion: Option<u8>,
    /// Feed rate as written (program units per minute); 0 until an F word.
    feed: f64,
    on: bool,
    speed: f64,
    ended: bool,
    /// Nothing after this line can be measured (a word not followed changed the machine's
    /// state in a way the reader does not know).
    lost: bool,
}

struct Reader<'d> {
    dialect: &'d Dialect,
    st: State,
    moves: Vec<TraceMove>,
    features: Vec<(String, usize)>,
    cut_numbers: Vec<usize>,
    marks: Vec<(String, usize)>,
    mismatch: f64,
    dwells: Vec<Dwell>,
    speeds: Vec<(usize, f64)>,
    switches: Vec<Switch>,
    findings: Vec<ProgramFinding>,
    end_line: Option<usize>,
}

/// A modal group, for the two-in-a-line rule (NISTIR 6556 Table 4).
fn group_of_g(code: i64) -> Option<&'static str> {
    Some(match code {
        0 | 10 | 20 | 30 | 382 | 800..=890 => "motion (group 1)",
        170 | 180 | 190 => "plane (group 2)",
        900 | 910 => "distance mode (group 3)",
        901 | 911 => "arc distance mode",
        930 | 940 => "feed rate mode (group 5)",
        200 | 210 => "units (group 6)",
        400 | 410 | 420 => "cutter radius compensation (group 7)",
        430 | 490 => "tool length offset (group 8)",
        980 | 990 => "return mode (group 10)",
        540..=593 => "coordinate system (group 12)",
        610 | 611 | 640 => "path control (group 13)",
        _ => return None,
    })
}

fn group_of_m(code: i64) -> Option<&'static str> {
    Some(match code {
        0 | 1 | 2 | 30 | 60 => "stopping (group 4)",
        6 => "tool change (group 6)",
        3..=5 => "spindle turning (group 7)",
        7..=9 => "coolant (group 8)",
        48 | 49 => "override switches (group 9)",
        _ => return None,
    })
}

impl Reader<'_> {
    fn must_fix(&mut self, line: usize, rule: &'static str, message: String) {
        if self.room_for(line, rule) {
            self.findings
                .push(ProgramFinding::must_fix(line, rule, message));
        }
    }

    fn warn(&mut self, line: usize, rule: &'static str, message: String) {
        if self.room_for(line, rule) {
            self.findings
                .push(ProgramFinding::warning(line, rule, message));
        }
    }

    /// Whether another finding of `rule` on `line` is listed: at most [`MAX_SAME_FINDINGS`] a
    /// line and rule (a line of 300,000 words would otherwise give as many findings).
    fn room_for(&mut self, line: usize, rule: &'static str) -> bool {
        let recent = self
            .findings
            .iter()
            .rev()
            .take_while(|f| f.line == line)
            .filter(|f| f.rule == rule)
            .count();
        recent < MAX_SAME_FINDINGS
    }

    fn line(&mut self, text: &str, line: usize) {
        let (deleted, text) = match text.strip_prefix('/') {
            Some(rest) => (true, rest),
            None => (false, text),
        };
        let Some((words, comments)) = self.words(text, line) else {
            return;
        };
        self.comments(&comments);
        let moves_before = self.moves.len();
        self.block(&words, line);
        if deleted {
            let moved = self.moves.len() > moves_before;
            let message = format!(
                "line {line} is a block-delete line (/): with the switch on, the controller skips \
                 it{}",
                if moved {
                    ", and this line moves the machine, so what is cut depends on a switch on \
                     the panel; remove the / or the line"
                } else {
                    ""
                }
            );
            if moved {
                self.must_fix(line, "block-delete", message);
            } else {
                self.warn(line, "block-delete", message);
            }
        }
    }

    /// The words and comments of one line; `None` (after a finding) when it cannot be split.
    fn words(&mut self, raw: &str, line: usize) -> Option<(Vec<Word>, Vec<String>)> {
        let mut out = Vec::new();
        let mut comments = Vec::new();
        let chars: Vec<char> = raw.chars().collect();
        let mut k = 0;
        while k < chars.len() {
            let c = chars[k];
            k += 1;
            match c {
                '(' => {
                    let mut text = String::new();
                    let mut told_semicolon = false;
                    loop {
                        match chars.get(k) {
                            Some(')') => {
                                k += 1;
                                break;
                            }
                            Some('(') => {
                                self.must_fix(line, "comment", "a comment inside a comment".into());
                                return None;
                            }
                            Some(&ch) => {
                                if ch == ';' && !told_semicolon {
                                    told_semicolon = true;
                                    self.warn(
                                        line,
                                        "comment",
                                        "a ; inside a parenthesised comment: some controllers \
                                         read it as the start of a comment"
                                            .into(),
                                    );
                                }
                                text.push(ch);
                                k += 1;
                            }
                            None => {
                                self.must_fix(
                                    line,
                                    "comment",
                                    "a comment is not closed on its line".into(),
                                );
                                return None;
                            }
                        }
                    }
                    comments.push(text);
                }
                ';' => {
                    comments.push(chars[k..].iter().collect());
                    k = chars.len();
                }
                ' ' | '\t' | '\r' => {}
                c if c.is_ascii_alphabetic() => {
                    let mut text = String::new();
                    while let Some(&d) = chars.get(k) {
                        if d.is_ascii_digit() || d == '.' || d == '-' || d == '+' {
                            text.push(d);
                            k += 1;
                        } else if d == ' ' || d == '\t' {
                            k += 1;
                        } else {
                            break;
                        }
                    }
                    // An exponent: `E` or `e` right after the digits, then digits.
                    let exponent = !text.is_empty()
                        && matches!(chars.get(k), Some('E' | 'e'))
                        && chars
                            .get(k + 1)
                            .is_some_and(|d| d.is_ascii_digit() || *d == '-' || *d == '+');
                    if exponent {
                        let mut e = String::from("e");
                        k += 1;
                        while let Some(&d) = chars.get(k) {
                            if d.is_ascii_digit() || ((d == '-' || d == '+') && e.len() == 1) {
                                e.push(d);
                                k += 1;
                            } else {
                                break;
                            }
                        }
                        self.must_fix(
                            line,
                            "exponent",
                            format!(
                                "the number {c}{text}{} has an exponent; RS274/NGC numbers have \
                                 none (NISTIR 6556 §3.3.2): write it out in decimals",
                                e.to_uppercase()
                            ),
                        );
                        text.push_str(&e);
                    }
                    let value = number(&text);
                    out.push(Word {
                        letter: c.to_ascii_uppercase(),
                        value,
                        text,
                    });
                }
                other => {
                    self.must_fix(line, "character", format!("unexpected character '{other}'"));
                    return None;
                }
            }
        }
        Some((out, comments))
    }

    /// Every comment is a mark; a cut comment `(cut K of N: NAME)` also starts a feature.
    fn comments(&mut self, comments: &[String]) {
        for c in comments {
            let c = c.trim();
            self.marks.push((c.to_string(), self.moves.len()));
            if let Some((head, name)) = c.strip_prefix("cut ").and_then(|r| r.split_once(": ")) {
                self.features.push((name.to_string(), self.moves.len()));
                self.cut_numbers.push(super::cut_number(head).unwrap_or(0));
            }
        }
    }

    /// One block: modal words first (units, distance mode, feed, spindle), then a dwell, then
    /// the move (NISTIR 6556 §3.8, order of execution).
    fn block(&mut self, words: &[Word], line: usize) {
        let mut target = [None; 3];
        let mut ij = [None; 2];
        let mut radius = None;
        let mut motion = None;
        let mut dwell = false;
        let mut p_word = None;
        let mut groups: Vec<(&'static str, String)> = Vec::new();
        let mut m_codes = Vec::new();
        let mut seen = String::new();
        for w in words {
            let Some(v) = w.value else {
                let shown: String = w.text.chars().take(24).collect();
                let more = if w.text.chars().count() > 24 {
                    "…"
                } else {
                    ""
                };
                self.must_fix(
                    line,
                    "number",
                    format!("\"{}{shown}{more}\" is not a number", w.letter),
                );
                return;
            };
            // One word of each letter a line (NISTIR 6556 §3.4): which one a controller takes
            // is not to be guessed.
            if "XYZIJRFSP".contains(w.letter) {
                if seen.contains(w.letter) {
                    self.must_fix(
                        line,
                        "repeated-word",
                        format!(
                            "the word {} appears twice on this line; a controller may refuse \
                             the line or take either",
                            w.letter
                        ),
                    );
                }
                seen.push(w.letter);
            }
            match w.letter {
                'N' => {}
                'G' => {
                    let code = (v * 10.0).round() as i64;
                    if let Some(g) = group_of_g(code) {
                        self.same_group(&mut groups, g, format!("G{}", w.text), line);
                    }
                    match code {
                        0 | 10 | 20 | 30 => motion = Some((code / 10) as u8),
                        40 => dwell = true,
                        // G80 and G49 cancel what the reader never follows (cycles,
                        // length offsets): the state it assumes.
                        170 | 400 | 490 | 610 | 611 | 640 | 800 | 940 | 540..=590 => {}
                        200 => self.st.inch = Some(true),
                        210 => self.st.inch = Some(false),
                        900 => self.st.incremental = false,
                        910 => self.st.incremental = true,
                        901 => self.st.arc_absolute = true,
                        911 => self.st.arc_absolute = false,
                        _ => {
                            let why = match code {
                                180 | 190 => "arcs in another plane than XY (G17)",
                                410 | 420 => {
                                    "cutter radius compensation in the controller: the path it \
                                     cuts is not the path written"
                                }
                                930 => "inverse-time feed",
                                800..=890 => "canned cycles",
                                430 | 490 => "tool length offsets",
                                _ => "this code",
                            };
                            self.must_fix(
                                line,
                                "unsupported",
                                format!(
                                    "G{} is not followed by this checker ({why}); the moves \
                                     after it are not measured",
                                    w.text
                                ),
                            );
                            self.st.lost = true;
                        }
                    }
                }
                'M' if !(0.0..=9999.0).contains(&v) || v.fract() != 0.0 => {
                    self.warn(
                        line,
                        "unknown-m",
                        format!("M{} is not an M code this checker knows", w.text),
                    );
                }
                'M' => {
                    let code = v.round() as i64;
                    if let Some(g) = group_of_m(code) {
                        // M7 and M8 may be on together (NISTIR 6556 Table 4 note).
                        let coolant_pair = (code == 7 || code == 8)
                            && groups
                                .iter()
                                .any(|(gg, t)| *gg == g && (t == "M7" || t == "M8"));
                        if !coolant_pair {
                            self.same_group(&mut groups, g, format!("M{}", w.text), line);
                        }
                    }
                    m_codes.push(code);
                }
                'X' | 'Y' | 'Z' => target[(w.letter as u8 - b'X') as usize] = Some(v),
                'I' => ij[0] = Some(v),
                'J' => ij[1] = Some(v),
                'K' => self.warn(
                    line,
                    "ignored",
                    "K is not used by arcs in the XY plane (G17) and was ignored".into(),
                ),
                'R' => radius = Some(v),
                'F' => {
                    if v <= 0.0 {
                        self.must_fix(
                            line,
                            "feed",
                            format!("F{} is not a feed rate: give a positive one", w.text),
                        );
                    }
                    self.st.feed = v;
                }
                'S' => {
                    if v < 0.0 {
                        self.must_fix(
                            line,
                            "spindle-speed",
                            format!("S{} is not a spindle speed: give zero or more", w.text),
                        );
                    }
                    self.st.speed = v;
                    self.speeds.push((line, v));
                }
                'P' => p_word = Some(v),
                // O: a program number; T, H, D: tool numbers and offsets' registers.
                'O' | 'T' | 'H' | 'D' => {}
                other => {
                    self.must_fix(
                        line,
                        "unsupported",
                        format!(
                            "the word {other}{} is not followed by this checker (a rotary axis, \
                             a cycle or another dialect's word); the moves after it are not \
                             measured",
                            w.text
                        ),
                    );
                    self.st.lost = true;
                }
            }
        }
        self.m_words(words, &m_codes, line);
        if dwell {
            match p_word {
                Some(p) if p >= 0.0 => self.dwells.push(Dwell {
                    line,
                    seconds: if self.dialect.dwell_in_ms {
                        p / 1000.0
                    } else {
                        p
                    },
                    before_move: self.moves.len(),
                }),
                _ => self.must_fix(
                    line,
                    "dwell",
                    "a dwell (G4) without a time P of zero or more".into(),
                ),
            }
        }
        if let Some(m) = motion {
            self.st.motion = Some(m);
        }
        if target.iter().any(Option::is_some) && !dwell {
            self.motion(target, ij, radius, line);
        }
    }

    fn same_group(
        &mut self,
        seen: &mut Vec<(&'static str, String)>,
        group: &'static str,
        word: String,
        line: usize,
    ) {
        if let Some((_, first)) = seen.iter().find(|(g, _)| *g == group) {
            let message = format!(
                "two words of the {group} modal group on one line ({first} and {word}); \
                 NISTIR 6556 §3.4 allows one"
            );
            self.must_fix(line, "modal-group", message);
        } else {
            seen.push((group, word));
        }
    }

    /// The M words of a line: spindle or process on and off, stops, the end, coolant.
    fn m_words(&mut self, words: &[Word], codes: &[i64], line: usize) {
        let written: Vec<String> = words
            .iter()
            .map(|w| format!("{}{}", w.letter, w.text))
            .collect();
        let has = |set: &[String]| set.iter().all(|s| written.iter().any(|w| w == s));
        let was = self.st.on;
        if self.dialect.on_words.iter().any(|s| has(s)) {
            self.st.on = true;
        }
        if self.dialect.off_words.iter().any(|s| has(s)) {
            self.st.on = false;
        }
        for &code in codes {
            match code {
                3 | 4 => self.st.on = true,
                5 => self.st.on = false,
                2 | 30 => {
                    if !self.st.ended {
                        self.end_line = Some(line);
                    }
                    self.st.ended = true
                }
                0 | 1 => self.warn(
                    line,
                    "stop",
                    format!(
                        "M{code} stops the program{}: the operator must restart it",
                        if code == 1 {
                            " when the optional-stop switch is on"
                        } else {
                            ""
                        }
                    ),
                ),
                6..=9 => {}
                _ => {
                    let known = self.dialect.on_words.iter().chain(&self.dialect.off_words);
                    let named = known.flatten().any(|w| *w == format!("M{code}"));
                    if !named {
                        self.warn(
                            line,
                            "unknown-m",
                            format!(
                                "M{code} is not known to this checker: what it does to the \
                                 machine is not followed"
                            ),
                        );
                    }
                }
            }
        }
        if self.st.on != was {
            self.switches.push(Switch {
                line,
                on: self.st.on,
                before_move: self.moves.len(),
            });
        }
    }

    /// The move a block with coordinates makes, in mm, in the motion mode in force.
    fn motion(
        &mut self,
        target: [Option<f64>; 3],
        ij: [Option<f64>; 2],
        radius: Option<f64>,
        line: usize,
    ) {
        if self.st.ended {
            self.warn(
                line,
                "after-end",
                "a move after the program end (M2 or M30) is never run".into(),
            );
            return;
        }
        let inch = match self.st.inch {
            Some(inch) => inch,
            None => {
                self.must_fix(
                    line,
                    "units",
                    "a move before the units word (G20 or G21): the units would be a guess; put \
                     G21 (mm) or G20 (inch) at the start of the program"
                        .into(),
                );
                // Read in mm so that the rest can be followed; the finding stands.
                self.st.inch = Some(false);
                false
            }
        };
        let scale = if inch { MM_PER_INCH } else { 1.0 };
        let Some(motion) = self.st.motion else {
            self.must_fix(
                line,
                "motion",
                "a move with no motion mode (G0, G1, G2 or G3) in force".into(),
            );
            return;
        };
        let from = self.st.pos;
        let mut to = from;
        for (k, t) in target.iter().enumerate() {
            if let Some(v) = t {
                to[k] = if self.st.incremental {
                    from[k] + v * scale
                } else {
                    v * scale
                };
            }
        }
        if motion != 0 && self.st.feed <= 0.0 {
            self.must_fix(
                line,
                "feed",
                format!(
                    "a feed move (G{motion}) with no feed rate in force: give F before it \
                     (NISTIR 6556 §3.5.1)"
                ),
            );
        }
        let arc = if motion >= 2 {
            match self.arc_centre(from, to, ij, radius, motion == 3, scale, inch, line) {
                Some(c) => Some((c, motion == 3)),
                None => return,
            }
        } else {
            None
        };
        let mv = |from: [f64; 3], to: [f64; 3]| TraceMove {
            line,
            rapid: motion == 0,
            from,
            to,
            arc,
            feed: if motion == 0 {
                0.0
            } else {
                self.st.feed * scale
            },
            on: self.st.on,
            measurable: !self.st.lost,
        };
        match arc {
            // A whole turn (the end is the start in X and Y) is read as its two halves, so that
            // every later measure sees a turn and not a point.
            Some((c, _)) if from[0] == to[0] && from[1] == to[1] => {
                let half = [
                    2.0 * c[0] - from[0],
                    2.0 * c[1] - from[1],
                    0.5 * (from[2] + to[2]),
                ];
                let (first, second) = (mv(from, half), mv(half, to));
                self.moves.push(first);
                self.moves.push(second);
            }
            _ => {
                let m = mv(from, to);
                self.moves.push(m);
            }
        }
        self.st.pos = to;
    }

    /// An arc's centre (mm) from I and J (incremental from the start unless G90.1) or from R;
    /// checks the radius rule. `None` (after a finding) when there is no arc to follow.
    #[allow(clippy::too_many_arguments)]
    fn arc_centre(
        &mut self,
        from: [f64; 3],
        to: [f64; 3],
        ij: [Option<f64>; 2],
        radius: Option<f64>,
        ccw: bool,
        scale: f64,
        inch: bool,
        line: usize,
    ) -> Option<[f64; 2]> {
        let (rule, unit) = if inch {
            (ARC_RADIUS_RULE_INCH * MM_PER_INCH, "0.0002 in")
        } else {
            (ARC_RADIUS_RULE_MM, "0.002 mm")
        };
        if let Some(r) = radius {
            if ij.iter().any(Option::is_some) {
                self.must_fix(
                    line,
                    "arc",
                    "an arc with both R and I or J: give one form".into(),
                );
                return None;
            }
            return self.r_centre(from, to, r * scale, ccw, line);
        }
        if ij.iter().all(Option::is_none) {
            self.must_fix(line, "arc", "an arc without I, J or R".into());
            return None;
        }
        let (di, dj) = (ij[0].unwrap_or(0.0) * scale, ij[1].unwrap_or(0.0) * scale);
        let c = if self.st.arc_absolute {
            [di, dj]
        } else {
            [from[0] + di, from[1] + dj]
        };
        let r0 = (from[0] - c[0]).hypot(from[1] - c[1]);
        let r1 = (to[0] - c[0]).hypot(to[1] - c[1]);
        let mismatch = (r0 - r1).abs();
        self.mismatch = self.mismatch.max(mismatch);
        if mismatch > rule * (1.0 + 1e-9) {
            self.must_fix(
                line,
                "arc-radius",
                format!(
                    "the arc's start radius {:.4} mm and end radius {:.4} mm differ by {:.4} mm, \
                     more than the {unit} NISTIR 6556 §3.5.3.2 allows",
                    r0, r1, mismatch
                ),
            );
        }
        Some(c)
    }

    /// The centre of an `R` arc (NISTIR 6556 §3.5.3.1: a positive R is an arc of at most half a
    /// turn, a negative one of more).
    fn r_centre(
        &mut self,
        from: [f64; 3],
        to: [f64; 3],
        r: f64,
        ccw: bool,
        line: usize,
    ) -> Option<[f64; 2]> {
        let (dx, dy) = (to[0] - from[0], to[1] - from[1]);
        let chord = dx.hypot(dy);
        if chord == 0.0 {
            self.must_fix(
                line,
                "arc",
                "an R arc that ends where it starts: a full circle needs I and J".into(),
            );
            return None;
        }
        let half = chord / 2.0;
        let rr = r.abs();
        if rr < half * (1.0 - 1e-12) {
            self.must_fix(
                line,
                "arc",
                format!(
                    "the R arc's radius {rr:.4} mm is less than half its chord {chord:.4} mm: no \
                     such arc"
                ),
            );
            return None;
        }
        let h = (rr * rr - half * half).max(0.0).sqrt();
        // The centre is on the left of the chord for a counter-clockwise arc of at most half a
        // turn, on the right for a clockwise one; a negative R takes the other side.
        let left = ccw == (r > 0.0);
        let (nx, ny) = (-dy / chord, dx / chord);
        let s = if left { h } else { -h };
        let c = [from[0] + dx / 2.0 + s * nx, from[1] + dy / 2.0 + s * ny];
        let sweep = 2.0 * (half / rr).min(1.0).asin().to_degrees();
        let sweep = if r > 0.0 { sweep } else { 360.0 - sweep };
        if (sweep - 180.0).abs() < R_NEAR_HALF_TURN || sweep > 360.0 - R_NEAR_HALF_TURN {
            self.warn(
                line,
                "r-arc",
                format!(
                    "an R arc of {sweep:.2}°, within {R_NEAR_HALF_TURN}° of a {}: a small change \
                     of its end point moves its centre a lot (NISTIR 6556 §3.5.3.1); write it \
                     with I and J",
                    if sweep > 270.0 {
                        "full turn"
                    } else {
                        "half turn"
                    }
                ),
            );
        }
        Some(c)
    }

    fn finish(self) -> Reading {
        let bounds = bounds_of(&self.moves);
        Reading {
            trace: Trace {
                moves: self.moves,
                features: self.features,
                cut_numbers: self.cut_numbers,
                marks: self.marks,
                largest_arc_radius_mismatch: self.mismatch,
                bounds,
                dwells: self.dwells,
                speeds: self.speeds,
                switches: self.switches,
                end_line: self.end_line,
            },
            findings: self.findings,
        }
    }
}

/// A number as RS274/NGC writes it (an exponent is read too, after its finding), finite.
fn number(text: &str) -> Option<f64> {
    let ok = !text.is_empty()
        && text.chars().all(|c| {
            c.is_ascii_digit() || c == '.' || c == '-' || c == '+' || c == 'e' || c == 'E'
        });
    let v: Option<f64> = if ok { text.parse().ok() } else { None };
    v.filter(|v| v.is_finite())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> Reading {
        read_program(text, &Dialect::default())
    }

    /// The (line, rule) of every finding that must be fixed.
    fn must_fix(r: &Reading) -> Vec<(usize, &'static str)> {
        r.findings
            .iter()
            .filter(|f| f.severity == Severity::MustFix)
            .map(|f| (f.line, f.rule))
            .collect()
    }

    #[test]
    fn arc_radii_differing_by_three_microns_are_caught_at_their_line() {
        // From (0, 0) about (5, 0): start radius 5, end (10.003, 0) at radius 5.003. NISTIR 6556
        // §3.5.3.2 allows 0.002 mm.
        let r = read("G21 G90\nG0 X0 Y0\nG1 X0 Y0 F100\nG3 X10.003 Y0 I5 J0\nG1 X12\n");
        assert_eq!(must_fix(&r), [(4, "arc-radius")], "{:?}", r.findings);
        // 0.0015 mm passes.
        let r = read("G21 G90\nG0 X0 Y0\nG1 X0 Y0 F100\nG3 X10.0015 Y0 I5 J0\n");
        assert!(must_fix(&r).is_empty(), "{:?}", r.findings);
        // In inches the rule is 0.0002 in: 0.0003 in is caught.
        let r = read("G20 G90\nG1 X0 Y0 F10\nG3 X2.0003 Y0 I1 J0\n");
        assert_eq!(must_fix(&r), [(3, "arc-radius")]);
    }

    #[test]
    fn exponents_missing_feeds_and_two_motion_words_are_caught() {
        let r = read("G21 G90\nG0 X1.5E1 Y0\n");
        assert_eq!(must_fix(&r), [(2, "exponent")]);
        // Read as the number meant, for what follows.
        assert_eq!(r.trace.moves[0].to, [15.0, 0.0, 0.0]);
        let r = read("G21 G90\nG0 X0 Y0\nG1 X10\n");
        assert_eq!(must_fix(&r), [(3, "feed")]);
        let r = read("G21 G90\nG0 G1 X10 F100\n");
        assert_eq!(must_fix(&r), [(2, "modal-group")]);
        assert!(r.findings[0].message.contains("G0 and G1"));
        // M7 and M8 together are allowed; M3 with M5 is not.
        assert!(must_fix(&read("G21\nM7 M8\n")).is_empty());
        assert_eq!(must_fix(&read("G21\nM3 M5\n")), [(2, "modal-group")]);
        // A move before the units word.
        assert_eq!(must_fix(&read("G90\nG0 X1\nG21\n")), [(2, "units")]);
    }

    #[test]
    fn a_deleted_block_that_moves_is_caught_and_one_that_does_not_is_a_warning() {
        let r = read("G21 G90\nG1 X0 Y0 F100\nG1 X10\n/G1 Y10\nG1 X0\n/M9\n");
        assert_eq!(must_fix(&r), [(4, "block-delete")]);
        let warnings: Vec<usize> = r
            .findings
            .iter()
            .filter(|f| f.severity == Severity::Warning)
            .map(|f| f.line)
            .collect();
        assert_eq!(warnings, [6]);
        // Followed as if the switch were off.
        assert_eq!(r.trace.moves[2].to, [10.0, 10.0, 0.0]);
    }

    #[test]
    fn r_arcs_incremental_moves_and_absolute_centres_are_followed() {
        // NISTIR 6556 §3.5.3.1: a counter-clockwise arc from (0, 0) to (10, 0) with R 5 is a
        // half turn about (5, 0) (a warning: near a half turn); with R 10 and G2 (clockwise)
        // its centre lies right of the chord, below it: (5, −√75).
        let r = read("G21 G90 G1 X0 Y0 F100\nG3 X10 Y0 R5\n");
        let c = r.trace.moves[1].arc.unwrap().0;
        assert!((c[0] - 5.0).abs() < 1e-12 && c[1].abs() < 1e-12, "{c:?}");
        assert_eq!(r.findings.len(), 1);
        assert_eq!(r.findings[0].rule, "r-arc");
        let r = read("G21 G90 G1 X0 Y0 F100\nG2 X10 Y0 R10\n");
        let c = r.trace.moves[1].arc.unwrap().0;
        assert!((c[0] - 5.0).abs() < 1e-12 && (c[1] + 75f64.sqrt()).abs() < 1e-12);
        assert!(r.findings.is_empty(), "{:?}", r.findings);
        // A negative R takes the centre across the chord: more than half a turn.
        let r = read("G21 G90 G1 X0 Y0 F100\nG2 X10 Y0 R-10\n");
        let c = r.trace.moves[1].arc.unwrap().0;
        assert!((c[1] - 75f64.sqrt()).abs() < 1e-12);
        // An R shorter than half the chord is no arc.
        assert_eq!(
            must_fix(&read("G21 G90 G1 X0 Y0 F100\nG2 X10 Y0 R4\n")),
            [(2, "arc")]
        );
        // G91: moves add up; G90.1: I and J are the centre itself.
        let r = read("G21 G91 G1 X1 Y1 F100\nX2 Y0\nG90 G90.1 G2 X5 Y1 I4 J1\n");
        assert_eq!(r.trace.moves[1].to, [3.0, 1.0, 0.0]);
        assert_eq!(r.trace.moves[2].arc.unwrap().0, [4.0, 1.0]);
    }

    #[test]
    fn findings_per_line_are_capped_and_absurd_m_codes_quoted() {
        let line = format!("G21 {}", "G0 ".repeat(1000));
        let r = read(&line);
        assert_eq!(
            r.findings.len(),
            MAX_SAME_FINDINGS,
            "{:?}",
            r.findings.len()
        );
        let r = read("G21\nM99999999999999999999\n");
        assert!(
            r.findings[0].message.contains("M99999999999999999999"),
            "{:?}",
            r.findings
        );
    }

    #[test]
    fn dwells_spindle_and_unknown_words_are_read() {
        let r = read_program(
            "G21 G90\nM3 S1200\nG4 P500\nG1 X1 F10\nM5\nG1 X2\nM61\nA10\n",
            &Dialect {
                dwell_in_ms: true,
                ..Dialect::default()
            },
        );
        assert_eq!(r.trace.dwells.len(), 1);
        assert!((r.trace.dwells[0].seconds - 0.5).abs() < 1e-12);
        assert_eq!(r.trace.speeds, [(2, 1200.0)]);
        assert!(r.trace.moves[0].on && !r.trace.moves[1].on);
        assert_eq!(must_fix(&r), [(8, "unsupported")]);
        assert!(
            r.findings
                .iter()
                .any(|f| f.line == 7 && f.severity == Severity::Warning)
        );
    }
}
