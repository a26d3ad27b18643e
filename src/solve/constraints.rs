//! Conics through `p` points and tangent to `t` lines, `p + t = 5`: every real solution.
//!
//! # Counts
//!
//! For points and lines in general position the numbers of complex solutions are 1, 2, 4, 4, 2, 1
//! for `p = 5, 4, 3, 2, 1, 0` (`2^min(t, 5−t)`: F. Sottile, "3264 real conics", 2008; the table of
//! A. Bashelor, A. Ksir, W. Traves, Amer. Math. Monthly 2008, as quoted from memory in
//! docs/sources.md M5, where a generic solver confirms the counts). Real solutions come in even
//! numbers apart from the single one of 5+0 and 0+5: 4+1 and 1+4 give 2 or 0, 3+2 and 2+3 give 4
//! or 0 (docs/sources.md M5 and surprise S4).
//!
//! # Methods (all closed form, in homogeneous coordinates)
//!
//! Points are `x = (x, y, 1)`, lines `l = (n_x, n_y, −c)` for `n·x = c`. A line is a point of the
//! dual plane and the tangent lines of a conic `C` are the points of its dual `adj(C)`, so every
//! case with more lines than points is solved by the *same* routine as its mirror case with the
//! roles of points and lines swapped, and the dual conics found are turned back by one more
//! adjugate. 0+5 is therefore exactly 5+0 on the dual plane, 1+4 exactly 4+1, 2+3 exactly 3+2.
//!
//! * **5+0**: the null vector of the 5×6 design matrix (rows `[x², xy, y², xw, yw, w²]`), from the
//!   SVD of the matrix padded to 6×6 with a zero row.
//! * **4+1**: the pencil `μ C₁ + λ C₂` through the four points `A, B, C, D` is spanned by the line
//!   pairs `AB·CD` and `AC·BD`. With `P`, `Q` two points spanning the line, the restriction
//!   `(P + sQ)ᵀ C (P + sQ)` has a double root exactly when `(PᵀCQ)² − (PᵀCP)(QᵀCQ) = 0`, a
//!   homogeneous quadratic in `(μ, λ)`; it is solved without dividing by either coefficient
//!   (roots `(q_c, q)` and `(q, q_a)` with `q = −(q_b + sgn(q_b)√disc)/2`), so a root at `μ = 0`
//!   or `λ = 0` is not lost.
//! * **3+2**: docs/sources.md M5 "Method A". In the frame `X = l₁·x`, `Y = l₂·x`, `W = l₀·x` every
//!   conic touching `X = 0` and `Y = 0` is `(aX + bY + cW)² = m XY`. With `k = a l₁ + b l₂ + c l₀`
//!   (the chord of contact) this reads `(k·x)² = m (l₁·x)(l₂·x)`, so the third frame line `l₀`
//!   cancels and no choice of it is needed: `C = k kᵀ − m (l₁l₂ᵀ + l₂l₁ᵀ)/2`. Through the points,
//!   `k·xᵢ = sᵢ √(m Xᵢ Yᵢ)` with `m = ±1` the common sign of the `Xᵢ Yᵢ`: one 3×3 matrix (rows
//!   `xᵢ`), four right-hand sides for the signs `s = (+, ±, ±)`. Parallel lines need no special
//!   case. When the `Xᵢ Yᵢ` differ in sign there is no real solution (every real point of
//!   `(k·x)² = m XY` has `XY` of the sign of `m`).
//!
//! The work is done in a normalised frame (origin at the median of the points and of the lines'
//! crossings, unit the median distance from it) and mapped back exactly. Each solution is
//! classified in that frame, where the numbers are well scaled; its kind and ellipse are read from
//! the line conic when the routine gives it directly or in closed form (0+5, 1+4, 2+3, 3+2), which
//! stays accurate for very thin ellipses, and from the point conic otherwise (5+0, 4+1). Its residuals
//! are measured in the same frame, each constraint on the conic it is linear in (points on `C`,
//! lines on `adj C`); see [`ConicSolution`].
//!
//! The world-frame [`Conic`] of a solution is exact up to rounding, but for a very thin ellipse
//! far from the origin its adjugate can drown in rounding, so tangency is better judged on the
//! solution's residuals or on its [`Ellipse`] (support function) than on
//! [`Conic::tangency_residual`] of the world conic.
//!
//! # Tolerances
//!
//! * [`INCIDENCE_RELATIVE`] = 1e-9: with points and lines as unit homogeneous 3-vectors in the
//!   normalised frame, two points (lines) coincide when `|u × v| ≤ 1e-9`, three are collinear
//!   (concurrent) when `|det[u v w]| ≤ 1e-9` (for points: twice the triangle's area over the
//!   square of the frame's unit, roughly), and a point lies on a line when `|u·v| ≤ 1e-9`.
//! * [`DOUBLE_ROOT_RELATIVE`] = 1e-12: the 4+1 quadratic has a double root when
//!   `|q_b² − 4 q_a q_c| ≤ 1e-12 (q_b² + 4|q_a q_c|)` (one solution is reported) and no real root
//!   below `−1e-12 (…)`.
//! * Classification: [`super::conic`] ([`super::conic::CLASSIFY_RELATIVE`]).

use super::conic::{Conic, ConicKind, DualConic, NotAnEllipse, adjugate, matrix_from_coefficients};
use crate::geom::{Ellipse, Line, Point};
use nalgebra::{Matrix3, Matrix6, Vector3};
use serde::Serialize;

/// Relative tolerance for coincident, collinear or concurrent, and incident points and lines
/// (module docs).
pub const INCIDENCE_RELATIVE: f64 = 1e-9;

/// Relative tolerance for a double root of the 4+1 (and 1+4) quadratic (module docs).
pub const DOUBLE_ROOT_RELATIVE: f64 = 1e-12;

type V3 = Vector3<f64>;

/// One real conic through the given points and tangent to the given lines.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ConicSolution {
    /// The conic in world coordinates (normalised).
    pub conic: Conic,
    /// What it is (classified in the normalised frame).
    pub kind: ConicKind,
    /// The ellipse when it is one; otherwise why it cannot be cut.
    pub ellipse: Result<Ellipse, NotAnEllipse>,
    /// The largest relative point residual `|xᵀCx| / (‖C‖_F ‖x‖²)` over the points, measured in
    /// the normalised frame (0 when there are none).
    pub point_residual: f64,
    /// The largest relative tangency residual `|lᵀ adj(C) l| / (‖adj C‖_F ‖l‖²)` over the lines,
    /// measured in the normalised frame (0 when there are none).
    pub tangency_residual: f64,
}

/// Why no conic list could be given. Points and lines are numbered from 1 in the order given.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ConstraintError {
    #[error(
        "a conic is fixed by five conditions, but {points} point(s) and {lines} line(s) were \
         given; give points to pass through and lines to touch, five in all"
    )]
    WrongCount { points: usize, lines: usize },
    #[error("{what} {index} has a coordinate that is not a finite number")]
    NotFinite { what: &'static str, index: usize },
    #[error(
        "points {first} and {second} coincide (at ({x:.6}, {y:.6})); each point must be a \
         different place. Drop one of them"
    )]
    CoincidentPoints {
        first: usize,
        second: usize,
        x: f64,
        y: f64,
    },
    #[error(
        "lines {first} and {second} are the same line; a line can be touched only once. Drop \
         one of them"
    )]
    CoincidentLines { first: usize, second: usize },
    #[error(
        "points {0}, {1} and {2} lie on one straight line; a conic through them would contain \
         that line (a degenerate pair of lines). Move or drop one of them",
        .points[0], .points[1], .points[2]
    )]
    CollinearPoints { points: [usize; 3] },
    #[error(
        "lines {0}, {1} and {2} all pass through ({x:.6}, {y:.6}); only a degenerate conic \
         touches three lines through one point. Move or drop one of them",
        .lines[0], .lines[1], .lines[2]
    )]
    ConcurrentLines { lines: [usize; 3], x: f64, y: f64 },
    #[error(
        "lines {0}, {1} and {2} are parallel; only a degenerate conic touches three parallel \
         lines. Move or drop one of them",
        .lines[0], .lines[1], .lines[2]
    )]
    ParallelLines { lines: [usize; 3] },
    #[error(
        "point {point} lies on line {line}: a conic through it that touches the line must touch \
         it exactly there, which makes it a point of contact, not a free point. Give the point \
         of contact as such, or move the point off the line"
    )]
    PointOnLine { point: usize, line: usize },
    #[error("no real conic passes through the points and touches the lines: {reason}")]
    NoRealSolution { reason: String },
    #[error("the points and lines are too close to a degenerate configuration: {reason}")]
    Degenerate { reason: String },
}

/// Every real conic through `points` and tangent to (the infinite lines) `lines`, with
/// `points.len() + lines.len() = 5`: 1, 2 or 0, 4 or 0, 4 or 0, 2 or 0, 1 solutions for
/// 5, 4, 3, 2, 1, 0 points (module docs). Each solution is classified; only ellipses carry an
/// [`Ellipse`], the others the reason they cannot be cut.
///
/// Tangency is to the infinite lines: a caller that needs the point of contact on a segment must
/// check it.
///
/// Order of the solutions: 4+1 and 1+4 in the order of the roots `(q_c, q)`, `(q, q_a)`; 3+2 and
/// 2+3 by the signs `(s₂, s₃)` = `(+,+)`, `(+,−)`, `(−,+)`, `(−,−)` (docs/sources.md M5 numbering).
pub fn conics_through_and_tangent(
    points: &[Point],
    lines: &[Line],
) -> Result<Vec<ConicSolution>, ConstraintError> {
    check_input(points, lines)?;
    let frame = Frame::new(points, lines);
    let hp: Vec<V3> = points.iter().map(|&q| frame.point(q)).collect();
    let hl: Vec<V3> = lines.iter().map(|l| frame.line(l)).collect();
    check_configuration(points, lines, &hp, &hl)?;
    let (found, dual) = solve_local(&hp, &hl)?;
    if found.is_empty() {
        let reason = no_real_reason(points, lines, dual);
        return Err(ConstraintError::NoRealSolution { reason });
    }
    found
        .into_iter()
        .map(|f| solution(&frame, f, dual, &hp, &hl))
        .collect()
}

/// Five conditions in all, every coordinate finite.
fn check_input(points: &[Point], lines: &[Line]) -> Result<(), ConstraintError> {
    let (p, t) = (points.len(), lines.len());
    if p + t != 5 {
        return Err(ConstraintError::WrongCount {
            points: p,
            lines: t,
        });
    }
    if let Some(i) = points.iter().position(|q| !q.is_finite()) {
        return Err(ConstraintError::NotFinite {
            what: "point",
            index: i + 1,
        });
    }
    if let Some(i) = lines
        .iter()
        .position(|l| l.homogeneous().iter().any(|v| !v.is_finite()))
    {
        return Err(ConstraintError::NotFinite {
            what: "line",
            index: i + 1,
        });
    }
    Ok(())
}

/// The conics found in the normalised frame for the homogeneous points `hp` and lines `hl`, and
/// whether they are dual (line) conics.
fn solve_local(hp: &[V3], hl: &[V3]) -> Result<(Vec<Found>, bool), ConstraintError> {
    Ok(match (hp.len(), hl.len()) {
        (5, 0) => (vec![Found::plain(through_five(hp))], false),
        (0, 5) => (vec![Found::plain(through_five(hl))], true),
        (4, 1) => (through_four_touching_one(hp, &hl[0]), false),
        (1, 4) => (through_four_touching_one(hl, &hp[0]), true),
        (3, 2) => (
            through_three_touching_two(hp, &hl[0], &hl[1])
                .map_err(|xy| mixed_sides_error(&xy, false))?,
            false,
        ),
        (2, 3) => (
            through_three_touching_two(hl, &hp[0], &hp[1])
                .map_err(|xy| mixed_sides_error(&xy, true))?,
            true,
        ),
        _ => unreachable!("p + t = 5 was checked"),
    })
}

/// Why no real conic exists when the 4+1 (or, `dual`, the 1+4) quadratic has no real root.
fn no_real_reason(points: &[Point], lines: &[Line], dual: bool) -> String {
    if dual {
        return "the pairs of tangents from the point to the conics touching the four lines \
             separate each other (Desargues' involution on the lines through the point has no \
             fixed line), so no real conic touching the four lines passes through the point. \
             (For the four sides of a convex bay, a point inside the bay and off its diagonals \
             always has two; Horwitz 2015, docs/sources.md M5)"
            .to_string();
    }
    let line = &lines[0];
    let left = points
        .iter()
        .filter(|&&q| line.signed_distance(q) > 0.0)
        .count();
    let position = if convex_position(points) {
        "are the corners of a convex quadrilateral"
    } else {
        "are not in convex position (one lies inside the triangle of the others)"
    };
    format!(
        "every conic through the four points crosses the line, and their pairs of \
         crossing points separate each other (Desargues' involution on the line has no \
         fixed point). Here the line has {} of the points on one side and {} on the \
         other, and the points {position}",
        left.max(4 - left),
        left.min(4 - left)
    )
}

/// Builds a [`ConicSolution`] from a conic found in the normalised frame (`dual`: a line conic).
///
/// The point conic `C` and line conic `D = adj C` are both needed: one is what the routine
/// found, the other its closed-form adjugate (3+2, 2+3) or, failing that, the cofactors. The
/// kind and ellipse are read from `D` whenever `D` was found directly or in closed form
/// ([`DualConic::classify`], [`DualConic::to_ellipse`]: accurate for thin ellipses), otherwise
/// from `C`. Residuals are
/// measured in the normalised frame, each constraint on the conic it is linear in: points with
/// `|xᵀCx| / (‖C‖ ‖x‖²)`, lines with `|lᵀDl| / (‖D‖ ‖l‖²)` — so 0+5 and 5+0 (and the other mirror
/// pairs) are mirrors down to their residuals.
fn solution(
    frame: &Frame,
    found: Found,
    dual: bool,
    hp: &[V3],
    hl: &[V3],
) -> Result<ConicSolution, ConstraintError> {
    let breakdown = |what: String| ConstraintError::Degenerate {
        reason: format!("a solution {what}"),
    };
    let (c, d, d_is_exact) = if dual {
        let c = found.adjugate.unwrap_or_else(|| adjugate(&found.conic));
        (c, found.conic, true)
    } else {
        let exact = found.adjugate.is_some();
        let d = found.adjugate.unwrap_or_else(|| adjugate(&found.conic));
        (found.conic, d, exact)
    };
    let local = Conic::from_matrix(c).map_err(|e| breakdown(e.to_string()))?;
    let (kind, ellipse) = if d_is_exact {
        let d = DualConic::from_matrix(d).map_err(|e| breakdown(e.to_string()))?;
        (d.classify(), d.to_ellipse())
    } else {
        (local.classify(), local.to_ellipse())
    };
    let ellipse = ellipse.map(|e| frame.ellipse_to_world(&e));
    let conic = Conic::from_matrix(frame.conic_to_world(&local.matrix()))
        .map_err(|e| breakdown(e.to_string()))?;
    let point_residual = hp.iter().map(|x| relative_form(&c, x)).fold(0.0, f64::max);
    let tangency_residual = hl.iter().map(|l| relative_form(&d, l)).fold(0.0, f64::max);
    Ok(ConicSolution {
        conic,
        kind,
        ellipse,
        point_residual,
        tangency_residual,
    })
}

/// `|vᵀ M v| / (‖M‖_F ‖v‖²)`, in `[0, 1]`; 1 (the worst value) when `M` vanishes.
fn relative_form(m: &Matrix3<f64>, v: &V3) -> f64 {
    let n = m.norm() * v.norm_squared();
    if n > 0.0 {
        (v.dot(&(m * v)) / n).abs()
    } else {
        1.0
    }
}

/// The reason for "no real solution" in 3+2 (points in different regions) or 2+3 (lines that do
/// and lines that do not pass between the two points), from the signs of `Xᵢ Yᵢ`.
fn mixed_sides_error(xy: &[f64; 3], dual: bool) -> ConstraintError {
    let list = |positive: bool| -> String {
        let idx: Vec<String> = (0..3)
            .filter(|&i| (xy[i] > 0.0) == positive)
            .map(|i| (i + 1).to_string())
            .collect();
        idx.join(" and ")
    };
    let (same, other) = (list(true), list(false));
    let reason = if dual {
        format!(
            "line(s) {other} pass between the two points and line(s) {same} do not; the tangent \
             lines of a real conic through both points either all pass between them or none does"
        )
    } else {
        format!(
            "point(s) {same} lie in one of the two regions cut out by the two lines and point(s) \
             {other} in the other (for crossing lines a region is a pair of opposite angles, for \
             parallel lines the strip between them or the outside); every real conic touching \
             both lines lies in one region"
        )
    };
    ConstraintError::NoRealSolution { reason }
}

/// Refuses coincident points or lines, three collinear points or concurrent lines, and points on
/// lines (module docs, [`INCIDENCE_RELATIVE`]).
fn check_configuration(
    points: &[Point],
    lines: &[Line],
    hp: &[V3],
    hl: &[V3],
) -> Result<(), ConstraintError> {
    let tol = INCIDENCE_RELATIVE;
    for i in 0..hp.len() {
        for j in i + 1..hp.len() {
            if hp[i].cross(&hp[j]).norm() <= tol {
                return Err(ConstraintError::CoincidentPoints {
                    first: i + 1,
                    second: j + 1,
                    x: points[i].x,
                    y: points[i].y,
                });
            }
        }
    }
    for i in 0..hl.len() {
        for j in i + 1..hl.len() {
            if hl[i].cross(&hl[j]).norm() <= tol {
                return Err(ConstraintError::CoincidentLines {
                    first: i + 1,
                    second: j + 1,
                });
            }
        }
    }
    for [i, j, k] in triples(hp.len()) {
        if Matrix3::from_columns(&[hp[i], hp[j], hp[k]])
            .determinant()
            .abs()
            <= tol
        {
            return Err(ConstraintError::CollinearPoints {
                points: [i + 1, j + 1, k + 1],
            });
        }
    }
    for [i, j, k] in triples(hl.len()) {
        if Matrix3::from_columns(&[hl[i], hl[j], hl[k]])
            .determinant()
            .abs()
            <= tol
        {
            let ids = [i + 1, j + 1, k + 1];
            // The two lines crossing at the widest angle give the best meeting point.
            let pairs = [(i, j), (i, k), (j, k)];
            let (a, b) = pairs
                .into_iter()
                .max_by(|&(a, b), &(c, d)| {
                    let s1 = lines[a].normal().cross(lines[b].normal()).abs();
                    let s2 = lines[c].normal().cross(lines[d].normal()).abs();
                    s1.total_cmp(&s2)
                })
                .expect("three pairs");
            return Err(match lines[a].intersection(&lines[b]) {
                Some(at) => ConstraintError::ConcurrentLines {
                    lines: ids,
                    x: at.x,
                    y: at.y,
                },
                None => ConstraintError::ParallelLines { lines: ids },
            });
        }
    }
    for (i, u) in hp.iter().enumerate() {
        for (j, v) in hl.iter().enumerate() {
            if u.dot(v).abs() <= tol {
                return Err(ConstraintError::PointOnLine {
                    point: i + 1,
                    line: j + 1,
                });
            }
        }
    }
    Ok(())
}

/// Whether four points are the corners of a convex quadrilateral (none inside the triangle of
/// the other three).
fn convex_position(p: &[Point]) -> bool {
    let inside = |d: Point, a: Point, b: Point, c: Point| {
        let s = [(a, b), (b, c), (c, a)].map(|(u, v)| (v - u).cross(d - u));
        s.iter().all(|&v| v > 0.0) || s.iter().all(|&v| v < 0.0)
    };
    !(inside(p[0], p[1], p[2], p[3])
        || inside(p[1], p[0], p[2], p[3])
        || inside(p[2], p[0], p[1], p[3])
        || inside(p[3], p[0], p[1], p[2]))
}

fn triples(n: usize) -> impl Iterator<Item = [usize; 3]> {
    (0..n).flat_map(move |i| (i + 1..n).flat_map(move |j| (j + 1..n).map(move |k| [i, j, k])))
}

/// 5+0 (or 0+5 on the dual plane): the null vector of the design matrix, from the SVD of the 5×6
/// matrix padded with a zero row.
fn through_five(h: &[V3]) -> Matrix3<f64> {
    let mut m = Matrix6::<f64>::zeros();
    for (i, v) in h.iter().enumerate() {
        let (x, y, w) = (v[0], v[1], v[2]);
        let row = [x * x, x * y, y * y, x * w, y * w, w * w];
        for (j, r) in row.into_iter().enumerate() {
            m[(i, j)] = r;
        }
    }
    let svd = m.svd(false, true);
    let v_t = svd.v_t.expect("requested V");
    let k = svd.singular_values.imin();
    let r = v_t.row(k);
    matrix_from_coefficients([r[0], r[1], r[2], r[3], r[4], r[5]])
}

/// `(u vᵀ + v uᵀ)/2`: the degenerate conic made of the lines `u` and `v` (or, on the dual plane,
/// the pair of points `u`, `v`).
fn pair(u: &V3, v: &V3) -> Matrix3<f64> {
    (u * v.transpose() + v * u.transpose()) * 0.5
}

/// Two unit vectors spanning the plane orthogonal to `l`: two points of the line `l` (or, on the
/// dual plane, two lines through the point `l`).
fn span_of(l: &V3) -> (V3, V3) {
    let k = l.iamin();
    let mut e = V3::zeros();
    e[k] = 1.0;
    let p = l.cross(&e).normalize();
    let q = l.cross(&p).normalize();
    (p, q)
}

/// 4+1 (or 1+4 on the dual plane): the members of the pencil through `h[0..4]` tangent to `l`.
/// Empty when the quadratic has no real root.
fn through_four_touching_one(h: &[V3], l: &V3) -> Vec<Found> {
    let (a, b, c, d) = (&h[0], &h[1], &h[2], &h[3]);
    let c1 = pair(&a.cross(b), &c.cross(d));
    let c2 = pair(&a.cross(c), &b.cross(d));
    let (c1, c2) = (c1 / c1.norm(), c2 / c2.norm());
    let (p, q) = span_of(l);
    let restrict = |m: &Matrix3<f64>| (p.dot(&(m * p)), p.dot(&(m * q)), q.dot(&(m * q)));
    let (a1, b1, g1) = restrict(&c1);
    let (a2, b2, g2) = restrict(&c2);
    // β² − αγ for α = μα₁ + λα₂ etc.: qa μ² + qb μλ + qc λ².
    let qa = b1 * b1 - a1 * g1;
    let qb = 2.0 * b1 * b2 - a1 * g2 - a2 * g1;
    let qc = b2 * b2 - a2 * g2;
    homogeneous_quadratic_roots(qa, qb, qc)
        .into_iter()
        .map(|(mu, lambda)| Found::plain(c1 * mu + c2 * lambda))
        .collect()
}

/// The real roots `(μ, λ)` of `qa μ² + qb μλ + qc λ² = 0` as projective points, without dividing
/// by `qa` or `qc` (so roots at `μ = 0` or `λ = 0` are kept). One root for a double root (within
/// [`DOUBLE_ROOT_RELATIVE`]), none for complex roots or an identically zero form.
fn homogeneous_quadratic_roots(qa: f64, qb: f64, qc: f64) -> Vec<(f64, f64)> {
    if qa == 0.0 && qb == 0.0 && qc == 0.0 {
        return vec![];
    }
    let disc = qb * qb - 4.0 * qa * qc;
    let scale = qb * qb + 4.0 * (qa * qc).abs();
    if disc.abs() <= DOUBLE_ROOT_RELATIVE * scale {
        return if qc.abs() >= qa.abs() {
            vec![(2.0 * qc, -qb)]
        } else {
            vec![(-qb, 2.0 * qa)]
        };
    }
    if disc < 0.0 {
        return vec![];
    }
    let q = -0.5 * (qb + disc.sqrt().copysign(qb));
    vec![(qc, q), (q, qa)]
}

/// 3+2 (or 2+3 on the dual plane), Method A: `C = k kᵀ − m S`, `S = (l₁l₂ᵀ + l₂l₁ᵀ)/2`, with
/// `k·xᵢ = sᵢ √|Xᵢ Yᵢ|`, each with its adjugate in closed form (no cancellation):
/// `adj(C) = −¼ v vᵀ − m [k]ₓ S [k]ₓᵀ`, `v = l₁ × l₂`, from `adj(S) = −¼ v vᵀ` and
/// `adj(B + u uᵀ) = adj(B) + [u]ₓ B [u]ₓᵀ` for symmetric `B`. `Err` carries the products
/// `Xᵢ Yᵢ` when they differ in sign.
fn through_three_touching_two(h: &[V3], l1: &V3, l2: &V3) -> Result<Vec<Found>, [f64; 3]> {
    let xy = [0, 1, 2].map(|i| h[i].dot(l1) * h[i].dot(l2));
    let m = if xy.iter().all(|&v| v > 0.0) {
        1.0
    } else if xy.iter().all(|&v| v < 0.0) {
        -1.0
    } else {
        return Err(xy);
    };
    let r = xy.map(|v| v.abs().sqrt());
    let rows = Matrix3::from_rows(&[h[0].transpose(), h[1].transpose(), h[2].transpose()]);
    let lu = rows.lu();
    let s = pair(l1, l2);
    let v = l1.cross(l2);
    let crossing = v * v.transpose() * -0.25;
    let mut out = Vec::with_capacity(4);
    for (s2, s3) in [(1.0, 1.0), (1.0, -1.0), (-1.0, 1.0), (-1.0, -1.0)] {
        // The three points are not collinear (checked), so the matrix is invertible.
        let Some(k) = lu.solve(&V3::new(r[0], s2 * r[1], s3 * r[2])) else {
            return Err(xy);
        };
        let kx = skew(&k);
        out.push(Found {
            conic: k * k.transpose() - s * m,
            adjugate: Some(crossing - kx * s * kx.transpose() * m),
        });
    }
    Ok(out)
}

/// `[u]ₓ`, the matrix of `v ↦ u × v`.
fn skew(u: &V3) -> Matrix3<f64> {
    Matrix3::new(0.0, -u[2], u[1], u[2], 0.0, -u[0], -u[1], u[0], 0.0)
}

/// A conic found by one of the routines, on the plane it was solved in (the point plane, or the
/// dual plane for the mirror cases), with its adjugate when a closed form gives it.
struct Found {
    conic: Matrix3<f64>,
    adjugate: Option<Matrix3<f64>>,
}

impl Found {
    fn plain(conic: Matrix3<f64>) -> Found {
        Found {
            conic,
            adjugate: None,
        }
    }
}

/// The normalised working frame: `x_local = (x − origin) / scale`.
struct Frame {
    origin: Point,
    scale: f64,
}

impl Frame {
    /// Origin at the coordinate-wise median of the points and of the crossings of the lines taken
    /// two at a time (the feet of the perpendiculars from the world origin when no two lines
    /// cross and there are no points); unit the median distance from it. Medians keep a far
    /// crossing of two nearly parallel lines from spoiling the frame.
    fn new(points: &[Point], lines: &[Line]) -> Frame {
        let mut refs: Vec<Point> = points.to_vec();
        for i in 0..lines.len() {
            for j in i + 1..lines.len() {
                if let Some(p) = lines[i].intersection(&lines[j]) {
                    refs.push(p);
                }
            }
        }
        if refs.is_empty() {
            refs.extend(lines.iter().map(|l| l.project(Point::ORIGIN)));
        }
        let origin = Point::new(
            median(refs.iter().map(|p| p.x).collect()),
            median(refs.iter().map(|p| p.y).collect()),
        );
        let mut scale = median(refs.iter().map(|p| p.distance(origin)).collect());
        if !(scale > 0.0 && scale.is_finite()) {
            scale = refs
                .iter()
                .map(|p| p.distance(origin))
                .filter(|d| d.is_finite())
                .fold(0.0, f64::max);
        }
        if scale <= 0.0 {
            scale = 1.0;
        }
        Frame { origin, scale }
    }

    /// The point as a unit homogeneous vector in the frame.
    fn point(&self, p: Point) -> V3 {
        V3::new(
            (p.x - self.origin.x) / self.scale,
            (p.y - self.origin.y) / self.scale,
            1.0,
        )
        .normalize()
    }

    /// The line as a unit homogeneous vector in the frame: `n·x' = (c − n·origin)/scale`.
    fn line(&self, l: &Line) -> V3 {
        let n = l.normal();
        let c = (l.offset() - n.dot(self.origin.to_vec())) / self.scale;
        V3::new(n.x, n.y, -c).normalize()
    }

    /// `Tᵀ C T` for `x_local = T x_world`.
    fn conic_to_world(&self, c: &Matrix3<f64>) -> Matrix3<f64> {
        let s = 1.0 / self.scale;
        let t = Matrix3::new(
            s,
            0.0,
            -self.origin.x * s,
            0.0,
            s,
            -self.origin.y * s,
            0.0,
            0.0,
            1.0,
        );
        t.transpose() * c * t
    }

    fn ellipse_to_world(&self, e: &Ellipse) -> Ellipse {
        let c = e.centre();
        let centre = Point::new(
            self.origin.x + self.scale * c.x,
            self.origin.y + self.scale * c.y,
        );
        Ellipse::new(centre, e.a() * self.scale, e.b() * self.scale, e.angle())
            .expect("a scaled ellipse is an ellipse")
    }
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n == 0 {
        0.0
    } else if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(x: f64, y: f64) -> Point {
        Point::new(x, y)
    }

    fn line(a: (f64, f64), b: (f64, f64)) -> Line {
        Line::through(p(a.0, a.1), p(b.0, b.1)).unwrap()
    }

    #[test]
    fn homogeneous_roots_keep_roots_at_infinity() {
        // μλ = 0: roots (1, 0) and (0, 1).
        let r = homogeneous_quadratic_roots(0.0, 1.0, 0.0);
        assert_eq!(r.len(), 2);
        assert!(r.iter().any(|&(m, l)| l == 0.0 && m != 0.0));
        assert!(r.iter().any(|&(m, l)| m == 0.0 && l != 0.0));
        // μ² + λ² = 0: no real root. (μ − λ)² = 0: one double root.
        assert!(homogeneous_quadratic_roots(1.0, 0.0, 1.0).is_empty());
        let d = homogeneous_quadratic_roots(1.0, -2.0, 1.0);
        assert_eq!(d.len(), 1);
        assert!((d[0].0 - d[0].1).abs() < 1e-15 * d[0].0.abs());
        // Roots of 2μ² − 7μλ + 3λ² (λ/μ = 2 and 1/3 → t = 1/2, 3 in μ/λ form).
        let r = homogeneous_quadratic_roots(2.0, -7.0, 3.0);
        for (m, l) in r {
            assert!((2.0 * m * m - 7.0 * m * l + 3.0 * l * l).abs() < 1e-12 * (m * m + l * l));
        }
    }

    #[test]
    fn wrong_count_and_bad_numbers_are_refused() {
        let e = conics_through_and_tangent(&[p(0.0, 0.0)], &[]).unwrap_err();
        assert_eq!(
            e,
            ConstraintError::WrongCount {
                points: 1,
                lines: 0
            }
        );
        assert!(e.to_string().contains("five in all"), "{e}");
        let pts = [
            p(0.0, 0.0),
            p(1.0, 0.0),
            p(0.0, 1.0),
            p(2.0, 3.0),
            p(f64::NAN, 1.0),
        ];
        assert_eq!(
            conics_through_and_tangent(&pts, &[]).unwrap_err(),
            ConstraintError::NotFinite {
                what: "point",
                index: 5
            }
        );
    }

    #[test]
    fn closed_form_adjugates_match_cofactors() {
        let u = V3::new(0.3, -1.2, 0.7);
        let b = Matrix3::new(1.0, 0.2, -0.5, 0.2, -2.0, 0.3, -0.5, 0.3, 0.4);
        let lhs = adjugate(&(u * u.transpose() + b));
        let rhs = adjugate(&b) + skew(&u) * b * skew(&u).transpose();
        assert!((lhs - rhs).norm() < 1e-14, "{}", (lhs - rhs).norm());
        let (l1, l2) = (V3::new(0.3, 1.0, -2.0), V3::new(-1.0, 0.5, 0.2));
        let v = l1.cross(&l2);
        let err = adjugate(&pair(&l1, &l2)) + v * v.transpose() * 0.25;
        assert!(err.norm() < 1e-15);
        // And for the solutions of the worked example of docs/sources.md M5.
        let h = [(1.0, 7.0), (8.0, 1.0), (9.0, 8.0)].map(|(x, y)| V3::new(x, y, 1.0));
        let found = through_three_touching_two(&h, &V3::x(), &V3::y()).unwrap();
        for f in found {
            let adj = adjugate(&f.conic);
            let closed = f.adjugate.unwrap();
            assert!((adj - closed).norm() <= 1e-12 * adj.norm());
        }
    }

    #[test]
    fn frame_maps_conics_back_exactly() {
        let f = Frame {
            origin: p(100.0, -50.0),
            scale: 20.0,
        };
        let e = Ellipse::new(p(0.5, 0.25), 1.5, 0.5, 0.4).unwrap();
        let local = Conic::from_ellipse(&e);
        let world = Conic::from_matrix(f.conic_to_world(&local.matrix())).unwrap();
        let w = f.ellipse_to_world(&e);
        assert!(world.projective_distance(&Conic::from_ellipse(&w)) < 1e-13);
        assert!(w.centre().distance(p(110.0, -45.0)) < 1e-12);
        assert!((w.a() - 30.0).abs() < 1e-12 && (w.b() - 10.0).abs() < 1e-12);
    }

    #[test]
    fn median_frame_ignores_one_far_crossing() {
        // Two nearly parallel lines cross far away; the frame stays near the other crossings.
        let lines = [
            line((0.0, 0.0), (10.0, 0.0)),
            line((0.0, 1.0), (10.0, 1.0 + 1e-7)),
            line((2.0, -5.0), (2.0, 5.0)),
            line((8.0, -5.0), (7.0, 5.0)),
        ];
        let f = Frame::new(&[], &lines);
        assert!(f.origin.distance(p(5.0, 0.5)) < 5.0, "{:?}", f.origin);
        assert!(f.scale < 10.0, "{}", f.scale);
    }
}
