//! Circular arcs with as few moves as a tolerance band allows: an evened-out greedy arc spline.
//!
//! Each arc runs between two points of the band's middle curve (the exact curve itself for a
//! two-sided band). Most arcs bend by the radius that makes their largest deviation on either
//! side equal (the minimax radius; for a curve whose curvature changes linearly that is the
//! curvature at mid-span, with error `|κ′| h³ / (72√3)`, docs/sources.md P3.3), and each
//! covers the longest stretch whose minimax error fits in half the band's width. The stretches
//! are then evened out so that all arcs share one error: the greedy method alone leaves a short
//! last stretch, whose arc meets its neighbours at a visible angle (docs/sources.md P3.4).
//! The count tracks `∫ (|κ′| / (72√3 ε))^{1/3} ds`.
//!
//! Neighbouring arcs share their end points but not their tangents: the spline is continuous,
//! with small kinks, which the caller measures and reports. Where the curvature is extreme (the
//! vertices of an ellipse) a joint makes a kink of its own: `κ′` changes sign there, so the two
//! arcs miss the curve's tangent in opposite directions. A vertex is therefore better covered by
//! one arc symmetric about it (docs/sources.md P3.4, design consequence (b)).
//!
//! Two constructions:
//!
//! * **Quadrant-symmetric** (a closed curve symmetric about two axes, [`ConvexCurve::symmetric`],
//!   started on an axis): the spline of one quarter, from the vertex at `t = 0` to the one at
//!   `t = π/2`, is evened out and mirrored into the other three, so every quarter has the same
//!   arcs and the spline is as symmetric as the curve. At each vertex the quarter either has a
//!   joint, or an arc centred on the vertex: the minimax arc over `[−u, u]` at the vertex away
//!   from the start, or, at the start vertex, the arc through the curve's point there and tangent
//!   to the curve (the start must lie on the curve; the arc is split there into two moves that
//!   meet without a kink). Of the four combinations the one with the fewest moves is kept whose
//!   largest kink is within [`KINK_LIMIT_DEG`]; combinations with more moves (up to a quarter
//!   more) are tried only while none is. When none is (coarse tolerances, where a joint at a
//!   vertex can kink by several degrees), the fewest moves whose kink is within half as much again
//!   as the smallest found are kept.
//! * **General** (any other start or curve): the evened-out spline from the start once round. Its
//!   closing joint is a joint like the others, but fixed. It is acceptable when no joint kinks by
//!   more than [`KINK_LIMIT_DEG`] and the closing joint by no more than the largest inner one;
//!   when it is not, more are tried: for a symmetric curve, chains of arcs between arcs centred
//!   on the four vertices ([`vertex_spline`]); then the spline whose first and last arcs are
//!   tangent to the curve at the start (no closing kink), and the spline with one arc more. The
//!   fewest arcs among the acceptable ones are kept (a quarter more than the plain spline's at
//!   most), else the fewest whose kink is within half as much again as the smallest found. Its
//!   stretches may span a vertex, where the error need not grow with the stretch; the searches
//!   then find a stretch that fits, not always the longest.
//!
//! Every arc is finally re-measured with golden-section refinement against half the band's width.

use super::band::ConvexCurve;
use crate::geom::Move;
use crate::geom::search::{brent_max, golden_min};
use crate::geom::{Point, Vec2};
use std::f64::consts::{FRAC_PI_2, PI, TAU};

/// Samples of the curve per stretch when measuring an arc against it (the arc's error profile
/// has at most three extrema, so each lies between two samples with several samples per lobe).
const SAMPLES: usize = 16;

/// The largest sweep of one arc: arcs that would reach 180° are split (R-format controllers
/// cannot tell a half circle from its complement, and some refuse it).
pub(crate) const MAX_SWEEP: f64 = PI * 179.0 / 180.0;

/// The largest parameter stretch tried for one arc.
const MAX_STRETCH: f64 = PI;

/// Kinks above this (degrees) are worth more arcs when those arcs remove them. A rule of thumb
/// (common practice): below about 1° a change of direction leaves no visible mark at contouring
/// feeds.
pub(crate) const KINK_LIMIT_DEG: f64 = 1.0;

/// How close (relative, on the cube root of the error) a stretch's end is pushed to the largest
/// that fits: the stretch is then within about 1e-8 of its longest.
const STRETCH_PRECISION: f64 = 1e-8;

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

/// How an arc between two points of the curve is bent.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Bend {
    /// The minimax radius: the largest deviations on the two sides are equal.
    Balanced,
    /// Tangent to the curve at the stretch's start.
    TangentAtStart,
    /// Tangent to the curve at the stretch's end.
    TangentAtEnd,
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

    /// Half the sweep of the arc with curvature `k`: the angle between the chord and either
    /// tangent, `asin(k h / 2)`.
    fn half_sweep(&self, k: f64) -> f64 {
        (0.5 * k * self.length).clamp(-1.0, 1.0).asin()
    }

    /// The unit normal at the arc's start pointing towards the centre side (left of the
    /// start tangent): the start tangent is the chord turned back by half the sweep, whose sine
    /// is `k h / 2`.
    fn start_normal(&self, k: f64) -> Vec2 {
        let sin = (0.5 * k * self.length).clamp(-1.0, 1.0);
        let cos = (1.0 - sin * sin).sqrt();
        let (x, y) = (self.dir.x, self.dir.y);
        Vec2::new(cos * x + sin * y, cos * y - sin * x).perp()
    }

    /// The unit tangents at the arc's start and end.
    fn tangents(&self, k: f64) -> (Vec2, Vec2) {
        let half = self.half_sweep(k);
        (self.dir.rotated(-half), self.dir.rotated(half))
    }

    /// Signed distance of `p` from the circle of the arc with curvature `k`, positive to the right
    /// of travel: `(k|w|² − 2 w·n) / (1 + |k w − n|)`, `w = p − a`, `n` the start normal. It is
    /// `|p − c| − R` for `k > 0` written without the large, nearly equal terms, and tends to the
    /// signed distance from the chord's line as `k → 0`.
    fn offset(&self, n: Vec2, k: f64, p: Point) -> f64 {
        let w = p - self.a;
        // |k w − n| is about 1 (n is a unit vector, k w small near the arc): no overflow to guard.
        (k * w.length_squared() - 2.0 * w.dot(n)) / (1.0 + (w * k - n).length_squared().sqrt())
    }

    /// The centre of the arc with curvature `k ≠ 0`: on the chord's perpendicular bisector, at
    /// `(h/2) cot(half sweep)` to the left for `k > 0`, so both ends lie on the circle to rounding.
    fn centre(&self, k: f64) -> Point {
        self.a.midpoint(self.b) + self.dir.perp() * (0.5 * self.length / self.half_sweep(k).tan())
    }
}

/// The unit tangent of the curve at `t` in the direction of travel. The parallel curves share
/// their normals, so the outward normal is the direction from the point at offset `s` to the one
/// at `s + 1`; the tangent is that turned a quarter turn counter-clockwise.
fn tangent(curve: &impl ConvexCurve, t: f64, s: f64) -> Option<Vec2> {
    (curve.point(t, s + 1.0) - curve.point(t, s))
        .normalized()
        .map(Vec2::perp)
}

/// The curve's points strictly inside a stretch, `SAMPLES − 1` of them, evenly spaced in `t`.
struct Samples {
    t0: f64,
    step: f64,
    points: [Point; SAMPLES - 1],
}

impl Samples {
    fn new(curve: &impl ConvexCurve, s: f64, t0: f64, t1: f64) -> Samples {
        let step = (t1 - t0) / SAMPLES as f64;
        let mut points = [Point::ORIGIN; SAMPLES - 1];
        for (i, p) in points.iter_mut().enumerate() {
            *p = curve.point(t0 + step * (i + 1) as f64, s);
        }
        Samples { t0, step, points }
    }

    /// The largest and smallest offset from the arc with curvature `k` and their sample indices.
    fn extremes(&self, chord: &Chord, k: f64) -> ((f64, usize), (f64, usize)) {
        let n = chord.start_normal(k);
        let mut hi = (f64::NEG_INFINITY, 0usize);
        let mut lo = (f64::INFINITY, 0usize);
        for (i, p) in self.points.iter().enumerate() {
            let e = chord.offset(n, k, *p);
            if e > hi.0 {
                hi = (e, i);
            }
            if e < lo.0 {
                lo = (e, i);
            }
        }
        (hi, lo)
    }
}

/// The curvature of the minimax arc between the chord's ends over the sampled stretch, and the
/// slope `dF/dk` there; `None` when no arc of sweep below [`MAX_SWEEP`] can balance the two sides.
///
/// The error of the arc at a curve point, `e(k)`, falls as the arc bends further (`k` grows) for
/// every point between the ends, so `F(k) = max e + min e` falls too and its root is the radius
/// where the outward and inward lobes are equal. `F` is nearly linear in `k`; the root is found by
/// the Illinois variant of regula falsi from a bracket around the circle through the ends and the
/// middle sample, to 1e-7 of the error's spread.
fn balanced_k(chord: &Chord, samples: &Samples) -> Option<(f64, f64)> {
    let balance = |k: f64| {
        let ((hi, _), (lo, _)) = samples.extremes(chord, k);
        (hi + lo, hi - lo)
    };
    let k_max = chord.k_limit();
    let mid = samples.points[samples.points.len() / 2];
    let k3 =
        2.0 * (mid - chord.a).cross(chord.dir) / (mid.distance(chord.a) * mid.distance(chord.b));
    // The minimax arc of a stretch whose curvature changes linearly passes through the middle
    // too (its error is odd about the middle), so the root is near k3: bracket it from there in
    // steps growing tenfold from 0.1 %.
    let (mut a, mut b, mut fa, mut fb) = (k3, k3, 0.0, 0.0);
    let f3 = balance(k3).0;
    if k3 > 0.0 && k3 < k_max {
        let towards = if f3 > 0.0 { 1.0 } else { -1.0 };
        let mut step = 1e-3;
        let (mut k_near, mut f_near) = (k3, f3);
        while step <= 0.1 {
            let k = (k3 * (1.0 + towards * step)).min(k_max);
            let f = balance(k).0;
            if f * f_near <= 0.0 {
                (a, fa, b, fb) = if towards > 0.0 {
                    (k_near, f_near, k, f)
                } else {
                    (k, f, k_near, f_near)
                };
                break;
            }
            (k_near, f_near) = (k, f);
            step *= 10.0;
        }
    }
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
    // The secant slope through the last two values actually computed.
    let mut slope = (fb - fa) / (b - a);
    for _ in 0..100 {
        if fb == 0.0 || (b - a).abs() <= 1e-15 * k_max {
            break;
        }
        let c = b - fb * (b - a) / (fb - fa);
        let (fc, spread) = balance(c);
        if c != b {
            slope = (fc - fb) / (c - b);
        }
        if fc * fb < 0.0 {
            a = b;
            fa = fb;
        } else {
            fa *= 0.5;
        }
        b = c;
        fb = fc;
        if fb.abs() <= 1e-7 * spread {
            break;
        }
    }
    Some((b, slope))
}

/// The largest value of `f` near `tc` and where, `f` peaking between `tc ± step` (the values there and
/// at `tc` are `around`, the middle one the largest). The vertex of the parabola through the
/// three places the peak to about 1 % of a step; the parabola through `f` at that estimate and
/// 1/16 of a step either side places it to about 1e-5 of a step, where `f` is evaluated: within
/// about 1e-10 of the peak's value for a peak several steps wide. When a parabola does not bulge
/// or its vertex strays, Brent's method ([`brent_max`]) finds the peak instead.
fn peak(f: &impl Fn(f64) -> f64, tc: f64, step: f64, around: (f64, f64, f64)) -> (f64, f64) {
    let (left, mid, right) = around;
    // The vertex of the parabola through (−h, fl), (0, f0), (h, fr), as an offset from the middle.
    let vertex = |h: f64, fl: f64, f0: f64, fr: f64| {
        let bulge = fl - 2.0 * f0 + fr;
        (bulge < 0.0).then(|| 0.5 * h * (fl - fr) / bulge)
    };
    let robust = || brent_max(f, tc - step, tc + step, tc, mid, 1e-4 * step);
    let Some(d1) = vertex(step, left, mid, right).filter(|d| d.abs() <= step) else {
        return robust();
    };
    let x1 = tc + d1;
    let h = step / 16.0;
    let (fl, f0, fr) = (f(x1 - h), f(x1), f(x1 + h));
    let Some(d2) = vertex(h, fl, f0, fr).filter(|d| d.abs() <= h) else {
        return robust();
    };
    // The largest value evaluated, and where.
    [
        (f(x1 + d2), x1 + d2),
        (f0, x1),
        (fl, x1 - h),
        (fr, x1 + h),
        (mid, tc),
    ]
    .into_iter()
    .fold(
        (f64::NEG_INFINITY, tc),
        |best, c| if c.0 > best.0 { c } else { best },
    )
}

/// The two lobes of the arc with curvature `k` between the chord's ends over the sampled
/// stretch: the largest offset of the curve to the right of the arc and to its left (each ≥ 0
/// when the curve crosses the arc). Each extreme is found among the samples, then placed between
/// its neighbours on the curve itself, by Brent's method to 1e-7 of a sample step ([`brent_max`];
/// within 1e-6 of the error in this module's tests), or with `precise` by golden-section search
/// to 1e-15 of the bracket; both search one sample step either side.
fn lobes(
    curve: &impl ConvexCurve,
    s: f64,
    chord: &Chord,
    samples: &Samples,
    k: f64,
    precise: bool,
) -> (f64, f64) {
    let ((right, _), (left, _)) = lobes_at(curve, s, chord, samples, k, precise);
    (right, left)
}

/// [`lobes`], each with the parameter where it peaks.
fn lobes_at(
    curve: &impl ConvexCurve,
    s: f64,
    chord: &Chord,
    samples: &Samples,
    k: f64,
    precise: bool,
) -> ((f64, f64), (f64, f64)) {
    let n = chord.start_normal(k);
    let ((hi, i_hi), (lo, i_lo)) = samples.extremes(chord, k);
    let step = samples.step;
    let refine = |i: usize, sign: f64, sampled: f64| -> (f64, f64) {
        // Sample i sits at parameter t0 + (i + 1) step; the ends (offset 0) bound the first and
        // last samples.
        let tc = samples.t0 + step * (i + 1) as f64;
        let value = |t: f64| sign * chord.offset(n, k, curve.point(t, s));
        if precise {
            let (v, t) = golden_min(&|t: f64| -value(t), tc - step, tc + step);
            return if -v >= sign * sampled {
                (-v, t)
            } else {
                (sign * sampled, tc)
            };
        }
        let neighbour = |j: Option<usize>| {
            j.and_then(|j| samples.points.get(j))
                .map_or(0.0, |p| sign * chord.offset(n, k, *p))
        };
        let (left, right) = (neighbour(i.checked_sub(1)), neighbour(Some(i + 1)));
        peak(&value, tc, step, (left, sign * sampled, right))
    };
    (refine(i_hi, 1.0, hi), refine(i_lo, -1.0, lo))
}

/// The error of the arc with curvature `k`: its larger lobe (see [`lobes`]).
fn arc_error(
    curve: &impl ConvexCurve,
    s: f64,
    chord: &Chord,
    samples: &Samples,
    k: f64,
    precise: bool,
) -> f64 {
    let (right, left) = lobes(curve, s, chord, samples, k, precise);
    right.max(left)
}

/// The arc between the points of `curve` (at outward offset `s`) at `t0` and `t1`, bent as
/// `bend`, and its error (see [`arc_error`] for `precise`); `None` when the arc would sweep
/// [`MAX_SWEEP`] or more, or bends the wrong way.
fn fit_span(
    curve: &impl ConvexCurve,
    s: f64,
    t0: f64,
    t1: f64,
    bend: Bend,
    precise: bool,
) -> Option<Span> {
    let chord = Chord::new(curve.point(t0, s), curve.point(t1, s))?;
    let samples = Samples::new(curve, s, t0, t1);
    let k = match bend {
        Bend::Balanced => {
            // Balanced on the samples; then the lobes are placed between them and balanced by
            // secant steps on the offsets at their peaks (which move only to second order), to
            // 1e-7 of the error, four steps at most; the lower error of the two arcs is kept.
            let (k0, mut slope) = balanced_k(&chord, &samples)?;
            let ((r0, t_r), (l0, t_l)) = lobes_at(curve, s, &chord, &samples, k0, false);
            let (p_r, p_l) = (curve.point(t_r, s), curve.point(t_l, s));
            let imbalance = |k: f64| {
                chord.offset(chord.start_normal(k), k, p_r)
                    + chord.offset(chord.start_normal(k), k, p_l)
            };
            let (mut k1, mut g) = (k0, r0 - l0);
            for _ in 0..4 {
                if g.abs() <= 1e-7 * r0.max(l0) || slope.is_nan() || slope >= 0.0 {
                    break;
                }
                let k_next = k1 - g / slope;
                if !(k_next > 0.0 && k_next < chord.k_limit()) || k_next == k1 {
                    break;
                }
                let g_next = imbalance(k_next);
                slope = (g_next - g) / (k_next - k1);
                (k1, g) = (k_next, g_next);
            }
            let (k, error) = if k1 == k0 {
                (k0, r0.max(l0))
            } else {
                let (r1, l1) = lobes(curve, s, &chord, &samples, k1, false);
                if r1.max(l1) < r0.max(l0) {
                    (k1, r1.max(l1))
                } else {
                    (k0, r0.max(l0))
                }
            };
            if !precise {
                return Some(Span { t0, t1, k, error });
            }
            k
        }
        Bend::TangentAtStart | Bend::TangentAtEnd => {
            // The start tangent is the chord turned back by half the sweep, the end tangent the
            // chord turned on by it.
            let half = if bend == Bend::TangentAtStart {
                let tan = tangent(curve, t0, s)?;
                tan.cross(chord.dir).atan2(tan.dot(chord.dir))
            } else {
                let tan = tangent(curve, t1, s)?;
                chord.dir.cross(tan).atan2(chord.dir.dot(tan))
            };
            if !(half > 0.0 && half < 0.5 * MAX_SWEEP) {
                return None;
            }
            2.0 * half.sin() / chord.length
        }
    };
    let error = arc_error(curve, s, &chord, &samples, k, precise);
    Some(Span { t0, t1, k, error })
}

/// The error of `span`'s arc re-measured with golden-section refinement.
fn precise_error(curve: &impl ConvexCurve, s: f64, span: &Span) -> Option<f64> {
    let chord = Chord::new(curve.point(span.t0, s), curve.point(span.t1, s))?;
    let samples = Samples::new(curve, s, span.t0, span.t1);
    Some(arc_error(curve, s, &chord, &samples, span.k, true))
}

mod longest;
mod splines;

use longest::*;
pub(crate) use splines::{arc_spline, spans_to_moves};

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::band::EllipseCurve;
    use crate::geom::Ellipse;

    /// The searches' error estimate (samples, then two parabolas on the curve) against
    /// an independent one, golden-section search on the curve to 1e-15 of the bracket: within
    /// 1e-6 of the error, far inside the 1e-5 the searches leave the re-measurement. Stretches
    /// from 1/300 to 1/15 of a turn all round four ellipses (one nearly a circle), all bends, and
    /// arcs centred on the vertices; errors below 1e-7 mm are left out (rounding, ≈1e-14 mm,
    /// dominates their relative difference).
    #[test]
    fn refined_error_agrees_with_golden_section() {
        let mut worst: f64 = 0.0;
        for (a, b) in [(50.0, 20.0), (30.0, 18.0), (80.0, 25.0), (50.0, 49.0)] {
            let curve = EllipseCurve {
                ellipse: Ellipse::new(Point::ORIGIN, a, b, 0.3).unwrap(),
                inset: 0.0,
            };
            let mut compare = |t0: f64, t1: f64, bend: Bend| {
                let fast = fit_span(&curve, 0.0, t0, t1, bend, false);
                let exact = fit_span(&curve, 0.0, t0, t1, bend, true);
                if let (Some(fast), Some(exact)) = (fast, exact)
                    && exact.error > 1e-7
                {
                    let r = (exact.error - fast.error).abs() / exact.error;
                    worst = worst.max(r);
                }
            };
            for i in 0..100 {
                let t0 = i as f64 * 0.0628;
                for h in [0.02, 0.05, 0.1, 0.2, 0.4] {
                    for bend in [Bend::Balanced, Bend::TangentAtStart, Bend::TangentAtEnd] {
                        compare(t0, t0 + h, bend);
                    }
                }
            }
            for h in [0.05, 0.1, 0.2, 0.4] {
                compare(-h, h, Bend::Balanced);
                compare(FRAC_PI_2 - h, FRAC_PI_2 + h, Bend::Balanced);
            }
        }
        assert!(worst < 1e-6, "{worst}");
    }

    /// The balanced arc is the minimax one: bending it 0.1 % more or less makes one lobe larger
    /// than the balanced error (both lobes are measured here by golden-section search).
    #[test]
    fn balanced_arcs_are_minimax() {
        let curve = EllipseCurve {
            ellipse: Ellipse::new(Point::ORIGIN, 50.0, 20.0, 0.0).unwrap(),
            inset: 0.0,
        };
        for (t0, t1) in [(0.2, 0.5), (1.0, 1.3), (-0.3, 0.3), (2.0, 2.1)] {
            let span = fit_span(&curve, 0.0, t0, t1, Bend::Balanced, true).unwrap();
            let chord = Chord::new(curve.point(t0, 0.0), curve.point(t1, 0.0)).unwrap();
            let samples = Samples::new(&curve, 0.0, t0, t1);
            let (right, left) = lobes(&curve, 0.0, &chord, &samples, span.k, true);
            assert!((right - left).abs() <= 1e-4 * span.error, "{right} {left}");
            for factor in [0.999, 1.001] {
                let other = arc_error(&curve, 0.0, &chord, &samples, span.k * factor, true);
                assert!(
                    other > span.error,
                    "{t0}..{t1} × {factor}: {other} vs {}",
                    span.error
                );
            }
        }
    }
}
