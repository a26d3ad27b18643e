//! `conicut check --svg FILE`: the program read back, drawn over the finished edges, with each
//! finding marked where it occurs (at the end of the move on its line; findings of the program as
//! a whole have no place and are listed in the text only). One SVG unit is one millimetre, y up
//! drawn as `(x, −y)`; numbers are written with the `svg` crate's f32, fine for a picture.
//!
//! Classes: `edge` (finished edges, from the plan), `cut` (cutting moves), `rapid`, `finding`
//! (a circle, `data-line` and `data-rule`, red for must fix, amber for warnings) with its
//! `finding-label` (the line number).

use super::Trace;
use super::reader::{ProgramFinding, Severity};
use crate::geom::{Edge, Element, Move, Point};
use crate::plan::PlannedCut;
use svg::Document;
use svg::node::element::path::Data;
use svg::node::element::{Circle, Group, Path, Text, Title};

/// Points per finished edge drawn (an ellipse, or each piece of a contour).
const EDGE_POINTS: usize = 96;

/// Points per arc move drawn.
const ARC_POINTS: usize = 24;

/// The picture (see the module docs).
pub fn findings_svg(trace: &Trace, cuts: &[PlannedCut], findings: &[ProgramFinding]) -> String {
    let mut lo = Point::new(f64::INFINITY, f64::INFINITY);
    let mut hi = Point::new(f64::NEG_INFINITY, f64::NEG_INFINITY);
    let mut grow = |p: Point| {
        if p.x.is_finite() && p.y.is_finite() {
            lo = Point::new(lo.x.min(p.x), lo.y.min(p.y));
            hi = Point::new(hi.x.max(p.x), hi.y.max(p.y));
        }
    };
    for c in cuts {
        if let Some(b) = c.edge().bounding_box() {
            grow(b.min);
            grow(b.max);
        }
    }
    if let Some((a, b)) = trace.bounds {
        grow(Point::new(a[0], a[1]));
        grow(Point::new(b[0], b[1]));
    }
    if !lo.x.is_finite() {
        lo = Point::new(0.0, 0.0);
        hi = Point::new(100.0, 100.0);
    }
    let size = (hi.x - lo.x).max(hi.y - lo.y).max(1.0);
    let margin = 0.05 * size;
    let unit = size / 400.0;
    let (w, h) = (hi.x - lo.x + 2.0 * margin, hi.y - lo.y + 2.0 * margin);
    let mut doc = Document::new()
        .set("viewBox", (lo.x - margin, -hi.y - margin, w, h))
        .set("width", format!("{w}mm"))
        .set("height", format!("{h}mm"));
    doc = doc.add(Title::new(
        "conicut check: the program read back and its findings",
    ));
    let mut edges = Group::new()
        .set("class", "edge")
        .set("fill", "none")
        .set("stroke", "#555555")
        .set("stroke-width", unit);
    for c in cuts {
        edges = edges.add(Path::new().set("d", polyline(&edge_points(c.edge()))));
    }
    doc = doc.add(edges);
    let mut rapids = Data::new();
    let mut cuts_d = Data::new();
    for m in &trace.moves {
        let (from, mv) = m.xy();
        if from == mv.end() {
            continue;
        }
        let pts: Vec<Point> = match mv {
            Move::Arc { .. } => (0..=ARC_POINTS)
                .map(|k| mv.point_at(from, k as f64 / ARC_POINTS as f64))
                .collect(),
            Move::Line { to } => vec![from, to],
        };
        let target = if m.rapid { &mut rapids } else { &mut cuts_d };
        *target = append(std::mem::take(target), &pts);
    }
    doc = doc.add(
        Path::new()
            .set("class", "rapid")
            .set("fill", "none")
            .set("stroke", "#2a9d8f")
            .set("stroke-width", unit * 0.6)
            .set("stroke-dasharray", format!("{} {}", 4.0 * unit, 3.0 * unit))
            .set("d", rapids),
    );
    doc = doc.add(
        Path::new()
            .set("class", "cut")
            .set("fill", "none")
            .set("stroke", "#1d4ed8")
            .set("stroke-width", unit)
            .set("d", cuts_d),
    );
    // Each finding at the end of the last move on its line.
    let mut by_line: std::collections::HashMap<usize, Point> = std::collections::HashMap::new();
    for m in &trace.moves {
        by_line.insert(m.line, Point::new(m.to[0], m.to[1]));
    }
    let mut marks = Group::new().set("class", "findings");
    for f in findings {
        let Some(&p) = by_line.get(&f.line) else {
            continue;
        };
        let colour = match f.severity {
            Severity::MustFix => "#d62828",
            Severity::Warning => "#e9a100",
        };
        marks = marks
            .add(
                Circle::new()
                    .set("class", "finding")
                    .set("data-line", f.line)
                    .set("data-rule", f.rule)
                    .set("cx", p.x)
                    .set("cy", -p.y)
                    .set("r", 4.0 * unit)
                    .set("fill", "none")
                    .set("stroke", colour)
                    .set("stroke-width", unit)
                    .add(Title::new(format!("line {}: {}", f.line, f.message))),
            )
            .add(
                Text::new(format!("{}", f.line))
                    .set("class", "finding-label")
                    .set("x", p.x + 5.0 * unit)
                    .set("y", -p.y - 5.0 * unit)
                    .set("font-size", 8.0 * unit)
                    .set("fill", colour),
            );
    }
    doc.add(marks).to_string()
}

/// A finished edge as a run of points (also the interactive page's, [`super::view`]).
pub(super) fn edge_points(edge: &Edge) -> Vec<Point> {
    match edge {
        Edge::Ellipse(e) => (0..=EDGE_POINTS)
            .map(|k| e.point(std::f64::consts::TAU * k as f64 / EDGE_POINTS as f64))
            .collect(),
        Edge::Contour(c) => c
            .elements()
            .iter()
            .flat_map(|el| {
                let n = match el {
                    Element::Line(_) => 1,
                    Element::Arc(_) => EDGE_POINTS / 4,
                };
                (0..=n).map(move |k| el.point_at(k as f64 / n as f64))
            })
            .collect(),
    }
}

fn append(d: Data, pts: &[Point]) -> Data {
    let mut d = d.move_to((pts[0].x, -pts[0].y));
    for p in &pts[1..] {
        d = d.line_to((p.x, -p.y));
    }
    d
}

fn polyline(pts: &[Point]) -> Data {
    if pts.is_empty() {
        return Data::new();
    }
    append(Data::new(), pts).close()
}
