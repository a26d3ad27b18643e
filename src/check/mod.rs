//! Stage 8, check: reads a G-code program back on its own and measures what it would cut.
//!
//! This stage shares no code with `post` (the writer), so that a bug in one cannot hide itself in
//! the other: it has its own reader of RS274/NGC text and its own model of the machine's modal
//! state. It understands the subset conicut writes and a little more: `%` lines, `( )` and `;`
//! comments, N line numbers, G0 G1 G2 G3 (centre format I J, incremental from the arc start:
//! NISTIR 6556 §3.5.3.2, §3.5.17), G4, G17, G20 G21, G90, G94, G40, G54, F, S, M words. Anything
//! it cannot follow (G91, the R arc form, another plane) is an error with the line, never a
//! guess.
//!
//! Measuring: the program's cut comments `(cut N of M: NAME)` mark where each feature starts, and
//! the comments `(contour)`, `(tab)`, `(lead-in)`, … the parts of its cut; the feed moves after each
//! `(contour)` or `(tab)` comment, from the first one that reaches the exact tool-centre curve, are compared
//! with that curve both ways by the checker's own measurement ([`deviation`], which shares no
//! code with the fit's). [`verify`] is the one entry the job calls: it reads the program, measures
//! every cut, holds it to the tolerance and the one-sided rule, and runs the scrap check.

use crate::geom::{ExactPath, Move, Point};
use serde::Serialize;

pub mod against;
pub mod deviation;
pub mod picture;
pub mod program;
pub mod rapids;
pub mod reader;
pub mod scrap;
pub mod time;
mod verify;
pub mod view;

pub use verify::{CutDeviation, Finding, Findings, Verified, VerifyRules, verify};

/// Why a program could not be read.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("program line {line}: {problem}")]
pub struct CheckError {
    pub line: usize,
    pub problem: String,
}

/// One move of the machine, in millimetres.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TraceMove {
    /// 1-based line of the program.
    pub line: usize,
    pub rapid: bool,
    pub from: [f64; 3],
    pub to: [f64; 3],
    /// The arc's centre (XY, mm) and sense, for G2/G3.
    pub arc: Option<([f64; 2], bool)>,
    /// Feed rate in mm/min (0 for rapids).
    pub feed: f64,
    /// Whether the spindle (or the beam, torch or jet) is on during the move.
    pub on: bool,
    /// False after a word the reader does not follow: the move may not be where it says.
    pub measurable: bool,
}

impl TraceMove {
    /// The move in the XY plane: its start and the line or arc to its end.
    pub fn xy(&self) -> (Point, Move) {
        let to = Point::new(self.to[0], self.to[1]);
        let mv = match self.arc {
            Some((c, ccw)) => Move::Arc {
                to,
                centre: Point::new(c[0], c[1]),
                ccw,
            },
            None => Move::Line { to },
        };
        (Point::new(self.from[0], self.from[1]), mv)
    }
}

/// What a program does, read back.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Trace {
    pub moves: Vec<TraceMove>,
    /// Features by name with the index of their first move.
    pub features: Vec<(String, usize)>,
    /// The number K of each cut comment `(cut K of N: NAME)`, in the order of `features`: the
    /// checker finds a cut by this number, never by the name text (whose safe form is the
    /// writer's business).
    pub cut_numbers: Vec<usize>,
    /// Every comment after the header, with the index of the move that follows it: the writer
    /// marks the parts of a cut (`clearing`, `lead-in`, `contour`, `overcut`, `lead-out`).
    pub marks: Vec<(String, usize)>,
    /// Largest difference between an arc's start and end radius (mm).
    pub largest_arc_radius_mismatch: f64,
    /// Smallest and largest X, Y, Z the tool centre reaches (mm), arcs included.
    pub bounds: Option<([f64; 3], [f64; 3])>,
    /// The dwells (G4), in order.
    pub dwells: Vec<reader::Dwell>,
    /// Every spindle speed word (S) with its line.
    pub speeds: Vec<(usize, f64)>,
    /// Every time the spindle (or process) comes on or goes off.
    pub switches: Vec<reader::Switch>,
    /// The line of the program's end (M2 or M30), if it has one.
    pub end_line: Option<usize>,
}

/// Reads a program and follows it move by move; the first thing that must be fixed (see
/// [`reader`]) is an error. The job's own check of what it wrote uses this: conicut's programs
/// must pass every rule.
pub fn trace(program: &str) -> Result<Trace, CheckError> {
    let reading = reader::read_program(program, &reader::Dialect::default());
    match reading
        .findings
        .into_iter()
        .find(|f| f.severity == reader::Severity::MustFix)
    {
        Some(f) => Err(CheckError {
            line: f.line,
            problem: f.message,
        }),
        None => Ok(reading.trace),
    }
}

/// The box of every point the moves reach: each move's end and, for an arc, the axis extremes
/// it sweeps through (`deviation::box_of`: exactly, at the larger of its two radii; a helix's Z
/// changes linearly, so its ends bound it). A move's start is the last one's end, or for the first move the reader's
/// assumed start (0, 0, 0), which no program states: it is left out.
fn bounds_of(moves: &[TraceMove]) -> Option<([f64; 3], [f64; 3])> {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    let mut add = |p: [f64; 3]| {
        for k in 0..3 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    };
    for m in moves {
        add(m.to);
        if m.arc.is_some() {
            let (from, mv) = m.xy();
            let (min, max) = deviation::box_of(from, &mv);
            add([min.x, min.y, m.from[2]]);
            add([max.x, max.y, m.from[2]]);
        }
    }
    lo[0].is_finite().then_some((lo, hi))
}

/// The number K of a cut comment's head `K of N` (1-based), if it is one.
pub(crate) fn cut_number(head: &str) -> Option<usize> {
    let (k, n) = head.split_once(" of ")?;
    n.trim().parse::<usize>().ok()?;
    k.trim().parse().ok()
}

/// The moves of the feature at `idx` in `trace.features`: from its cut comment to the next one.
fn range_at(trace: &Trace, idx: usize) -> std::ops::Range<usize> {
    let first = trace.features[idx].1;
    let last = trace
        .features
        .get(idx + 1)
        .map(|f| f.1)
        .unwrap_or(trace.moves.len());
    first..last
}

/// The moves of cut number `number` (the K of `(cut K of N: NAME)`, 1-based), by index.
/// `None` when the program holds no such cut.
pub fn cut_range(trace: &Trace, number: usize) -> Option<std::ops::Range<usize>> {
    // The writer numbers cuts 1, 2, … in order, so cut K is usually at K − 1; a program
    // edited by hand is searched.
    let idx = match number.checked_sub(1) {
        Some(i) if trace.cut_numbers.get(i) == Some(&number) => i,
        _ => trace.cut_numbers.iter().position(|&k| k == number)?,
    };
    Some(range_at(trace, idx))
}

/// The comments that mark a cut's contour: `(contour)`, and `(tab)` over each tab (the moves
/// there rise to the tab top and follow the contour in XY).
const CONTOUR_MARKS: [&str; 2] = ["contour", "tab"];

/// The indices of the moves in `range` that follow one of the comments `marks` (up to the next
/// comment).
fn marked_in(trace: &Trace, range: std::ops::Range<usize>, marks: &[&str]) -> Vec<usize> {
    let mut out = Vec::new();
    // The marks are in program order: start at the first one inside the range.
    let first = trace.marks.partition_point(|(_, at)| *at < range.start);
    for (k, (text, at)) in trace.marks.iter().enumerate().skip(first) {
        if *at >= range.end {
            break;
        }
        if !marks.contains(&text.as_str()) {
            continue;
        }
        let end = trace
            .marks
            .get(k + 1)
            .map_or(trace.moves.len(), |m| m.1)
            .min(range.end);
        out.extend(*at..end);
    }
    out
}

/// The moves in `range` that are not its contour.
fn off_contour_in(trace: &Trace, range: std::ops::Range<usize>) -> Vec<usize> {
    // `marked_in` gives indices in increasing order.
    let contour = marked_in(trace, range.clone(), &CONTOUR_MARKS);
    range
        .filter(|i| contour.binary_search(i).is_err())
        .collect()
}

/// [`moves_off_contour`] of cut number `number` (1-based K of its cut comment).
pub fn cut_moves_off_contour(trace: &Trace, number: usize) -> Vec<usize> {
    cut_range(trace, number).map_or_else(Vec::new, |r| off_contour_in(trace, r))
}

/// The trace indices of the contour moves in `range`: the constant-depth feed moves after the
/// `(contour)` comments, from the one that starts within `reach` of the exact path's start (the
/// moves over a tab are kept, since they follow the contour in XY).
fn contour_indices(
    trace: &Trace,
    range: std::ops::Range<usize>,
    exact: &ExactPath,
    reach: f64,
) -> Option<Vec<usize>> {
    let start_exact = exact.start_point();
    let feeds: Vec<usize> = marked_in(trace, range, &CONTOUR_MARKS)
        .into_iter()
        .filter(|&i| {
            let m = &trace.moves[i];
            (m.from[0] != m.to[0] || m.from[1] != m.to[1]) && m.from[2] == m.to[2]
        })
        .collect();
    let begin = feeds.iter().position(|&i| {
        let m = &trace.moves[i];
        Point::new(m.from[0], m.from[1]).distance(start_exact) <= reach
    })?;
    Some(feeds[begin..].to_vec())
}

/// The moves at trace indices `at` in the XY plane, from the first one's start.
fn contour_of(trace: &Trace, at: &[usize]) -> (Point, Vec<Move>) {
    let start = at.first().map_or(Point::ORIGIN, |&i| {
        Point::new(trace.moves[i].from[0], trace.moves[i].from[1])
    });
    let moves = at.iter().map(|&i| trace.moves[i].xy().1).collect();
    (start, moves)
}

/// [`cut_contour`] with the program line of each move.
fn cut_contour_lines(
    trace: &Trace,
    number: usize,
    exact: &ExactPath,
    reach: f64,
) -> Option<(Point, Vec<Move>, Vec<usize>)> {
    let at = contour_indices(trace, cut_range(trace, number)?, exact, reach)?;
    let (start, moves) = contour_of(trace, &at);
    let lines = at.iter().map(|&i| trace.moves[i].line).collect();
    Some((start, moves, lines))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nist_arc_example_reads_back() {
        // NISTIR 6556 §3.5.3.2: from (7, 7), `G17 G2 X10 Y16 I3 J4 Z9` has its centre at (10, 11)
        // and radius 5.
        let t = trace("%\nG21 G90 G17\nG0 X7 Y7 Z0\nG2 X10 Y16 I3 J4 Z9 F100\nM30\n%\n").unwrap();
        let m = t.moves[1];
        assert_eq!(m.arc, Some(([10.0, 11.0], false)));
        assert!(t.largest_arc_radius_mismatch < 1e-12);
        assert_eq!(m.to, [10.0, 16.0, 9.0]);
    }

    #[test]
    fn inches_are_read_as_millimetres_and_unknown_words_refused() {
        let t = trace("G20 G90\nG0 X1 Y2\nG1 X2 F10\n").unwrap();
        assert_eq!(t.moves[1].to, [50.8, 50.8, 0.0]);
        assert!((t.moves[1].feed - 254.0).abs() < 1e-12);
        let e = trace("G21\nG18 G1 X1\n").unwrap_err();
        assert_eq!(e.line, 2);
        assert!(e.problem.contains("another plane"), "{}", e.problem);
        assert!(trace("G1 X1\n").unwrap_err().problem.contains("units"));
        assert!(trace("G21 (a (b))\n").is_err());
    }
}
