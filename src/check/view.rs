//! `--html`: one self-contained page (no network, no outside script) that shows a program read
//! back over the finished edges: zoom about the cursor and pan by dragging, a slider and a play
//! button that draw the program move by move, the line of the move under the cursor, the move of
//! a clicked line, one switch per feature, the findings marked where they occur, and the cycle
//! time estimate ([`super::time::move_end_times`]) at each move.
//!
//! The page is `view.html` with the data put in as JSON: the program's lines, each move's line,
//! kind, feature and end time, its points in the plane (arcs as chords every
//! [`ARC_STEP_DEGREES`] degrees, enough for a picture), the finished edges and the findings.
//! Coordinates are in mm, written with four decimals (a picture; the checks themselves use the
//! read-back moves in f64). In the address, `#move=N` draws N moves, `#line=L` selects line L
//! and `#point=X,Y` (mm) shows the move nearest that point, joined by `&` (a link to a spot).

use super::Trace;
use super::reader::{ProgramFinding, Severity};
use super::time::{TimeLimits, move_end_times};
use crate::geom::{Move, Point};
use crate::plan::PlannedCut;
use std::collections::HashMap;
use std::fmt::Write;

/// The page, with `/*TITLE*/` and `/*DATA*/` to be filled.
const PAGE: &str = include_str!("view.html");

/// The angle between the chords an arc move is drawn with, degrees.
pub const ARC_STEP_DEGREES: f64 = 5.0;

/// The page for `program` (its text), read into `trace`, checked against `cuts` with
/// `findings`, timed under `limits`; `title` heads it.
pub fn program_html(
    title: &str,
    program: &str,
    trace: &Trace,
    cuts: &[PlannedCut],
    findings: &[ProgramFinding],
    limits: &TimeLimits,
) -> String {
    let stops: Vec<(usize, f64)> = trace
        .dwells
        .iter()
        .map(|d| (d.before_move, d.seconds))
        .collect();
    let times = move_end_times(&trace.moves, &stops, limits);
    let total = times.last().copied().unwrap_or(0.0)
        + stops
            .iter()
            .filter(|(k, s)| *k >= trace.moves.len() && *s >= 0.0)
            .map(|d| d.1)
            .sum::<f64>();
    // Split first: the title (a path) may itself hold the marker text.
    let (head, tail) = PAGE.split_once("/*DATA*/").unwrap_or((PAGE, ""));
    let head = head.replacen("/*TITLE*/", &html_text(title), 1);
    let mut out = String::with_capacity(PAGE.len() + 400 * trace.moves.len() + 2 * program.len());
    out.push_str(&head);
    out.push_str("{\"title\":");
    out.push_str(&json_string(title));
    write!(out, ",\"total\":{}", number(total)).ok();

    // The features as the program names them (its cut comments), in program order.
    let names: Vec<&str> = trace.features.iter().map(|(n, _)| n.as_str()).collect();
    out.push_str(",\"features\":[");
    for (i, n) in names.iter().enumerate() {
        if i > 0 {
            out.push(',');
        }
        out.push_str(&json_string(n));
    }
    out.push(']');
    let index: HashMap<&str, usize> = names.iter().enumerate().map(|(i, n)| (*n, i)).collect();

    // The finished edges, each with the feature of the same name (-1: none in the program).
    out.push_str(",\"edges\":[");
    for (i, c) in cuts.iter().enumerate() {
        if i > 0 {
            out.push(',');
        }
        let feature = index.get(c.name()).map_or(-1, |&k| k as i64);
        write!(
            out,
            "{{\"name\":{},\"feature\":{feature},\"points\":[",
            json_string(c.name())
        )
        .ok();
        push_points(&mut out, &super::picture::edge_points(c.edge()));
        out.push_str("]}");
    }
    out.push(']');

    // The moves, column by column.
    let mut feature_of = vec![-1i64; trace.moves.len()];
    for (k, (_, first)) in trace.features.iter().enumerate() {
        let end = trace
            .features
            .get(k + 1)
            .map_or(trace.moves.len(), |f| f.1)
            .min(trace.moves.len());
        for f in feature_of.iter_mut().take(end).skip(*first) {
            *f = k as i64;
        }
    }
    out.push_str(",\"moves\":{\"line\":[");
    push_list(&mut out, trace.moves.iter(), |o, m| {
        write!(o, "{}", m.line).ok();
    });
    out.push_str("],\"rapid\":[");
    push_list(&mut out, trace.moves.iter(), |o, m| {
        o.push(if m.rapid { '1' } else { '0' })
    });
    out.push_str("],\"feature\":[");
    push_list(&mut out, feature_of.iter(), |o, f| {
        write!(o, "{f}").ok();
    });
    out.push_str("],\"time\":[");
    push_list(&mut out, times.iter(), |o, &t| push_number(o, t));
    // Each move's points; move k's are points[start[k] .. start[k + 1]] (x, y pairs).
    out.push_str("],\"points\":[");
    let mut start = Vec::with_capacity(trace.moves.len() + 1);
    let mut count = 0usize;
    for m in &trace.moves {
        start.push(count);
        let pts = move_points(m);
        if count > 0 && !pts.is_empty() {
            out.push(',');
        }
        push_points(&mut out, &pts);
        count += 2 * pts.len();
    }
    start.push(count);
    out.push_str("],\"start\":[");
    push_list(&mut out, start.iter(), |o, k| {
        write!(o, "{k}").ok();
    });
    out.push_str("]}");

    // The findings, each at the end of the last move on its line (none for the program as a
    // whole or a line that moves nothing).
    let mut at_line: HashMap<usize, [f64; 2]> = HashMap::new();
    for m in &trace.moves {
        at_line.insert(m.line, [m.to[0], m.to[1]]);
    }
    out.push_str(",\"findings\":[");
    for (i, f) in findings.iter().enumerate() {
        if i > 0 {
            out.push(',');
        }
        let at = at_line
            .get(&f.line)
            .filter(|p| p[0].is_finite() && p[1].is_finite())
            .map_or("null".to_string(), |p| {
                format!("[{},{}]", number(p[0]), number(p[1]))
            });
        let severity = match f.severity {
            Severity::MustFix => "must-fix",
            Severity::Warning => "warning",
        };
        write!(
            out,
            "{{\"line\":{},\"severity\":\"{severity}\",\"rule\":{},\"message\":{},\"at\":{at}}}",
            f.line,
            json_string(f.rule),
            json_string(&f.message)
        )
        .ok();
    }
    out.push(']');

    out.push_str(",\"lines\":[");
    push_list(&mut out, program.lines(), |o, l| {
        o.push_str(&json_string(l))
    });
    out.push_str("]}");

    out.push_str(tail);
    out
}

/// A JSON string that is also safe inside a `<script>` element (`<` written as `\u003c`, so no
/// `</script>` or `<!--` can end or change it).
fn json_string(s: &str) -> String {
    serde_json::to_string(s)
        .unwrap_or_else(|_| "\"\"".to_string())
        .replace('<', "\\u003c")
}

/// Text for the page's title element.
fn html_text(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// A coordinate or time: four decimals without trailing zeros; `null` when it is not finite.
fn number(v: f64) -> String {
    let mut s = String::new();
    push_number(&mut s, v);
    s
}

/// [`number`] written onto `out` (the page holds millions of them: no allocation each).
fn push_number(out: &mut String, v: f64) {
    if !v.is_finite() {
        out.push_str("null");
        return;
    }
    if v.abs() >= 1e14 {
        // Past what the integer steps below hold: written as it is (still a JSON number).
        write!(out, "{v:.4}").ok();
        return;
    }
    let steps = (v * 1e4).round() as i64;
    if steps < 0 {
        out.push('-');
    }
    let a = steps.unsigned_abs();
    write!(out, "{}", a / 10_000).ok();
    let mut frac = a % 10_000;
    if frac != 0 {
        let mut digits = 4;
        while frac.is_multiple_of(10) {
            frac /= 10;
            digits -= 1;
        }
        write!(out, ".{frac:0digits$}").ok();
    }
}

/// `items` written one after another with commas between.
fn push_list<T>(
    out: &mut String,
    items: impl Iterator<Item = T>,
    mut each: impl FnMut(&mut String, T),
) {
    for (i, item) in items.enumerate() {
        if i > 0 {
            out.push(',');
        }
        each(out, item);
    }
}

fn push_points(out: &mut String, pts: &[Point]) {
    push_list(out, pts.iter(), |out, p| {
        push_number(out, p.x);
        out.push(',');
        push_number(out, p.y);
    });
}

/// A read-back move in the plane: its start and end, an arc with a point every
/// [`ARC_STEP_DEGREES`] between them. A move that only changes Z is its one point twice.
fn move_points(m: &super::TraceMove) -> Vec<Point> {
    let (from, mv) = m.xy();
    match mv {
        Move::Line { to } => vec![from, to],
        Move::Arc { .. } => {
            let sweep = mv.sweep(from).abs();
            let n = if sweep.is_finite() {
                (sweep.to_degrees() / ARC_STEP_DEGREES)
                    .ceil()
                    .clamp(1.0, 720.0) as usize
            } else {
                1
            };
            (0..=n)
                .map(|k| mv.point_at(from, k as f64 / n as f64))
                .collect()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_short_and_never_nan() {
        assert_eq!(number(1.0), "1");
        assert_eq!(number(-0.00001), "0");
        assert_eq!(number(12.345678), "12.3457");
        assert_eq!(number(-3.5), "-3.5");
        assert_eq!(number(f64::NAN), "null");
        assert_eq!(number(f64::INFINITY), "null");
        assert_eq!(number(0.00005), "0.0001");
        assert_eq!(number(-1234.56789), "-1234.5679");
        assert_eq!(number(0.0708), "0.0708");
        assert_eq!(number(2e15), "2000000000000000.0000");
    }

    #[test]
    fn strings_cannot_end_the_script() {
        let s = json_string("(note </script><!-- x)");
        assert!(!s.contains('<'), "{s}");
        let back: String = serde_json::from_str(&s).expect("still JSON");
        assert_eq!(back, "(note </script><!-- x)");
    }
}
