//! Writes the fitted cuts as one RS274/NGC program for one machine profile.

use super::number::format_number;
use super::profile::{MachineKind, MachineProfile, Units};
use super::safety::{PRECEDENCE, SAFETY_HEADING, cautions};
use crate::fit::{FittedCut, Move};
use crate::geom::Point;
use crate::plan::{CutSide, FeatureKind};

/// What the user asked for this program. Lengths in millimetres, feeds in millimetres per minute
/// (conicut's internal units; the profile's units apply only to the written program).
#[derive(Debug, Clone, PartialEq)]
pub struct ProgramSettings {
    /// The job's title, for the header.
    pub title: String,
    /// The drawing the cuts came from, for the header (a file name, not a path of this machine).
    pub source: String,
    /// Tool diameter (mm), for the header; the paths already allow for it.
    pub tool_diameter: f64,
    /// Cut depth (mm, positive): the floor of the cut is at Z = −depth.
    pub depth: f64,
    /// The tolerance the paths were fitted to (mm), for the header.
    pub tolerance: f64,
    /// Cutting feed (mm/min); `None` uses the profile's.
    pub cut_feed: Option<f64>,
    /// Plunge feed (mm/min); `None` uses the profile's.
    pub plunge_feed: Option<f64>,
    /// Spindle speed (rpm); `None` uses the profile's.
    pub spindle_speed: Option<f64>,
}

/// Why a program was not written.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PostError {
    #[error(
        "machine profile \"{profile}\" is a {kind} profile; programs for a {kind} are not yet supported. Use a mill profile such as machine-profiles/metric-mill.toml"
    )]
    KindNotSupported { profile: String, kind: MachineKind },
    #[error("there are no cuts to write; check that the drawing holds bays, holes or an outline")]
    NoCuts,
    #[error("feature \"{feature}\": arc moves cannot be written yet; fit it with lines")]
    ArcsNotWritten { feature: String },
    #[error("{setting} is {value}, which {problem}; {hint}")]
    BadSetting {
        setting: &'static str,
        value: f64,
        problem: &'static str,
        hint: &'static str,
    },
    #[error(
        "feature \"{feature}\": its path has {points} points; a closed path needs at least 2. This is a bug in the fitting stage; please report it with the drawing"
    )]
    EmptyPath { feature: String, points: usize },
    #[error(
        "feature \"{feature}\": a coordinate of {what} is not a finite number. This is a bug in an earlier stage; please report it with the drawing"
    )]
    NotFinite { feature: String, what: &'static str },
    #[error(
        "feature \"{feature}\": {what} would move {axis} to {value} {units}, outside the machine's travel {axis} {limits} {units}. Move the work zero, check the drawing's units and the depth, or use a profile for a larger machine"
    )]
    OutsideEnvelope {
        feature: String,
        what: &'static str,
        axis: char,
        value: String,
        /// The allowed range, e.g. `-10.0000 .. 400.0000`.
        limits: String,
        units: Units,
    },
    #[error(
        "the {which} of {value} {units}/min is above the largest feed {max} {units}/min that profile \"{profile}\" allows. Give a lower feed, or correct max_feed in the profile if the machine can go faster"
    )]
    FeedTooHigh {
        which: &'static str,
        value: String,
        max: String,
        units: Units,
        profile: String,
    },
    #[error(
        "the spindle speed of {value} rpm is above the largest speed {max} rpm that profile \"{profile}\" allows. Give a lower speed, or correct max_spindle_speed in the profile"
    )]
    SpindleTooFast {
        value: String,
        max: String,
        profile: String,
    },
    #[error(
        "the program needs more than 99999 line numbers (NISTIR 6556 §3.3.1 allows 5 digits); set line_numbers = false in the profile or use a coarser tolerance"
    )]
    TooManyLineNumbers,
}

/// Longest comment text per line; longer text wraps onto further comment lines.
const COMMENT_WIDTH: usize = 100;

/// The largest line number (NISTIR 6556 §3.3.1: at most five digits).
const MAX_LINE_NUMBER: u32 = 99_999;

/// Writes `cuts` as one program for `profile`.
///
/// Shape (NISTIR 6556, RS274/NGC): a `%` line; a header of `( )` comments (title, source,
/// generator and version, units, tool, depth, tolerance, feeds, one line per feature, the
/// safety block for the profile's kind of machine ending with the precedence statement); a modal
/// line `G21|G20 G90 G17 G94 G40`; the profile's start block; a rapid to the safe height; the
/// spindle on with `S` (and a `G4 P` dwell if the profile asks); then per cut a rapid to the safe
/// height (when not already there), a rapid over the plunge point, a rapid down to the retract
/// height, a straight plunge at the plunge feed to Z = −depth, feed moves to `path[0]` and along
/// the path at the cut feed, and a rapid back to the safe height; at the end the spindle off, the
/// profile's end block, `M30` and `%`.
///
/// F is written only when it changes. Moves that round to no movement are left out. Every number
/// has fixed decimals ([`format_number`]).
///
/// Refuses (with a message naming the feature, the coordinate and what to do): a kind of machine
/// not yet supported, bad settings, any point outside the profile's travel envelope (checked on
/// the exact value in the profile's units), any feed above the profile's `max_feed`, a spindle
/// speed above its `max_spindle_speed`.
pub fn write_program(
    cuts: &[FittedCut],
    profile: &MachineProfile,
    settings: &ProgramSettings,
) -> Result<String, PostError> {
    if profile.kind() != MachineKind::Mill {
        return Err(PostError::KindNotSupported {
            profile: profile.name().to_string(),
            kind: profile.kind(),
        });
    }
    if cuts.is_empty() {
        return Err(PostError::NoCuts);
    }
    check_settings(settings)?;
    let units = profile.units();
    let cut_feed = settings
        .cut_feed
        .map_or(profile.cut_feed(), |f| units.from_mm(f));
    let plunge_feed = settings
        .plunge_feed
        .map_or(profile.plunge_feed(), |f| units.from_mm(f));
    let spindle = settings.spindle_speed.unwrap_or(profile.spindle_speed());
    check_feed(profile, "cut feed", cut_feed)?;
    check_feed(profile, "plunge feed", plunge_feed)?;
    if spindle > profile.max_spindle_speed() {
        return Err(PostError::SpindleTooFast {
            value: format_number(spindle, 0),
            max: format_number(profile.max_spindle_speed(), 0),
            profile: profile.name().to_string(),
        });
    }
    let floor = -units.from_mm(settings.depth);
    for cut in cuts {
        check_cut(cut, profile, floor)?;
    }

    let mut w = Writer::new(profile);
    let mut summaries = Vec::new();
    w.block(format!("{} G90 G17 G94 G40", units.g_word()));
    for line in profile.start_block() {
        w.block(line.clone());
    }
    let safe = profile.safe_height();
    w.rapid_z(safe);
    w.block(format!(
        "{} S{}",
        profile.spindle_on(),
        format_number(spindle, 0)
    ));
    if profile.spindle_delay() > 0.0 {
        w.block(format!("G4 P{}", format_number(profile.spindle_delay(), 1)));
    }
    for (i, cut) in cuts.iter().enumerate() {
        w.comment(&format!(
            "cut {} of {}: {}",
            i + 1,
            cuts.len(),
            sanitize(&cut.name)
        ));
        w.rapid_z(safe);
        w.rapid_xy(units_point(units, cut.plunge));
        w.rapid_z(profile.retract_height());
        w.feed_z(floor, plunge_feed);
        let mut moves = 0;
        for p in cut.end_points() {
            if w.feed_xy(units_point(units, p), cut_feed) {
                moves += 1;
            }
        }
        w.rapid_z(safe);
        summaries.push(moves);
    }
    w.block(profile.spindle_off().to_string());
    for line in profile.end_block() {
        w.block(line.clone());
    }
    w.block("M30".to_string());
    if w.line_number > MAX_LINE_NUMBER + 10 {
        return Err(PostError::TooManyLineNumbers);
    }

    let mut out = String::from("%\n");
    for line in header(
        cuts,
        &summaries,
        profile,
        settings,
        cut_feed,
        plunge_feed,
        spindle,
    ) {
        out.push_str(&line);
        out.push('\n');
    }
    for line in &w.lines {
        out.push_str(line);
        out.push('\n');
    }
    out.push_str("%\n");
    Ok(out)
}

fn check_settings(s: &ProgramSettings) -> Result<(), PostError> {
    let positive = |setting, value: f64, hint| {
        if value.is_finite() && value > 0.0 {
            Ok(())
        } else {
            Err(PostError::BadSetting {
                setting,
                value,
                problem: "is not a positive number",
                hint,
            })
        }
    };
    positive(
        "the tool diameter",
        s.tool_diameter,
        "give the cutter's diameter in mm",
    )?;
    positive(
        "the cut depth",
        s.depth,
        "give the depth below the work zero as a positive number of mm",
    )?;
    positive(
        "the tolerance",
        s.tolerance,
        "give the tolerance in mm, e.g. 0.01",
    )?;
    if let Some(f) = s.cut_feed {
        positive("the cut feed", f, "give the feed in mm/min")?;
    }
    if let Some(f) = s.plunge_feed {
        positive("the plunge feed", f, "give the feed in mm/min")?;
    }
    if let Some(f) = s.spindle_speed {
        positive("the spindle speed", f, "give the speed in rpm")?;
    }
    Ok(())
}

fn check_feed(profile: &MachineProfile, which: &'static str, feed: f64) -> Result<(), PostError> {
    if feed > profile.max_feed() {
        let d = profile.feed_decimals();
        return Err(PostError::FeedTooHigh {
            which,
            value: format_number(feed, d),
            max: format_number(profile.max_feed(), d),
            units: profile.units(),
            profile: profile.name().to_string(),
        });
    }
    Ok(())
}

/// Checks every position a cut visits against the travel envelope, in the profile's units.
fn check_cut(cut: &FittedCut, profile: &MachineProfile, floor: f64) -> Result<(), PostError> {
    if cut.moves.is_empty() {
        return Err(PostError::EmptyPath {
            feature: cut.name.clone(),
            points: cut.moves.len() + 1,
        });
    }
    if cut.moves.iter().any(|m| matches!(m, Move::Arc { .. })) {
        return Err(PostError::ArcsNotWritten {
            feature: cut.name.clone(),
        });
    }
    if !cut.plunge.is_finite() {
        return Err(PostError::NotFinite {
            feature: cut.name.clone(),
            what: "the plunge point",
        });
    }
    if !cut.end_points().iter().all(|p| p.is_finite()) {
        return Err(PostError::NotFinite {
            feature: cut.name.clone(),
            what: "the path",
        });
    }
    let units = profile.units();
    let check = |what: &'static str, axis: char, value: f64| {
        let (min, max) = profile.travel().limits(axis);
        if value < min || value > max {
            let d = if axis == 'Z' {
                profile.z_decimals()
            } else {
                profile.xy_decimals()
            };
            return Err(PostError::OutsideEnvelope {
                feature: cut.name.clone(),
                what,
                axis,
                value: format_number(value, d),
                limits: format!("{} .. {}", format_number(min, d), format_number(max, d)),
                units,
            });
        }
        Ok(())
    };
    check("the safe height", 'Z', profile.safe_height())?;
    check("the retract height", 'Z', profile.retract_height())?;
    check("the cut depth", 'Z', floor)?;
    let plunge = units_point(units, cut.plunge);
    check("the plunge point", 'X', plunge.x)?;
    check("the plunge point", 'Y', plunge.y)?;
    for p in cut.end_points() {
        let q = units_point(units, p);
        check("the tool path", 'X', q.x)?;
        check("the tool path", 'Y', q.y)?;
    }
    Ok(())
}

fn units_point(units: Units, p: Point) -> Point {
    Point::new(units.from_mm(p.x), units.from_mm(p.y))
}

/// The program body, with modal state so that F and repeated positions are not written again.
struct Writer<'p> {
    profile: &'p MachineProfile,
    lines: Vec<String>,
    line_number: u32,
    /// Last written X, Y and Z, as formatted text (what the controller will see).
    x: Option<String>,
    y: Option<String>,
    z: Option<String>,
    feed: Option<String>,
}

impl<'p> Writer<'p> {
    fn new(profile: &'p MachineProfile) -> Self {
        Writer {
            profile,
            lines: Vec::new(),
            line_number: 10,
            x: None,
            y: None,
            z: None,
            feed: None,
        }
    }

    fn block(&mut self, words: String) {
        if self.profile.line_numbers() {
            self.lines.push(format!("N{} {words}", self.line_number));
            self.line_number += 10;
        } else {
            self.lines.push(words);
        }
    }

    fn comment(&mut self, text: &str) {
        for line in wrap(text, COMMENT_WIDTH) {
            self.lines.push(format!("({line})"));
        }
    }

    fn xy(&self, p: Point) -> (String, String) {
        let d = self.profile.xy_decimals();
        (format_number(p.x, d), format_number(p.y, d))
    }

    fn feed_word(&mut self, feed: f64) -> String {
        let f = format_number(feed, self.profile.feed_decimals());
        if self.feed.as_deref() == Some(f.as_str()) {
            String::new()
        } else {
            self.feed = Some(f.clone());
            format!(" F{f}")
        }
    }

    fn rapid_z(&mut self, z: f64) {
        let z = format_number(z, self.profile.z_decimals());
        if self.z.as_deref() != Some(z.as_str()) {
            self.block(format!("G0 Z{z}"));
            self.z = Some(z);
        }
    }

    fn feed_z(&mut self, z: f64, feed: f64) {
        let z = format_number(z, self.profile.z_decimals());
        if self.z.as_deref() != Some(z.as_str()) {
            let f = self.feed_word(feed);
            self.block(format!("G1 Z{z}{f}"));
            self.z = Some(z);
        }
    }

    fn rapid_xy(&mut self, p: Point) {
        let (x, y) = self.xy(p);
        if self.x.as_deref() != Some(x.as_str()) || self.y.as_deref() != Some(y.as_str()) {
            self.block(format!("G0 X{x} Y{y}"));
            self.x = Some(x);
            self.y = Some(y);
        }
    }

    /// A feed move to `p`; returns whether a move was written (false when it rounds to no move).
    fn feed_xy(&mut self, p: Point, feed: f64) -> bool {
        let (x, y) = self.xy(p);
        if self.x.as_deref() == Some(x.as_str()) && self.y.as_deref() == Some(y.as_str()) {
            return false;
        }
        let f = self.feed_word(feed);
        self.block(format!("G1 X{x} Y{y}{f}"));
        self.x = Some(x);
        self.y = Some(y);
        true
    }
}

/// The header comment lines.
fn header(
    cuts: &[FittedCut],
    moves: &[usize],
    profile: &MachineProfile,
    s: &ProgramSettings,
    cut_feed: f64,
    plunge_feed: f64,
    spindle: f64,
) -> Vec<String> {
    let units = profile.units();
    let u = units.as_str();
    let xy = |mm: f64| format_number(units.from_mm(mm), profile.xy_decimals());
    let fd = |f: f64| format_number(f, profile.feed_decimals());
    let mut text = vec![
        format!("title: {}", sanitize(&s.title)),
        format!("source drawing: {}", sanitize(&s.source)),
        format!("generated by conicut {}", env!("CARGO_PKG_VERSION")),
        format!(
            "machine profile: {}, kind {}",
            sanitize(profile.name()),
            profile.kind()
        ),
        format!("units: {u}, {}, feeds in {u}/min", units.g_word()),
        format!(
            "tool diameter {} {u}, cut depth {} {u}, tolerance {} {u}",
            xy(s.tool_diameter),
            format_number(units.from_mm(s.depth), profile.z_decimals()),
            xy(s.tolerance)
        ),
        format!(
            "cut feed {}, plunge feed {}, spindle {} rpm",
            fd(cut_feed),
            fd(plunge_feed),
            format_number(spindle, 0)
        ),
        format!(
            "safe height {}, retract height {} {u}",
            format_number(profile.safe_height(), profile.z_decimals()),
            format_number(profile.retract_height(), profile.z_decimals())
        ),
        format!("features: {}", cuts.len()),
    ];
    for (i, (cut, m)) in cuts.iter().zip(moves).enumerate() {
        text.push(format!(
            "{} {}: {}, {}, {} feed moves, measured deviation {} {u}",
            i + 1,
            sanitize(&cut.name),
            kind_word(cut.kind),
            side_word(cut.side),
            m,
            xy(cut.measured_deviation)
        ));
    }
    text.push(SAFETY_HEADING.to_string());
    text.extend(cautions(profile.kind(), units.g_word(), u));
    text.push(PRECEDENCE.to_string());
    text.iter()
        .flat_map(|t| wrap(&sanitize(t), COMMENT_WIDTH))
        .map(|t| format!("({t})"))
        .collect()
}

fn kind_word(kind: FeatureKind) -> &'static str {
    match kind {
        FeatureKind::Opening => "elliptical opening",
        FeatureKind::Boss => "elliptical boss",
        FeatureKind::Hole => "hole",
        FeatureKind::Outline => "outline",
    }
}

fn side_word(side: CutSide) -> &'static str {
    match side {
        CutSide::Inside => "tool inside",
        CutSide::Outside => "tool outside",
    }
}

/// Makes user text safe inside a `( )` comment (NISTIR 6556 §3.3.4: no nested parentheses,
/// printable characters only): parentheses become `[ ]`, other characters outside printable
/// ASCII become `?`, runs of white space become one space.
pub fn sanitize(text: &str) -> String {
    let mapped: String = text
        .chars()
        .map(|c| match c {
            '(' => '[',
            ')' => ']',
            c if c.is_whitespace() => ' ',
            c if c.is_ascii_graphic() => c,
            _ => '?',
        })
        .collect();
    mapped.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Splits `text` into pieces of at most `width` characters, at spaces where possible.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut current = String::new();
    for word in text.split(' ').filter(|w| !w.is_empty()) {
        let mut word = word.to_string();
        while word.len() > width {
            if !current.is_empty() {
                lines.push(std::mem::take(&mut current));
            }
            let rest = word.split_off(width);
            lines.push(word);
            word = rest;
        }
        if !current.is_empty() && current.len() + 1 + word.len() > width {
            lines.push(std::mem::take(&mut current));
        }
        if !current.is_empty() {
            current.push(' ');
        }
        current.push_str(&word);
    }
    if !current.is_empty() || lines.is_empty() {
        lines.push(current);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sanitize_removes_comment_breakers() {
        assert_eq!(sanitize("plate (rev B)\tØ40"), "plate [rev B] ?40");
        assert_eq!(sanitize("  a \n b  "), "a b");
    }

    #[test]
    fn wrap_keeps_lines_short_and_loses_no_words() {
        let text = "word ".repeat(60) + &"x".repeat(250);
        let lines = wrap(&text, 100);
        assert!(lines.iter().all(|l| l.len() <= 100));
        assert_eq!(
            lines.join(" ").split(' ').filter(|w| *w == "word").count(),
            60
        );
        assert_eq!(lines.concat().matches('x').count(), 250);
        assert_eq!(wrap("", 10), vec![String::new()]);
    }
}
