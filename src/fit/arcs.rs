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

use super::band::{ConvexCurve, golden_min};
use super::moves::Move;
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
    fn center(&self, k: f64) -> Point {
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

/// The largest value of `f` on `[a, b]` (a bracket of one peak, `x` inside it with value `fx`),
/// by Brent's method: successive parabolic interpolation, with golden-section steps whenever a
/// parabola's step is not safely inside the bracket or does not shrink fast enough (R. P. Brent,
/// Algorithms for Minimization without Derivatives, 1973, ch. 5, procedure `localmin`). Stops
/// when the peak is located within `tol` (so its value is within about `|f″| tol²`) or after 60
/// steps; returns the largest value evaluated and where.
fn brent_max(f: &impl Fn(f64) -> f64, a: f64, b: f64, x: f64, fx: f64, tol: f64) -> (f64, f64) {
    // Minimise g = −f.
    const GOLDEN: f64 = 0.381_966_011_250_105_1;
    let (mut a, mut b) = (a, b);
    let (mut x, mut w, mut v) = (x, x, x);
    let (mut gx, mut gw, mut gv) = (-fx, -fx, -fx);
    let (mut d, mut e): (f64, f64) = (0.0, 0.0);
    for _it in 0..60 {
        let xm = 0.5 * (a + b);
        let tol2 = 2.0 * tol;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol {
            // The parabola through x, w and v.
            let r = (x - w) * (gx - gv);
            let q = (x - v) * (gx - gw);
            let mut p = (x - v) * q - (x - w) * r;
            let mut q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            let e_before = e;
            e = d;
            if p.abs() < (0.5 * q * e_before).abs() && p > q * (a - x) && p < q * (b - x) {
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = tol.copysign(xm - x);
                }
                golden = false;
            }
        }
        if golden {
            e = if x >= xm { a - x } else { b - x };
            d = GOLDEN * e;
        }
        let u = if d.abs() >= tol {
            x + d
        } else {
            x + tol.copysign(d)
        };
        let gu = -f(u);
        if gu <= gx {
            if u >= x {
                a = x;
            } else {
                b = x;
            }
            (v, gv) = (w, gw);
            (w, gw) = (x, gx);
            (x, gx) = (u, gu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if gu <= gw || w == x {
                (v, gv) = (w, gw);
                (w, gw) = (u, gu);
            } else if gu <= gv || v == x || v == w {
                (v, gv) = (u, gu);
            }
        }
    }
    (-gx, x)
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

/// The arc `fit(x)` over the longest stretch, its far end `x` in `(x0, top]`, whose error is at
/// most `target`; `guess` is a likely end. `None` when not even a tiny stretch fits.
///
/// The error grows with the stretch about as its cube, so the scaled miss `∛(error / target) − 1`
/// is nearly linear in `x`, and −1 at `x0`. Until the end is bracketed, the secant through the
/// last two points on one side (at first `(x0, −1)` and the guess) predicts it, aimed 0.1 % past
/// the prediction so as to cross it; then regula falsi (Illinois) closes in, to
/// [`STRETCH_PRECISION`]. Ends with no arc (a sweep of 179° or more) count as too long, with no
/// value: the bracket is then halved. The end kept is always one whose arc fits.
fn longest(
    fit: &dyn Fn(f64) -> Option<Span>,
    x0: f64,
    top: f64,
    target: f64,
    guess: Option<f64>,
) -> Option<Span> {
    let width = top - x0;
    if width.is_nan() || width <= 0.0 {
        return None;
    }
    let miss = |x: f64| fit(x).map(|f| ((f.error / target).cbrt() - 1.0, f));
    // The longest end known to fit and its miss, and the one before (at first `x0`, miss −1).
    let (mut lo, mut f_lo, mut best): (f64, f64, Option<Span>) = (x0, -1.0, None);
    let mut lo_before = (x0, -1.0);
    // The shortest end known not to fit and its miss (`None`: no arc), and the one before.
    let mut hi: Option<(f64, Option<f64>)> = None;
    let mut hi_before: Option<(f64, f64)> = None;
    let mut side = 0i8;
    let mut x = guess.map_or(x0 + 0.25 * width, |g| g.min(top));
    if x.is_nan() || x <= x0 {
        x = x0 + 0.5 * width;
    }
    let secant = |(xa, fa): (f64, f64), (xb, fb): (f64, f64)| {
        if fb != fa {
            xb - fb * (xb - xa) / (fb - fa)
        } else {
            f64::NAN
        }
    };
    for _ in 0..100 {
        match miss(x) {
            Some((m, f)) if m <= 0.0 => {
                if best.is_some() {
                    lo_before = (lo, f_lo);
                }
                lo = x;
                f_lo = m;
                best = Some(f);
                if m > -STRETCH_PRECISION || x >= top {
                    break;
                }
                if side == -1
                    && let Some((_, Some(fh))) = hi.as_mut()
                {
                    *fh *= 0.5;
                }
                side = -1;
            }
            other => {
                if let Some((h, Some(fh))) = hi {
                    hi_before = Some((h, fh));
                }
                hi = Some((x, other.map(|(m, _)| m)));
                if side == 1 {
                    f_lo *= 0.5;
                }
                side = 1;
            }
        }
        let h = hi.map_or(top, |(h, _)| h);
        if h - lo <= 1e-12 * width.max(1.0) {
            break;
        }
        x = match hi {
            // Nothing too long yet: extrapolate past the last fits.
            None => {
                let root = secant(lo_before, (lo, f_lo));
                root + 1e-3 * (root - x0)
            }
            // Nothing fits yet: extrapolate below the last misses.
            Some((h, Some(fh))) if best.is_none() => {
                let root = secant(hi_before.unwrap_or((x0, -1.0)), (h, fh));
                root - 1e-3 * (root - x0)
            }
            Some((h, Some(fh))) => secant((lo, f_lo), (h, fh)),
            Some((h, None)) => 0.5 * (lo + h),
        };
        // Strictly inside the bracket, or `top` itself while nothing is known to be too long.
        if hi.is_none() && x >= top {
            x = top;
        } else if !(x > lo && x < h) {
            x = 0.5 * (lo + h);
        }
    }
    best
}

/// How a chain of arcs begins at its anchor parameter `at`: the first arc as a function of its
/// far end `x`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Anchor {
    /// A joint at `at`; the first arc runs from there, bent as given.
    Joint(Bend),
    /// The minimax arc over `[2 at − x, x]`, centred on `at` (a vertex).
    Centred,
    /// The half `[at, x]` of the arc through the curve's point at `at`, tangent there; the other
    /// half is its mirror image, so the whole arc must sweep less than [`MAX_SWEEP`].
    HalfTangent,
}

/// How a chain of arcs ends at its end parameter `top`: the last arc from the last joint `t`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Finish {
    /// A joint at `top`; the last arc ends there, bent as given.
    Joint(Bend),
    /// The minimax arc over `[t, 2 top − t]`, centred on `top`.
    Centred,
    /// The half `[t, top]` of the arc through the curve's point at `top`, tangent there.
    HalfTangent,
}

/// A chain of arcs from `at` to `top`: an anchored first arc, balanced arcs, a finishing arc.
struct Chain<'c, C: ConvexCurve> {
    curve: &'c C,
    s: f64,
    at: f64,
    top: f64,
    anchor: Anchor,
}

/// The result of building a chain with a fixed number of arcs and a common error.
enum Shot {
    /// The arcs reached the end before all were used: the error has room to spare.
    Early,
    /// The arcs and the finishing arc's scaled miss `∛(last / e) − 1` (`None`: no arc fits).
    Spans(Vec<Span>, Option<f64>),
    /// Not even a tiny stretch fits: the error is too small.
    Fail,
}

impl<C: ConvexCurve> Chain<'_, C> {
    fn fit(&self, t0: f64, t1: f64, bend: Bend) -> Option<Span> {
        fit_span(self.curve, self.s, t0, t1, bend, false)
    }

    /// The whole arc of a half tangent arc over `[t0, t1]` sweeps twice as much.
    fn half_tangent(&self, t0: f64, t1: f64, bend: Bend) -> Option<Span> {
        let span = self.fit(t0, t1, bend)?;
        let chord = Chord::new(self.curve.point(t0, self.s), self.curve.point(t1, self.s))?;
        (4.0 * chord.half_sweep(span.k) < MAX_SWEEP).then_some(span)
    }

    /// The first arc, ending at `x`.
    fn first_at(&self, x: f64) -> Option<Span> {
        match self.anchor {
            Anchor::Joint(bend) => self.fit(self.at, x, bend),
            Anchor::Centred => self.fit(2.0 * self.at - x, x, Bend::Balanced),
            Anchor::HalfTangent => self.half_tangent(self.at, x, Bend::TangentAtStart),
        }
    }

    /// The longest first arc within `e`.
    fn first(&self, e: f64, guess: Option<f64>) -> Option<Span> {
        let reach = match self.anchor {
            Anchor::Joint(_) => MAX_STRETCH,
            Anchor::Centred | Anchor::HalfTangent => 0.5 * MAX_STRETCH,
        };
        let top = self.top.min(self.at + reach);
        longest(&|x| self.first_at(x), self.at, top, e, guess)
    }

    /// The longest balanced arc from `t` within `e`.
    fn next(&self, t: f64, e: f64, guess: Option<f64>) -> Option<Span> {
        let top = self.top.min(t + MAX_STRETCH);
        longest(&|x| self.fit(t, x, Bend::Balanced), t, top, e, guess)
    }

    /// The finishing arc from the last joint `t`.
    fn finish(&self, finish: Finish, t: f64) -> Option<Span> {
        // No single arc follows more than [`MAX_STRETCH`] of the parameter.
        let stretch = match finish {
            Finish::Joint(_) => self.top - t,
            Finish::Centred | Finish::HalfTangent => 2.0 * (self.top - t),
        };
        if !(stretch > 0.0 && stretch <= MAX_STRETCH) {
            return None;
        }
        match finish {
            Finish::Joint(bend) => self.fit(t, self.top, bend),
            Finish::Centred => self.fit(t, 2.0 * self.top - t, Bend::Balanced),
            Finish::HalfTangent => self.half_tangent(t, self.top, Bend::TangentAtEnd),
        }
    }

    /// The greedy chain within `e`: for each of `finishes`, the number of arcs of the shortest
    /// chain ending with it (first arc, balanced arcs each the longest within `e`, finishing
    /// arc) and a greedy chain to start evening out from; `None` if there is none.
    ///
    /// A balanced joint finish is the balanced arc from the last joint reaching `top`, so it is
    /// found by the greedy step itself (a first arc reaching `top` is a chain of one arc). Any
    /// other finish that has not fitted by then needs one joint more, short of `top`: one arc
    /// more than that chain, which seeds its evening out.
    fn greedy(&self, finishes: &[Finish], e: f64) -> Vec<Option<(usize, Vec<Span>)>> {
        let mut chains: Vec<Option<(usize, Vec<Span>)>> = vec![None; finishes.len()];
        let Some(first) = self.first(e, None) else {
            return chains;
        };
        let mut spans = vec![first];
        let mut t = first.t1;
        while spans.len() < 1_000_000 {
            if t >= self.top {
                // The last arc reached the end: a balanced joint finish.
                for (chain, &finish) in chains.iter_mut().zip(finishes) {
                    if chain.is_some() {
                        continue;
                    }
                    *chain = match finish {
                        Finish::Joint(Bend::Balanced) => Some((spans.len(), spans.clone())),
                        _ if spans.len() > 1 => Some((spans.len() + 1, spans.clone())),
                        _ => None,
                    };
                }
                break;
            }
            for (chain, &finish) in chains.iter_mut().zip(finishes) {
                if chain.is_none()
                    && finish != Finish::Joint(Bend::Balanced)
                    && let Some(last) = self.finish(finish, t).filter(|f| f.error <= e)
                {
                    let mut done = spans.clone();
                    done.push(last);
                    *chain = Some((done.len(), done));
                }
            }
            if chains.iter().all(Option::is_some) {
                break;
            }
            let guess = spans.last().map(|sp| t + (sp.t1 - sp.t0));
            let Some(span) = self.next(t, e, guess) else {
                break;
            };
            t = span.t1;
            spans.push(span);
        }
        chains
    }

    /// The chain of exactly `arcs` arcs whose first `arcs − 1` are each the longest within `e`;
    /// `guide` (an earlier shot and its error) supplies the guesses.
    fn shoot(&self, finish: Finish, arcs: usize, e: f64, guide: Option<&(Vec<Span>, f64)>) -> Shot {
        let scale = guide.map_or(1.0, |(_, e_was)| (e / e_was).cbrt());
        // From the earlier shot's arc `i`, scaled by the cube law; else the last arc's length.
        let guess = |i: usize, from: f64, previous: Option<&Span>| {
            guide
                .and_then(|(spans, _)| spans.get(i))
                .map(|sp| {
                    let origin = if i == 0 { self.at } else { sp.t0 };
                    from + (sp.t1 - origin) * scale
                })
                .or_else(|| previous.map(|sp| from + (sp.t1 - sp.t0)))
        };
        let Some(first) = self.first(e, guess(0, self.at, None)) else {
            return Shot::Fail;
        };
        if arcs == 1 {
            return if first.t1 >= self.top {
                Shot::Spans(vec![first], Some(-1.0))
            } else {
                Shot::Spans(vec![first], None)
            };
        }
        let mut t = first.t1;
        let mut spans = vec![first];
        for i in 1..arcs - 1 {
            if t >= self.top {
                return Shot::Early;
            }
            let Some(span) = self.next(t, e, guess(i, t, spans.last())) else {
                return Shot::Fail;
            };
            t = span.t1;
            spans.push(span);
        }
        if t >= self.top {
            return Shot::Early;
        }
        match self.finish(finish, t) {
            Some(last) => {
                let miss = (last.error / e).cbrt() - 1.0;
                spans.push(last);
                Shot::Spans(spans, Some(miss))
            }
            None => Shot::Spans(spans, None),
        }
    }

    /// Even out: the smallest common error `e* ≤ target` with which `arcs − 1` greedy arcs leave
    /// a finishing arc within `e*`, and those `arcs` arcs; `greedy` is the greedy chain within
    /// `target` (of `arcs` arcs or fewer). The finishing arc's error falls as `e*` grows; each
    /// arc's stretch grows about as `∛e*`, so the miss `∛(last / e*) − 1` is nearly linear in
    /// `∛e*`: the first guess shares the greedy chain's length out equally
    /// (`∛e* = ∛target (n + m) / arcs` for `n` greedy arcs whose last misses by `m`), then
    /// regula falsi (Illinois) on `∛e*`, at most 12 shots, stopping when the finishing arc's
    /// error is within 0.3 % below `e*`. Keeps the best `e*` that works; `None` if none did.
    fn even(&self, finish: Finish, arcs: usize, greedy: &[Span], target: f64) -> Option<Vec<Span>> {
        let n = greedy.len();
        let f_greedy = greedy
            .last()
            .map_or(1.0, |last| (last.error / target).cbrt() - 1.0);
        if n == arcs && (n < 2 || f_greedy > -1e-3) {
            return Some(greedy.to_vec());
        }
        if n > arcs || f_greedy > 0.0 {
            return None;
        }
        // Scaled miss and spans at the common error u³: fewer arcs suffice (−1), no arc fits (+1).
        let miss = |u: f64, guide: &(Vec<Span>, f64)| match self.shoot(
            finish,
            arcs,
            u * u * u,
            Some(guide),
        ) {
            Shot::Early => (-1.0, None),
            Shot::Fail => (1.0, None),
            Shot::Spans(spans, m) => (m.unwrap_or(1.0), Some(spans)),
        };
        let u_target = target.cbrt();
        // With more arcs than the greedy chain's, the target leaves room to spare.
        let (mut hi, mut f_hi) = (u_target, if n == arcs { f_greedy } else { -1.0 });
        let mut lo: Option<(f64, f64)> = None;
        let mut guide = (greedy.to_vec(), target);
        let mut best = (n == arcs).then(|| greedy.to_vec());
        let mut side = 0i8;
        let mut first = true;
        for _ in 0..12 {
            let u = match lo {
                // Share the length out equally, a little lower so as to cross the root.
                None if first => u_target * (n as f64 + f_greedy) / arcs as f64 * (1.0 - 1e-3),
                None => hi * (arcs as f64 + f_hi) / arcs as f64 * (1.0 - 1e-3),
                Some((l, f_l)) => hi - f_hi * (hi - l) / (f_hi - f_l),
            };
            first = false;
            let l = lo.map_or(0.0, |(l, _)| l);
            let u = if u > l && u < hi { u } else { 0.5 * (l + hi) };
            let (f, spans) = miss(u, &guide);
            if let Some(sp) = &spans {
                guide = (sp.clone(), u * u * u);
            }
            if f <= 0.0 {
                hi = u;
                f_hi = f;
                if spans.is_some() {
                    best = spans;
                }
                if side == -1
                    && let Some((_, f_l)) = lo.as_mut()
                {
                    *f_l *= 0.5;
                }
                side = -1;
                if f > -1e-3 && best.is_some() {
                    break;
                }
            } else {
                lo = Some((u, f));
                if side == 1 {
                    f_hi *= 0.5;
                }
                side = 1;
            }
            if lo.is_some_and(|(l, _)| hi - l <= 1e-4 * hi) && best.is_some() {
                break;
            }
        }
        best
    }
}

/// The kinks (degrees) of a closed spline on the curve at offset `s`: entry `i` is the change of
/// direction where arc `i` meets the next, the last entry the closing joint. An arc's tangents
/// are its chord turned by ∓ half its sweep.
fn kinks(curve: &impl ConvexCurve, s: f64, spans: &[Span]) -> Vec<f64> {
    let ends: Vec<Option<(Vec2, Vec2)>> = spans
        .iter()
        .map(|sp| {
            let chord = Chord::new(curve.point(sp.t0, s), curve.point(sp.t1, s))?;
            Some(chord.tangents(sp.k))
        })
        .collect();
    (0..ends.len())
        .map(|i| match (ends[i], ends[(i + 1) % ends.len()]) {
            (Some((_, out)), Some((into, _))) => {
                out.cross(into).atan2(out.dot(into)).abs().to_degrees()
            }
            _ => 180.0,
        })
        .collect()
}

/// A closed spline with its largest kink (closing joint included).
struct Candidate {
    spans: Vec<Span>,
    kink: f64,
}

impl Candidate {
    fn new(curve: &impl ConvexCurve, s: f64, spans: Vec<Span>) -> Candidate {
        let kink = kinks(curve, s, &spans).into_iter().fold(0.0, f64::max);
        Candidate { spans, kink }
    }
}

/// The arc spline over `[t_start, t_end]` on the curve at outward offset `s`, with every arc
/// within `half_width` (mm) of the curve, as few arcs as the greedy method finds, the arcs'
/// errors evened out, and no large kinks where that costs few arcs (see the module docs).
///
/// Bound (guaranteed up to the accuracy of the golden-section re-measurement, ≈1e-12 mm, for
/// error profiles with one extremum between neighbouring samples, 1/16 of a stretch apart): every
/// arc within `half_width` of the curve, measured along the rays from its centre. The mirrored
/// arcs of the symmetric construction equal their originals to rounding (≈1e-13 mm), which the
/// band's millionth share absorbs.
pub(crate) fn arc_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    t_end: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    if !(t_start.is_finite() && t_end > t_start && half_width > 0.0) {
        return None;
    }
    // The searches place the extremes between the samples to within 1e-6 of the error (module
    // tests); aim 1e-5 lower so that the golden-section re-measurement passes.
    let target = half_width * (1.0 - 1e-5);
    let closed = (t_end - t_start - TAU).abs() <= 1e-12 * (1.0 + t_start.abs());
    if closed
        && curve.symmetric()
        && let Some(spans) = symmetric_spline(curve, s, t_start, target, half_width)
    {
        return Some(spans);
    }
    general_spline(curve, s, t_start, t_end, closed, target, half_width)
}

/// The quadrant-symmetric spline of a closed symmetric curve from `t_start` once round, when the
/// start lies on an axis (`t_start` a multiple of π/2 to 1e-12); `None` otherwise, or when a
/// re-measured arc does not fit.
fn symmetric_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    target: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    let quarters = t_start / FRAC_PI_2;
    let nearest = quarters.round();
    if (quarters - nearest).abs() > 1e-12 * (1.0 + nearest.abs()) {
        return None;
    }
    // Which vertex of the quarter [0, π/2] the start is at: 0 (t = 0 or π) or 1 (π/2 or 3π/2).
    let start_vertex = nearest.rem_euclid(2.0) as usize;
    let start_vertex_angle = FRAC_PI_2 * nearest.rem_euclid(4.0);
    // At the start vertex: a joint or the tangent arc through the start; at the other: a joint
    // or a centred minimax arc.
    let left: [Anchor; 2] = if start_vertex == 0 {
        [Anchor::Joint(Bend::Balanced), Anchor::HalfTangent]
    } else {
        [Anchor::Joint(Bend::Balanced), Anchor::Centred]
    };
    let right: [Finish; 2] = if start_vertex == 1 {
        [Finish::Joint(Bend::Balanced), Finish::HalfTangent]
    } else {
        [Finish::Joint(Bend::Balanced), Finish::Centred]
    };
    // (moves, anchor, finish, arcs of the quarter's chain, the greedy chain)
    let mut options: Vec<(usize, Anchor, Finish, usize, Vec<Span>)> = Vec::new();
    for anchor in left {
        let chain = Chain {
            curve,
            s,
            at: 0.0,
            top: FRAC_PI_2,
            anchor,
        };
        for (finish, greedy) in right.iter().zip(chain.greedy(&right, target)) {
            let Some((arcs, greedy)) = greedy else {
                continue;
            };
            let joints_at = |joint: bool| if joint { 2 } else { 0 };
            let total = 4 * arcs.saturating_sub(1)
                + joints_at(matches!(anchor, Anchor::Joint(_)))
                + joints_at(matches!(finish, Finish::Joint(_)));
            let split =
                usize::from(anchor == Anchor::HalfTangent || *finish == Finish::HalfTangent);
            options.push((total + split, anchor, *finish, arcs, greedy));
        }
    }
    options.sort_by_key(|o| o.0);
    // Evened out and mirrored, in order of moves: all with the fewest moves; more only while no
    // kink is within the limit, up to a quarter more moves.
    let fewest = options.first().map_or(0, |o| o.0);
    let budget = (fewest + fewest / 4).max(fewest + 1);
    let mut evaluated: Vec<(usize, Candidate, Vec<Span>)> = Vec::new();
    for (moves, anchor, finish, arcs, greedy) in &options {
        let (moves, anchor, finish) = (*moves, *anchor, *finish);
        let settled = evaluated
            .iter()
            .any(|(m, c, _)| *m < moves && c.kink <= KINK_LIMIT_DEG);
        if moves > budget || settled {
            break;
        }
        let chain = Chain {
            curve,
            s,
            at: 0.0,
            top: FRAC_PI_2,
            anchor,
        };
        let Some(quarter) = chain.even(finish, *arcs, greedy, target) else {
            continue;
        };
        let Some(full) = mirror_quarter(&quarter, anchor, finish, start_vertex_angle, t_start)
        else {
            continue;
        };
        if full.len() == moves {
            evaluated.push((moves, Candidate::new(curve, s, full), quarter));
        }
    }
    // The fewest moves with every kink within the limit; else the fewest whose largest kink is
    // within half as much again as the smallest found. Ties: the smaller kink.
    let least_kink = evaluated
        .iter()
        .map(|(_, c, _)| c.kink)
        .fold(f64::INFINITY, f64::min);
    let bar = if least_kink <= KINK_LIMIT_DEG {
        KINK_LIMIT_DEG
    } else {
        1.5 * least_kink
    };
    let best = evaluated
        .into_iter()
        .filter(|(_, c, _)| c.kink <= bar)
        .min_by(|a, b| a.0.cmp(&b.0).then(a.1.kink.total_cmp(&b.1.kink)));
    let (_, chosen, quarter) = best?;
    // Re-measure the quarter's arcs (the others are their mirror images).
    for span in &quarter {
        if !precise_error(curve, s, span).is_some_and(|e| e <= half_width) {
            return None;
        }
    }
    Some(chosen.spans)
}

/// The closed spline of a quadrant-symmetric curve from its quarter chain over `[0, π/2]` (see
/// [`Anchor`], [`Finish`]): the quarter's arcs and their images under `t ↦ π − t`, `t ↦ −t` and
/// `t ↦ t + π`, in order from the start vertex at `vertex` (0, π/2, π or 3π/2), the arc through
/// the start split there, with parameters counted from `t_start`. `None` if the arcs do not tile
/// the curve.
fn mirror_quarter(
    quarter: &[Span],
    anchor: Anchor,
    finish: Finish,
    vertex: f64,
    t_start: f64,
) -> Option<Vec<Span>> {
    let last = quarter.len().checked_sub(1)?;
    // The quarter's whole arcs, `(t0, t1, k, error)`.
    let mut arcs: Vec<Span> = Vec::with_capacity(4 * quarter.len());
    for (i, span) in quarter.iter().enumerate() {
        let mut arc = *span;
        if i == 0 && anchor == Anchor::HalfTangent {
            arc.t0 = -arc.t1;
        }
        if i == last && finish == Finish::HalfTangent {
            arc.t1 = PI - arc.t0;
        }
        arcs.push(arc);
    }
    let images: Vec<Span> = arcs
        .iter()
        .flat_map(|a| {
            [
                *a,
                Span {
                    t0: PI - a.t1,
                    t1: PI - a.t0,
                    ..*a
                },
                Span {
                    t0: -a.t1,
                    t1: -a.t0,
                    ..*a
                },
                Span {
                    t0: a.t0 + PI,
                    t1: a.t1 + PI,
                    ..*a
                },
            ]
        })
        .collect();
    // Each arc once, counted from the start vertex: its start in [0, 2π).
    let mut placed: Vec<Span> = Vec::with_capacity(images.len());
    for a in images {
        let shift = (a.t0 - vertex).rem_euclid(TAU) - (a.t0 - vertex);
        let mut a = Span {
            t0: a.t0 - vertex + shift,
            t1: a.t1 - vertex + shift,
            ..a
        };
        // Angles a rounding below a full turn are the start.
        if TAU - a.t0 <= 1e-9 {
            a.t0 -= TAU;
            a.t1 -= TAU;
        }
        if !placed.iter().any(|p| (p.t0 - a.t0).abs() <= 1e-9) {
            placed.push(a);
        }
    }
    placed.sort_by(|a, b| a.t0.total_cmp(&b.t0));
    // The arc whose start is before the start vertex (at the end of the list, running past 2π)
    // is split at it.
    let mut out: Vec<Span> = Vec::with_capacity(placed.len() + 1);
    let wrap = placed.iter().position(|a| a.t1 > TAU + 1e-9);
    let mut tail = None;
    for (i, a) in placed.iter().enumerate() {
        if Some(i) == wrap {
            out.push(Span {
                t0: 0.0,
                t1: a.t1 - TAU,
                ..*a
            });
            tail = Some(Span { t1: TAU, ..*a });
        } else {
            out.push(*a);
        }
    }
    out.sort_by(|a, b| a.t0.total_cmp(&b.t0));
    out.extend(tail);
    // The arcs must tile [0, 2π] end to start; snap their joints together and shift to the start.
    if out.first()?.t0.abs() > 1e-9 || (out.last()?.t1 - TAU).abs() > 1e-9 {
        return None;
    }
    for w in out.windows(2) {
        if (w[0].t1 - w[1].t0).abs() > 1e-9 {
            return None;
        }
    }
    let n = out.len();
    for i in 0..n {
        let t0 = if i == 0 { 0.0 } else { out[i - 1].t1 };
        let t1 = if i + 1 == n { TAU } else { out[i].t1 };
        out[i].t0 = t0;
        out[i].t1 = t1;
    }
    for span in &mut out {
        span.t0 += t_start;
        span.t1 += t_start;
    }
    Some(out)
}

/// The spline of a closed symmetric curve from a start off its axes: chains of evened-out arcs
/// from the start to an arc centred on the next vertex, from there to one centred on the vertex
/// after, and so on round, the last chain closing at the start. A vertex within reach of the
/// start (closer to it than half the longest centred arc there) gets no arc of its own, and the
/// spline then leaves and reaches the start tangent to the curve, as it does when `tangent` is
/// set. `None` when a chain cannot be built or a re-measured arc does not fit.
fn vertex_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    tangent: bool,
    target: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    let t_end = t_start + TAU;
    let first_vertex = (t_start / FRAC_PI_2).floor() + 1.0;
    let vertices: Vec<f64> = (0..4)
        .map(|j| (first_vertex + j as f64) * FRAC_PI_2)
        .collect();
    // Half the longest centred arc within the target at a vertex.
    let reach = |v: f64| {
        let chain = Chain {
            curve,
            s,
            at: v,
            top: v + FRAC_PI_2,
            anchor: Anchor::Centred,
        };
        chain.first(target, None).map(|arc| arc.t1 - v)
    };
    let near_start = |v: f64| {
        let gap = (v - t_start).min(t_end - v);
        reach(v).is_none_or(|r| gap < r)
    };
    let kept: Vec<f64> = vertices.into_iter().filter(|&v| !near_start(v)).collect();
    let tangent = tangent || kept.len() < 4;
    let (first_bend, last_bend) = if tangent {
        (Bend::TangentAtStart, Bend::TangentAtEnd)
    } else {
        (Bend::Balanced, Bend::Balanced)
    };
    let mut spans: Vec<Span> = Vec::new();
    let mut at = t_start;
    let mut anchor = Anchor::Joint(first_bend);
    let ends = kept
        .iter()
        .map(|&v| (v, Finish::Centred))
        .chain(std::iter::once((t_end, Finish::Joint(last_bend))));
    for (top, finish) in ends {
        if top.is_nan() || top <= at {
            return None;
        }
        let chain = Chain {
            curve,
            s,
            at,
            top,
            anchor,
        };
        let (arcs, greedy) = chain.greedy(&[finish], target).pop().flatten()?;
        let evened = chain.even(finish, arcs, &greedy, target)?;
        at = evened.last()?.t1;
        spans.extend(evened);
        anchor = Anchor::Joint(Bend::Balanced);
    }
    if (at - t_end).abs() > 1e-9 {
        return None;
    }
    for span in &spans {
        if !precise_error(curve, s, span).is_some_and(|e| e <= half_width) {
            return None;
        }
    }
    Some(spans)
}

/// The general construction (see the module docs) over `[t_start, t_end]`.
fn general_spline(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    t_end: f64,
    closed: bool,
    target: f64,
    half_width: f64,
) -> Option<Vec<Span>> {
    let chain = |first: Bend| Chain {
        curve,
        s,
        at: t_start,
        top: t_end,
        anchor: Anchor::Joint(first),
    };
    let plain = chain(Bend::Balanced);
    let finish = Finish::Joint(Bend::Balanced);
    let (n, greedy) = plain.greedy(&[finish], target).pop().flatten()?;
    // At most a quarter more arcs than the plain greedy spline's (one at least).
    let budget = n + (n / 4).max(1);
    // Acceptable: small kinks, and (for a closed run) a closing joint no worse than the largest
    // inner one.
    let acceptable = |c: &Candidate| {
        let k = kinks(curve, s, &c.spans);
        let closing = k.last().copied().unwrap_or(0.0);
        let inner = k[..k.len().saturating_sub(1)]
            .iter()
            .copied()
            .fold(0.0, f64::max);
        let kink = if closed { c.kink } else { inner };
        kink <= KINK_LIMIT_DEG && (!closed || closing <= inner + 1e-9) && c.spans.len() <= budget
    };
    let evened = |c: &Chain<'_, _>, f: Finish, arcs: usize, greedy: &[Span]| {
        c.even(f, arcs, greedy, target)
            .and_then(|spans| remeasure(curve, s, t_start, &spans, half_width))
            .map(|spans| Candidate::new(curve, s, spans))
    };
    let mut candidates: Vec<Candidate> = Vec::new();
    match evened(&plain, finish, n, &greedy) {
        Some(c) => candidates.push(c),
        None => candidates.extend(
            remeasure(curve, s, t_start, &greedy, half_width)
                .map(|spans| Candidate::new(curve, s, spans)),
        ),
    }
    // Arcs centred on the vertices (re-measured already), leaving the start as a plain joint or
    // tangent to the curve.
    if closed && curve.symmetric() {
        for tangent in [false, true] {
            if candidates.iter().any(acceptable) {
                break;
            }
            candidates.extend(
                vertex_spline(curve, s, t_start, tangent, target, half_width)
                    .map(|spans| Candidate::new(curve, s, spans)),
            );
        }
    }
    if !candidates.iter().any(acceptable) {
        // The first and last arcs tangent to the curve at the start: no closing kink.
        let tangent = chain(Bend::TangentAtStart);
        let tangent_finish = Finish::Joint(Bend::TangentAtEnd);
        if let Some((m, g)) = tangent.greedy(&[tangent_finish], target).pop().flatten()
            && m <= budget
        {
            candidates.extend(evened(&tangent, tangent_finish, m, &g));
            if !candidates.iter().any(acceptable) && m < budget {
                candidates.extend(evened(&tangent, tangent_finish, m + 1, &g));
            }
        }
        if !candidates.iter().any(acceptable) {
            candidates.extend(evened(&plain, finish, n + 1, &greedy));
        }
    }
    // The fewest arcs among the acceptable ones; else, within the budget, the fewest whose
    // largest kink is within half as much again as the smallest found. Ties: the smaller kink.
    candidates.retain(|c| c.spans.len() <= budget);
    let least_kink = candidates
        .iter()
        .map(|c| c.kink)
        .fold(f64::INFINITY, f64::min);
    let chosen = candidates
        .iter()
        .filter(|c| acceptable(c))
        .min_by(|a, b| {
            a.spans
                .len()
                .cmp(&b.spans.len())
                .then(a.kink.total_cmp(&b.kink))
        })
        .or_else(|| {
            candidates
                .iter()
                .filter(|c| c.kink <= 1.5 * least_kink)
                .min_by(|a, b| {
                    a.spans
                        .len()
                        .cmp(&b.spans.len())
                        .then(a.kink.total_cmp(&b.kink))
                })
        })?;
    Some(chosen.spans.clone())
}

/// Re-measures each stretch precisely; one that does not fit is shortened until it does (and
/// becomes balanced), and a further balanced arc covers the rest up to the planned end. Arcs that
/// fit stay as planned, tangent first and last arcs included.
fn remeasure(
    curve: &impl ConvexCurve,
    s: f64,
    t_start: f64,
    planned: &[Span],
    half_width: f64,
) -> Option<Vec<Span>> {
    let mut out = Vec::with_capacity(planned.len());
    let mut t0 = t_start;
    let mut i = 0;
    while i < planned.len() {
        let end = planned[i].t1;
        let mut t1 = end;
        let span = loop {
            // The planned arc as it is, when it still starts where planned.
            let fitted = if t0 == planned[i].t0 && t1 == end {
                precise_error(curve, s, &planned[i]).map(|error| Span {
                    error,
                    ..planned[i]
                })
            } else {
                fit_span(curve, s, t0, t1, Bend::Balanced, true)
            };
            match fitted {
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
        if t1 >= end {
            i += 1;
        }
    }
    Some(out)
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
