//! Joining open pieces (lines, arcs, open polylines) of one layer into closed loops.
//!
//! Two piece ends *meet* when they are at most the gap max_gap apart (ends are grouped
//! transitively). A group of exactly two ends is a joint; a group of one end is a loose end; a
//! group of three or more is a branch, which no simple loop can pass, so it is an error.

use crate::geom::Element;
use crate::geom::{ArcSegment, Point};
use std::collections::HashMap;

/// A run of elements, each starting where the one before ended, with one handle per element.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Piece {
    pub elements: Vec<Element>,
    pub handles: Vec<String>,
}

impl Piece {
    fn end_point(&self, which: usize) -> Option<Point> {
        if which == 0 {
            self.elements.first().map(Element::start)
        } else {
            self.elements.last().map(Element::end)
        }
    }

    fn reversed(&self) -> Piece {
        Piece {
            elements: self.elements.iter().rev().map(Element::reversed).collect(),
            handles: self.handles.iter().rev().cloned().collect(),
        }
    }
}

/// An open chain: pieces joined end to end that do not close.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct OpenRun {
    pub handles: Vec<String>,
    pub pieces: usize,
    pub ends: [Point; 2],
    /// The run's length (mm).
    pub length: f64,
}

/// What joining one layer gave.
#[derive(Debug, Clone, PartialEq, Default)]
pub(super) struct Joined {
    pub loops: Vec<Piece>,
    pub open: Vec<OpenRun>,
}

/// Three or more piece ends meet at `at`.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Branch {
    pub at: Point,
    pub handles: Vec<String>,
}

/// Joins `pieces` into loops. Each loop's shared points are snapped (see [`snap_loop`]).
pub(super) fn join(pieces: &[Piece], max_gap: f64) -> Result<Joined, Branch> {
    let pieces: Vec<&Piece> = pieces.iter().filter(|p| !p.elements.is_empty()).collect();
    // End k belongs to piece k / 2; k % 2 == 0 is its start.
    let ends: Vec<Point> = pieces
        .iter()
        .flat_map(|p| [p.end_point(0), p.end_point(1)])
        .map(|p| p.unwrap_or(Point::ORIGIN))
        .collect();
    let groups = group_ends(&ends, max_gap);

    let mut partner: Vec<Option<usize>> = vec![None; ends.len()];
    for g in &groups {
        match g.as_slice() {
            [_] => {}
            [a, b] => {
                partner[*a] = Some(*b);
                partner[*b] = Some(*a);
            }
            many => {
                let mut handles = Vec::new();
                for &k in many {
                    for h in &pieces[k / 2].handles {
                        if !handles.contains(h) {
                            handles.push(h.clone());
                        }
                    }
                }
                return Err(Branch {
                    at: ends[many[0]],
                    handles,
                });
            }
        }
    }

    let mut used = vec![false; pieces.len()];
    let mut out = Joined::default();

    // Open runs first, walked from one loose end to the other.
    for k in 0..ends.len() {
        if partner[k].is_some() || used[k / 2] {
            continue;
        }
        let (run, last) = walk(&pieces, &partner, &mut used, k);
        out.open.push(OpenRun {
            handles: dedup(&run.handles),
            pieces: run.pieces,
            ends: [ends[k], ends[last]],
            length: run.piece.elements.iter().map(Element::length).sum(),
        });
    }
    // Everything left is in a loop.
    for p in 0..pieces.len() {
        if used[p] {
            continue;
        }
        let (run, _) = walk(&pieces, &partner, &mut used, 2 * p);
        let mut piece = run.piece;
        snap_loop(&mut piece.elements);
        out.loops.push(piece);
    }
    Ok(out)
}

struct Run {
    piece: Piece,
    handles: Vec<String>,
    pieces: usize,
}

/// Walks from end `first` through joints until a loose end or back to the first piece; returns
/// the run and the end where it stopped.
fn walk(
    pieces: &[&Piece],
    partner: &[Option<usize>],
    used: &mut [bool],
    first: usize,
) -> (Run, usize) {
    let mut run = Run {
        piece: Piece {
            elements: Vec::new(),
            handles: Vec::new(),
        },
        handles: Vec::new(),
        pieces: 0,
    };
    let mut k = first;
    loop {
        let p = k / 2;
        used[p] = true;
        run.pieces += 1;
        let oriented = if k.is_multiple_of(2) {
            pieces[p].clone()
        } else {
            pieces[p].reversed()
        };
        run.handles.extend(oriented.handles.iter().cloned());
        run.piece.elements.extend(oriented.elements);
        run.piece.handles.extend(oriented.handles);
        let out_end = k ^ 1;
        match partner[out_end] {
            Some(next) if !used[next / 2] => k = next,
            _ => return (run, out_end),
        }
    }
}

/// Groups end points that lie within `max_gap` of each other (transitively), using a grid of
/// cells `max_gap` wide (at least 1e-6 mm) so that only neighbouring cells are compared.
fn group_ends(ends: &[Point], max_gap: f64) -> Vec<Vec<usize>> {
    let cell = max_gap.max(1e-6);
    let key = |p: Point| ((p.x / cell).floor() as i64, (p.y / cell).floor() as i64);
    let mut grid: HashMap<(i64, i64), Vec<usize>> = HashMap::new();
    for (k, &p) in ends.iter().enumerate() {
        grid.entry(key(p)).or_default().push(k);
    }
    let mut parent: Vec<usize> = (0..ends.len()).collect();
    fn find(parent: &mut [usize], mut k: usize) -> usize {
        while parent[k] != k {
            parent[k] = parent[parent[k]];
            k = parent[k];
        }
        k
    }
    for (k, &p) in ends.iter().enumerate() {
        let (cx, cy) = key(p);
        for dx in -1..=1 {
            for dy in -1..=1 {
                // Saturating: a coordinate near the f64 range's end has a key at i64's end.
                let near = (cx.saturating_add(dx), cy.saturating_add(dy));
                let Some(cands) = grid.get(&near) else {
                    continue;
                };
                for &j in cands {
                    if j > k && p.distance(ends[j]) <= max_gap {
                        let (a, b) = (find(&mut parent, k), find(&mut parent, j));
                        parent[a] = b;
                    }
                }
            }
        }
    }
    // Groups in the order of their first end, found through a map from root to group.
    let mut groups: Vec<Vec<usize>> = Vec::new();
    let mut group_of_root: HashMap<usize, usize> = HashMap::new();
    for k in 0..ends.len() {
        let r = find(&mut parent, k);
        let g = *group_of_root.entry(r).or_insert_with(|| {
            groups.push(Vec::new());
            groups.len() - 1
        });
        groups[g].push(k);
    }
    groups
}

/// Makes each element of a closed loop start exactly where the one before it ends.
///
/// A line takes any end point exactly, an arc does not (its ends are computed from centre,
/// radius and angles). So: where two arcs meet, both are rebuilt through the midpoint of their
/// two ends with their sweeps kept ([`ArcSegment::from_bulge`]); where a line meets an arc, the
/// line's end is set to the arc's computed end; where two lines meet, both take the midpoint.
/// Line ends then agree bit for bit; an arc's computed end agrees with its neighbour's start to
/// floating-point rounding (about 1e-13 of the arc's radius). A loop of one arc becomes a full
/// circle.
pub(super) fn snap_loop(elements: &mut [Element]) {
    let n = elements.len();
    if n == 1 {
        if let Element::Arc(a) = &mut elements[0] {
            a.sweep = std::f64::consts::TAU.copysign(a.sweep);
        }
        return;
    }
    // Arc-to-arc joints first, so that lines can copy the arcs' final end points.
    for i in 0..n {
        let j = (i + 1) % n;
        if let (Element::Arc(a), Element::Arc(b)) = (elements[i], elements[j]) {
            let (pa, pb) = (a.end_point(), b.start_point());
            if pa == pb {
                continue;
            }
            let m = pa.midpoint(pb);
            if let Some(new_a) = rebuild_arc(&a, a.start_point(), m) {
                elements[i] = Element::Arc(new_a);
            }
            if let Some(new_b) = rebuild_arc(&b, m, b.end_point()) {
                elements[j] = Element::Arc(new_b);
            }
        }
    }
    for i in 0..n {
        let j = (i + 1) % n;
        match (elements[i], elements[j]) {
            (Element::Line(mut a), Element::Line(mut b)) => {
                let m = a.end.midpoint(b.start);
                a.end = m;
                b.start = m;
                elements[i] = Element::Line(a);
                elements[j] = Element::Line(b);
            }
            (Element::Line(mut a), Element::Arc(b)) => {
                a.end = b.start_point();
                elements[i] = Element::Line(a);
            }
            (Element::Arc(a), Element::Line(mut b)) => {
                b.start = a.end_point();
                elements[j] = Element::Line(b);
            }
            (Element::Arc(_), Element::Arc(_)) => {}
        }
    }
}

/// The arc from `start` to `end` with the sweep of `arc`.
fn rebuild_arc(arc: &ArcSegment, start: Point, end: Point) -> Option<ArcSegment> {
    ArcSegment::from_bulge(start, end, (arc.sweep / 4.0).tan())
}

fn dedup(handles: &[String]) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for h in handles {
        if !out.contains(h) {
            out.push(h.clone());
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::Segment;

    fn line(h: &str, a: (f64, f64), b: (f64, f64)) -> Piece {
        Piece {
            elements: vec![Element::Line(Segment::new(
                Point::new(a.0, a.1),
                Point::new(b.0, b.1),
            ))],
            handles: vec![h.into()],
        }
    }

    #[test]
    fn joins_lines_drawn_in_any_direction_and_snaps_gaps() {
        let pieces = [
            line("A", (0.0, 0.0), (10.0, 0.0)),
            line("B", (10.0, 10.0), (10.004, 0.0)), // reversed, 4 µm off
            line("C", (10.0, 10.0), (0.0, 10.0)),
            line("D", (0.0, 10.0), (0.0, 0.003)),
        ];
        let j = join(&pieces, 0.01).unwrap();
        assert!(j.open.is_empty());
        assert_eq!(j.loops.len(), 1);
        let els = &j.loops[0].elements;
        assert_eq!(els.len(), 4);
        for i in 0..4 {
            assert_eq!(
                els[i].end(),
                els[(i + 1) % 4].start(),
                "joint {i} not exact"
            );
        }
        assert_eq!(j.loops[0].handles, ["A", "B", "C", "D"]);
    }

    #[test]
    fn gap_above_max_gap_leaves_an_open_run_with_its_loose_ends() {
        let pieces = [
            line("A", (0.0, 0.0), (10.0, 0.0)),
            line("B", (10.0, 0.0), (10.0, 10.0)),
            line("C", (10.0, 10.0), (0.0, 10.0)),
            line("D", (0.0, 10.0), (0.0, 0.5)),
        ];
        let j = join(&pieces, 0.01).unwrap();
        assert!(j.loops.is_empty());
        assert_eq!(j.open.len(), 1);
        let ends = j.open[0].ends;
        let mut ys = [ends[0].y, ends[1].y];
        ys.sort_by(f64::total_cmp);
        assert_eq!(ys, [0.0, 0.5]);
        assert_eq!(j.open[0].pieces, 4);
    }

    #[test]
    fn three_ends_at_one_point_is_a_branch() {
        let pieces = [
            line("A", (0.0, 0.0), (10.0, 0.0)),
            line("B", (10.0, 0.0), (10.0, 10.0)),
            line("C", (10.0, 0.0), (20.0, 0.0)),
        ];
        let b = join(&pieces, 0.01).unwrap_err();
        assert_eq!(b.at, Point::new(10.0, 0.0));
        assert_eq!(b.handles.len(), 3);
    }

    #[test]
    fn two_arcs_meeting_with_a_gap_are_rebuilt_through_the_midpoint() {
        // Two half circles of radius 5 about (0,0), the second one 2 µm off at one joint.
        let a = ArcSegment::from_bulge(Point::new(5.0, 0.0), Point::new(-5.0, 0.0), 1.0).unwrap();
        let b =
            ArcSegment::from_bulge(Point::new(-5.0, 0.0), Point::new(5.000002, 0.0), 1.0).unwrap();
        let pieces = [
            Piece {
                elements: vec![Element::Arc(a)],
                handles: vec!["A".into()],
            },
            Piece {
                elements: vec![Element::Arc(b)],
                handles: vec!["B".into()],
            },
        ];
        let j = join(&pieces, 0.01).unwrap();
        let els = &j.loops[0].elements;
        for i in 0..2 {
            assert!(els[i].end().distance(els[(i + 1) % 2].start()) < 1e-12);
        }
    }
}
