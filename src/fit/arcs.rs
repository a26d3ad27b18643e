//! Circular arcs with as few moves as a tolerance band allows: a greedy arc spline.
//!
//! Each arc runs between two points of the band's middle curve (the exact curve itself for a
//! two-sided band) and bends by the radius that makes its largest deviation on either side equal
//! (the minimax radius; for a curve whose curvature changes linearly that is the curvature at
//! mid-span, with error `|κ′| h³ / (72√3)`, STANDARDS-AND-PRACTICE §3.3). From the start, each arc
//! covers the longest stretch whose minimax error fits in half the band's width, found by
//! bisection on the stretch; then the stretches are evened out so that all arcs share one error
//! (the greedy method leaves a short last stretch, whose arc meets its neighbours at a visible
//! angle, up to 1.4° at 0.01 mm on the 50 × 20 ellipse, STANDARDS-AND-PRACTICE §3.4). The count
//! tracks `∫ (|κ′| / (72√3 ε))^{1/3} ds`.
//!
//! Neighbouring arcs share their end points but not their tangents: the spline is continuous, with
//! small kinks, which the caller measures and reports.

use super::band::{ConvexCurve, golden_min};
use super::moves::Move;
use crate::geom::{Point, Vec2};
use std::f64::consts::PI;

/// Samples of the curve per stretch when measuring an arc against it.
const SAMPLES: usize = 48;

/// The largest sweep of one arc: arcs that would reach 180° are split (R-format controllers
/// cannot tell a half circle from its complement, and some refuse it).
pub(crate) const MAX_SWEEP: f64 = PI * 179.0 / 180.0;

/// The largest parameter stretch tried for one arc.
const MAX_STRETCH: f64 = PI;

/// One arc of the spline: the stretch `[t0, t1]` of the curve's parameter and the arc's
/// curvature `k` (1/mm, positive: counter-clockwise).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Span {
    pub t0: f64,
    pub t1: f64,
    pub k: f64,
    /// The largest distance between the arc and the curve's stretch, measured radially (mm).
    pub error: f64,
}

/// An arc through two points, bent to curvature `k` (signed, positive counter-clockwise).
#[derive(Debug, Clone, Copy)]
struct Chord {
    a: Point,
    b: Point,
    length: f64,
    dir: Vec2,
}

impl Chord {
    fn new(a: Point, b: Point) -> Option<Chord> {
        let v = b - a;
        let length = v.length();
        let dir = v.normalized()?;
        Some(Chord { a, b, length, dir })
    }

    /// The largest |k| whose arc sweeps at most [`MAX_SWEEP`].
    fn k_limit(&self) -> f64 {
        2.0 * (0.5 * MAX_SWEEP).sin() / self.length
    }

    /// The unit normal at the arc's start pointing towards the centre side (left of the
    /// start tangent): the start tangent is the chord turned by half the sweep, `asin(k h / 2)`.
    fn start_normal(&self, k: f64) -> Vec2 {
        let half_sweep = (0.5 * k * self.length).clamp(-1.0, 1.0).asin();
        self.dir.rotated(-half_sweep).perp()
    }

    /// Signed distance of `p` from the circle of the arc with curvature `k`, positive to the right
    /// of travel: `(k|w|² − 2 w·n) / (1 + |k w − n|)`, `w = p − a`, `n` the start normal. It is
    /// `|p − c| − R` for `k > 0` written without the large, nearly equal terms, and tends to the
    /// signed distance from the chord's line as `k → 0`.
    fn offset(&self, n: Vec2, k: f64, p: Point) -> f64 {
        let w = p - self.a;
        (k * w.length_squared() - 2.0 * w.dot(n)) / (1.0 + (w * k - n).length())
    }

    /// The centre of the arc with curvature `k ≠ 0`: on the chord's perpendicular bisector, at
    /// `(h/2) cot(half sweep)` to the left for `k > 0`, so both ends lie on the circle to rounding.
    fn center(&self, k: f64) -> Point {
        let half_sweep = (0.5 * k * self.length).clamp(-1.0, 1.0).asin();
        self.a.midpoint(self.b) + self.dir.perp() * (0.5 * self.length / half_sweep.tan())
    }
}

/// The minimax arc between the points of `curve` (at outward offset `s`) at `t0` and `t1`, and
/// its error; `None` when no arc of sweep below [`MAX_SWEEP`] can balance the two sides.
///
/// The error of the arc at a curve point, `e(k)`, falls as the arc bends further (`k` grows) for
/// every point between the ends, so `F(k) = max e + min e` falls too and its root is the radius
/// where the outward and inward lobes are equal; it is found by the Illinois variant of regula
/// falsi. The extremes are then placed between the samples by a parabola through the three around
/// each (`precise` refines them instead by golden-section search on the curve itself).
pub(crate) fn fit_span(
    curve: &impl ConvexCurve,
    s: f64,
    t0: f64,
    t1: f64,
    precise: bool,
) -> Option<Span> {
    let chord = Chord::new(curve.point(t0, s), curve.point(t1, s))?;
    let step = (t1 - t0) / SAMPLES as f64;
    let samples: Vec<Point> = (1..SAMPLES)
        .map(|i| curve.point(t0 + step * i as f64, s))
        .collect();
    let extremes = |k: f64| {
        let n = chord.start_normal(k);
        let mut hi = (f64::NEG_INFINITY, 0usize);
        let mut lo = (f64::INFINITY, 0usize);
        for (i, p) in samples.iter().enumerate() {
            let e = chord.offset(n, k, *p);
            if e > hi.0 {
                hi = (e, i);
            }
            if e < lo.0 {
                lo = (e, i);
            }
        }
        (hi, lo)
    };
    // F(k) = max e + min e, and the spread max e − min e that sets how exactly F must vanish.
    let balance = |k: f64| {
        let (hi, lo) = extremes(k);
        (hi.0 + lo.0, hi.0 - lo.0)
    };
    let k_max = chord.k_limit();
    // Start from the circle through the ends and the middle sample, which the minimax arc is
    // near; widen to [0, k_max] when that does not bracket the root.
    let mid = samples[samples.len() / 2];
    let k3 =
        2.0 * (mid - chord.a).cross(chord.dir) / (mid.distance(chord.a) * mid.distance(chord.b));
    let (mut a, mut b) = (0.5 * k3, (1.5 * k3).min(k_max));
    let (mut fa, _) = balance(a);
    let (mut fb, _) = balance(b);
    if !(a > 0.0 && a < b && fa >= 0.0 && fb <= 0.0) {
        a = 0.0;
        b = k_max;
        fa = balance(a).0;
        fb = balance(b).0;
        if !(fa >= 0.0 && fb <= 0.0) {
            // The stretch bends more than a 179° arc can follow (or bends the wrong way).
            return None;
        }
    }
    for _ in 0..100 {
        if fb == 0.0 || (b - a).abs() <= 1e-15 * k_max {
            break;
        }
        let c = b - fb * (b - a) / (fb - fa);
        let (fc, spread) = balance(c);
        if fc * fb < 0.0 {
            a = b;
            fa = fb;
        } else {
            fa *= 0.5;
        }
        b = c;
        fb = fc;
        // Balanced to 1e-7 of the error: the minimax error is then known to about 1e-7.
        if fb.abs() <= 1e-7 * spread {
            break;
        }
    }
    let k = b;
    let n = chord.start_normal(k);
    let (hi, lo) = extremes(k);
    let offset_at = |t: f64| chord.offset(n, k, curve.point(t, s));
    let refine = |i: usize, sign: f64, sampled: f64| -> f64 {
        // Sample i sits at parameter t0 + (i + 1) step.
        let tc = t0 + step * (i + 1) as f64;
        if precise {
            let (v, _) = golden_min(&|t: f64| -sign * offset_at(t), tc - step, tc + step);
            (-v).max(sign * sampled)
        } else {
            let left = if i == 0 {
                0.0
            } else {
                sign * chord.offset(n, k, samples[i - 1])
            };
            let right = if i + 1 == samples.len() {
                0.0
            } else {
                sign * chord.offset(n, k, samples[i + 1])
            };
            let mid = sign * sampled;
            let curvature = left - 2.0 * mid + right;
            if curvature < 0.0 {
                mid - 0.125 * (right - left).powi(2) / curvature
            } else {
                mid
            }
        }
    };
    let error = refine(hi.1, 1.0, hi.0).max(refine(lo.1, -1.0, lo.0));
    Some(Span { t0, t1, k, error })
}

/// The greedy arc spline over `[t_start, t_end]` on the curve at offset `s`, every arc's error
/// at most `target` (mm). With `spans_before_last = Some(m)` it stops after `m` arcs and closes
/// with one arc over whatever is left, whatever its error.
///
/// Each stretch is the longest whose error fits: the error grows with the stretch about as its
/// cube, so `∛(error / target) − 1` is nearly linear in the stretch's end and regula falsi
/// (Illinois) finds its root in a few steps; the end kept is always one whose arc fits.
fn greedy(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    t_end: f64,
    target: f64,
    spans_before_last: Option<usize>,
) -> Option<Vec<Span>> {
    let mut spans = Vec::new();
    let mut t0 = t_start;
    while t0 < t_end {
        if spans_before_last == Some(spans.len()) {
            spans.push(fit_span(curve, s, t0, t_end, false)?);
            return Some(spans);
        }
        let top = (t0 + MAX_STRETCH).min(t_end);
        let span = longest_fitting(curve, s, t0, top, target)?;
        t0 = span.t1;
        spans.push(span);
        if spans.len() > 1_000_000 {
            return None;
        }
    }
    Some(spans)
}

/// The arc over the longest stretch `[t0, t1]`, `t1 ≤ top`, whose error is at most `target`.
fn longest_fitting(
    curve: &impl ConvexCurve,
    s: f64,
    t0: f64,
    top: f64,
    target: f64,
) -> Option<Span> {
    // Scaled miss: negative when the arc fits; `None` where no arc can follow the stretch.
    let miss =
        |t1: f64| fit_span(curve, s, t0, t1, false).map(|f| ((f.error / target).cbrt() - 1.0, f));
    let mut hi = top;
    let mut f_hi = loop {
        match miss(hi) {
            Some((m, f)) if m <= 0.0 => return Some(f),
            Some((m, _)) => break m,
            None => {
                hi = t0 + 0.5 * (hi - t0);
                if hi - t0 <= 1e-12 * (1.0 + t0.abs()) {
                    return None;
                }
            }
        }
    };
    // Below: the longest stretch known to fit (a tiny one always does).
    let mut lo = t0 + 1e-6 * (hi - t0);
    let (mut f_lo, mut best) = match miss(lo) {
        Some((m, f)) if m <= 0.0 => (m, f),
        _ => return None,
    };
    let mut last_side = 0i8;
    for _ in 0..100 {
        if hi - lo <= 1e-9 * (hi - t0) {
            break;
        }
        let mut t = hi - f_hi * (hi - lo) / (f_hi - f_lo);
        if !(t > lo && t < hi) {
            t = 0.5 * (lo + hi);
        }
        match miss(t) {
            Some((m, f)) if m <= 0.0 => {
                lo = t;
                f_lo = m;
                best = f;
                if last_side == -1 {
                    f_hi *= 0.5;
                }
                last_side = -1;
                if m > -1e-9 {
                    break;
                }
            }
            Some((m, _)) => {
                hi = t;
                f_hi = m;
                if last_side == 1 {
                    f_lo *= 0.5;
                }
                last_side = 1;
            }
            None => {
                hi = t;
                f_hi = 1.0;
                last_side = 1;
            }
        }
    }
    Some(best)
}

/// Kinks above this (degrees) are worth one more arc when that arc removes them. A rule of
/// thumb (common practice): below about 1° a change of direction leaves no visible mark at
/// contouring feeds.
pub(crate) const KINK_LIMIT_DEG: f64 = 1.0;

/// The arc spline over `[t_start, t_end]` on the curve at outward offset `s`, with every arc
/// within `half_width` (mm) of the curve, as few arcs as the greedy method finds, and the arcs'
/// errors evened out (see the module docs). If the spline then meets itself at an angle above
/// [`KINK_LIMIT_DEG`] anywhere inside, the evened-out spline with one arc more is tried and kept
/// when its largest kink is smaller (this happens where a joint falls on a vertex of the ellipse's
/// major axis, where the curvature peaks and both neighbouring arcs are flatter than the curve;
/// with one arc more an arc is centred there instead). Every stretch's error is finally
/// re-measured with golden-section refinement; a stretch found over the limit is shortened until
/// it fits.
///
/// Bound (guaranteed up to the accuracy of the refinement, ≈1e-12 mm, for error profiles with one
/// extremum between neighbouring samples, 1/48 of a stretch apart): every arc within `half_width`
/// of the curve, measured along the rays from its centre.
pub(crate) fn arc_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    t_end: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    // The greedy search works with parabola-placed extremes, good to about 1e-6 of the error;
    // aim that much lower so that the golden-section re-measurement passes.
    let target = half_width * (1.0 - 1e-5);
    let greedy_spans = greedy(curve, s, t_start, t_end, target, None)?;
    let n = greedy_spans.len();
    let mut best = greedy_spans;
    if n >= 2 {
        if let Some(even) = even_out(curve, s, t_start, t_end, target, n) {
            best = even;
        }
        let kink = largest_kink(curve, s, &best);
        if kink > KINK_LIMIT_DEG
            && let Some(more) = even_out(curve, s, t_start, t_end, target, n + 1)
            && largest_kink(curve, s, &more) < kink
        {
            best = more;
        }
    }
    // Re-measure each stretch precisely; shorten any that does not fit, and let a further arc
    // cover the rest up to the planned end.
    let ends: Vec<f64> = best.iter().map(|sp| sp.t1).collect();
    let mut out = Vec::with_capacity(ends.len());
    let mut t0 = t_start;
    let mut i = 0;
    while i < ends.len() {
        let planned = ends[i];
        let mut t1 = planned;
        let span = loop {
            match fit_span(curve, s, t0, t1, true) {
                Some(f) if f.error <= half_width => break f,
                _ => {
                    t1 = t0 + 0.999 * (t1 - t0);
                    if t1 - t0 <= 1e-12 * (1.0 + t0.abs()) {
                        return None;
                    }
                }
            }
        };
        t0 = span.t1;
        out.push(span);
        if t1 >= planned {
            i += 1;
        }
    }
    Some(out)
}

/// Even out: the smallest common error `e* ≤ target` with which `count − 1` greedy arcs leave a
/// last arc within `e*`, and those `count` arcs. The last arc's error falls as `e*` grows:
/// regula falsi (Illinois) on `∛(last / e*) − 1`, at most 12 steps, keeping the best `e*` that
/// works. `None` if none was found.
fn even_out(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    t_end: f64,
    target: f64,
    count: usize,
) -> Option<Vec<Span>> {
    // Scaled miss, and the spans when there are exactly `count` of them. Fewer spans: e* has
    // room to spare (negative miss); no spline: e* is too small.
    let miss = |e: f64| match greedy(curve, s, t_start, t_end, e, Some(count - 1)) {
        None => (1.0, None),
        Some(spans) if spans.len() < count => (-1.0, None),
        Some(spans) => {
            let last = spans.last().map_or(f64::INFINITY, |l| l.error);
            ((last / e).cbrt() - 1.0, Some(spans))
        }
    };
    let (mut hi, mut lo) = (target, 0.25 * target);
    let (f, spans) = miss(hi);
    let mut f_hi = f;
    if f > 0.0 {
        return None;
    }
    let mut best = spans;
    let (f, spans) = miss(lo);
    let mut f_lo = f;
    if f <= 0.0 {
        // Even a quarter of the error leaves room: keep that.
        return spans.or(best);
    }
    let mut last_side = 0i8;
    for _ in 0..12 {
        if hi - lo <= 1e-3 * target {
            break;
        }
        let mut e = hi - f_hi * (hi - lo) / (f_hi - f_lo);
        if !(e > lo && e < hi) {
            e = 0.5 * (lo + hi);
        }
        let (f, spans) = miss(e);
        if f <= 0.0 {
            hi = e;
            f_hi = f;
            if spans.is_some() {
                best = spans;
            }
            if last_side == -1 {
                f_lo *= 0.5;
            }
            last_side = -1;
            if f > -1e-3 && best.is_some() {
                break;
            }
        } else {
            lo = e;
            f_lo = f;
            if last_side == 1 {
                f_hi *= 0.5;
            }
            last_side = 1;
        }
    }
    best
}

/// The largest change of direction (degrees) between consecutive arcs of a spline on the curve
/// at offset `s`: an arc's tangents are its chord turned by ∓ half its sweep.
fn largest_kink(curve: &impl ConvexCurve, s: f64, spans: &[Span]) -> f64 {
    let ends: Vec<Option<(Vec2, Vec2)>> = spans
        .iter()
        .map(|sp| {
            let chord = Chord::new(curve.point(sp.t0, s), curve.point(sp.t1, s))?;
            let half = (0.5 * sp.k * chord.length).clamp(-1.0, 1.0).asin();
            Some((chord.dir.rotated(-half), chord.dir.rotated(half)))
        })
        .collect();
    ends.windows(2)
        .map(|w| match (w[0], w[1]) {
            (Some((_, out)), Some((into, _))) => out.cross(into).atan2(out.dot(into)).abs(),
            _ => PI,
        })
        .fold(0.0, f64::max)
        .to_degrees()
}

/// The spans as moves along the curve at offset `s`; the last ends exactly at `end`.
pub(crate) fn spans_to_moves(
    curve: &impl ConvexCurve,
    s: f64,
    spans: &[Span],
    end: Point,
) -> Vec<Move> {
    let mut moves = Vec::with_capacity(spans.len());
    for (i, span) in spans.iter().enumerate() {
        let a = curve.point(span.t0, s);
        let b = if i + 1 == spans.len() {
            end
        } else {
            curve.point(span.t1, s)
        };
        let to = b;
        match Chord::new(a, b) {
            Some(chord) if span.k.abs() * chord.length > 1e-12 => moves.push(Move::Arc {
                to,
                center: chord.center(span.k),
                ccw: span.k > 0.0,
            }),
            _ => moves.push(Move::Line { to }),
        }
    }
    moves
}
