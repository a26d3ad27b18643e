//! The largest ellipse inside a convex polygon of any number of sides (its John ellipse), by a
//! convex program, then polished exactly on the sides it touches.
//!
//! Write the ellipse as `{B u + d : |u| ≤ 1}` with `B` symmetric positive definite (three
//! unknowns) and centre `d` (two). It lies inside the half-plane `a·x ≤ β` (unit outward normal
//! `a`) exactly when `|B a| + a·d ≤ β`, a convex constraint; its area `π det B` is largest where
//! the concave `log det B` is. So the largest ellipse inside the polygon solves
//!
//! ```text
//!     maximise log det B   subject to   |B aᵢ| + aᵢ·d ≤ βᵢ  for every side i
//! ```
//!
//! (Boyd & Vandenberghe, *Convex Optimization*, CUP 2004, §8.4.2: the maximum-volume ellipsoid
//! in a polyhedron). It is solved here by the barrier method of the same book (§11.3): Newton's
//! method with a backtracking line search on `−t log det B − Σ log(βᵢ − aᵢ·d − |B aᵢ|)` for `t`
//! growing fiftyfold until the duality gap `n/t` is below [`BARRIER_GAP`].
//!
//! The optimum touches three, four or five sides (five unknowns; at least three contacts by
//! John's theorem). On the sides it touches it is one of three closed forms. A polygon of up to
//! [`FEW_SIDES`] sides is therefore solved by trying every set of three, four and five sides
//! exactly and keeping the largest that lies inside (no convex program needed). On more sides
//! the barrier's answer is polished exactly: the sides whose barrier slack is below
//! [`ACTIVE_SLACK`] (at least the three nearest, at most the [`MOST_NEAR`] nearest; when more
//! touch, also that many spread evenly around the polygon) are tried three, four and five at a
//! time, each set
//! solved exactly (three sides: the Steiner inellipse of their triangle, the largest ellipse in
//! it; four: the largest ellipse touching all four, along the Newton line; five: the one conic
//! touching all five), and the largest that lies inside the whole polygon is kept. John's
//! optimality conditions are then checked on it and reported: mapped by `B⁻¹` so that it becomes
//! the unit circle, its contact normals `uᵢ` must carry weights `cᵢ ≥ 0` with `Σ cᵢ uᵢ = 0` and
//! `Σ cᵢ uᵢuᵢᵀ = I` (F. John, 1948; in the form of K. Ball, "An elementary introduction to modern
//! convex geometry", MSRI Publ. 31, 1997, §3, from memory).
//!
//! Sources and check values: docs/sources.md M14.
//!
//! Everything is solved in coordinates local to the polygon (about its corners' mean, in units of
//! its size), so a bay far from the drawing's origin loses no digits.

use super::quad_family::TangentFamily;
use super::triangle::steiner_inellipse;
use crate::geom::{Ellipse, Line, Point, Vec2};
use nalgebra::{Matrix2, SMatrix, SVector};

/// The duality gap (in `log det B`, local units) the barrier method stops at: the barrier's
/// ellipse then has an area within a factor `e^gap` of the largest.
pub const BARRIER_GAP: f64 = 1e-10;

/// A side whose barrier slack (local units: the polygon's size is 1) is below this is taken as
/// touched when the exact polish chooses its sets of sides.
pub const ACTIVE_SLACK: f64 = 1e-4;

/// The most sides the polish tries sets of (the nearest by slack).
pub const MOST_NEAR: usize = 8;

/// Polygons of up to this many sides are solved by trying every set of three, four and five
/// sides exactly (41 sets for six), without the convex program.
pub const FEW_SIDES: usize = 6;

/// The most sides a polygon may have.
pub const MOST_SIDES: usize = 4096;

/// How an exact candidate may poke outside a side and still count as inside, relative to the
/// polygon's size.
const INSIDE_RELATIVE: f64 = 1e-9;

/// How the largest inside ellipse was found and how well it satisfies its conditions.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct JohnResiduals {
    /// The largest distance of a touched side from the ellipse, relative to the polygon's size.
    pub tangency: f64,
    /// How far the ellipse reaches outside the farthest side, relative to the polygon's size
    /// (0 when it is inside every side).
    pub outside: f64,
    /// `|Σ cᵢ uᵢ| + ‖Σ cᵢ uᵢuᵢᵀ − I‖` for the best weights `cᵢ ≥ 0` on the touched sides: 0 at
    /// the optimum (module docs).
    pub optimality: f64,
    /// The smallest of those weights (positive at a strict optimum).
    pub least_weight: f64,
    /// Newton steps the barrier method took.
    pub newton_steps: usize,
    /// Whether the exact polish was kept (otherwise the barrier's own ellipse, within
    /// [`BARRIER_GAP`]).
    pub polished: bool,
}

/// The largest ellipse inside a convex polygon, the sides it touches (side `i` runs from corner
/// `i` to corner `i + 1`) and its residuals.
#[derive(Debug, Clone, PartialEq)]
pub struct John {
    pub ellipse: Ellipse,
    pub touching: Vec<usize>,
    pub residuals: JohnResiduals,
}

type V5 = SVector<f64, 5>;
type M5 = SMatrix<f64, 5, 5>;

/// The polygon's sides as half-planes `a·x ≤ β` in local coordinates.
struct Sides {
    a: Vec<Vec2>,
    beta: Vec<f64>,
}

/// Every side's slack `βᵢ − aᵢ·d − |B aᵢ|` at `x = (p, q, r, d₁, d₂)` (`B = [[p, q], [q, r]]`,
/// centre `d`) into `out`; `false` when `x` is outside the domain (B not positive definite, or a
/// slack not positive).
fn slacks(sides: &Sides, x: &V5, out: &mut Vec<f64>) -> bool {
    out.clear();
    let (p, q, r) = (x[0], x[1], x[2]);
    if !(p > 0.0 && p * r - q * q > 0.0) {
        return false;
    }
    for (a, beta) in sides.a.iter().zip(&sides.beta) {
        let w = Vec2::new(p * a.x + q * a.y, q * a.x + r * a.y);
        let s = beta - a.x * x[3] - a.y * x[4] - w.length();
        if s.is_nan() || s <= 0.0 {
            return false;
        }
        out.push(s);
    }
    true
}

/// `−t log det B − Σ log sᵢ`, or `None` outside the domain.
fn barrier(sides: &Sides, x: &V5, t: f64, buf: &mut Vec<f64>) -> Option<f64> {
    if !slacks(sides, x, buf) {
        return None;
    }
    let det = x[0] * x[2] - x[1] * x[1];
    Some(-t * det.ln() - buf.iter().map(|s| s.ln()).sum::<f64>())
}

/// The barrier's gradient and Hessian at a point of its domain.
fn derivatives(sides: &Sides, x: &V5, t: f64) -> (V5, M5) {
    let (p, q, r) = (x[0], x[1], x[2]);
    let det = p * r - q * q;
    let g = V5::new(r / det, -2.0 * q / det, p / det, 0.0, 0.0);
    let mut grad = -t * g;
    let mut hess = t * (g * g.transpose());
    hess[(0, 2)] -= t / det;
    hess[(2, 0)] -= t / det;
    hess[(1, 1)] += 2.0 * t / det;
    for (a, beta) in sides.a.iter().zip(&sides.beta) {
        let w = Vec2::new(p * a.x + q * a.y, q * a.x + r * a.y);
        let n = w.length();
        let s = beta - a.x * x[3] - a.y * x[4] - n;
        // ∂w/∂(p, q, r) = [[a₁, a₂, 0], [0, a₁, a₂]].
        let jw = [a.x * w.x, a.y * w.x + a.x * w.y, a.y * w.y];
        let ds = V5::new(-jw[0] / n, -jw[1] / n, -jw[2] / n, -a.x, -a.y);
        grad -= ds / s;
        hess += (ds * ds.transpose()) / (s * s);
        // −∇²s / s = Jᵀ (I − ŵŵᵀ) J / (n s): with ŵ⊥ = (−ŵ₂, ŵ₁), I − ŵŵᵀ = ŵ⊥ŵ⊥ᵀ.
        let perp = Vec2::new(-w.y / n, w.x / n);
        let jp = [a.x * perp.x, a.y * perp.x + a.x * perp.y, a.y * perp.y];
        for i in 0..3 {
            for j in 0..3 {
                hess[(i, j)] += jp[i] * jp[j] / (n * s);
            }
        }
    }
    (grad, hess)
}

/// Minimises the barrier for each `t` in turn from a strictly feasible start; the end point and
/// the Newton steps taken.
fn barrier_method(sides: &Sides, start: V5) -> (V5, usize) {
    let n = sides.a.len() as f64;
    let mut x = start;
    let mut steps = 0;
    let mut buf = Vec::with_capacity(sides.a.len());
    let mut t = 10.0;
    loop {
        for _ in 0..100 {
            let (grad, hess) = derivatives(sides, &x, t);
            let Some(step) = hess
                .cholesky()
                .map(|c| -c.solve(&grad))
                .or_else(|| hess.lu().solve(&(-grad)))
            else {
                break;
            };
            let decrement = -grad.dot(&step);
            steps += 1;
            // Each centre only roughly on the way; the last one to the full.
            let enough = if n / t <= BARRIER_GAP { 2e-14 } else { 1e-6 };
            if decrement.is_nan() || decrement <= enough {
                break;
            }
            let Some(f0) = barrier(sides, &x, t, &mut buf) else {
                break;
            };
            let mut alpha = 1.0;
            let mut moved = false;
            while alpha > 1e-12 {
                let y = x + step * alpha;
                if let Some(f) = barrier(sides, &y, t, &mut buf)
                    && f <= f0 - 0.25 * alpha * decrement
                {
                    x = y;
                    moved = true;
                    break;
                }
                alpha *= 0.5;
            }
            if !moved {
                break;
            }
        }
        if n / t <= BARRIER_GAP {
            return (x, steps);
        }
        t *= 50.0;
    }
}

fn ellipse_of(x: &V5) -> Option<Ellipse> {
    // Σ = B² for symmetric B.
    let (p, q, r) = (x[0], x[1], x[2]);
    Ellipse::from_shape_matrix(
        Point::new(x[3], x[4]),
        p * p + q * q,
        q * (p + r),
        q * q + r * r,
    )
    .ok()
}

/// How far `e` stays inside side `i` (≥ 0 inside), local units.
fn slack_of(e: &Ellipse, sides: &Sides, i: usize) -> f64 {
    let a = sides.a[i];
    sides.beta[i] - a.dot(e.centre().to_vec()) - e.support(a)
}

/// The region bounded by the lines of `chosen` sides (in polygon order), when they bound a
/// convex polygon with that many corners, counter-clockwise, starting at the corner that begins
/// the first chosen side.
fn bounded(lines: &[Line], chosen: &[usize]) -> Option<Vec<Point>> {
    let m = chosen.len();
    let mut pts = Vec::with_capacity(m);
    for s in 0..m {
        pts.push(lines[chosen[s]].intersection(&lines[chosen[(s + 1) % m]])?);
    }
    for (s, p) in pts.iter().enumerate() {
        for (r, &li) in chosen.iter().enumerate() {
            if r != s && r != (s + 1) % m && lines[li].signed_distance(*p) <= 0.0 {
                return None;
            }
        }
    }
    let area: f64 = (0..m)
        .map(|s| pts[s].to_vec().cross(pts[(s + 1) % m].to_vec()))
        .sum();
    if area.is_nan() || area <= 0.0 {
        return None;
    }
    pts.rotate_right(1);
    Some(pts)
}

/// The exact candidate for a set of three, four or five sides.
fn exact(lines: &[Line], chosen: &[usize]) -> Option<Ellipse> {
    let q = bounded(lines, chosen)?;
    match q.len() {
        3 => steiner_inellipse([q[0], q[1], q[2]]).ok(),
        4 => {
            let fam = TangentFamily::new([q[0], q[1], q[2], q[3]]);
            fam.ellipse(fam.largest_area_parameter()?).ok()
        }
        5 => super::pentagon::tangent_conic(&q).ok(),
        _ => None,
    }
}

/// Calls `f` with every subset of `items` of size `k`, in order.
fn subsets(items: &[usize], k: usize, f: &mut dyn FnMut(&[usize])) {
    fn go(
        items: &[usize],
        k: usize,
        from: usize,
        cur: &mut Vec<usize>,
        f: &mut dyn FnMut(&[usize]),
    ) {
        if cur.len() == k {
            f(cur);
            return;
        }
        for i in from..items.len() {
            if items.len() - i < k - cur.len() {
                return;
            }
            cur.push(items[i]);
            go(items, k, i + 1, cur, f);
            cur.pop();
        }
    }
    go(items, k, 0, &mut Vec::with_capacity(k), f);
}

/// John's conditions on `touching` (module docs): the best weights `c ≥ 0` (least squares on
/// the five equations, then clamped), the residual and the smallest weight.
fn optimality(e: &Ellipse, sides: &Sides, touching: &[usize]) -> (f64, f64) {
    let (sxx, sxy, syy) = e.shape_matrix();
    // B = Σ^{1/2}: in the unit-circle frame the contact normal of side i is B aᵢ / |B aᵢ|.
    let sigma = Matrix2::new(sxx, sxy, sxy, syy);
    let eig = sigma.symmetric_eigen();
    let root = eig.eigenvectors
        * Matrix2::from_diagonal(&eig.eigenvalues.map(|v| v.max(0.0).sqrt()))
        * eig.eigenvectors.transpose();
    let us: Vec<Vec2> = touching
        .iter()
        .filter_map(|&i| {
            let w = root * nalgebra::Vector2::new(sides.a[i].x, sides.a[i].y);
            Vec2::new(w.x, w.y).normalized()
        })
        .collect();
    let k = us.len();
    if k == 0 {
        return (f64::INFINITY, 0.0);
    }
    let m = nalgebra::DMatrix::from_fn(5, k, |row, col| {
        let u = us[col];
        [u.x, u.y, u.x * u.x, u.x * u.y, u.y * u.y][row]
    });
    let rhs = nalgebra::DVector::from_column_slice(&[0.0, 0.0, 1.0, 0.0, 1.0]);
    // The normal equations (at most five touched sides make a small, well-posed system; seen:
    // nalgebra's SVD least squares leaving 4e-6 where they leave 1e-16 on a near-parallelogram),
    // and the SVD when more sides touch than there are equations (a regular polygon).
    let normal = m.transpose() * &m;
    let c = match normal.cholesky() {
        Some(ch) => ch.solve(&(m.transpose() * &rhs)),
        None => match m.clone().svd(true, true).solve(&rhs, 1e-13) {
            Ok(c) => c,
            Err(_) => return (f64::INFINITY, 0.0),
        },
    };
    let least = c.iter().copied().fold(f64::INFINITY, f64::min);
    let clamped = c.map(|v| v.max(0.0));
    ((&m * clamped - rhs).norm(), least)
}

/// The largest ellipse inside the counter-clockwise convex polygon `corners` (3 to
/// [`MOST_SIDES`] sides), or `None` when the polygon is degenerate.
pub fn john_ellipse(corners: &[Point]) -> Option<John> {
    let n = corners.len();
    if !(3..=MOST_SIDES).contains(&n) {
        return None;
    }
    let mean = corners
        .iter()
        .fold(Vec2::new(0.0, 0.0), |acc, p| acc + p.to_vec())
        / n as f64;
    let size = corners
        .iter()
        .map(|p| (p.to_vec() - mean).length())
        .fold(0.0, f64::max);
    if !(size > 0.0 && size.is_finite()) {
        return None;
    }
    let local: Vec<Point> = corners
        .iter()
        .map(|p| Point::ORIGIN + (p.to_vec() - mean) / size)
        .collect();
    let lines: Vec<Line> = (0..n)
        .filter_map(|i| Line::through(local[i], local[(i + 1) % n]))
        .collect();
    if lines.len() != n {
        return None;
    }
    let sides = Sides {
        a: lines.iter().map(|l| -l.normal()).collect(),
        beta: lines.iter().map(|l| -l.offset()).collect(),
    };
    // The corners' mean (the local origin) is strictly inside a convex polygon.
    let clear = sides.beta.iter().copied().fold(f64::INFINITY, f64::min);
    if clear.is_nan() || clear <= 0.0 {
        return None;
    }
    let largest_exact = |near: &[usize]| {
        let mut best: Option<Ellipse> = None;
        for k in 3..=5.min(near.len()) {
            subsets(near, k, &mut |chosen| {
                if let Some(e) = exact(&lines, chosen)
                    && (0..n).all(|i| slack_of(&e, &sides, i) >= -INSIDE_RELATIVE)
                    && best.is_none_or(|b| e.area() > b.area())
                {
                    best = Some(e);
                }
            });
        }
        best
    };
    // Few sides: every set of three, four and five is tried exactly (at most 41 for six sides),
    // and one of them is the optimum; the convex program is only needed when none fits.
    if n <= FEW_SIDES {
        let all: Vec<usize> = (0..n).collect();
        if let Some(e) = largest_exact(&all) {
            return finish(e, true, 0, &sides, mean, size);
        }
    }
    let start = V5::new(0.5 * clear, 0.0, 0.5 * clear, 0.0, 0.0);
    let (x, newton_steps) = barrier_method(&sides, start);
    let found = ellipse_of(&x)?;
    let mut buf = Vec::new();
    slacks(&sides, &x, &mut buf);
    // The sides it touches: those within ACTIVE_SLACK (at least the three nearest). When more
    // than MOST_NEAR touch (a regular polygon's incircle touches every side), MOST_NEAR of them
    // spread evenly around the polygon, so that three or more of them bound a region.
    let active: Vec<usize> = (0..n).filter(|&i| buf[i] <= ACTIVE_SLACK).collect();
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&i, &j| buf[i].total_cmp(&buf[j]));
    let mut nearest = order[..active.len().clamp(3, MOST_NEAR)].to_vec();
    nearest.sort_unstable();
    let mut best = largest_exact(&nearest);
    if active.len() > MOST_NEAR {
        let spread: Vec<usize> = (0..MOST_NEAR)
            .map(|k| active[k * active.len() / MOST_NEAR])
            .collect();
        if let Some(e) = largest_exact(&spread)
            && best.is_none_or(|b| e.area() > b.area())
        {
            best = Some(e);
        }
    }
    // The exact candidate is kept when it is at least as large as the barrier's (which is
    // inside and within the gap of the largest); otherwise the barrier's answer stands.
    match best {
        Some(e) if e.area() >= found.area() * (1.0 - 1e-9) => {
            finish(e, true, newton_steps, &sides, mean, size)
        }
        _ => finish(found, false, newton_steps, &sides, mean, size),
    }
}

/// The answer in local coordinates measured (which sides it touches, John's conditions) and
/// mapped back to the polygon's.
fn finish(
    local_e: Ellipse,
    polished: bool,
    newton_steps: usize,
    sides: &Sides,
    mean: Vec2,
    size: f64,
) -> Option<John> {
    let n = sides.a.len();
    let slack: Vec<f64> = (0..n).map(|i| slack_of(&local_e, sides, i)).collect();
    let touch_limit = if polished { 1e-7 } else { 1e-4 };
    let touching: Vec<usize> = (0..n).filter(|&i| slack[i] <= touch_limit).collect();
    let (optimality, least_weight) = optimality(&local_e, sides, &touching);
    let ellipse = Ellipse::new(
        Point::ORIGIN + (mean + local_e.centre().to_vec() * size),
        local_e.a() * size,
        local_e.b() * size,
        local_e.angle(),
    )
    .ok()?;
    Some(John {
        ellipse,
        residuals: JohnResiduals {
            tangency: touching.iter().map(|&i| slack[i].abs()).fold(0.0, f64::max),
            outside: slack.iter().map(|s| (-s).max(0.0)).fold(0.0, f64::max),
            optimality,
            least_weight,
            newton_steps,
            polished,
        },
        touching,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geom::random::XorShift;
    use std::f64::consts::{PI, TAU};

    fn pts(v: &[(f64, f64)]) -> Vec<Point> {
        v.iter().map(|&(x, y)| Point::new(x, y)).collect()
    }

    /// A random convex polygon of `n` sides: corners on an ellipse at sorted random angles, the
    /// whole turned and moved.
    fn random_polygon(rng: &mut XorShift, n: usize) -> Vec<Point> {
        let (a, b) = (10.0 + 90.0 * rng.next_f64(), 5.0 + 45.0 * rng.next_f64());
        let turn = TAU * rng.next_f64();
        let mut angles: Vec<f64> = (0..n).map(|_| TAU * rng.next_f64()).collect();
        angles.sort_by(f64::total_cmp);
        let (c, s) = (turn.cos(), turn.sin());
        let centre = Vec2::new(200.0 * rng.next_f64(), 200.0 * rng.next_f64());
        angles
            .iter()
            .map(|t| {
                let (x, y) = (a * t.cos(), b * t.sin());
                Point::ORIGIN + centre + Vec2::new(c * x - s * y, s * x + c * y)
            })
            .collect()
    }

    /// Whether the polygon's sides all exist and turn left by a clear angle (no near-collinear
    /// corners, which a bay never has after chaining).
    fn clearly_convex(p: &[Point]) -> bool {
        let n = p.len();
        (0..n).all(|i| {
            let (u, v) = (p[(i + 1) % n] - p[i], p[(i + 2) % n] - p[(i + 1) % n]);
            u.length() > 1e-3 && u.cross(v) > 1e-3 * u.length() * v.length()
        })
    }

    #[test]
    fn triangles_give_the_steiner_inellipse() {
        // The largest ellipse in a triangle is its Steiner inellipse: centre at the centroid,
        // area π/(3√3) times the triangle's (docs/sources.md M3; Wikipedia "Steiner inellipse").
        let mut rng = XorShift::new(3);
        for _ in 0..200 {
            let p = random_polygon(&mut rng, 3);
            if !clearly_convex(&p) {
                continue;
            }
            let j = john_ellipse(&p).unwrap();
            let area = 0.5 * (p[1] - p[0]).cross(p[2] - p[0]);
            let centroid = Point::ORIGIN + (p[0].to_vec() + p[1].to_vec() + p[2].to_vec()) / 3.0;
            let rel = j.ellipse.area() / (area * PI / (3.0 * 3f64.sqrt())) - 1.0;
            // (1e-10: a thin triangle's own area, from differences of its corners, carries
            // rounding of that order.)
            assert!(rel.abs() < 1e-10, "{rel} {:?} {p:?}", j.residuals);
            assert!(j.ellipse.centre().distance(centroid) < 1e-11 * area.sqrt());
            assert_eq!(j.touching, [0, 1, 2]);
            assert!(j.residuals.polished);
        }
    }

    #[test]
    fn quadrilaterals_agree_with_the_published_table() {
        // docs/sources.md M2 (computed, checked against a direct constrained maximisation):
        // irregular_1 and irregular_2 touch all four sides; the corner-cut bays keep the
        // Steiner inellipse of the triangle (0,0), (10,0), (0,10), area 30.2299894040.
        for (q, area, touching) in [
            (
                pts(&[(0.0, 0.0), (5.0, 0.0), (4.0, 3.0), (1.0, 4.0)]),
                10.4764362070,
                4,
            ),
            (
                pts(&[(0.0, 0.0), (7.0, 1.0), (5.0, 5.0), (-1.0, 3.0)]),
                19.3664968112,
                4,
            ),
            (
                pts(&[(1.0, 0.0), (10.0, 0.0), (0.0, 10.0), (0.0, 1.0)]),
                30.2299894040,
                3,
            ),
            (
                pts(&[(1.0, 0.0), (10.0, 0.0), (0.0, 10.0), (0.0, 2.0)]),
                30.2299894040,
                3,
            ),
            (
                pts(&[(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)]),
                PI,
                4,
            ),
        ] {
            let j = john_ellipse(&q).unwrap();
            assert!(
                (j.ellipse.area() - area).abs() < 1e-9,
                "{} vs {area}",
                j.ellipse.area()
            );
            assert_eq!(j.touching.len(), touching);
            assert!(j.residuals.optimality < 1e-12, "{:?}", j.residuals);
        }
    }

    #[test]
    fn regular_polygons_give_their_incircle() {
        // Symmetry and uniqueness of the John ellipse: a regular polygon's is its incircle, of
        // radius cos(π/n) for a unit circumradius.
        for n in [5, 6, 7, 8, 12, 31, 64] {
            let p: Vec<Point> = (0..n)
                .map(|k| {
                    let t = TAU * k as f64 / n as f64 + 0.1;
                    Point::new(t.cos(), t.sin())
                })
                .collect();
            let j = john_ellipse(&p).unwrap();
            let r = (PI / n as f64).cos();
            assert!((j.ellipse.a() - r).abs() < 1e-12, "{n}: {}", j.ellipse.a());
            assert!((j.ellipse.b() - r).abs() < 1e-12, "{n}: {}", j.ellipse.b());
            assert_eq!(j.touching.len(), n, "{n}");
        }
    }

    #[test]
    fn a_thousand_sides_are_solved_and_more_than_the_limit_refused() {
        // A regular 1000-gon (a bay drawn as a polyline circle): its incircle.
        let p: Vec<Point> = (0..1000)
            .map(|k| {
                let t = TAU * k as f64 / 1000.0;
                Point::new(40.0 * t.cos(), 40.0 * t.sin())
            })
            .collect();
        let j = john_ellipse(&p).unwrap();
        let r = 40.0 * (PI / 1000.0).cos();
        assert!((j.ellipse.a() - r).abs() < 1e-9 && (j.ellipse.b() - r).abs() < 1e-9);
        let too_many: Vec<Point> = (0..MOST_SIDES + 1)
            .map(|k| {
                let t = TAU * k as f64 / (MOST_SIDES + 1) as f64;
                Point::new(t.cos(), t.sin())
            })
            .collect();
        assert!(john_ellipse(&too_many).is_none());
    }

    #[test]
    fn random_polygons_meet_john_s_conditions() {
        // Up to 64 sides: the answer lies inside, and John's conditions hold on the sides it
        // touches (weights ≥ 0 making Σ cᵢuᵢ = 0, Σ cᵢuᵢuᵢᵀ = I), which by convexity
        // certify the largest. Three, four and five contacts all occur.
        let mut rng = XorShift::new(11);
        let mut contacts = [0usize; 8];
        let mut tried = 0;
        for round in 0..600 {
            let n = [4, 5, 5, 6, 7, 9, 16, 64][round % 8];
            let p = random_polygon(&mut rng, n);
            if !clearly_convex(&p) {
                continue;
            }
            tried += 1;
            let j = john_ellipse(&p).unwrap();
            let r = j.residuals;
            assert!(r.polished, "{p:?}: {r:?}");
            assert!(r.outside <= 1e-12, "{p:?}: {r:?}");
            assert!(r.tangency <= 1e-12, "{p:?}: {r:?}");
            assert!(
                r.optimality <= 1e-9 && r.least_weight >= -1e-9,
                "{p:?}: {r:?}"
            );
            contacts[j.touching.len().min(7)] += 1;
        }
        assert!(tried > 300, "{tried}");
        assert!(
            contacts[3] > 0 && contacts[4] > 0 && contacts[5] > 0,
            "{contacts:?}"
        );
        assert_eq!(contacts[6] + contacts[7], 0, "{contacts:?}");
    }

    #[test]
    fn a_near_parallelogram_meets_the_conditions_to_rounding() {
        // Bay 9931 of the generated 10,000-bay sheet (`conicut::demo::sheet`, seed 1): once
        // reported an optimality residual of 4e-6 (nalgebra's SVD least squares on the weights),
        // though no nearby ellipse inside is larger.
        let p = pts(&[
            (3996.137015, 2827.680634),
            (4011.435112, 2836.440173),
            (4003.839028, 2852.326719),
            (3988.559591, 2843.543042),
        ]);
        let j = john_ellipse(&p).unwrap();
        assert_eq!(j.touching, [0, 1, 2, 3]);
        assert!(j.residuals.optimality < 1e-13, "{:?}", j.residuals);
        assert!(
            (j.residuals.least_weight - 0.49956899).abs() < 1e-7,
            "{:?}",
            j.residuals
        );
    }

    #[test]
    fn no_nearby_ellipse_inside_is_larger() {
        // An independent check of the optimum: ellipses near the answer (centre, axes and angle
        // moved a little) that still fit are never larger.
        let mut rng = XorShift::new(5);
        for _ in 0..40 {
            let p = random_polygon(&mut rng, 7);
            if !clearly_convex(&p) {
                continue;
            }
            let j = john_ellipse(&p).unwrap();
            let e = j.ellipse;
            for _ in 0..400 {
                let d = |rng: &mut XorShift| (rng.next_f64() - 0.5) * 1e-3 * e.a();
                let Ok(f) = Ellipse::new(
                    e.centre() + Vec2::new(d(&mut rng), d(&mut rng)),
                    e.a() + d(&mut rng),
                    e.b() + d(&mut rng),
                    e.angle() + d(&mut rng) / e.a(),
                ) else {
                    continue;
                };
                if super::super::contained::lies_inside(&f, &p) {
                    assert!(f.area() <= e.area() * (1.0 + 1e-9), "{p:?}");
                }
            }
        }
    }

    #[test]
    fn far_from_the_origin_the_answer_moves_with_the_polygon() {
        let mut rng = XorShift::new(17);
        for _ in 0..50 {
            // Corners on a grid of 2⁻²⁰ mm, so that moving them by whole kilometres is exact.
            let p: Vec<Point> = random_polygon(&mut rng, 6)
                .iter()
                .map(|q| {
                    let g = |v: f64| (v * 1048576.0).round() / 1048576.0;
                    Point::new(g(q.x), g(q.y))
                })
                .collect();
            if !clearly_convex(&p) {
                continue;
            }
            let here = john_ellipse(&p).unwrap().ellipse;
            let shift = Vec2::new(1e7, -7e6);
            let moved: Vec<Point> = p.iter().map(|q| *q + shift).collect();
            let there = john_ellipse(&moved).unwrap().ellipse;
            assert!((there.a() / here.a() - 1.0).abs() < 1e-12);
            assert!((there.b() / here.b() - 1.0).abs() < 1e-12);
            let off = (there.centre() - shift).distance(here.centre());
            assert!(off < 1e-12 * here.a() + 4.0 * f64::EPSILON * 1e7, "{off}");
        }
    }
}
