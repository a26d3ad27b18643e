//! The checker's own measurement of how far the written contour of a cut strays from its exact
//! tool-centre path, both ways and on the part side.
//!
//! It shares no code with the fit's measurement (`fit::measure`) and uses another method, so
//! that the two figures can disagree when one of them is wrong:
//!
//! * **Written moves → exact path.** Along each written line or arc (as the controller runs it,
//!   [`Move::point_at`]) the signed distance to the exact path is sampled at [`LINE_SAMPLES`] or
//!   [`ARC_SAMPLES`] evenly spaced points, and every sample that is a local maximum of the
//!   distance is refined by Brent's search in the bracket between its neighbours,
//!   stopped when the bracket is [`PARAMETER_TOLERANCE`] of the move long. Brackets that cannot
//!   beat the largest sample (the distance changes by at most the move's length times the step,
//!   being 1-Lipschitz) are skipped.
//! * **Exact path → written moves.** The exact path is sampled ([`PATH_SAMPLES_PER_MOVE`] per
//!   written move, at least [`MIN_PATH_SAMPLES`]) and each sample projected onto every written
//!   move exactly (a line by clamped projection, an arc along the ray from its centre), the
//!   nearest taken; local maxima are refined the same way.
//!
//! The distance to an ellipse's parallel curve at inset `d` is `|s(p) − d|`, where `s` is the
//! signed distance to the ellipse itself (positive inside; [`Ellipse::distance_to`], Eberly's
//! bisection): `s` is 1-Lipschitz, so no point of the level set `s = d` is nearer, and the point
//! on `p`'s normal reaches it. This is exact while `d` and `s(p)` stay below the smallest radius
//! of curvature `b²/a` (the planner refuses a cut that would gouge there) and a lower bound
//! otherwise. A contour's distance is the least over its lines and arcs; its side is taken from
//! whether the point lies inside the contour (winding number) and which way the contour runs.
//!
//! # Accuracy
//!
//! Every figure is a distance actually reached by a point of the moves or of the exact path, so
//! it is never above the true largest deviation (beyond floating-point error, about 1e-12 mm).
//! It is below it by no more than the search's tolerance: a parameter error of 1e-6 of a
//! move lowers a smooth peak by half the distance's curvature times (1e-6 of the move's length)²,
//! about 3e-9 mm for a 50 mm move whose distance bends with a radius of 0.4 mm, when each lobe of
//! the distance spans at least two sample steps;
//! a narrower lobe can hide at most the move's length times the step (1/12 of a line, 1/40 of an
//! arc). Arcs are projected onto their circle at the radius interpolated between start and end
//! radius; the written radius mismatch (reported separately, at most 0.002 mm by the writer's
//! rule) changes a projection by a second-order amount only.

use crate::geom::search::brent_max;
use crate::geom::{Bounds, BoxGrid, Contour, Element, Ellipse, ExactPath, Move, Point};
use serde::Serialize;
use std::f64::consts::{FRAC_PI_2, TAU};

/// Samples along each written line before refinement.
pub const LINE_SAMPLES: usize = 12;

/// Samples along each written arc before refinement (an arc of a spline spans several lobes).
pub const ARC_SAMPLES: usize = 40;

/// Samples of the exact path per written move.
pub const PATH_SAMPLES_PER_MOVE: usize = 8;

/// The fewest samples of the exact path.
pub const MIN_PATH_SAMPLES: usize = 256;

/// A peak's search stops when its bracket is about this fraction of the parameter range.
pub const PARAMETER_TOLERANCE: f64 = 1e-6;

/// How a written contour strays from its exact tool-centre path (mm).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Deviation {
    /// The largest distance either way: from a point of the moves to the path, or from a point
    /// of the path to the moves.
    pub both_ways: f64,
    /// The largest distance of a point of the moves from the path on the part side (the right
    /// of travel when the scrap is on the left); 0 when no point lies there.
    pub part_side: f64,
    /// The index (into the moves) of the move at the largest distance either way.
    pub worst_move: usize,
    /// The index of the move reaching farthest onto the part side.
    pub worst_part_move: usize,
    /// The largest distance from a point of the moves to the path (the one way alone).
    pub moves_to_path: f64,
}

/// Measures the run of `moves` from `start` against `exact` (see the module docs), with the
/// scrap on the left of travel when `scrap_left`. `None` when there are no moves.
pub fn measure(
    start: Point,
    moves: &[Move],
    exact: &ExactPath,
    scrap_left: bool,
) -> Option<Deviation> {
    measure_pieces(&starts_of(start, moves), moves, exact, scrap_left)
}

/// The start point of each of `moves` run one after the other from `start`.
fn starts_of(start: Point, moves: &[Move]) -> Vec<Point> {
    let mut from = Vec::with_capacity(moves.len());
    let mut at = start;
    for m in moves {
        from.push(at);
        at = m.end();
    }
    from
}

/// [`measure`] of moves that need not follow one another: move `i` runs from `starts[i]` (a
/// program read back may cut one contour in several runs, passes or pieces). The path is
/// measured against all of them together. `None` when there are no moves or the two lists
/// differ in length.
pub fn measure_pieces(
    starts: &[Point],
    moves: &[Move],
    exact: &ExactPath,
    scrap_left: bool,
) -> Option<Deviation> {
    if moves.is_empty() || starts.len() != moves.len() {
        return None;
    }
    let written = Written::from_starts(starts, moves);
    let target = Target::of(exact);
    // The signed distance along every written move, sampled once for both figures.
    let signed = sample_signed(&written, &target);
    let (moves_to_path, worst_move) = written_to_exact(&written, &target, &signed, |sd| sd.abs());
    // The part side is the right of travel for a climb cut (scrap on the left).
    let side = if scrap_left { -1.0 } else { 1.0 };
    let (part_side, worst_part_move) = written_to_exact(&written, &target, &signed, |sd| side * sd);
    let (path_to_moves, nearest) = exact_to_written(&written, exact);
    let (both_ways, worst_move) = if path_to_moves > moves_to_path {
        (path_to_moves, nearest)
    } else {
        (moves_to_path, worst_move)
    };
    Some(Deviation {
        both_ways,
        part_side: part_side.max(0.0),
        worst_move,
        worst_part_move,
        moves_to_path,
    })
}

/// The distance from `p` to the exact path (the measure's own, unsigned).
pub fn path_distance(exact: &ExactPath, p: Point) -> f64 {
    Target::of(exact).signed_left(p).abs()
}

/// The exact path as a signed distance: positive on the left of travel.
enum Target<'a> {
    Parallel {
        ellipse: &'a Ellipse,
        inset: f64,
        ccw: bool,
    },
    Contour {
        contour: &'a Contour,
        ccw: bool,
    },
}

impl<'a> Target<'a> {
    fn of(exact: &'a ExactPath) -> Self {
        match exact {
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                clockwise,
                ..
            } => Target::Parallel {
                ellipse,
                inset: *inset,
                ccw: !clockwise,
            },
            ExactPath::Contour(contour) => Target::Contour {
                contour,
                ccw: contour.is_ccw(),
            },
        }
    }

    /// Signed distance from `p` to the path: positive on the left of travel.
    fn signed_left(&self, p: Point) -> f64 {
        match *self {
            Target::Parallel {
                ellipse,
                inset,
                ccw,
            } => {
                let (d, _) = ellipse.distance_to(p);
                let inside = if ellipse.contains(p) { d } else { -d };
                // Positive: farther inside than the path; the inside is the left of a
                // counter-clockwise run.
                let v = inside - inset;
                if ccw { v } else { -v }
            }
            Target::Contour { contour, ccw } => {
                let d = contour
                    .elements()
                    .iter()
                    .map(|e| match e {
                        Element::Line(s) => s.distance_to(p),
                        Element::Arc(a) => a.distance_to(p),
                    })
                    .fold(f64::INFINITY, f64::min);
                if contour.contains(p) == ccw { d } else { -d }
            }
        }
    }
}

/// The written moves with their start points, arcs' radii and angles worked out once, and a
/// grid over their bounding boxes (so that the nearest move is found among the few near).
struct Written<'a> {
    moves: &'a [Move],
    shapes: Vec<Shape>,
    grid: BoxGrid,
}

/// A written move as the controller runs it: a line, or an arc about `centre` from angle `a0`
/// through `sweep` (signed) with the radius going linearly from `r0` to `r1`.
#[derive(Clone, Copy)]
enum Shape {
    Line {
        from: Point,
        to: Point,
    },
    Arc {
        centre: Point,
        r0: f64,
        r1: f64,
        a0: f64,
        sweep: f64,
    },
}

impl Shape {
    fn of(from: Point, m: &Move) -> Shape {
        match *m {
            Move::Line { to } => Shape::Line { from, to },
            Move::Arc { to, centre, .. } => Shape::Arc {
                centre,
                r0: from.distance(centre),
                r1: to.distance(centre),
                a0: (from - centre).angle(),
                sweep: m.sweep(from),
            },
        }
    }

    /// The point at share `u` of the move.
    fn point_at(&self, u: f64) -> Point {
        match *self {
            Shape::Line { from, to } => from.lerp(to, u),
            Shape::Arc {
                centre,
                r0,
                r1,
                a0,
                sweep,
            } => {
                let (s, c) = (a0 + u * sweep).sin_cos();
                let r = r0 + u * (r1 - r0);
                Point::new(centre.x + r * c, centre.y + r * s)
            }
        }
    }

    fn length(&self) -> f64 {
        match *self {
            Shape::Line { from, to } => from.distance(to),
            Shape::Arc { r0, sweep, .. } => r0 * sweep.abs(),
        }
    }

    /// The exact distance from `p` to the move.
    fn distance(&self, p: Point) -> f64 {
        match *self {
            Shape::Line { from, to } => {
                let v = to - from;
                let len2 = v.length_squared();
                let t = if len2 > 0.0 {
                    ((p - from).dot(v) / len2).clamp(0.0, 1.0)
                } else {
                    0.0
                };
                p.distance(from.lerp(to, t))
            }
            Shape::Arc {
                centre, a0, sweep, ..
            } => {
                let rel = if sweep >= 0.0 {
                    ((p - centre).angle() - a0).rem_euclid(TAU)
                } else {
                    (a0 - (p - centre).angle()).rem_euclid(TAU)
                };
                if p != centre && rel <= sweep.abs() {
                    p.distance(self.point_at(rel / sweep.abs()))
                } else {
                    p.distance(self.point_at(0.0))
                        .min(p.distance(self.point_at(1.0)))
                }
            }
        }
    }
}

impl<'a> Written<'a> {
    fn from_starts(from: &[Point], moves: &'a [Move]) -> Self {
        let shapes = moves
            .iter()
            .zip(from)
            .map(|(m, &f)| Shape::of(f, m))
            .collect();
        let boxes = moves
            .iter()
            .zip(from)
            .map(|(m, &f)| {
                let (min, max) = box_of(f, m);
                Bounds { min, max }
            })
            .collect();
        Written {
            moves,
            shapes,
            grid: BoxGrid::new(boxes),
        }
    }

    fn length(&self, i: usize) -> f64 {
        self.shapes[i].length()
    }

    /// The exact distance from `p` to move `i`.
    fn distance(&self, i: usize, p: Point) -> f64 {
        self.shapes[i].distance(p)
    }

    /// The nearest move to `p` and its distance: move `hint`, unless one whose box lies nearer
    /// than it is nearer still (the grid names every such move).
    fn nearest(&self, p: Point, hint: usize) -> (f64, usize) {
        let mut best = (self.distance(hint, p), hint);
        let reach = best.0;
        self.grid.all_near(p, reach, |i| {
            if i != best.1 {
                let d = self.distance(i, p);
                // Ties: the hint, else the first move (as a scan in order would find).
                if d < best.0 || (d == best.0 && best.1 != hint && i < best.1) {
                    best = (d, i);
                }
            }
            true
        });
        best
    }
}

/// The bounding box of move `m` from `from`: its ends and, for an arc, the axis extremes it
/// sweeps through (at the larger of its two radii).
pub(super) fn box_of(from: Point, m: &Move) -> (Point, Point) {
    let mut pts = vec![from, m.end()];
    if let Move::Arc { to, centre, .. } = *m {
        let r = from.distance(centre).max(to.distance(centre));
        let sweep = m.sweep(from);
        let a0 = (from - centre).angle();
        for k in 0..4 {
            let axis = k as f64 * FRAC_PI_2;
            let rel = if sweep >= 0.0 {
                (axis - a0).rem_euclid(TAU)
            } else {
                (a0 - axis).rem_euclid(TAU)
            };
            if rel <= sweep.abs() {
                let (s, c) = axis.sin_cos();
                pts.push(Point::new(centre.x + r * c, centre.y + r * s));
            }
        }
    }
    let lo = pts
        .iter()
        .fold(pts[0], |a, p| Point::new(a.x.min(p.x), a.y.min(p.y)));
    let hi = pts
        .iter()
        .fold(pts[0], |a, p| Point::new(a.x.max(p.x), a.y.max(p.y)));
    (lo, hi)
}

/// The signed distance to the exact path at [`LINE_SAMPLES`] or [`ARC_SAMPLES`] evenly spaced
/// points of each written move, ends included.
fn sample_signed(written: &Written, target: &Target) -> Vec<Vec<f64>> {
    (0..written.moves.len())
        .map(|i| {
            let n = samples_on(&written.moves[i]);
            (0..=n)
                .map(|k| target.signed_left(point_on(written, i, k as f64 / n as f64)))
                .collect()
        })
        .collect()
}

/// The largest `value(signed distance)` over the written moves, and the move reaching it, from
/// the samples `signed` refined about their local maxima.
fn written_to_exact(
    written: &Written,
    target: &Target,
    signed: &[Vec<f64>],
    value: impl Fn(f64) -> f64,
) -> (f64, usize) {
    let samples: Vec<Vec<f64>> = signed
        .iter()
        .map(|s| s.iter().map(|&sd| value(sd)).collect())
        .collect();
    let mut best = samples
        .iter()
        .enumerate()
        .flat_map(|(i, s)| s.iter().map(move |&v| (v, i)))
        .fold((f64::NEG_INFINITY, 0), |a, b| if b.0 > a.0 { b } else { a });
    for (i, s) in samples.iter().enumerate() {
        let f = |u: f64| value(target.signed_left(point_on(written, i, u)));
        let found = refine_peaks(&f, s, written.length(i), best.0);
        if found > best.0 {
            best = (found, i);
        }
    }
    best
}

fn samples_on(m: &Move) -> usize {
    match m {
        Move::Line { .. } => LINE_SAMPLES,
        Move::Arc { .. } => ARC_SAMPLES,
    }
}

fn point_on(written: &Written, i: usize, u: f64) -> Point {
    written.shapes[i].point_at(u)
}

/// The largest distance from a point of `exact` to the written moves, and the move nearest to
/// that point.
fn exact_to_written(written: &Written, exact: &ExactPath) -> (f64, usize) {
    let count = (PATH_SAMPLES_PER_MOVE * written.moves.len()).max(MIN_PATH_SAMPLES);
    let pieces = path_pieces(exact, count);
    let mut hint = 0;
    let mut sampled = Vec::with_capacity(pieces.len());
    for (piece, n, _) in &pieces {
        let values: Vec<f64> = (0..=*n)
            .map(|k| {
                let (d, i) = written.nearest(piece(k as f64 / *n as f64), hint);
                hint = i;
                d
            })
            .collect();
        sampled.push(values);
    }
    let mut best = sampled.iter().flatten().copied().fold(0.0, f64::max);
    for ((piece, _, speed), values) in pieces.iter().zip(&sampled) {
        let f = |u: f64| written.nearest(piece(u), hint).0;
        best = best.max(refine_peaks(&f, values, *speed, best));
    }
    // The move nearest the worst point, found again for the message.
    let worst = pieces
        .iter()
        .zip(&sampled)
        .flat_map(|((piece, n, _), values)| {
            values
                .iter()
                .enumerate()
                .map(move |(k, &v)| (v, piece(k as f64 / *n as f64)))
        })
        .fold((f64::NEG_INFINITY, Point::ORIGIN), |a, b| {
            if b.0 > a.0 { b } else { a }
        });
    (best, written.nearest(worst.1, 0).1)
}

/// The largest spacing of the path's samples when looking for stretches left uncut (mm): a gap
/// in the cutting moves longer than this and twice the limit is always found.
pub const UNCUT_SPACING: f64 = 0.2;

/// A stretch of the exact path farther than a limit from every written move: left uncut.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Uncut {
    /// Where the stretch begins and ends (mm), as sampled.
    pub from: Point,
    pub to: Point,
    /// Its length along the path (mm), from the samples (a chord sum: at most the true length).
    pub length: f64,
    /// The largest distance from a sample of the stretch to the moves (mm).
    pub gap: f64,
}

/// The stretches of `exact` farther than `limit` from every move (`starts` and `moves` as in
/// [`measure_pieces`]), and the largest distance from the other samples to the moves; found on
/// samples of the path at most [`UNCUT_SPACING`] apart (and at least [`MIN_PATH_SAMPLES`],
/// [`PATH_SAMPLES_PER_MOVE`] per move): a shorter stretch can be missed, and is then within the
/// deviation [`measure_pieces`] reports.
pub fn uncut_stretches(
    starts: &[Point],
    moves: &[Move],
    exact: &ExactPath,
    limit: f64,
) -> (Vec<Uncut>, f64) {
    if moves.is_empty() || starts.len() != moves.len() {
        return (Vec::new(), 0.0);
    }
    let written = Written::from_starts(starts, moves);
    // Samples at most UNCUT_SPACING apart (the path's length from a 64-chord polyline per
    // piece, a little short of the true length).
    let length: f64 = path_pieces(exact, 64)
        .iter()
        .map(|(piece, n, _)| {
            (1..=*n)
                .map(|k| piece((k - 1) as f64 / *n as f64).distance(piece(k as f64 / *n as f64)))
                .sum::<f64>()
        })
        .sum();
    let count = (PATH_SAMPLES_PER_MOVE * moves.len())
        .max(MIN_PATH_SAMPLES)
        .max((length / UNCUT_SPACING).ceil().min(1e7) as usize);
    // Every sample: its distance along the path, its point, its distance to the moves.
    let mut samples: Vec<(f64, Point, f64)> = Vec::with_capacity(count + 64);
    let mut along = 0.0;
    let mut hint = 0;
    for (piece, n, _) in path_pieces(exact, count) {
        for k in 0..=n {
            let p = piece(k as f64 / n as f64);
            let (d, i) = written.nearest(p, hint);
            hint = i;
            if let Some(&(_, q, _)) = samples.last() {
                along += q.distance(p);
            }
            samples.push((along, p, d));
        }
    }
    let mut out: Vec<Uncut> = Vec::new();
    let mut spans: Vec<(f64, f64)> = Vec::new();
    let mut k = 0;
    while k < samples.len() {
        if samples[k].2 <= limit {
            k += 1;
            continue;
        }
        let first = k;
        while k < samples.len() && samples[k].2 > limit {
            k += 1;
        }
        let run = &samples[first..k];
        spans.push((run[0].0, run[run.len() - 1].0));
        out.push(Uncut {
            from: run[0].1,
            to: run[run.len() - 1].1,
            length: run[run.len() - 1].0 - run[0].0,
            gap: run.iter().map(|r| r.2).fold(0.0, f64::max),
        });
    }
    // The rest of the path, leaving out the shoulders of each stretch (within twice the limit
    // and a spacing along the path of its ends, where the distance climbs to the limit; a
    // stretch at one end of the path has its shoulder at the other end too).
    let shoulder = 2.0 * limit + UNCUT_SPACING;
    let mut skip = vec![false; samples.len()];
    let mut mark = |lo: f64, hi: f64| {
        let from = samples.partition_point(|x| x.0 < lo);
        let to = samples.partition_point(|x| x.0 <= hi);
        for m in &mut skip[from..to] {
            *m = true;
        }
    };
    for &(a, b) in &spans {
        mark(a - shoulder, b + shoulder);
        if a <= 0.0 {
            mark(along - shoulder, along);
        }
        if b >= along {
            mark(0.0, shoulder);
        }
    }
    let covered = samples
        .iter()
        .zip(&skip)
        .filter(|(x, skipped)| x.2 <= limit && !**skipped)
        .map(|(x, _)| x.2)
        .fold(0.0, f64::max);
    // A stretch running through the path's start joins the one that ended it.
    if out.len() > 1
        && samples.first().is_some_and(|s| s.2 > limit)
        && samples.last().is_some_and(|s| s.2 > limit)
        && let Some(last) = out.pop()
    {
        out[0].from = last.from;
        out[0].length += last.length;
        out[0].gap = out[0].gap.max(last.gap);
    }
    (out, covered)
}

/// A piece of the exact path as a point function on [0, 1].
type PathPiece<'a> = Box<dyn Fn(f64) -> Point + 'a>;

/// The exact path as pieces on [0, 1], each with its sample count and a bound on its speed
/// (length per unit parameter) for the refinement's pruning.
fn path_pieces(exact: &ExactPath, count: usize) -> Vec<(PathPiece<'_>, usize, f64)> {
    match exact {
        ExactPath::EllipseParallel {
            ellipse,
            inset,
            start,
            ..
        } => {
            // |O_d′(t)| = |P′(t)| |1 − d κ(t)| ≤ a (1 + |d| a / b²).
            let (a, b) = (ellipse.a(), ellipse.b());
            let speed = TAU * a * (1.0 + inset.abs() * a / (b * b));
            let piece: PathPiece =
                Box::new(move |u: f64| ellipse.inward_offset_point(start + TAU * u, *inset));
            vec![(piece, count, speed)]
        }
        ExactPath::Contour(c) => {
            let total: f64 = c.elements().iter().map(Element::length).sum();
            c.elements()
                .iter()
                .map(|e| {
                    let n = ((count as f64 * e.length() / total).ceil() as usize).max(8);
                    let piece: PathPiece = match e {
                        Element::Line(s) => Box::new(move |u| s.point_at(u)),
                        Element::Arc(a) => Box::new(move |u| a.point_at(u)),
                    };
                    (piece, n, e.length())
                })
                .collect()
        }
    }
}

/// The largest value of `f` on [0, 1] near the local maxima among `samples` (taken at `k / n`),
/// each refined by Brent's search between its neighbours; a bracket is skipped when `f`,
/// changing by at most `speed` per unit parameter, cannot reach above `floor` in it.
fn refine_peaks(f: &dyn Fn(f64) -> f64, samples: &[f64], speed: f64, floor: f64) -> f64 {
    let n = samples.len() - 1;
    let h = 1.0 / n as f64;
    let mut best = f64::NEG_INFINITY;
    for k in 0..=n {
        let v = samples[k];
        let left = if k > 0 {
            samples[k - 1]
        } else {
            f64::NEG_INFINITY
        };
        let right = if k < n {
            samples[k + 1]
        } else {
            f64::NEG_INFINITY
        };
        if v < left || v < right || v + speed * h < floor.max(best) {
            continue;
        }
        let lo = (k as f64 - 1.0).max(0.0) * h;
        let hi = (k as f64 + 1.0).min(n as f64) * h;
        let x = k as f64 * h;
        let (peak, _) = brent_max(&|u| f(u), lo, hi, x, v, 0.25 * PARAMETER_TOLERANCE);
        best = best.max(peak).max(v);
    }
    best
}
