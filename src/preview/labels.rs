//! Label placement: each label tries a few candidate positions around its feature, in order of
//! preference, and takes the first whose box covers no drawn cell of the occupancy grid (else
//! the one covering fewest). A label set away from its feature gets a thin leader line back to
//! it. Placed labels and leaders are marked in the grid, so later labels avoid them too.

use super::occupancy::Occupancy;
use crate::geom::{Ellipse, Point, Vec2};

/// The width of one character taken for a label's box, in ems: a little more than the average
/// figure of common sans-serif faces, so the box holds the text.
pub const CHAR_EM: f64 = 0.62;

/// Line height of multi-line labels, in ems.
pub const LINE_EM: f64 = 1.2;

/// The smallest label text (mm): about 4 pt, still readable on a 1:1 print.
pub const MIN_FONT: f64 = 1.5;

/// Room kept free around a label's text, in ems.
const PAD_EM: f64 = 0.15;

/// A label's lines and text size (mm).
#[derive(Debug, Clone)]
pub struct TextBlock {
    pub lines: Vec<String>,
    pub font: f64,
}

impl TextBlock {
    /// Half the size of the box that holds the text and its padding (mm).
    pub fn half(&self) -> Vec2 {
        let widest = self
            .lines
            .iter()
            .map(|l| l.chars().count())
            .max()
            .unwrap_or(0) as f64;
        let pad = PAD_EM * self.font;
        Vec2::new(
            0.5 * widest * CHAR_EM * self.font + pad,
            0.5 * self.lines.len() as f64 * LINE_EM * self.font + pad,
        )
    }
}

/// A place a label may go: its box's centre and, when it is away from its feature, the point of
/// the feature its leader runs to.
#[derive(Debug, Clone, Copy)]
pub struct Candidate {
    pub centre: Point,
    pub leader_to: Option<Point>,
}

/// Where a label went.
#[derive(Debug, Clone, Copy)]
pub struct Placed {
    pub centre: Point,
    /// The leader, from the label's box to its feature.
    pub leader: Option<(Point, Point)>,
}

/// Places a label of half-size `half` at the best of `candidates` (see the module docs) and
/// marks its box and leader in `grid`. Candidates whose box leaves the drawing area are passed
/// over; when every one does, the first is taken. `None` without a finite candidate, and, when
/// `only_free`, when no candidate is free.
pub fn place(
    grid: &mut Occupancy,
    half: Vec2,
    candidates: &[Candidate],
    leader_half_width: f64,
    only_free: bool,
) -> Option<Placed> {
    let mut best: Option<(usize, usize)> = None;
    for (i, c) in candidates.iter().enumerate() {
        let (lo, hi) = (c.centre - half, c.centre + half);
        if !grid.holds(lo, hi) {
            continue;
        }
        let n = grid.count_box(lo, hi);
        if best.is_none_or(|(fewest, _)| n < fewest) {
            best = Some((n, i));
        }
        if n == 0 {
            break;
        }
    }
    let chosen = match best {
        Some((n, _)) if only_free && n > 0 => return None,
        Some((_, i)) => candidates[i],
        None if only_free => return None,
        None => *candidates.iter().find(|c| c.centre.is_finite())?,
    };
    let (lo, hi) = (chosen.centre - half, chosen.centre + half);
    grid.mark_box(lo, hi);
    let leader = chosen.leader_to.filter(|p| p.is_finite()).and_then(|to| {
        let from = Point::new(to.x.clamp(lo.x, hi.x), to.y.clamp(lo.y, hi.y));
        (from.distance(to) > 1e-9).then_some((from, to))
    });
    if let Some((from, to)) = leader {
        grid.mark_segment(from, to, leader_half_width);
    }
    Some(Placed {
        centre: chosen.centre,
        leader,
    })
}

/// The eight directions tried around a feature, in order of preference: right, above, left,
/// below, then the corners.
const DIRECTIONS: [(f64, f64); 8] = [
    (1.0, 0.0),
    (0.0, 1.0),
    (-1.0, 0.0),
    (0.0, -1.0),
    (1.0, 1.0),
    (-1.0, 1.0),
    (1.0, -1.0),
    (-1.0, -1.0),
];

/// Rings of candidates around a feature: the first keeps `gap` between the feature's box and
/// the label's, each further one `step` more; `count` rings, those from `leader_from` on with a
/// leader.
#[derive(Debug, Clone, Copy)]
pub struct Rings {
    pub gap: f64,
    pub step: f64,
    pub count: usize,
    pub leader_from: usize,
}

/// Candidates in `rings` around a feature whose box is `centre` ± `extent`, for a label of
/// half-size `half`, eight to a ring. A candidate with a leader leads to `edge(dir)`, the
/// feature's point towards the label.
pub fn around(
    centre: Point,
    extent: Vec2,
    half: Vec2,
    rings: Rings,
    edge: &dyn Fn(Vec2) -> Point,
) -> Vec<Candidate> {
    let Rings {
        gap,
        step,
        count,
        leader_from,
    } = rings;
    let mut out = Vec::with_capacity(count * DIRECTIONS.len());
    for ring in 0..count {
        let g = gap + ring as f64 * step;
        for (dx, dy) in DIRECTIONS {
            let at = Point::new(
                centre.x + dx * (extent.x + g + half.x),
                centre.y + dy * (extent.y + g + half.y),
            );
            let leader_to = (ring >= leader_from)
                .then(|| (at - centre).normalized().map(edge))
                .flatten();
            out.push(Candidate {
                centre: at,
                leader_to,
            });
        }
    }
    out
}

/// Candidates inside an ellipse, from its centre outwards along its axes (no leader).
pub fn inside(e: &Ellipse) -> Vec<Candidate> {
    let major = Vec2::from_angle(e.angle());
    let minor = major.perp();
    [
        (0.0, 0.0),
        (0.0, 0.45),
        (0.0, -0.45),
        (0.35, 0.0),
        (-0.35, 0.0),
        (0.35, 0.35),
        (-0.35, 0.35),
        (0.35, -0.35),
        (-0.35, -0.35),
    ]
    .into_iter()
    .map(|(s, t)| Candidate {
        centre: e.centre() + major * (s * e.a()) + minor * (t * e.b()),
        leader_to: None,
    })
    .collect()
}

/// The point of the ellipse's curve in the direction `dir` from its centre.
pub fn ellipse_edge(e: &Ellipse, dir: Vec2) -> Point {
    let local = dir.rotated(-e.angle());
    let k = ((local.x / e.a()).powi(2) + (local.y / e.b()).powi(2)).sqrt();
    if k > 0.0 && k.is_finite() {
        e.centre() + dir * (1.0 / k)
    } else {
        e.centre()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::preview::frame::Bounds;

    #[test]
    fn a_label_takes_the_first_free_place_and_leads_back_when_moved() {
        let area = Bounds {
            min: Point::new(0.0, 0.0),
            max: Point::new(100.0, 100.0),
        };
        let mut grid = Occupancy::new(area, 0.5);
        // A wall right of the feature at (50, 50).
        grid.mark_box(Point::new(55.0, 0.0), Point::new(60.0, 100.0));
        let text = TextBlock {
            lines: vec!["Ø9 mm".into()],
            font: 2.0,
        };
        let half = text.half();
        let centre = Point::new(50.0, 50.0);
        let edge = |d: Vec2| centre + d * 4.5;
        let rings = Rings {
            gap: 1.0,
            step: 4.0,
            count: 2,
            leader_from: 1,
        };
        let c = around(centre, Vec2::new(4.5, 4.5), half, rings, &edge);
        assert!(
            place(&mut grid, half, &c[..1], 0.1, true).is_none(),
            "right is taken"
        );
        let placed = place(&mut grid, half, &c, 0.1, false).unwrap();
        // Right is taken by the wall; above is free: ring 0, no leader.
        assert!((placed.centre.x - 50.0).abs() < 1e-9 && placed.centre.y > 54.5);
        assert!(placed.leader.is_none());
        // The label's box is now taken: a second label goes elsewhere.
        let again = place(&mut grid, half, &c, 0.1, false).unwrap();
        assert!(again.centre.distance(placed.centre) > 1.0);
        // Far out (ring 1) a leader runs back to the feature's edge.
        let far: Vec<Candidate> = c.into_iter().skip(8).collect();
        let moved = place(&mut grid, half, &far, 0.1, false).unwrap();
        let (_, to) = moved.leader.expect("a leader");
        assert!((to.distance(centre) - 4.5).abs() < 1e-9);
    }

    #[test]
    fn the_ellipse_edge_is_on_the_curve() {
        let e = Ellipse::new(Point::new(3.0, 4.0), 10.0, 4.0, 0.5).unwrap();
        for k in 0..12 {
            let dir = Vec2::from_angle(k as f64 * 0.5);
            let p = ellipse_edge(&e, dir);
            assert!(e.distance_to(p).0.abs() < 1e-9, "{p:?}");
        }
    }
}
