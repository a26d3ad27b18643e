//! Measuring how far emitted moves stray from the exact curve they stand for.

use crate::geom::Element;
use crate::geom::Ellipse;
use crate::geom::ExactPath;
use crate::geom::Move;
use crate::geom::search::golden_min;
use crate::geom::{ArcSegment, Bounds, Point, Segment, bounds_of_elements};
use serde::Serialize;
use std::f64::consts::{FRAC_PI_2, TAU};

/// Samples taken along every emitted line (and along the exact curve per line).
const SAMPLES_PER_LINE: usize = 16;

/// Samples taken along every emitted arc (and along the exact curve per arc): an arc of a spline
/// spans several of the curve's wiggles against it (two error lobes), and is long.
const SAMPLES_PER_ARC: usize = 64;

fn samples_for(piece: &Element) -> usize {
    match piece {
        Element::Line(_) => SAMPLES_PER_LINE,
        Element::Arc(_) => SAMPLES_PER_ARC,
    }
}

/// The deviation between the run of `moves` from `start` and `exact`, measured both ways by
/// dense sampling: the largest distance from a sample of the moves to the exact curve, and from a
/// sample of the exact curve to the moves. 16 samples per line put a sample within 1/32 of a line
/// of the point of largest deviation, so for a chord the estimate is within about 0.4 % of the
/// true maximum (the sagitta profile is parabolic); arcs get 64 samples, 32 or so per error lobe.
pub fn measure_deviation(start: Point, moves: &[Move], exact: &ExactPath) -> f64 {
    measure_with_sides(start, moves, exact, true).0
}

/// [`measure_deviation`] and the deviation on each side from one sampling of the moves, with
/// the scrap on the left of travel when `scrap_left` (a climb cut) and on the right otherwise (a
/// conventional cut): see [`measure_sides`].
pub fn measure_with_sides(
    start: Point,
    moves: &[Move],
    exact: &ExactPath,
    scrap_left: bool,
) -> (f64, SideDeviation) {
    let mut sides = SideDeviation {
        scrap_side: 0.0,
        part_side: 0.0,
    };
    if moves.is_empty() {
        return (f64::INFINITY, sides);
    }
    let pieces = pieces_of(start, moves);
    // The samples run along the curve, so each one's nearest anomaly starts the next search.
    let mut hint = None;
    for piece in &pieces {
        let n = samples_for(piece);
        for k in 0..=n {
            let p = piece.point_at(k as f64 / n as f64);
            let d = signed_distance_to_exact(exact, p, &mut hint);
            let d = if scrap_left { d } else { -d };
            if d > 0.0 {
                sides.scrap_side = sides.scrap_side.max(d);
            } else {
                sides.part_side = sides.part_side.max(-d);
            }
        }
    }
    let count = pieces.iter().map(samples_for).sum();
    let curve_samples = curve_samples(exact, count);
    let to_path = distance_to_pieces_in_order(&curve_samples, &pieces);
    (sides.scrap_side.max(sides.part_side).max(to_path), sides)
}

/// The moves as geometric pieces.
fn pieces_of(start: Point, moves: &[Move]) -> Vec<Element> {
    let mut from = start;
    let mut out = Vec::with_capacity(moves.len());
    for m in moves {
        out.push(match *m {
            Move::Line { to } => Element::Line(Segment::new(from, to)),
            Move::Arc { centre, .. } => Element::Arc(ArcSegment {
                centre,
                radius: from.distance(centre),
                start_angle: (from - centre).angle(),
                sweep: m.sweep(from),
            }),
        });
        from = m.end();
    }
    out
}

/// Points along the exact curve, in the order of travel.
fn curve_samples(exact: &ExactPath, count: usize) -> Vec<Point> {
    match exact {
        ExactPath::EllipseParallel {
            ellipse,
            inset,
            start,
            ..
        } => (0..=count)
            .map(|k| ellipse.inward_offset_point(start + TAU * k as f64 / count as f64, *inset))
            .collect(),
        ExactPath::Contour(c) => {
            let total: f64 = c.elements().iter().map(Element::length).sum();
            let mut out = Vec::new();
            for e in c.elements() {
                let n = ((count as f64 * e.length() / total).ceil() as usize).max(2);
                for k in 0..=n {
                    let t = k as f64 / n as f64;
                    out.push(e.point_at(t));
                }
            }
            out
        }
    }
}

/// Distance from `p` to the exact curve, positive when `p` lies on the left of travel (the scrap
/// side of a climb cut), negative on the right.
///
/// On an ellipse's parallel curve the nearest point is found by Newton steps on the anomaly
/// (see [`nearest_anomaly`]) from `hint`, the previous sample's anomaly, which is set to this
/// one's; where those do not settle, by the nearest point of the ellipse itself and a
/// golden-section search around it.
fn signed_distance_to_exact(exact: &ExactPath, p: Point, hint: &mut Option<f64>) -> f64 {
    match exact {
        ExactPath::EllipseParallel {
            ellipse,
            inset,
            clockwise,
            ..
        } => {
            let f = |t: f64| p.distance(ellipse.inward_offset_point(t, *inset));
            let newton = hint.and_then(|t0| nearest_anomaly(ellipse, p, t0));
            let (distance, t) = match newton {
                Some(t) => (f(t), t),
                None => {
                    // The parallel curve shares the ellipse's normals: start from the anomaly of
                    // the ellipse's nearest point and search a window around it.
                    let (_, t_guess) = ellipse.distance_to(p);
                    let mut best = (f(t_guess), t_guess);
                    for window in [0.02, 0.2] {
                        let found = golden_min(&f, t_guess - window, t_guess + window);
                        if found.0 < best.0 {
                            best = found;
                        }
                    }
                    best
                }
            };
            *hint = Some(t);
            // Outward along the common normal; the left of travel is inside for a
            // counter-clockwise run, outside for a clockwise one.
            let outward =
                (p - ellipse.inward_offset_point(t, *inset)).dot(ellipse.outward_normal(t));
            let left = if *clockwise {
                outward > 0.0
            } else {
                outward < 0.0
            };
            if left { distance } else { -distance }
        }
        ExactPath::Contour(c) => {
            // The side of the nearest piece: left of a line's direction; inside the circle of a
            // counter-clockwise arc, outside that of a clockwise one.
            let mut best = (f64::INFINITY, true);
            for e in c.elements() {
                let d = e.distance_to(p);
                if d < best.0 {
                    let left = match e {
                        Element::Line(s) => (s.end - s.start).cross(p - s.start) > 0.0,
                        Element::Arc(a) => (p.distance(a.centre) < a.radius) == (a.sweep > 0.0),
                    };
                    best = (d, left);
                }
            }
            if best.1 { best.0 } else { -best.0 }
        }
    }
}

/// Newton steps stop when the anomaly moves by less than this (radians): far below what moves a
/// point of a 1 m ellipse by 1e-9 mm.
const ANOMALY_STEP_LIMIT: f64 = 1e-13;

/// The most Newton steps taken from a hint; from the previous sample's anomaly two or three
/// suffice.
const NEWTON_STEPS: usize = 8;

/// The anomaly `t` at which `|p − O_d(t)|` has its minimum near `t0`, for any inset `d` below
/// the smallest radius of curvature: the parallel curve shares the ellipse's normals, so that is
/// where `h(t) = (P(t) − q)·P′(t)` vanishes (`q` is `p` in the ellipse's own frame, `P(t) =
/// (a cos t, b sin t)`), with `h′(t) = |P′|² − (P − q)·P > 0`. `None` when a step finds
/// `h′ ≤ 0` (not a minimum), moves more than a quarter turn, or the steps do not settle.
fn nearest_anomaly(e: &Ellipse, p: Point, t0: f64) -> Option<f64> {
    let (a, b) = (e.a(), e.b());
    let q = (p - e.centre()).rotated(-e.angle());
    let mut t = t0;
    for _ in 0..NEWTON_STEPS {
        let (s, c) = t.sin_cos();
        let (px, py) = (a * c - q.x, b * s - q.y);
        let (dx, dy) = (-a * s, b * c);
        let h = px * dx + py * dy;
        let slope = dx * dx + dy * dy - (px * a * c + py * b * s);
        if slope.is_nan() || slope <= 0.0 {
            return None;
        }
        let step = h / slope;
        t -= step;
        if (t - t0).abs() > FRAC_PI_2 {
            return None;
        }
        if step.abs() < ANOMALY_STEP_LIMIT {
            return Some(t);
        }
    }
    None
}

/// How far a run of moves strays to each side of the exact curve it stands for.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SideDeviation {
    /// The largest distance of a point of the moves from the exact curve on the scrap side (the
    /// left of travel for a climb cut, the right for a conventional one), mm; 0 when no point
    /// lies there.
    pub scrap_side: f64,
    /// The largest distance on the part side (the right of travel for a climb cut, the left for
    /// a conventional one), mm; 0 when no point lies there.
    pub part_side: f64,
}

/// The deviation of the run of `moves` from `start` on each side of `exact`, with the scrap on
/// the left of travel (climb cuts; use [`measure_with_sides`] for a cut whose scrap is on the
/// right), by the same dense sampling of the moves as [`measure_deviation`] (16 points per line,
/// 64 per arc). Each sample's side is taken along the exact curve's normal at its nearest point
/// (ellipse paths), or from the nearest piece (contours: left of a line, inside or outside an
/// arc's circle). The
/// curve-to-moves direction of [`measure_deviation`] has no side and is not repeated here.
pub fn measure_sides(start: Point, moves: &[Move], exact: &ExactPath) -> SideDeviation {
    measure_with_sides(start, moves, exact, true).1
}

/// Largest distance from the curve samples to the moves. Both run the same way, so each
/// sample's nearest move is looked for among the seven around the previous one's. A local
/// answer can only be too large, never too small; the first sample and any answer longer than
/// its move get a full scan.
///
/// The previous sample's move is measured first; the others of the seven only where their box
/// lies no farther than the best so far (a box is never farther than its move), and of equally
/// near moves the first in the order `j − 3 … j + 3` is kept, as a scan of all seven would.
fn distance_to_pieces_in_order(samples: &[Point], segments: &[Element]) -> f64 {
    let n = segments.len();
    let boxes: Vec<Option<Bounds>> = segments
        .iter()
        .map(|e| bounds_of_elements(std::slice::from_ref(e)))
        .collect();
    let mut j = 0usize;
    let mut worst: f64 = 0.0;
    for (i, p) in samples.iter().enumerate() {
        // (distance, place in the order j − 3 … j + 3, index)
        let first = segments[j].distance_to(*p);
        let (mut best, mut best_k, mut best_j) = (first, 3usize, j);
        for k in (0..7).filter(|&k| k != 3) {
            let idx = (j + n + k - 3) % n;
            if boxes[idx].is_some_and(|b| b.distance_to(*p) > best) {
                continue;
            }
            let d = segments[idx].distance_to(*p);
            if d < best || (d == best && k < best_k) {
                (best, best_k, best_j) = (d, k, idx);
            }
        }
        if i == 0 || best > segments[best_j].length() {
            for (idx, s) in segments.iter().enumerate() {
                let d = s.distance_to(*p);
                if d < best {
                    best = d;
                    best_j = idx;
                }
            }
        }
        j = best_j;
        worst = worst.max(best);
    }
    worst
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn newton_finds_the_nearest_point_of_the_parallel_curve() {
        // Against a dense search over the anomaly (the shared normal of docs/sources.md M11), for
        // points within 0.05 mm either side of the parallel curve, started from the
        // neighbouring anomaly as the measurement does.
        for (a, b, inset) in [
            (50.0, 20.0, 3.0),
            (50.0, 49.0, 3.0),
            (100.0, 10.0, 0.9),
            (30.0, 3.0, 0.2),
            (50.0, 20.0, -3.0),
        ] {
            let e = Ellipse::new(Point::new(7.0, -3.0), a, b, 0.5).unwrap();
            for k in 0..120 {
                let t = TAU * (k as f64 + 0.37) / 120.0;
                let n = e.outward_normal(t);
                for off in [-0.05, 0.0, 0.03] {
                    let p = e.inward_offset_point(t, inset) + n * off;
                    let found = nearest_anomaly(&e, p, t - TAU / 400.0).expect("settles");
                    assert!((found - t).abs() < 0.05, "a stationary point far away");
                    let d = p.distance(e.inward_offset_point(found, inset));
                    let brute = (0..4_000)
                        .map(|j| t - 0.05 + 0.1 * j as f64 / 4_000.0)
                        .map(|u| p.distance(e.inward_offset_point(u, inset)))
                        .fold(f64::INFINITY, f64::min);
                    assert!(d <= brute + 1e-12, "{a}×{b} inset {inset}: {d} > {brute}");
                }
            }
        }
    }
}
