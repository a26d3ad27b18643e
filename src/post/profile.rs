//! Machine profiles: what one kind of machine needs written into its programs, read from TOML.
//!
//! # Units
//!
//! Every length, height, feed and travel limit in a profile is in the profile's own `units`
//! (`mm` or `in`; feeds per minute). conicut works in millimetres inside and converts to the
//! profile's units only when it writes the program.
//!
//! # Keys
//!
//! See `machine-profiles/metric-mill.toml` for a complete, commented example. Unknown keys are
//! refused so that a misspelt key does not silently fall back to a default.

use serde::Deserialize;
use std::fmt;

/// Millimetres per inch (exact by definition since 1959).
pub const MM_PER_INCH: f64 = 25.4;

/// The kind of machine a profile describes. Each kind has its own safety cautions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum MachineKind {
    Mill,
    Router,
    Laser,
    Plasma,
    Waterjet,
}

impl MachineKind {
    /// The kind as written in a profile.
    pub fn as_str(self) -> &'static str {
        match self {
            MachineKind::Mill => "mill",
            MachineKind::Router => "router",
            MachineKind::Laser => "laser",
            MachineKind::Plasma => "plasma",
            MachineKind::Waterjet => "waterjet",
        }
    }
}

impl fmt::Display for MachineKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// The length unit of a program.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
pub enum Units {
    #[serde(rename = "mm")]
    Millimetres,
    #[serde(rename = "in")]
    Inches,
}

impl Units {
    /// The unit as written in a profile and in program comments.
    pub fn as_str(self) -> &'static str {
        match self {
            Units::Millimetres => "mm",
            Units::Inches => "in",
        }
    }

    /// The RS274/NGC units word (NISTIR 6556 §3.5.7).
    pub fn g_word(self) -> &'static str {
        match self {
            Units::Millimetres => "G21",
            Units::Inches => "G20",
        }
    }

    /// Converts a length in millimetres to this unit.
    pub fn from_mm(self, mm: f64) -> f64 {
        match self {
            Units::Millimetres => mm,
            Units::Inches => mm / MM_PER_INCH,
        }
    }

    /// Converts a length in this unit to millimetres.
    pub fn to_mm(self, value: f64) -> f64 {
        match self {
            Units::Millimetres => value,
            Units::Inches => value * MM_PER_INCH,
        }
    }
}

impl fmt::Display for Units {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// The box the tool centre may reach, relative to the work zero, in the profile's units.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TravelEnvelope {
    pub x_min: f64,
    pub x_max: f64,
    pub y_min: f64,
    pub y_max: f64,
    pub z_min: f64,
    pub z_max: f64,
}

impl TravelEnvelope {
    /// `(min, max)` along the axis `'X'`, `'Y'` or `'Z'`.
    pub fn limits(&self, axis: char) -> (f64, f64) {
        match axis {
            'X' => (self.x_min, self.x_max),
            'Y' => (self.y_min, self.y_max),
            _ => (self.z_min, self.z_max),
        }
    }
}

/// A machine profile as written in TOML, before its values are checked.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProfile {
    name: String,
    kind: MachineKind,
    units: Units,
    xy_decimals: Option<usize>,
    z_decimals: Option<usize>,
    feed_decimals: Option<usize>,
    #[serde(default)]
    line_numbers: bool,
    #[serde(default)]
    start_block: Vec<String>,
    #[serde(default)]
    end_block: Vec<String>,
    spindle_on: String,
    spindle_off: String,
    spindle_speed: f64,
    max_spindle_speed: f64,
    #[serde(default)]
    spindle_delay: f64,
    cut_feed: f64,
    plunge_feed: f64,
    max_feed: f64,
    safe_height: f64,
    retract_height: f64,
    default_depth: f64,
    travel: TravelEnvelope,
}

/// A checked machine profile. Build one with [`MachineProfile::from_toml`]; every value has been
/// validated (positive feeds, ordered heights and limits, sensible decimals, clean blocks).
#[derive(Debug, Clone, PartialEq)]
pub struct MachineProfile {
    name: String,
    kind: MachineKind,
    units: Units,
    xy_decimals: usize,
    z_decimals: usize,
    feed_decimals: usize,
    line_numbers: bool,
    start_block: Vec<String>,
    end_block: Vec<String>,
    spindle_on: String,
    spindle_off: String,
    spindle_speed: f64,
    max_spindle_speed: f64,
    spindle_delay: f64,
    cut_feed: f64,
    plunge_feed: f64,
    max_feed: f64,
    safe_height: f64,
    retract_height: f64,
    default_depth: f64,
    travel: TravelEnvelope,
}

/// The generic metric mill profile shipped in `machine-profiles/metric-mill.toml`.
pub const METRIC_MILL_TOML: &str = include_str!("../../machine-profiles/metric-mill.toml");

/// The most decimals a profile may ask for.
pub const MAX_DECIMALS: usize = 6;

/// The longest start or end block line a profile may hold (the program line limit is 256,
/// NISTIR 6556 §3.3; the rest is left for a line number).
const MAX_BLOCK_LINE: usize = 200;

impl MachineProfile {
    /// Reads and checks a profile. `file_name` is used only in messages.
    ///
    /// Errors name the file, the line and the key, say what is wrong and what to do.
    pub fn from_toml(text: &str, file_name: &str) -> Result<Self, ProfileError> {
        let raw: RawProfile =
            toml::from_str(text).map_err(|e| from_toml_error(&e, text, file_name))?;
        let fail = |key: &str, problem: String, hint: &str| ProfileError {
            file: file_name.to_string(),
            line: find_key_line(text, key),
            key: Some(key.to_string()),
            problem,
            hint: hint.to_string(),
        };

        if raw.name.trim().is_empty() {
            return Err(fail(
                "name",
                "the name is empty".into(),
                "give the profile a short name such as \"metric mill\"",
            ));
        }
        let (xy_default, z_default, feed_default) = match raw.units {
            Units::Millimetres => (4, 3, 1),
            Units::Inches => (5, 4, 2),
        };
        let xy_decimals = raw.xy_decimals.unwrap_or(xy_default);
        let z_decimals = raw.z_decimals.unwrap_or(z_default);
        let feed_decimals = raw.feed_decimals.unwrap_or(feed_default);
        for (key, value) in [
            ("xy_decimals", xy_decimals),
            ("z_decimals", z_decimals),
            ("feed_decimals", feed_decimals),
        ] {
            if value > MAX_DECIMALS {
                return Err(fail(
                    key,
                    format!("{value} decimals is more than the {MAX_DECIMALS} allowed"),
                    "use 0 to 6 (4 for mm and 5 for inch suit most controllers)",
                ));
            }
        }

        let positive = [
            ("spindle_speed", raw.spindle_speed),
            ("max_spindle_speed", raw.max_spindle_speed),
            ("cut_feed", raw.cut_feed),
            ("plunge_feed", raw.plunge_feed),
            ("max_feed", raw.max_feed),
            ("safe_height", raw.safe_height),
            ("retract_height", raw.retract_height),
            ("default_depth", raw.default_depth),
        ];
        for (key, value) in positive {
            if !(value.is_finite() && value > 0.0) {
                return Err(fail(
                    key,
                    format!("{value} is not a positive number"),
                    "give a value greater than zero",
                ));
            }
        }
        if !(raw.spindle_delay.is_finite() && raw.spindle_delay >= 0.0) {
            return Err(fail(
                "spindle_delay",
                format!(
                    "{} is not zero or a positive number of seconds",
                    raw.spindle_delay
                ),
                "give the seconds to wait for the spindle to reach speed, or 0",
            ));
        }
        if raw.spindle_speed > raw.max_spindle_speed {
            return Err(fail(
                "spindle_speed",
                format!(
                    "the default spindle speed {} rpm is above max_spindle_speed {} rpm",
                    raw.spindle_speed, raw.max_spindle_speed
                ),
                "lower spindle_speed or correct max_spindle_speed",
            ));
        }
        for (key, value) in [("cut_feed", raw.cut_feed), ("plunge_feed", raw.plunge_feed)] {
            if value > raw.max_feed {
                return Err(fail(
                    key,
                    format!("{value} is above max_feed {}", raw.max_feed),
                    "lower the feed or correct max_feed",
                ));
            }
        }
        if raw.retract_height > raw.safe_height {
            return Err(fail(
                "retract_height",
                format!(
                    "retract_height {} is above safe_height {}",
                    raw.retract_height, raw.safe_height
                ),
                "retract_height is just above the stock; safe_height clears the clamps and must be the larger",
            ));
        }
        let t = raw.travel;
        for (axis, lo, hi) in [
            ("x", t.x_min, t.x_max),
            ("y", t.y_min, t.y_max),
            ("z", t.z_min, t.z_max),
        ] {
            let key = format!("travel.{axis}_min");
            if !(lo.is_finite() && hi.is_finite()) {
                return Err(fail(
                    &key,
                    "a travel limit is not a finite number".into(),
                    "give finite numbers",
                ));
            }
            if lo >= hi {
                return Err(fail(
                    &key,
                    format!("{axis}_min {lo} is not below {axis}_max {hi}"),
                    "the travel minimum must be smaller than the maximum",
                ));
            }
        }
        if raw.safe_height > t.z_max {
            return Err(fail(
                "safe_height",
                format!(
                    "safe_height {} is above the travel limit z_max {}",
                    raw.safe_height, t.z_max
                ),
                "lower safe_height or correct travel.z_max",
            ));
        }

        for (key, line) in [
            ("spindle_on", &raw.spindle_on),
            ("spindle_off", &raw.spindle_off),
        ] {
            if line.trim().is_empty() {
                return Err(fail(
                    key,
                    "the block is empty".into(),
                    "give the word, e.g. M3 to start or M5 to stop",
                ));
            }
            check_block_line(line).map_err(|p| fail(key, p, "write plain RS274 words"))?;
        }
        for (key, lines) in [
            ("start_block", &raw.start_block),
            ("end_block", &raw.end_block),
        ] {
            for line in lines {
                check_block_line(line).map_err(|p| {
                    fail(
                        key,
                        format!("line \"{line}\": {p}"),
                        "write plain RS274 words, one block per string",
                    )
                })?;
            }
        }

        Ok(MachineProfile {
            name: raw.name.trim().to_string(),
            kind: raw.kind,
            units: raw.units,
            xy_decimals,
            z_decimals,
            feed_decimals,
            line_numbers: raw.line_numbers,
            start_block: raw
                .start_block
                .iter()
                .map(|s| s.trim().to_string())
                .collect(),
            end_block: raw.end_block.iter().map(|s| s.trim().to_string()).collect(),
            spindle_on: raw.spindle_on.trim().to_string(),
            spindle_off: raw.spindle_off.trim().to_string(),
            spindle_speed: raw.spindle_speed,
            max_spindle_speed: raw.max_spindle_speed,
            spindle_delay: raw.spindle_delay,
            cut_feed: raw.cut_feed,
            plunge_feed: raw.plunge_feed,
            max_feed: raw.max_feed,
            safe_height: raw.safe_height,
            retract_height: raw.retract_height,
            default_depth: raw.default_depth,
            travel: raw.travel,
        })
    }

    /// The generic metric mill shipped with conicut (`machine-profiles/metric-mill.toml`).
    pub fn metric_mill() -> Result<Self, ProfileError> {
        Self::from_toml(METRIC_MILL_TOML, "machine-profiles/metric-mill.toml")
    }

    pub fn name(&self) -> &str {
        &self.name
    }
    pub fn kind(&self) -> MachineKind {
        self.kind
    }
    pub fn units(&self) -> Units {
        self.units
    }
    /// Decimals for X, Y (and arc offsets).
    pub fn xy_decimals(&self) -> usize {
        self.xy_decimals
    }
    /// Decimals for Z.
    pub fn z_decimals(&self) -> usize {
        self.z_decimals
    }
    /// Decimals for F.
    pub fn feed_decimals(&self) -> usize {
        self.feed_decimals
    }
    /// Whether blocks get `N` numbers (N10, N20, …).
    pub fn line_numbers(&self) -> bool {
        self.line_numbers
    }
    /// Blocks written after the modal setup line, before the spindle starts.
    pub fn start_block(&self) -> &[String] {
        &self.start_block
    }
    /// Blocks written after the spindle stops, before the program end.
    pub fn end_block(&self) -> &[String] {
        &self.end_block
    }
    /// The words that start the spindle (the speed `S` is added after them).
    pub fn spindle_on(&self) -> &str {
        &self.spindle_on
    }
    /// The words that stop the spindle.
    pub fn spindle_off(&self) -> &str {
        &self.spindle_off
    }
    /// Default spindle speed, rpm.
    pub fn spindle_speed(&self) -> f64 {
        self.spindle_speed
    }
    /// The highest spindle speed a program may ask for, rpm.
    pub fn max_spindle_speed(&self) -> f64 {
        self.max_spindle_speed
    }
    /// Seconds to wait after starting the spindle (0: no dwell).
    pub fn spindle_delay(&self) -> f64 {
        self.spindle_delay
    }
    /// Default cutting feed, profile units per minute.
    pub fn cut_feed(&self) -> f64 {
        self.cut_feed
    }
    /// Default plunge feed, profile units per minute.
    pub fn plunge_feed(&self) -> f64 {
        self.plunge_feed
    }
    /// The highest feed a program may ask for, profile units per minute.
    pub fn max_feed(&self) -> f64 {
        self.max_feed
    }
    /// Height that clears clamps and fixtures, profile units above the work zero.
    pub fn safe_height(&self) -> f64 {
        self.safe_height
    }
    /// Height just above the stock from which the tool plunges, profile units.
    pub fn retract_height(&self) -> f64 {
        self.retract_height
    }
    /// Cut depth to use when the user gives none, profile units (positive).
    pub fn default_depth(&self) -> f64 {
        self.default_depth
    }
    /// The travel envelope, profile units relative to the work zero.
    pub fn travel(&self) -> &TravelEnvelope {
        &self.travel
    }
}

/// Checks one line of a start or end block: printable ASCII, no `%`, no nested or unclosed
/// comments (NISTIR 6556 §3.3.4), not too long, and no program end (conicut writes M30 itself).
fn check_block_line(line: &str) -> Result<(), String> {
    if line.len() > MAX_BLOCK_LINE {
        return Err(format!("longer than {MAX_BLOCK_LINE} characters"));
    }
    if let Some(c) = line.chars().find(|c| !(c.is_ascii_graphic() || *c == ' ')) {
        return Err(format!(
            "holds the character {c:?}; only printable ASCII is allowed"
        ));
    }
    if line.contains('%') {
        return Err("holds '%', which marks the start and end of the tape".into());
    }
    let mut depth = 0;
    let mut words = String::new();
    for c in line.chars() {
        match c {
            '(' if depth == 0 => depth = 1,
            '(' => return Err("holds a nested comment".into()),
            ')' if depth == 1 => depth = 0,
            ')' => return Err("holds ')' without '('".into()),
            _ if depth == 0 => words.push(c.to_ascii_uppercase()),
            _ => {}
        }
    }
    if depth != 0 {
        return Err("holds a comment that is not closed on the line".into());
    }
    let compact: String = words.chars().filter(|c| !c.is_whitespace()).collect();
    let bytes = compact.as_bytes();
    for (i, &c) in bytes.iter().enumerate() {
        if c != b'M' {
            continue;
        }
        let digits: String = compact[i + 1..]
            .chars()
            .take_while(|c| c.is_ascii_digit())
            .collect();
        if let Ok(n) = digits.parse::<u32>()
            && (n == 2 || n == 30)
        {
            return Err(format!(
                "holds the program end M{n}; conicut writes M30 at the end itself"
            ));
        }
    }
    Ok(())
}

/// What is wrong with a profile, and where.
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileError {
    /// The file name given to [`MachineProfile::from_toml`].
    pub file: String,
    /// 1-based line of the problem, when known.
    pub line: Option<usize>,
    /// The key at fault, when known (`travel.x_min` for keys inside `[travel]`).
    pub key: Option<String>,
    pub problem: String,
    /// What to do about it.
    pub hint: String,
}

impl fmt::Display for ProfileError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "machine profile {}", self.file)?;
        if let Some(line) = self.line {
            write!(f, ", line {line}")?;
        }
        if let Some(key) = &self.key {
            write!(f, ", key `{key}`")?;
        }
        write!(f, ": {}", self.problem)?;
        if !self.hint.is_empty() {
            write!(f, "; {}", self.hint)?;
        }
        Ok(())
    }
}

impl std::error::Error for ProfileError {}

/// Turns a TOML or serde error into a [`ProfileError`], using the error's span for the line and
/// the message or the line's text for the key.
fn from_toml_error(e: &toml::de::Error, text: &str, file_name: &str) -> ProfileError {
    let message = e.message().trim().to_string();
    let line = e.span().map(|span| line_of_offset(text, span.start));
    let quoted = message.split('`').nth(1).map(str::to_string);
    if message.starts_with("missing field") {
        // The span of a missing key covers its whole table, so no line is given.
        let table = line.map(|l| table_of_line(text, l)).unwrap_or_default();
        return ProfileError {
            file: file_name.to_string(),
            line: None,
            key: quoted.map(|k| {
                if table.is_empty() {
                    k
                } else {
                    format!("{table}.{k}")
                }
            }),
            problem: message,
            hint: "add the key; machine-profiles/metric-mill.toml shows every key with a comment"
                .into(),
        };
    }
    let (key, hint) = if message.starts_with("unknown field") {
        (
            quoted,
            "check the spelling; machine-profiles/metric-mill.toml lists every key",
        )
    } else if message.starts_with("unknown variant") {
        (
            line.and_then(|l| key_on_line(text, l)),
            "use one of the values the message lists",
        )
    } else {
        (
            line.and_then(|l| key_on_line(text, l)),
            "fix the value or the TOML syntax on that line",
        )
    };
    ProfileError {
        file: file_name.to_string(),
        line,
        key: key.map(|k| qualify_key(text, line, &k)),
        problem: message,
        hint: hint.to_string(),
    }
}

/// 1-based line number of a byte offset.
fn line_of_offset(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
        + 1
}

/// The key assigned on a 1-based line (`key = value`), if any.
fn key_on_line(text: &str, line: usize) -> Option<String> {
    let l = text.lines().nth(line.checked_sub(1)?)?;
    let (key, _) = l.split_once('=')?;
    let key = key.trim().trim_matches('"');
    (!key.is_empty() && !key.starts_with('[')).then(|| key.to_string())
}

/// The table (e.g. `travel`) that a 1-based line belongs to; empty for the root table.
fn table_of_line(text: &str, line: usize) -> String {
    let mut table = String::new();
    for l in text.lines().take(line) {
        let t = l.trim();
        if t.starts_with('[') {
            table = t.trim_matches(|c| c == '[' || c == ']').trim().to_string();
        }
    }
    table
}

fn qualify_key(text: &str, line: Option<usize>, key: &str) -> String {
    match line.map(|l| table_of_line(text, l)) {
        Some(table) if !table.is_empty() && !key.contains('.') => format!("{table}.{key}"),
        _ => key.to_string(),
    }
}

/// The 1-based line on which `key` is set: a root key such as `cut_feed`, or a dotted key such
/// as `travel.x_min` for a key inside a table.
fn find_key_line(text: &str, key: &str) -> Option<usize> {
    let (wanted_table, key) = key.rsplit_once('.').unwrap_or(("", key));
    let mut table = String::new();
    for (i, l) in text.lines().enumerate() {
        let t = l.trim();
        if t.starts_with('[') {
            table = t.trim_matches(|c| c == '[' || c == ']').trim().to_string();
            continue;
        }
        if table != wanted_table {
            continue;
        }
        if let Some((k, _)) = t.split_once('=')
            && k.trim().trim_matches('"') == key
        {
            return Some(i + 1);
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shipped_metric_mill_profile_loads() {
        let p = MachineProfile::metric_mill().unwrap();
        assert_eq!(p.kind(), MachineKind::Mill);
        assert_eq!(p.units(), Units::Millimetres);
        // STANDARDS-AND-PRACTICE.md §1.6: 4 decimals for X Y and 3 for Z in mm.
        assert_eq!((p.xy_decimals(), p.z_decimals()), (4, 3));
        assert!(p.retract_height() < p.safe_height());
    }

    #[test]
    fn inch_defaults_follow_the_precision_table() {
        // STANDARDS-AND-PRACTICE.md §1.6: 5 decimals for X Y and 4 for Z in inch.
        let text = METRIC_MILL_TOML
            .replace("units = \"mm\"", "units = \"in\"")
            .lines()
            .filter(|l| !l.starts_with("xy_decimals") && !l.starts_with("z_decimals"))
            .collect::<Vec<_>>()
            .join("\n");
        let p = MachineProfile::from_toml(&text, "inch.toml").unwrap();
        assert_eq!((p.xy_decimals(), p.z_decimals()), (5, 4));
    }

    #[test]
    fn block_lines_are_checked() {
        assert!(check_block_line("G54 (work offset)").is_ok());
        assert!(check_block_line("M3").is_ok());
        assert!(check_block_line("G0 X0 (a (b))").is_err());
        assert!(check_block_line("G0 X0 (open").is_err());
        assert!(check_block_line("M30").is_err());
        assert!(check_block_line("m 2").is_err());
        assert!(check_block_line("M300").is_ok());
        assert!(check_block_line("%").is_err());
        assert!(check_block_line("G0\tX1").is_err());
    }

    #[test]
    fn key_lines_are_found_in_the_right_table() {
        let text = "name = \"a\"\n[travel]\nx_min = 1\n";
        assert_eq!(find_key_line(text, "travel.x_min"), Some(3));
        assert_eq!(find_key_line(text, "x_min"), None);
        assert_eq!(find_key_line(text, "name"), Some(1));
        assert_eq!(find_key_line(text, "cut_feed"), None);
        assert_eq!(qualify_key(text, Some(3), "x_min"), "travel.x_min");
    }
}
