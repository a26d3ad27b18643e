//! The geometric (orthogonal-distance) least-squares ellipse: the ellipse that minimises the sum
//! of the squared shortest distances from the measured points to its curve.
//!
//! # Method
//!
//! S. J. Ahn, W. Rauh, H.-J. Warnecke, "Least-squares orthogonal distances fitting of circle,
//! sphere, ellipse, hyperbola, and parabola", Pattern Recognition 34 (2001) 2283–2303; W. Gander,
//! G. H. Golub, R. Strebel, "Least-squares fitting of circles and ellipses", BIT 34 (1994)
//! 558–578. The unknowns are the five parameters `(x₀, y₀, a, b, θ)`. For each point `p` the
//! nearest point `x'` of the current ellipse is found exactly ([`Ellipse::distance_to`]), and
//! the signed distance `dᵢ = n·(p − x')` (outward normal `n` at `x'`, positive outside) is the
//! residual. Its derivatives follow from `x(t) = c + R(θ)(a cos t, b sin t)` with `t` held at the
//! nearest point (the tangent is orthogonal to `n`, so moving along the curve changes nothing to
//! first order): `∂d/∂u = −n·∂x/∂u`, i.e.
//!
//! ```text
//! ∂d/∂x₀ = −n_x   ∂d/∂y₀ = −n_y   ∂d/∂a = −n·R(cos t, 0)   ∂d/∂b = −n·R(0, sin t)
//! ∂d/∂θ = −n·(−(y' − y₀), x' − x₀)
//! ```
//!
//! The sum of squares is minimised by Levenberg–Marquardt steps (Marquardt's scaling by the
//! diagonal of `JᵀJ`) from the algebraic fit, in coordinates local to the points (about their
//! centroid, in units of their RMS distance from it), until a step moves the parameters by less
//! than [`CONVERGED_STEP`] (or no step lowers the sum), at most [`MOST_STEPS`] steps.
//!
//! Sources and check values: docs/sources.md M15.
//!
//! # Outliers (optional)
//!
//! With outlier rejection, a point is rejected when its distance from the geometric fit exceeds
//! the median distance by more than [`OUTLIER_MADS`] scaled median absolute deviations of the
//! distances (`1.4826 · MAD`, the consistent estimate of a normal spread; a common robust rule,
//! not a standard), and is more than [`OUTLIER_FLOOR_MM`] from the fit; the fit is repeated on the points kept until none is rejected, at most
//! [`MOST_REJECTION_ROUNDS`] rounds, keeping at least [`super::least_squares::MIN_POINTS`]
//! points and at least half of them.

use crate::geom::{Ellipse, Point, Vec2};
use nalgebra::{SMatrix, SVector};

/// A step shorter than this (relative to the parameters, in the local coordinates where the
/// points' spread is 1) ends the search.
pub const CONVERGED_STEP: f64 = 1e-13;

/// The most Levenberg–Marquardt steps taken.
pub const MOST_STEPS: usize = 200;

/// How many scaled median absolute deviations from the fit make a point an outlier.
pub const OUTLIER_MADS: f64 = 3.0;

/// No point nearer the fit than this (mm) is rejected, however tight the others lie.
pub const OUTLIER_FLOOR_MM: f64 = 1e-3;

/// The most rounds of rejecting outliers and fitting again.
pub const MOST_REJECTION_ROUNDS: usize = 5;

/// The geometric fit and how well it matches the points.
#[derive(Debug, Clone, PartialEq)]
pub struct GeometricFit {
    pub ellipse: Ellipse,
    /// Root mean square of the distances of the points used (mm).
    pub rms_distance: f64,
    /// Largest distance of a point used (mm).
    pub max_distance: f64,
    /// Levenberg–Marquardt steps taken (all rounds).
    pub steps: usize,
    /// Whether the last search converged (a step below [`CONVERGED_STEP`], or no step lowering
    /// the sum); `false` when it stopped at [`MOST_STEPS`], as on points that fix the ellipse
    /// poorly (a short, nearly straight arc).
    pub converged: bool,
    /// Indices (from 0, in the order given) of the points rejected as outliers.
    pub rejected: Vec<usize>,
}

type V5 = SVector<f64, 5>;
type M5 = SMatrix<f64, 5, 5>;

fn ellipse_of(u: &V5) -> Option<Ellipse> {
    Ellipse::new(Point::new(u[0], u[1]), u[2].abs(), u[3].abs(), u[4]).ok()
}

/// The signed distances of `points` from `e` (positive outside) and, if asked, their gradients
/// with respect to `(x₀, y₀, a, b, θ)` where `e` has semi-axes along its own angle.
fn residuals(e: &Ellipse, points: &[Point], with_gradient: bool) -> (Vec<f64>, Vec<V5>) {
    let (c, th) = (e.centre(), e.angle());
    let (cs, sn) = (th.cos(), th.sin());
    let rot = |v: Vec2| Vec2::new(cs * v.x - sn * v.y, sn * v.x + cs * v.y);
    let mut d = Vec::with_capacity(points.len());
    let mut g = Vec::with_capacity(if with_gradient { points.len() } else { 0 });
    for &p in points {
        let (dist, t) = e.distance_to(p);
        let x = e.point(t);
        let normal = e.outward_normal(t);
        let sign = if (p - x).dot(normal) >= 0.0 {
            1.0
        } else {
            -1.0
        };
        d.push(sign * dist);
        if with_gradient {
            let da = rot(Vec2::new(t.cos(), 0.0));
            let db = rot(Vec2::new(0.0, t.sin()));
            let r = x - c;
            let dth = Vec2::new(-r.y, r.x);
            g.push(-V5::new(
                normal.x,
                normal.y,
                normal.dot(da),
                normal.dot(db),
                normal.dot(dth),
            ));
        }
    }
    (d, g)
}

fn sum_sq(d: &[f64]) -> f64 {
    d.iter().map(|v| v * v).sum()
}

/// Levenberg–Marquardt from `start` on `points` (local coordinates); the end, the steps and
/// whether it converged.
fn minimise(start: Ellipse, points: &[Point]) -> (Ellipse, usize, bool) {
    let mut e = start;
    let (mut d, mut g) = residuals(&e, points, true);
    let mut cost = sum_sq(&d);
    let mut lambda = 1e-3;
    let mut steps = 0;
    while steps < MOST_STEPS {
        steps += 1;
        let mut jtj = M5::zeros();
        let mut jtr = V5::zeros();
        for (di, gi) in d.iter().zip(&g) {
            jtj += gi * gi.transpose();
            jtr += gi * *di;
        }
        let u = V5::new(e.centre().x, e.centre().y, e.a(), e.b(), e.angle());
        let mut improved = false;
        for _ in 0..30 {
            let mut damped = jtj;
            for k in 0..5 {
                damped[(k, k)] += lambda * jtj[(k, k)].max(1e-12);
            }
            let Some(step) = damped.cholesky().map(|c| -c.solve(&jtr)) else {
                lambda *= 10.0;
                continue;
            };
            let Some(trial) = ellipse_of(&(u + step)) else {
                lambda *= 10.0;
                continue;
            };
            let (td, tg) = residuals(&trial, points, true);
            let tcost = sum_sq(&td);
            if tcost <= cost {
                let moved = step.norm() / u.norm().max(1.0);
                e = trial;
                d = td;
                g = tg;
                cost = tcost;
                lambda = (lambda * 0.1).max(1e-15);
                improved = true;
                if moved <= CONVERGED_STEP {
                    return (e, steps, true);
                }
                break;
            }
            lambda *= 10.0;
        }
        if !improved {
            return (e, steps, true);
        }
    }
    (e, steps, false)
}

/// The geometric least-squares ellipse of `points` (mm), started from `start` (the algebraic
/// fit), rejecting outliers by the module's rule when `reject_outliers` is set.
pub fn geometric_fit(points: &[Point], start: &Ellipse, reject_outliers: bool) -> GeometricFit {
    let n = points.len();
    let mean = points
        .iter()
        .fold(Vec2::new(0.0, 0.0), |acc, p| acc + p.to_vec())
        / n.max(1) as f64;
    let rms = (points
        .iter()
        .map(|p| (p.to_vec() - mean).length_squared())
        .sum::<f64>()
        / n.max(1) as f64)
        .sqrt();
    let scale = if rms > 0.0 && rms.is_finite() {
        rms
    } else {
        1.0
    };
    let local = |p: &Point| Point::ORIGIN + (p.to_vec() - mean) / scale;
    let world = |e: &Ellipse| {
        Ellipse::new(
            Point::ORIGIN + (mean + e.centre().to_vec() * scale),
            e.a() * scale,
            e.b() * scale,
            e.angle(),
        )
        .ok()
    };
    let all: Vec<Point> = points.iter().map(local).collect();
    let local_start = Ellipse::new(
        local(&start.centre()),
        start.a() / scale,
        start.b() / scale,
        start.angle(),
    )
    .unwrap_or(*start);
    let mut keep: Vec<usize> = (0..n).collect();
    let mut e = local_start;
    let mut steps = 0;
    let mut converged = true;
    for round in 0..=MOST_REJECTION_ROUNDS {
        let used: Vec<Point> = keep.iter().map(|&i| all[i]).collect();
        let (found, s, done) = minimise(e, &used);
        e = found;
        steps += s;
        converged = done;
        if !reject_outliers || round == MOST_REJECTION_ROUNDS {
            break;
        }
        let (d, _) = residuals(&e, &all, false);
        let mut dev: Vec<f64> = keep.iter().map(|&i| d[i].abs()).collect();
        dev.sort_by(f64::total_cmp);
        let median = dev[dev.len() / 2];
        let mut abs_dev: Vec<f64> = dev.iter().map(|v| (v - median).abs()).collect();
        abs_dev.sort_by(f64::total_cmp);
        let spread = 1.4826 * abs_dev[abs_dev.len() / 2];
        let limit = (median + OUTLIER_MADS * spread).max(OUTLIER_FLOOR_MM / scale);
        let next: Vec<usize> = (0..n).filter(|&i| d[i].abs() <= limit).collect();
        let floor = super::least_squares::MIN_POINTS.max(n.div_ceil(2));
        if next == keep || next.len() < floor {
            break;
        }
        keep = next;
    }
    let used: Vec<Point> = keep.iter().map(|&i| points[i]).collect();
    let ellipse = world(&e).unwrap_or(*start);
    let dist: Vec<f64> = used.iter().map(|p| ellipse.distance_to(*p).0).collect();
    let mut kept = vec![false; n];
    for &i in &keep {
        kept[i] = true;
    }
    let rejected = (0..n).filter(|&i| !kept[i]).collect();
    GeometricFit {
        ellipse,
        rms_distance: (sum_sq(&dist) / dist.len().max(1) as f64).sqrt(),
        max_distance: dist.iter().copied().fold(0.0, f64::max),
        steps,
        converged,
        rejected,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::least_squares_ellipse;

    /// The eight points of Gander, Golub and Strebel (BIT 34, 1994), also fitted by Ahn, Rauh
    /// and Warnecke (2001).
    const GANDER: [(f64, f64); 8] = [
        (1.0, 7.0),
        (2.0, 6.0),
        (5.0, 8.0),
        (7.0, 7.0),
        (9.0, 5.0),
        (3.0, 7.0),
        (6.0, 2.0),
        (8.0, 4.0),
    ];

    /// docs/reference/geometric_fit.py's partial arc: 50 points from −60° to 100° of a 40 × 15
    /// mm ellipse at (120, 80) turned 25°, each moved radially by 0.05·sin(12.9898 k) mm.
    fn partial_arc() -> Vec<Point> {
        let th = 25f64.to_radians();
        (0..50)
            .map(|k| {
                let t = (-60.0 + 160.0 * k as f64 / 49.0_f64).to_radians();
                let (x, y) = (40.0 * t.cos(), 15.0 * t.sin());
                let r = x.hypot(y);
                let n = 0.05 * (12.9898 * k as f64).sin();
                let (x, y) = (x * (1.0 + n / r), y * (1.0 + n / r));
                Point::new(
                    120.0 + x * th.cos() - y * th.sin(),
                    80.0 + x * th.sin() + y * th.cos(),
                )
            })
            .collect()
    }

    fn fitted(points: &[Point], robust: bool) -> (GeometricFit, Ellipse) {
        let algebraic = least_squares_ellipse(points).unwrap().ellipse;
        (geometric_fit(points, &algebraic, robust), algebraic)
    }

    fn close(e: &Ellipse, want: (f64, f64, f64, f64, f64), tol: f64) {
        let (x, y, a, b, th) = want;
        assert!(e.centre().distance(Point::new(x, y)) < tol, "{e:?}");
        assert!((e.a() - a).abs() < tol && (e.b() - b).abs() < tol, "{e:?}");
        let turn = (e.angle() - th).rem_euclid(std::f64::consts::PI);
        assert!(turn.min(std::f64::consts::PI - turn) < tol, "{e:?}");
    }

    #[test]
    fn gander_s_eight_points_give_the_published_ellipse() {
        // Published (Gander, Golub, Strebel 1994; Ahn et al. 2001, values from memory, four
        // decimals): centre (2.6996, 3.8160), a = 6.5187, b = 3.0319, θ = 0.3596 rad. Computed
        // (docs/reference/geometric_fit.py, SciPy's least_squares on the parametric form):
        // centre (2.699611858196, 3.815956494861), a 6.518722704017, b 3.031886038921,
        // θ 0.359624277876, RMS distance 0.414322570556.
        let points: Vec<Point> = GANDER.iter().map(|&(x, y)| Point::new(x, y)).collect();
        let (g, algebraic) = fitted(&points, false);
        close(&g.ellipse, (2.6996, 3.8160, 6.5187, 3.0319, 0.3596), 1e-4);
        // The minimum is flat along one direction (the sum of squares at SciPy's parameters and
        // at ours agree to 1e-15 while the parameters differ by 5e-7), so the parameters are
        // compared to 1e-6 and the sum to 1e-11.
        close(
            &g.ellipse,
            (
                2.699611858196,
                3.815956494861,
                6.518722704017,
                3.031886038921,
                0.359624277876,
            ),
            1e-6,
        );
        assert!((g.rms_distance - 0.414322570556).abs() < 1e-11);
        // The algebraic fit is a different ellipse with a larger sum of squared distances.
        assert!(algebraic.centre().distance(g.ellipse.centre()) > 0.1);
        assert!(least_squares_ellipse(&points).unwrap().rms_residual > g.rms_distance);
    }

    #[test]
    fn a_partial_noisy_arc_gives_the_computed_geometric_ellipse() {
        // Computed (docs/reference/geometric_fit.py): centre (119.540945194456,
        // 79.720333402467), a 40.544753696510, b 15.075600330088, θ 0.438437887342 rad, RMS
        // distance 0.025830648699 mm, largest 0.043704564490 mm.
        let (g, algebraic) = fitted(&partial_arc(), false);
        close(
            &g.ellipse,
            (
                119.540945194456,
                79.720333402467,
                40.544753696510,
                15.075600330088,
                0.438437887342,
            ),
            1e-7,
        );
        assert!((g.rms_distance - 0.025830648699).abs() < 1e-10);
        assert!((g.max_distance - 0.043704564490).abs() < 1e-9);
        let a = least_squares_ellipse(&partial_arc()).unwrap();
        assert!(
            a.rms_residual > g.rms_distance,
            "{} {}",
            a.rms_residual,
            g.rms_distance
        );
        assert!(algebraic.centre().distance(g.ellipse.centre()) > 1e-3);
    }

    #[test]
    fn exact_points_give_their_ellipse_back() {
        let e = Ellipse::new(Point::new(-40.0, 12.0), 30.0, 11.0, 1.1).unwrap();
        let pts: Vec<Point> = (0..12).map(|k| e.point(0.3 * k as f64)).collect();
        let (g, _) = fitted(&pts, false);
        close(&g.ellipse, (-40.0, 12.0, 30.0, 11.0, 1.1), 1e-9);
        assert!(g.max_distance < 1e-9);
        assert!(g.converged);
    }

    #[test]
    fn a_short_nearly_straight_arc_says_the_search_did_not_settle() {
        // 20 points over 5.7° of a 1 m circle with 1 µm of scatter: the ellipse is poorly fixed
        // (a long valley); the search stops at its step limit, says so, and is still no worse
        // than the algebraic fit it started from.
        let pts: Vec<Point> = (0..20)
            .map(|k| {
                let t = -0.05 + 0.005 * k as f64;
                Point::new(
                    1000.0 * t.sin(),
                    1000.0 * (1.0 - t.cos()) + 0.001 * (k as f64 * 7.1).sin(),
                )
            })
            .collect();
        let (g, _) = fitted(&pts, false);
        assert!(!g.converged && g.steps == MOST_STEPS, "{g:?}");
        assert!(g.rms_distance <= least_squares_ellipse(&pts).unwrap().rms_residual);
    }

    #[test]
    fn outliers_are_rejected_by_the_stated_rule_and_listed() {
        let mut pts = partial_arc();
        for (k, off) in [(7, 2.0), (23, -1.5), (41, 3.0)] {
            let p = pts[k];
            let dir = (p - Point::new(120.0, 80.0)).normalized().unwrap();
            pts[k] = p + dir * off;
        }
        let (plain, _) = fitted(&pts, false);
        let (robust, _) = fitted(&pts, true);
        assert_eq!(robust.rejected, [7, 23, 41]);
        assert!(plain.rejected.is_empty());
        assert!(plain.max_distance > 1.0 && robust.max_distance < 0.06);
        // The fit is that of the points kept.
        let kept: Vec<Point> = (0..pts.len())
            .filter(|k| ![7, 23, 41].contains(k))
            .map(|k| pts[k])
            .collect();
        let (clean, _) = fitted(&kept, false);
        let (e, f) = (robust.ellipse, clean.ellipse);
        close(
            &e,
            (f.centre().x, f.centre().y, f.a(), f.b(), f.angle()),
            1e-9,
        );
        // On clean data nothing is rejected.
        assert!(fitted(&partial_arc(), true).0.rejected.is_empty());
    }
}
