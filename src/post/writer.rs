//! The program body as it is written: blocks with line numbers, comments, and modal state so that
//! F and repeated positions are not written again; lines and arcs in centre format.

use super::arcs::{Piece, arc_pieces};
use super::error::PostError;
use super::number::format_number;
use super::profile::{CommentStyle, DwellUnit, MachineProfile, ProgramUnits, radius_rule};
use super::setup::Written;
use crate::geom::Move;
use crate::geom::Point;

/// Longest comment text per line; longer text wraps onto further comment lines.
pub(super) const COMMENT_WIDTH: usize = 100;

pub(super) fn units_point(units: ProgramUnits, p: Point) -> Point {
    Point::new(units.from_mm(p.x), units.from_mm(p.y))
}

/// The program body, with modal state so that F and repeated positions are not written again.
pub(super) struct Writer<'p> {
    pub(super) profile: &'p MachineProfile,
    pub(super) lines: Vec<String>,
    pub(super) line_number: u32,
    /// Last written X and Y as text, and as the controller reads them.
    pub(super) xy: Option<(String, String, Point)>,
    /// Last written Z, as text.
    pub(super) z: Option<String>,
    pub(super) feed: Option<String>,
    /// Last written spindle speed (S), as text; mills and routers.
    pub(super) spindle: Option<String>,
}

impl<'p> Writer<'p> {
    pub(super) fn new(profile: &'p MachineProfile) -> Self {
        Writer {
            profile,
            lines: Vec::new(),
            line_number: 10,
            xy: None,
            z: None,
            feed: None,
            spindle: None,
        }
    }

    pub(super) fn block(&mut self, words: String) {
        if self.profile.line_numbers() {
            self.lines.push(format!("N{} {words}", self.line_number));
            self.line_number += 10;
        } else {
            self.lines.push(words);
        }
    }

    /// A comment on one line whatever its length: a cut's heading `(cut K of N: NAME)`, which
    /// the checker reads as one line (job file names are held to
    /// `settings::job_file::MAX_NAME_CHARS`, so that the line stays within the 256 characters
    /// of a program line, NISTIR 6556, from memory).
    pub(super) fn heading(&mut self, text: &str) {
        self.lines
            .push(comment_line(self.profile.comment_style(), text));
    }

    pub(super) fn comment(&mut self, text: &str) {
        for line in wrap(text, COMMENT_WIDTH) {
            self.lines
                .push(comment_line(self.profile.comment_style(), &line));
        }
    }

    pub(super) fn feed_word(&mut self, feed: f64) -> String {
        let f = format_number(feed, self.profile.feed_decimals());
        if self.feed.as_deref() == Some(f.as_str()) {
            String::new()
        } else {
            self.feed = Some(f.clone());
            format!(" F{f}")
        }
    }

    /// `G4 P` for `seconds` in the profile's dwell unit; nothing for no dwell.
    pub(super) fn dwell(&mut self, seconds: f64) {
        if seconds > 0.0 {
            self.block(format!(
                "G4 P{}",
                dwell_value(self.profile.dwell_unit(), seconds)
            ));
        }
    }

    pub(super) fn rapid_z(&mut self, z: f64) {
        let z = format_number(z, self.profile.z_decimals());
        if self.z.as_deref() != Some(z.as_str()) {
            self.block(format!("G0 Z{z}"));
            self.z = Some(z);
        }
    }

    pub(super) fn feed_z(&mut self, z: f64, feed: f64) {
        let z = format_number(z, self.profile.z_decimals());
        if self.z.as_deref() != Some(z.as_str()) {
            let f = self.feed_word(feed);
            self.block(format!("G1 Z{z}{f}"));
            self.z = Some(z);
        }
    }

    /// Where the controller is, as it read the last X and Y (`None` before any).
    pub(super) fn position(&self) -> Option<Point> {
        self.xy.as_ref().map(|(_, _, p)| *p)
    }

    pub(super) fn at(&self, x: &str, y: &str) -> bool {
        self.xy
            .as_ref()
            .is_some_and(|(wx, wy, _)| wx == x && wy == y)
    }

    pub(super) fn written_xy(&self, p: Point) -> (String, String, Point) {
        let d = self.profile.xy_decimals();
        let (x, y) = (format_number(p.x, d), format_number(p.y, d));
        let back = Point::new(x.parse().unwrap_or(p.x), y.parse().unwrap_or(p.y));
        (x, y, back)
    }

    pub(super) fn rapid_xy(&mut self, p: Point) {
        let (x, y, back) = self.written_xy(p);
        if !self.at(&x, &y) {
            self.block(format!("G0 X{x} Y{y}"));
            self.xy = Some((x, y, back));
        }
    }

    /// A feed move to `p`; returns whether a move was written (false when it rounds to no move).
    pub(super) fn feed_xy(&mut self, p: Point, feed: f64) -> bool {
        let (x, y, back) = self.written_xy(p);
        self.feed_move(x, y, back, None, feed, None)
    }

    /// A run of feed moves from wherever the tool is (`from`, the run's exact start in mm),
    /// lines as `G1`, arcs as `G2`/`G3` in centre format. With `z`, the run descends linearly
    /// from the first to the second height (a ramp leg), each written block carrying its Z.
    /// Returns what was written.
    pub(super) fn run(
        &mut self,
        feature: &str,
        from: Point,
        moves: &[Move],
        feed: f64,
        z: Option<(f64, f64)>,
    ) -> Result<Written, PostError> {
        let units = self.profile.units();
        let mut done = Written::default();
        let mut from = units_point(units, from);
        let count = moves.len().max(1) as f64;
        for (k, m) in moves.iter().enumerate() {
            let to = units_point(units, m.end());
            // The height at share `share` of this move, for a ramp leg.
            let z_at = |share: f64| z.map(|(z0, z1)| z0 + (z1 - z0) * (k as f64 + share) / count);
            match *m {
                Move::Line { .. } => {
                    let (x, y, back) = self.written_xy(to);
                    if self.feed_move(x, y, back, z_at(1.0), feed, None) {
                        done.lines += 1;
                    }
                }
                Move::Arc { centre, ccw, .. } => {
                    let centre = units_point(units, centre);
                    let written_start = self.position().unwrap_or(from);
                    let d = self.profile.xy_decimals();
                    let rule = radius_rule(units);
                    let pieces = arc_pieces(written_start, from, to, centre, ccw, d, rule)
                        .map_err(|broken| {
                            let (x, y, _) = self.written_xy(to);
                            PostError::ArcRadiusMismatch {
                                feature: feature.to_string(),
                                at: format!("X{x} Y{y}"),
                                decimals: d,
                                mismatch: format_number(broken.mismatch, d + 1),
                                units,
                            }
                        })?;
                    let n = pieces.len().max(1) as f64;
                    for (p, piece) in pieces.into_iter().enumerate() {
                        let zp = z_at((p + 1) as f64 / n);
                        match piece {
                            Piece::Line { x, y, end } => {
                                if self.feed_move(x, y, end, zp, feed, None) {
                                    done.lines += 1;
                                }
                            }
                            Piece::Arc {
                                x,
                                y,
                                i,
                                j,
                                ccw,
                                end,
                            } => {
                                let g = if ccw { "G3" } else { "G2" };
                                self.feed_move(x, y, end, zp, feed, Some((g, i, j)));
                                done.arcs += 1;
                            }
                        }
                    }
                }
            }
            from = to;
        }
        Ok(done)
    }

    /// One feed block to the written `x`, `y` (read back as `end`), descending to `z` if given,
    /// as `G1`, or as the arc `(G2|G3, I, J)`. A straight move that rounds to no movement and
    /// changes no height is left out; returns whether a block was written.
    pub(super) fn feed_move(
        &mut self,
        x: String,
        y: String,
        end: Point,
        z: Option<f64>,
        feed: f64,
        arc: Option<(&str, String, String)>,
    ) -> bool {
        let zw = z.map(|v| format_number(v, self.profile.z_decimals()));
        let z_changes = zw.is_some() && zw != self.z;
        if arc.is_none() && self.at(&x, &y) && !z_changes {
            return false;
        }
        let z_word = zw
            .as_ref()
            .filter(|_| z_changes)
            .map_or(String::new(), |v| format!(" Z{v}"));
        let f = self.feed_word(feed);
        match arc {
            Some((g, i, j)) => self.block(format!("{g} X{x} Y{y}{z_word} I{i} J{j}{f}")),
            None => self.block(format!("G1 X{x} Y{y}{z_word}{f}")),
        }
        self.xy = Some((x, y, end));
        if z_changes {
            self.z = zw;
        }
        true
    }
}

/// A dwell of `seconds` as the `P` value in `unit`: seconds with 2 decimals, milliseconds
/// with none.
pub(super) fn dwell_value(unit: DwellUnit, seconds: f64) -> String {
    match unit {
        DwellUnit::Seconds => format_number(seconds, 2),
        DwellUnit::Milliseconds => format_number(1000.0 * seconds, 0),
    }
}

/// One comment line in the profile's style.
pub(super) fn comment_line(style: CommentStyle, text: &str) -> String {
    match style {
        // No `;` inside parentheses: some dialects read it as the start of a comment.
        CommentStyle::Parentheses => format!("({})", text.replace(';', ",")),
        CommentStyle::Semicolon => format!("; {text}"),
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

/// Splits `text` into pieces of at most `width` characters: at clause boundaries (after a `,`,
/// `;`, `:` or `.` and its space) where the clauses fit, so that no figure is left alone on a
/// line; a clause longer than `width` is split at spaces, and a word longer than `width` cut.
pub(super) fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut current = String::new();
    for clause in clauses(text) {
        let fits = if current.is_empty() {
            clause.len() <= width
        } else {
            current.len() + 1 + clause.len() <= width
        };
        if fits {
            if !current.is_empty() {
                current.push(' ');
            }
            current.push_str(&clause);
            continue;
        }
        if !current.is_empty() {
            lines.push(std::mem::take(&mut current));
        }
        // The clause alone: word by word.
        let first_line = lines.len();
        for word in clause.split(' ').filter(|w| !w.is_empty()) {
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
        // No lone word at the clause's end: the line before gives it its last word.
        if lines.len() > first_line
            && !current.contains(' ')
            && let Some(prev) = lines.last_mut()
            && let Some((keep, moved)) = prev.rsplit_once(' ')
            && moved.len() + 1 + current.len() <= width
        {
            current = format!("{moved} {current}");
            *prev = keep.to_string();
        }
    }
    if !current.is_empty() || lines.is_empty() {
        lines.push(current);
    }
    lines
}

/// The clauses of `text`, each ending with its punctuation (`,` `;` `:` `.`) where it has one,
/// spaces between words made single.
fn clauses(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut current: Vec<&str> = Vec::new();
    for word in text.split(' ').filter(|w| !w.is_empty()) {
        current.push(word);
        if word.ends_with([',', ';', ':', '.']) {
            out.push(current.join(" "));
            current.clear();
        }
    }
    if !current.is_empty() {
        out.push(current.join(" "));
    }
    out
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

    #[test]
    fn wrap_breaks_at_clauses_and_leaves_no_figure_alone() {
        let text = "2 bay 1: elliptical opening, tool inside, 18 feed moves: 0 lines and 18 arcs, \
                    fitted deviation 0.0086 mm";
        let lines = wrap(text, 90);
        assert_eq!(
            lines,
            [
                "2 bay 1: elliptical opening, tool inside, 18 feed moves: 0 lines and 18 arcs,",
                "fitted deviation 0.0086 mm"
            ]
        );
        // A clause longer than the width still splits at spaces, losing nothing.
        let long = format!("{}, end", "w ".repeat(80).trim_end());
        let lines = wrap(&long, 50);
        assert!(lines.iter().all(|l| l.len() <= 50), "{lines:?}");
        assert_eq!(lines.join(" "), long);
        // No lone word at a long clause's end.
        let lines = wrap("one two three four five six seven eight nine ten.", 20);
        assert!(lines.last().unwrap().contains(' '), "{lines:?}");
        assert_eq!(
            lines.join(" "),
            "one two three four five six seven eight nine ten."
        );
    }
}
