//! Stage 5, fit: approximates each exact tool-centre path by moves the controller understands,
//! within the tolerance, and measures the deviation it achieved.

use crate::geom::Point;
use crate::plan::{CutSide, FeatureKind};
pub use moves::Move;
use serde::Serialize;

/// One feature's cut, ready for a post-processor: the tool enters at `plunge`, moves in a
/// straight line to `start`, then runs `moves` (lines and arcs), ending back at `start`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FittedCut {
    /// The feature's name, e.g. `bay 1`, `hole 2`, `outline`.
    pub name: String,
    pub kind: FeatureKind,
    pub side: CutSide,
    /// Where the tool enters the material, in the scrap (mm).
    pub plunge: Point,
    /// Where the contour starts and ends (mm).
    pub start: Point,
    /// The feed moves of the tool centre along the contour (mm).
    pub moves: Vec<Move>,
    /// The tolerance the fit was asked to keep (mm).
    pub tolerance: f64,
    /// The largest distance between the emitted path and the exact tool-centre curve, measured
    /// by dense sampling in both directions (mm).
    pub measured_deviation: f64,
    /// The largest change of direction between consecutive moves (degrees).
    pub largest_kink_deg: f64,
}

impl FittedCut {
    /// A cut made of straight moves through `points` (the first is the start; a closed run ends
    /// where it starts).
    #[allow(clippy::too_many_arguments)]
    pub fn from_points(
        name: &str,
        kind: FeatureKind,
        side: CutSide,
        plunge: Point,
        points: &[Point],
        tolerance: f64,
        measured_deviation: f64,
    ) -> FittedCut {
        let start = points.first().copied().unwrap_or(plunge);
        let moves: Vec<Move> = points.iter().skip(1).map(|&to| Move::Line { to }).collect();
        FittedCut {
            name: name.to_string(),
            kind,
            side,
            plunge,
            start,
            largest_kink_deg: moves::largest_kink_deg(start, &moves),
            moves,
            tolerance,
            measured_deviation,
        }
    }

    /// The start and every move's end point, in order (for lines only, the polyline).
    pub fn end_points(&self) -> Vec<Point> {
        std::iter::once(self.start)
            .chain(self.moves.iter().map(Move::end))
            .collect()
    }
}

mod measure;
pub mod moves;

pub use measure::measure_deviation;

use crate::chain::{Contour, Element};
use crate::geom::{Ellipse, Segment};
use crate::plan::{ExactPath, Plan, PlannedCut};
use std::f64::consts::{FRAC_PI_2, TAU};

/// The smallest tolerance accepted (mm): below this the fixed-decimal output cannot carry it.
pub const MIN_TOLERANCE: f64 = 1e-5;

/// The share of the tolerance the construction aims for; the rest covers the accuracy of the
/// search that places each vertex (≈1e-12 mm). The measured deviation is reported separately.
const TARGET_SHARE: f64 = 1.0 - 1e-6;

/// Why a path could not be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FitError {
    #[error(
        "the tolerance must be at least {MIN_TOLERANCE} mm and finite (got {0}); the usual value \
         is 0.01 mm"
    )]
    BadTolerance(f64),
    #[error(
        "{feature}: the fitted path deviates {measured:.6} mm from the exact curve, more than the \
         tolerance {tolerance} mm; this is a bug, please report it with the drawing"
    )]
    ToleranceExceeded {
        feature: String,
        measured: f64,
        tolerance: f64,
    },
}

/// Fits every planned cut with straight feed moves within `tolerance` (mm).
pub fn fit_plan(plan: &Plan, tolerance: f64) -> Result<Vec<FittedCut>, FitError> {
    plan.cuts.iter().map(|c| fit_cut(c, tolerance)).collect()
}

/// Fits one cut with straight feed moves whose vertices lie on the exact tool-centre curve, so
/// the deviation is the sagitta of each chord, kept at or below `tolerance` (guaranteed up to
/// the accuracy of the vertex search, ≈1e-12 mm), and then measured independently by dense
/// sampling ([`measure_deviation`]); a measurement above the tolerance is an error.
pub fn fit_cut(cut: &PlannedCut, tolerance: f64) -> Result<FittedCut, FitError> {
    if !(tolerance >= MIN_TOLERANCE && tolerance.is_finite()) {
        return Err(FitError::BadTolerance(tolerance));
    }
    let path = match &cut.path {
        ExactPath::EllipseParallel {
            ellipse,
            inset,
            start,
            clockwise,
        } => {
            let mut points = flatten_ellipse_offset(ellipse, *inset, *start, tolerance);
            if *clockwise {
                points.reverse();
            }
            points
        }
        ExactPath::Contour(c) => flatten_contour(c, tolerance),
    };
    let mut fitted = FittedCut::from_points(
        &cut.name, cut.kind, cut.side, cut.plunge, &path, tolerance, 0.0,
    );
    let measured = measure_deviation(fitted.start, &fitted.moves, &cut.path);
    if measured > tolerance {
        return Err(FitError::ToleranceExceeded {
            feature: cut.name.clone(),
            measured,
            tolerance,
        });
    }
    fitted.measured_deviation = measured;
    Ok(fitted)
}

/// Chords of the parallel curve `O_d(t) = P(t) − d N(t)` of `e` (inside for `d > 0`, outside for
/// `d < 0`), counter-clockwise from anomaly `start`, vertices on the curve, chosen greedily: from
/// each vertex the next is the farthest along the curve whose chord stays within `tolerance` of
/// the arc it cuts off. The curve is convex when `d < b²/a` (its tangent turns with the
/// ellipse's, `O′ = P′(1 − dκ)`), so each chord's deviation is the largest distance of the arc
/// from the chord's line, found by golden-section search, and grows with the chord.
pub fn flatten_ellipse_offset(e: &Ellipse, d: f64, start: f64, tolerance: f64) -> Vec<Point> {
    let curve = |t: f64| e.inward_offset_point(t, d);
    let target = tolerance * TARGET_SHARE;
    let end = start + TAU;
    let mut t0 = start;
    let mut points = vec![curve(start)];
    while t0 < end {
        let hi = (t0 + FRAC_PI_2).min(end);
        let t1 = if chord_deviation(&curve, t0, hi) <= target {
            hi
        } else {
            let (mut lo, mut hi) = (t0, hi);
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if chord_deviation(&curve, t0, mid) <= target {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            lo
        };
        // A chord too short to advance would mean a tolerance below f64 resolution, which
        // MIN_TOLERANCE rules out; guard anyway so the loop always ends.
        let t1 = if t1 <= t0 { (t0 + 1e-6).min(end) } else { t1 };
        points.push(if t1 >= end { points[0] } else { curve(t1) });
        t0 = t1;
    }
    points
}

/// Largest distance of the curve between `t0` and `t1` from the chord's line (golden-section
/// search; the distance is unimodal on a convex arc turning less than π).
fn chord_deviation(curve: &impl Fn(f64) -> Point, t0: f64, t1: f64) -> f64 {
    let (p, q) = (curve(t0), curve(t1));
    let Some(n) = (q - p).normalized().map(|v| v.perp()) else {
        return 0.0;
    };
    let dist = |t: f64| n.dot(curve(t) - p).abs();
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let (mut a, mut b) = (t0, t1);
    let (mut c, mut dd) = (b - g * (b - a), a + g * (b - a));
    let (mut fc, mut fd) = (dist(c), dist(dd));
    for _ in 0..80 {
        if fc > fd {
            b = dd;
            dd = c;
            fd = fc;
            c = b - g * (b - a);
            fc = dist(c);
        } else {
            a = c;
            c = dd;
            fc = fd;
            dd = a + g * (b - a);
            fd = dist(dd);
        }
        if b - a < 1e-15 * (1.0 + t1.abs()) {
            break;
        }
    }
    fc.max(fd)
}

/// Lines as they are; each arc by equal chords with vertices on the arc, as many as needed for
/// the sagitta `R (1 − cos(θ/2))` of each to stay within `tolerance`.
pub fn flatten_contour(c: &Contour, tolerance: f64) -> Vec<Point> {
    let mut points = Vec::new();
    let Some(first) = c.start_point() else {
        return points;
    };
    points.push(first);
    let target = tolerance * TARGET_SHARE;
    for e in &c.elements {
        match e {
            Element::Line(s) => points.push(s.end),
            Element::Arc(a) => {
                let max_step = if target >= a.radius {
                    FRAC_PI_2
                } else {
                    (2.0 * (1.0 - target / a.radius).acos()).min(FRAC_PI_2)
                };
                let n = (a.sweep.abs() / max_step).ceil().max(1.0) as usize;
                for k in 1..=n {
                    points.push(a.point_at(k as f64 / n as f64));
                }
            }
        }
    }
    // Close exactly: the last vertex is the first.
    if let Some(last) = points.last_mut() {
        *last = first;
    }
    points.dedup_by(|a, b| Segment::new(*a, *b).length() == 0.0);
    points
}
