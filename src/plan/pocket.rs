//! Pockets: an elliptical pocket cleared by rings at a stepover before its finishing contour.
//!
//! # The rings are level sets of the distance to the edge
//!
//! Let `E` be the closed ellipse (semi-axes `a ≥ b`, eccentricity `e² = 1 − b²/a²`) and
//! `δ(q)` the distance of a point `q` inside it from the ellipse curve. The level set
//! `L(δ) = {q : δ(q) = δ}` is the boundary of the eroded ellipse `K(δ) = {q : δ(q) ≥ δ}`, the set
//! of centres of the discs of radius `δ` inside `E`. `K(δ)` is convex (the erosion of a convex set
//! by a disc is convex), and the largest disc in `E` has radius `b` (its centre is the ellipse's),
//! so `L(δ)` exists for `0 < δ < b` and shrinks to the centre at `δ = b`.
//!
//! The inward normal at `P(t)` reaches the major axis after `m(t) = (b/a)·W(t)`,
//! `W(t) = √(b² cos² t + a² sin² t)`, at `x = a e² cos t` in the ellipse's own frame; the segment
//! of the major axis `|x| ≤ a e² = a − b²/a` is where two boundary points are equally near (the
//! medial axis). Up to the major axis the nearest boundary point of `P(t) − δ N(t)` is `P(t)`, so:
//!
//! * for `δ < b²/a = min m(t)` (the smallest radius of curvature), `L(δ)` is the whole regular
//!   inward parallel curve `O_δ(t) = P(t) − δ N(t)`, kept as
//!   [`ExactPath::EllipseParallel`]` { inset: δ }` (below [`REGULAR_SHARE`]` · b²/a`; the last
//!   thousandth goes to the polygon below);
//! * for `b²/a ≤ δ < b`, `L(δ)` is the parallel curve with its two swallowtails trimmed away: the
//!   points with `m(t) ≥ δ`, i.e. `W(t) ≥ δ a / b`, i.e. `t ∈ [t*, π − t*]` and its mirror
//!   `[π + t*, 2π − t*]`, where `sin² t* = (δ² a²/b² − b²) / (a² − b²)`. There the offset
//!   point's minor-axis coordinate `sin t (b − δ a / W(t))` is zero: the two arcs meet in two
//!   corners on the major axis, at `x = ±a e² cos t*` (on the medial axis). The kept arcs are
//!   regular (`ρ(t) = W³/(ab) ≥ m(t) ≥ δ`) and convex. Such a ring is an [`ExactPath::Contour`] of
//!   straight chords whose vertices lie on the exact level set (see [`level_set_polygon`]).
//!
//! # No islands
//!
//! Every tool-centre path here is a level set, so the argument runs on `δ`:
//!
//! 1. *Outward.* A point `q` with `δ(q) ≥ δ_k` is exactly `δ(q) − δ_k` from `L(δ_k)`: the disc
//!    `B(q, ρ)` lies in `K(δ_k)` if and only if `B(q, ρ + δ_k)` lies in `E`.
//! 2. *Inward, regular levels only.* If `δ(q) < δ_{k+1} ≤ b²/a`, then with `P(t)` the nearest
//!    boundary point of `q`, the point `P(t) − δ_{k+1} N(t)` is on `L(δ_{k+1})` (the normal has not
//!    reached the major axis, `m(t) ≥ b²/a`), `δ_{k+1} − δ(q)` from `q`. Past `b²/a` this fails
//!    near the major axis: the corners of `L(δ)` move along the medial axis faster than `δ`
//!    grows, so a point between two trimmed rings can be more than the gap from the inner one.
//!
//! The finish contour is `L(r)` (`r` the tool radius, `r < b²/a`, which the planner checks). With
//! rings `L(δ_1) … L(δ_n)`, `r = δ_0 < δ_1 < … < δ_n`, each drawn within `h` of its level set on
//! the inside (chords; `h = 0` for exact rings), a point `q` of the pocket is within the tool
//! radius `r` of a ring (or of the finish contour) when:
//!
//! * `δ(q) < r`: by (2) it is `r − δ(q) ≤ r` from the finish contour;
//! * `δ(q) ≥ δ_n`: by (1) it is at most `b − δ_n + h` from ring `n`, so `δ_n ≥ b − r + h`;
//! * `δ_k ≤ δ(q) < δ_{k+1}`: by (1) it is at most `δ(q) − δ_k + h` from ring `k`, so every gap
//!   `g ≤ r − h` suffices; while all the rings are regular, (1) and (2) together give
//!   `min(δ(q) − δ_k, δ_{k+1} − δ(q)) ≤ g/2` and a gap up to `2r − 2h` suffices.
//!
//! So [`ring_levels`] spaces the rings evenly, `δ_k = r + k g`, with the fewest rings `n` such
//! that `g ≤ min(stepover, 2r − 2h)` when every ring is regular, and `g ≤ min(stepover, r − h)`
//! when some ring is trimmed. The second bound is why a stepover above about half the tool
//! diameter (more than common practice, 30–50 % of the diameter) is narrowed on pockets with
//! trimmed rings: rings a tool diameter apart leave islands along the major axis there
//! (`tests/pockets.rs` finds them). When `b − r ≤ r` the finish contour alone reaches the centre
//! and there are no rings.
//!
//! With rings at exactly these levels, every point of the pocket is within `r` of a tool-centre
//! path (the chords' deviation is already spent in the spacing); the fitter then draws each path
//! within the job's tolerance `ε`, so the program leaves no point more than `r + ε` from the
//! tool centre.
//!
//! # No gouge, and the links
//!
//! Every ring point has `δ ≥ δ_1 > r`: chords between points of `L(δ)` stay in the convex
//! `K(δ)`. The rings run counter-clockwise (climb milling with a clockwise spindle, like the
//! finish contour), innermost first, each starting where it meets the +major-axis side (the
//! corner, or `O_δ(0)` for a regular ring). `δ` falls monotonically along the major axis from the
//! centre outwards, so each link (plunge at the centre → innermost ring, ring `k+1` → ring `k`,
//! and, with a straight lead-in, ring 1 → the finish contour's start `O_r(0)`) is a short
//! straight move outwards along the major axis through material being removed, never nearer the
//! edge than the ring it reaches.

use super::{PlanError, PlanOptions};
use crate::geom::{Contour, ContourError, Element, ExactPath, ParallelCurve};
use crate::geom::{Ellipse, Point, Segment, Vec2};
use std::f64::consts::PI;

/// The smallest stepover accepted, as a share of the tool diameter. Below 1 % the rings would
/// barely engage the tool and their number would grow without bound; this is a sanity limit of
/// ours, not a standard (common practice is 30–50 %).
pub const MIN_STEPOVER_SHARE: f64 = 0.01;

/// The largest chord deviation (mm) of a trimmed ring from its exact level set: half the usual
/// 0.01 mm program tolerance, so the rings look as smooth as the finish contour. The coverage
/// argument spends it by spacing the rings this much closer (module docs), so its value affects
/// the number of chords (and the spacing by a hair), never the guarantee.
pub const RING_CHORD_TOLERANCE: f64 = 0.005;

/// The chord deviation of trimmed rings is also kept below this share of the largest gap allowed,
/// so that small tools with small stepovers keep most of their spacing.
pub const CHORD_SHARE_OF_GAP: f64 = 0.05;

/// Rings with an inset below this share of `b²/a` are exact parallel curves, fitted by arcs like
/// the finish contour (far fewer moves than chords); from it on they are chord polygons. The
/// parallel curve is regular up to `b²/a` itself, but its curvature grows without bound there;
/// the last thousandth is left to the polygon, which needs no curvature bound and is exact on its
/// vertices, so the fitter never meets a curve on the edge of its domain.
pub const REGULAR_SHARE: f64 = 0.999;

/// The most chords a ring may have; the greedy construction needs far fewer for any ellipse the
/// planner accepts (a guard against runaway loops, not a limit met in practice).
const MAX_CHORDS: usize = 1_000_000;

/// The insets of a pocket's clearing rings and how they were chosen.
#[derive(Debug, Clone, PartialEq)]
pub struct RingLevels {
    /// The rings' distances from the edge (mm), innermost (largest) first.
    pub insets: Vec<f64>,
    /// The gap between consecutive levels, from the finish contour at `r` inwards (mm); zero
    /// when there are no rings.
    pub gap: f64,
    /// The largest gap the proof allows for this pocket and stepover (mm).
    pub largest_gap: f64,
    /// The chord deviation allowed for polygon rings (mm); zero when every ring is exact.
    pub chord_tolerance: f64,
}

/// The ring levels for the pocket `e`, tool radius `r` (with `0 < r < b²/a`) and `stepover`
/// (with `0 < stepover ≤ 2r`): `δ_k = r + k·gap`, `k = 1 … n`, with `n` the fewest rings whose
/// even gap keeps within the bounds of the module docs and `δ_n = b − r + h`. Empty when
/// `b ≤ 2r`. Returned innermost first.
pub fn ring_levels(e: &Ellipse, r: f64, stepover: f64) -> RingLevels {
    let b = e.b();
    let none = RingLevels {
        insets: Vec::new(),
        gap: 0.0,
        largest_gap: 0.0,
        chord_tolerance: 0.0,
    };
    // Outside the stated domain (which `clearing_rings` enforces) there are no rings.
    let valid = r > 0.0 && r.is_finite() && stepover > 0.0 && stepover.is_finite();
    if !valid || b - r <= r {
        return none;
    }
    let threshold = REGULAR_SHARE * ParallelCurve::limit_of(e);
    let trimmed = b - r >= threshold;
    let (largest_gap, h) = if trimmed {
        // Trimmed (or polygon) rings: the outward argument alone, gap + h ≤ r.
        let bound = stepover.min(r);
        let h = RING_CHORD_TOLERANCE.min(CHORD_SHARE_OF_GAP * bound);
        (bound.min(r - h), h)
    } else {
        // Every ring exact and regular: the gap up to 2r (h = 0).
        (stepover.min(2.0 * r), 0.0)
    };
    let span = (b - r + h) - r;
    let n = (span / largest_gap).ceil().max(1.0) as usize;
    let gap = span / n as f64;
    RingLevels {
        insets: (1..=n).rev().map(|k| r + k as f64 * gap).collect(),
        gap,
        largest_gap,
        chord_tolerance: h,
    }
}

/// The clearing rings of the pocket `e` for a tool of radius `r`, innermost first, at the
/// levels of [`ring_levels`] for `opts.pocket_stepover`: exact parallel curves below
/// [`REGULAR_SHARE`]` · b²/a`, chord polygons ([`level_set_polygon`]) from there on. Every ring
/// runs counter-clockwise from its point on the +major-axis side.
///
/// Refuses a stepover that is not a number, not positive, below [`MIN_STEPOVER_SHARE`] of the
/// diameter or above the diameter, and a tool radius the ellipse cannot take (`r ≥ b²/a`).
pub fn clearing_rings(
    name: &str,
    e: &Ellipse,
    r: f64,
    opts: &PlanOptions,
    warnings: &mut Vec<String>,
) -> Result<Vec<ExactPath>, PlanError> {
    let d = 2.0 * r;
    if !(r > 0.0 && r.is_finite()) {
        return Err(PlanError::BadTool(d));
    }
    let limit = ParallelCurve::new(*e, r, super::GOUGE_MARGIN)
        .map_err(|too_deep| PlanError::EllipseTooTight {
            feature: name.to_string(),
            diameter: d,
            radius: r,
            limit: too_deep.limit,
            max_diameter: 2.0 * too_deep.limit,
        })?
        .limit();
    let s = opts.pocket_stepover;
    let problem = if !(s.is_finite() && s > 0.0) {
        Some("not a positive number")
    } else if s > d {
        Some("more than the tool diameter, which would leave ridges of stock between the rings")
    } else if s < MIN_STEPOVER_SHARE * d {
        Some("below 1 % of the tool diameter, which would take an unreasonable number of rings")
    } else {
        None
    };
    if let Some(problem) = problem {
        return Err(PlanError::BadStepover {
            feature: name.to_string(),
            stepover: s,
            problem,
            diameter: d,
            min: MIN_STEPOVER_SHARE * d,
        });
    }
    let levels = ring_levels(e, r, s);
    if !levels.insets.is_empty() && levels.largest_gap < s {
        warnings.push(format!(
            "{name}: clearing rings {:.3} mm apart, closer than the {s} mm stepover asked for: the \
             inner rings have corners on the major axis, and rings further apart would leave \
             islands of stock",
            levels.gap
        ));
    }
    let threshold = REGULAR_SHARE * limit;
    levels
        .insets
        .iter()
        .map(|&inset| {
            if inset < threshold {
                Ok(ExactPath::EllipseParallel {
                    ellipse: *e,
                    inset,
                    start: 0.0,
                    clockwise: false,
                })
            } else {
                polygon_contour(&level_set_polygon(e, inset, levels.chord_tolerance))
                    .map(ExactPath::Contour)
                    .map_err(|error| PlanError::BrokenPath {
                        feature: name.to_string(),
                        error,
                    })
            }
        })
        .collect()
}

/// The level set `L(δ)` (`0 < δ < b`) as a closed polygon, counter-clockwise from its point on
/// the +major-axis side; the last vertex repeats the first. Every vertex lies on `L(δ)` (up to
/// rounding: the points `O_δ(t)` of the kept arcs, and the corners `(±a e² cos t*, 0)` in the
/// ellipse's frame), and every chord lies within `chord_tolerance` of `L(δ)` on its inside
/// (guaranteed: see below). For `δ < b²/a` the polygon is inscribed in the regular parallel
/// curve, whose ends of the major axis are then vertices too.
///
/// Chord bound: a convex arc lies in the triangle of its chord and its end tangents; when the
/// tangents turn by `φ < π` over the arc, that triangle is at most `(L/2) tan(φ/2)` high (`L` the
/// chord length; the height is largest with equal base angles). Chords are placed greedily, each
/// as long as this bound allows (bisection in the anomaly `t`); the tangent of `O_δ` at `t` is
/// that of the ellipse, `P′(t)`, on the kept arcs. The bound overestimates a circle's true
/// sagitta `L φ/8` about twofold, so the polygon has about √2 times the fewest chords
/// (docs/sources.md P3.2).
///
/// A `chord_tolerance` that is not positive gives the corners and the ends of each arc only.
pub fn level_set_polygon(e: &Ellipse, inset: f64, chord_tolerance: f64) -> Vec<Point> {
    let (a, b) = (e.a(), e.b());
    let axis = Vec2::from_angle(e.angle());
    let on_axis = |x: f64| e.centre() + axis * x;
    // t* and the corner's abscissa; t* = 0 for a regular level (no corners, the arcs meet at
    // O_δ(0) and O_δ(π)).
    let (t_star, corner) = if ParallelCurve::any(*e, inset).is_regular() {
        (0.0, a - inset)
    } else {
        let s2 = ((inset * inset * a * a / (b * b) - b * b) / (a * a - b * b)).clamp(0.0, 1.0);
        let t = s2.sqrt().asin();
        (t, (a * a - b * b) / a * t.cos())
    };
    let right = on_axis(corner);
    let left = on_axis(-corner);
    let mut out = vec![right];
    chords(e, inset, t_star, PI - t_star, chord_tolerance, &mut out);
    out.push(left);
    chords(
        e,
        inset,
        PI + t_star,
        2.0 * PI - t_star,
        chord_tolerance,
        &mut out,
    );
    out.push(right);
    out
}

/// Appends the interior vertices of the greedy chords of `O_δ` over `[t0, t1]` (not the ends).
fn chords(e: &Ellipse, inset: f64, t0: f64, t1: f64, tol: f64, out: &mut Vec<Point>) {
    let usable = tol > 0.0 && t1 > t0;
    if !usable {
        return;
    }
    let point = |t: f64| e.inward_offset_point(t, inset);
    let height = |u: f64, v: f64| {
        let (du, dv) = (e.derivative(u), e.derivative(v));
        let phi = du.cross(dv).atan2(du.dot(dv));
        if !(0.0..PI).contains(&phi) {
            return f64::INFINITY;
        }
        0.5 * point(u).distance(point(v)) * (0.5 * phi).tan()
    };
    let mut t = t0;
    for _ in 0..MAX_CHORDS {
        if height(t, t1) <= tol {
            return;
        }
        // The largest step that keeps the bound: `lo` always passes, `hi` fails.
        let (mut lo, mut hi) = (t, t1);
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if height(t, mid) <= tol {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        if lo <= t {
            return;
        }
        t = lo;
        out.push(point(t));
    }
}

/// A closed polygon (last vertex = first) as a contour of lines.
fn polygon_contour(points: &[Point]) -> Result<Contour, ContourError> {
    let sides = points
        .windows(2)
        .map(|w| Element::Line(Segment::new(w[0], w[1])))
        .collect();
    Contour::new(sides, "", Vec::new())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corners_and_vertices_lie_on_the_level_set() {
        // Independent computation: Eberly's point-to-ellipse distance (geom) of every vertex.
        let e = Ellipse::new(Point::new(3.0, -2.0), 40.0, 10.0, 0.4).unwrap();
        for &inset in &[1.0, 2.5, 5.0, 9.0] {
            let poly = level_set_polygon(&e, inset, 0.005);
            assert!(poly.len() > 20);
            for p in &poly {
                let (dist, _) = e.distance_to(*p);
                assert!((dist - inset).abs() < 1e-9, "inset {inset}: {dist}");
            }
        }
    }
}
