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
//! the comments `(contour)`, `(lead-in)`, … the parts of its cut; the feed moves after each
//! `(contour)` comment, from the first one that reaches the exact tool-centre curve, are compared
//! with that curve by dense sampling both ways ([`crate::fit::measure_deviation`], the
//! measurement, not the writer).

use crate::fit::{measure_deviation, measure_sides};
use crate::geom::ExactPath;
use crate::geom::Move;
use crate::geom::Point;
use serde::Serialize;

pub mod scrap;

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
}

#[derive(Default)]
struct State {
    inch: Option<bool>,
    pos: [f64; 3],
    motion: Option<u8>,
    feed: f64,
}

/// A number word of a line.
fn parse_number(text: &str, line: usize) -> Result<f64, CheckError> {
    let ok = !text.is_empty()
        && text
            .chars()
            .all(|c| c.is_ascii_digit() || c == '.' || c == '-' || c == '+');
    let v: Option<f64> = if ok { text.parse().ok() } else { None };
    v.filter(|v| v.is_finite()).ok_or_else(|| CheckError {
        line,
        problem: format!("\"{text}\" is not a number"),
    })
}

/// The words of a line, each a letter and its value as written.
type Words = Vec<(char, String)>;

/// The words of one line and its comments.
fn words(raw: &str, line: usize) -> Result<(Words, Vec<String>), CheckError> {
    let mut out = Vec::new();
    let mut comments = Vec::new();
    let mut chars = raw.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '(' => {
                let mut text = String::new();
                loop {
                    match chars.next() {
                        Some(')') => break,
                        Some('(') => {
                            return Err(CheckError {
                                line,
                                problem: "a comment inside a comment".into(),
                            });
                        }
                        Some(ch) => text.push(ch),
                        None => {
                            return Err(CheckError {
                                line,
                                problem: "a comment is not closed on its line".into(),
                            });
                        }
                    }
                }
                comments.push(text);
            }
            ';' => {
                comments.push(chars.by_ref().collect());
            }
            ' ' | '\t' | '\r' => {}
            c if c.is_ascii_alphabetic() => {
                let mut value = String::new();
                while let Some(&d) = chars.peek() {
                    if d.is_ascii_digit() || d == '.' || d == '-' || d == '+' {
                        value.push(d);
                        chars.next();
                    } else if d == ' ' || d == '\t' {
                        chars.next();
                    } else {
                        break;
                    }
                }
                out.push((c.to_ascii_uppercase(), value));
            }
            other => {
                return Err(CheckError {
                    line,
                    problem: format!("unexpected character '{other}'"),
                });
            }
        }
    }
    Ok((out, comments))
}

/// Reads a program and follows it move by move.
pub fn trace(program: &str) -> Result<Trace, CheckError> {
    let mut st = State::default();
    let mut moves = Vec::new();
    let mut features = Vec::new();
    let mut cut_numbers = Vec::new();
    let mut marks = Vec::new();
    let mut mismatch: f64 = 0.0;
    for (i, raw) in program.lines().enumerate() {
        let line = i + 1;
        let t = raw.trim();
        if t.is_empty() || t == "%" {
            continue;
        }
        let (ws, comments) = words(t, line)?;
        for c in &comments {
            marks.push((c.trim().to_string(), moves.len()));
            if let Some((head, name)) = c
                .trim()
                .strip_prefix("cut ")
                .and_then(|r| r.split_once(": "))
            {
                features.push((name.to_string(), moves.len()));
                cut_numbers.push(cut_number(head).unwrap_or(0));
            }
        }
        let mut target: [Option<f64>; 3] = [None; 3];
        let (mut i_off, mut j_off) = (None, None);
        let mut motion_here = None;
        for (letter, value) in &ws {
            match letter {
                'N' | 'S' | 'P' | 'T' | 'M' | 'H' | 'D' => {
                    parse_number(value, line)?;
                }
                'G' => {
                    let g = parse_number(value, line)?;
                    let code = (g * 10.0).round() as i64;
                    match code {
                        0 | 10 | 20 | 30 => motion_here = Some((code / 10) as u8),
                        40 => {} // dwell
                        170 | 900 | 940 | 400 | 490 | 540..=590 | 610 | 640 => {}
                        200 => st.inch = Some(true),
                        210 => st.inch = Some(false),
                        _ => {
                            return Err(CheckError {
                                line,
                                problem: format!("G{value} is not followed by this reader"),
                            });
                        }
                    }
                }
                'X' | 'Y' | 'Z' => {
                    let k = (*letter as u8 - b'X') as usize;
                    target[k] = Some(parse_number(value, line)?);
                }
                'I' => i_off = Some(parse_number(value, line)?),
                'J' => j_off = Some(parse_number(value, line)?),
                'F' => st.feed = parse_number(value, line)?,
                'R' => {
                    return Err(CheckError {
                        line,
                        problem: "the R form of arcs is not followed (use I and J)".into(),
                    });
                }
                other => {
                    return Err(CheckError {
                        line,
                        problem: format!("the word {other} is not followed by this reader"),
                    });
                }
            }
        }
        if let Some(m) = motion_here {
            st.motion = Some(m);
        }
        if target.iter().all(Option::is_none) {
            continue;
        }
        let Some(inch) = st.inch else {
            return Err(CheckError {
                line,
                problem: "a move before the units word (G20 or G21)".into(),
            });
        };
        let scale = if inch { 25.4 } else { 1.0 };
        let motion = st.motion.ok_or(CheckError {
            line,
            problem: "a move with no motion mode (G0, G1, G2 or G3) in force".into(),
        })?;
        let from = st.pos;
        let mut to = from;
        for k in 0..3 {
            if let Some(v) = target[k] {
                to[k] = v * scale;
            }
        }
        let arc = if motion >= 2 {
            let (Some(di), Some(dj)) = (i_off, j_off) else {
                return Err(CheckError {
                    line,
                    problem: "an arc without both I and J".into(),
                });
            };
            let c = [from[0] + di * scale, from[1] + dj * scale];
            let r0 = (from[0] - c[0]).hypot(from[1] - c[1]);
            let r1 = (to[0] - c[0]).hypot(to[1] - c[1]);
            mismatch = mismatch.max((r0 - r1).abs());
            Some((c, motion == 3))
        } else {
            None
        };
        moves.push(TraceMove {
            line,
            rapid: motion == 0,
            from,
            to,
            arc,
            feed: if motion == 0 { 0.0 } else { st.feed * scale },
        });
        st.pos = to;
    }
    let bounds = bounds_of(&moves);
    Ok(Trace {
        moves,
        features,
        cut_numbers,
        marks,
        largest_arc_radius_mismatch: mismatch,
        bounds,
    })
}

fn bounds_of(moves: &[TraceMove]) -> Option<([f64; 3], [f64; 3])> {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for m in moves {
        let mut pts = vec![m.from, m.to];
        if let Some((c, ccw)) = m.arc {
            let mv = Move::Arc {
                to: Point::new(m.to[0], m.to[1]),
                center: Point::new(c[0], c[1]),
                ccw,
            };
            let from = Point::new(m.from[0], m.from[1]);
            for k in 1..64 {
                let p = mv.point_at(from, k as f64 / 64.0);
                pts.push([p.x, p.y, m.from[2]]);
            }
        }
        for p in pts {
            for k in 0..3 {
                lo[k] = lo[k].min(p[k]);
                hi[k] = hi[k].max(p[k]);
            }
        }
    }
    lo[0].is_finite().then_some((lo, hi))
}

/// The number K of a cut comment's head `K of N` (1-based), if it is one.
fn cut_number(head: &str) -> Option<usize> {
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

/// The moves of feature `name`, by index: from its cut comment to the next feature's.
fn feature_range(trace: &Trace, name: &str) -> Option<std::ops::Range<usize>> {
    let idx = trace.features.iter().position(|(n, _)| n == name)?;
    Some(range_at(trace, idx))
}

/// The moves of cut number `number` (the K of `(cut K of N: NAME)`, 1-based), by index.
/// `None` when the program holds no such cut.
pub fn cut_range(trace: &Trace, number: usize) -> Option<std::ops::Range<usize>> {
    let idx = trace.cut_numbers.iter().position(|&k| k == number)?;
    Some(range_at(trace, idx))
}

/// The indices of the moves in `range` that follow a comment `mark` (up to the next comment).
fn marked_in(trace: &Trace, range: std::ops::Range<usize>, mark: &str) -> Vec<usize> {
    let mut out = Vec::new();
    for (k, (text, at)) in trace.marks.iter().enumerate() {
        if text != mark || !range.contains(at) {
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

/// The indices of feature `name`'s moves that follow a comment `mark` (up to the next comment),
/// in order.
pub fn marked_moves(trace: &Trace, name: &str, mark: &str) -> Vec<usize> {
    feature_range(trace, name).map_or_else(Vec::new, |r| marked_in(trace, r, mark))
}

/// The moves in `range` that are not its contour.
fn off_contour_in(trace: &Trace, range: std::ops::Range<usize>) -> Vec<usize> {
    let contour = marked_in(trace, range.clone(), "contour");
    range.filter(|i| !contour.contains(i)).collect()
}

/// The moves of `name` that are not its contour: clearing, leads, overcut, entries (ramps and
/// helices) and rapids, by index.
pub fn moves_off_contour(trace: &Trace, name: &str) -> Vec<usize> {
    feature_range(trace, name).map_or_else(Vec::new, |r| off_contour_in(trace, r))
}

/// [`moves_off_contour`] of cut number `number` (1-based K of its cut comment).
pub fn cut_moves_off_contour(trace: &Trace, number: usize) -> Vec<usize> {
    cut_range(trace, number).map_or_else(Vec::new, |r| off_contour_in(trace, r))
}

/// The contour of feature `name` in the XY plane, as a start point and moves: the feed moves
/// after each `contour` comment of the feature (one run per pass), from the first that starts on
/// its exact curve (within `reach`, mm). Moves that change Z (the rise over a tab and back) are
/// left out; the moves over a tab are kept, since they follow the contour in XY.
pub fn feature_moves(
    trace: &Trace,
    name: &str,
    exact: &ExactPath,
    reach: f64,
) -> Option<(Point, Vec<Move>)> {
    contour_in(trace, feature_range(trace, name)?, exact, reach)
}

/// [`feature_moves`] of cut number `number` (1-based K of its cut comment `(cut K of N: NAME)`).
pub fn cut_contour(
    trace: &Trace,
    number: usize,
    exact: &ExactPath,
    reach: f64,
) -> Option<(Point, Vec<Move>)> {
    contour_in(trace, cut_range(trace, number)?, exact, reach)
}

fn contour_in(
    trace: &Trace,
    range: std::ops::Range<usize>,
    exact: &ExactPath,
    reach: f64,
) -> Option<(Point, Vec<Move>)> {
    let start_exact = exact.start_point();
    let feeds: Vec<&TraceMove> = marked_in(trace, range, "contour")
        .into_iter()
        .map(|i| &trace.moves[i])
        .filter(|m| m.from[0] != m.to[0] || m.from[1] != m.to[1])
        .filter(|m| m.from[2] == m.to[2])
        .collect();
    let begin = feeds
        .iter()
        .position(|m| Point::new(m.from[0], m.from[1]).distance(start_exact) <= reach)?;
    let start = Point::new(feeds[begin].from[0], feeds[begin].from[1]);
    let moves = feeds[begin..]
        .iter()
        .map(|m| {
            let to = Point::new(m.to[0], m.to[1]);
            match m.arc {
                Some((c, ccw)) => Move::Arc {
                    to,
                    center: Point::new(c[0], c[1]),
                    ccw,
                },
                None => Move::Line { to },
            }
        })
        .collect();
    Some((start, moves))
}

/// How feature `name` as the program would cut it strays from its exact tool-centre curve (mm):
/// both ways, and on the part side (right of travel) alone. `None` when the program holds no
/// such feature.
pub fn measured_deviation(
    trace: &Trace,
    name: &str,
    exact: &ExactPath,
    reach: f64,
) -> Option<(f64, f64)> {
    let (start, moves) = feature_moves(trace, name, exact, reach)?;
    (!moves.is_empty()).then(|| {
        (
            measure_deviation(start, &moves, exact),
            measure_sides(start, &moves, exact).part_side,
        )
    })
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
        let e = trace("G21\nG91 G1 X1\n").unwrap_err();
        assert_eq!(e.line, 2);
        assert!(trace("G1 X1\n").unwrap_err().problem.contains("units"));
        assert!(
            trace("G21\nG2 X1 Y0 R1\n")
                .unwrap_err()
                .problem
                .contains("R form")
        );
        assert!(trace("G21 (a (b))\n").is_err());
    }
}
