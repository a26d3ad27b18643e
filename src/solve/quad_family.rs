//! The one-parameter family of ellipses tangent to the four side lines of a convex
//! quadrilateral, and its largest member.
//!
//! # The family (closed form)
//!
//! For corners `A, B, C, D` let `M1 = (A+C)/2`, `M2 = (B+D)/2` be the midpoints of the diagonals,
//! `u = (A−C)/2`, `v = (B−D)/2` the half-diagonals and `w = M2 − M1`. The conics tangent to the
//! four side lines form the pencil of dual conics `(1−t) S_AC + t S_BD`, where `S_PQ` is the
//! point-pair dual conic of `P` and `Q`. Its centre moves along the Newton line,
//!
//! ```text
//! c(t) = M1 + t w,                       (Newton's theorem)
//! Σ(t) = (1−t) u uᵀ + t v vᵀ − t(1−t) w wᵀ,  the ellipse being (x−c)ᵀ Σ⁻¹ (x−c) = 1,
//! a² + b² = (1−t)|u|² + t|v|² − t(1−t)|w|²        (quadratic in t)
//! a² b²   = t(1−t)(K0 + K1 t),   K0 = (u×v)² − (u×w)²,  K1 = (u×w)² − (v×w)²  (cubic in t)
//! ```
//!
//! and for a convex quadrilateral the members with `0 < t < 1` are exactly the ellipses inside it
//! touching all four sides. The largest has `d(a²b²)/dt = 0`:
//! `3 K1 t² − 2 (K1 − K0) t − K0 = 0`, with `t = ½` when `K1 = 0` (every trapezoid and every
//! parallelogram). For a parallelogram `w = 0`: all members share the centre and `t` only walks the
//! pencil; the same formulas hold.
//!
//! Sources: Newton's theorem on the centres of inscribed conics and the family on the open
//! segment `M1 M2`: A. Horwitz, "Ellipses of minimal eccentricity inscribed in midpoint diagonal
//! quadrilaterals", arXiv:1607.02086, §2 Theorems 1 and 2. The closed forms above are derived and
//! checked in docs/sources.md M1, §2 and §6.

use crate::geom::{Ellipse, EllipseError, Point, Vec2};

/// The family of conics tangent to the four side lines of a quadrilateral.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TangentFamily {
    m1: Point,
    u: Vec2,
    v: Vec2,
    w: Vec2,
}

impl TangentFamily {
    /// The family for corners `[A, B, C, D]` in order around the quadrilateral (either sense).
    pub fn new(corners: [Point; 4]) -> Self {
        let [a, b, c, d] = corners;
        let m1 = a.midpoint(c);
        let m2 = b.midpoint(d);
        TangentFamily {
            m1,
            u: (a - c) * 0.5,
            v: (b - d) * 0.5,
            w: m2 - m1,
        }
    }

    /// Centre of the member at `t`: `M1 + t w` (on the Newton line).
    pub fn centre(&self, t: f64) -> Point {
        self.m1 + self.w * t
    }

    /// Shape matrix `(sxx, sxy, syy)` of the member at `t`.
    pub fn shape(&self, t: f64) -> (f64, f64, f64) {
        let (u, v, w) = (self.u, self.v, self.w);
        let (p, q, r) = (1.0 - t, t, -t * (1.0 - t));
        (
            p * u.x * u.x + q * v.x * v.x + r * w.x * w.x,
            p * u.x * u.y + q * v.x * v.y + r * w.x * w.y,
            p * u.y * u.y + q * v.y * v.y + r * w.y * w.y,
        )
    }

    /// The coefficients `(K0, K1)` of `a²b² = t(1−t)(K0 + K1 t)`.
    pub fn area_coefficients(&self) -> (f64, f64) {
        let uv = self.u.cross(self.v);
        let uw = self.u.cross(self.w);
        let vw = self.v.cross(self.w);
        (uv * uv - uw * uw, uw * uw - vw * vw)
    }

    /// `a²b²` of the member at `t` (`(area/π)²`); negative for hyperbolas.
    pub fn axes_product_squared(&self, t: f64) -> f64 {
        let (k0, k1) = self.area_coefficients();
        t * (1.0 - t) * (k0 + k1 * t)
    }

    /// `a² + b²` of the member at `t`.
    pub fn axes_sum_squared(&self, t: f64) -> f64 {
        (1.0 - t) * self.u.length_squared() + t * self.v.length_squared()
            - t * (1.0 - t) * self.w.length_squared()
    }

    /// Coefficients of `a² + b²` as a polynomial in `t` (constant term first):
    /// `|u|² + t (|v|² − |u|² − |w|²) + t² |w|²`.
    pub fn axes_sum_squared_poly(&self) -> [f64; 3] {
        let (uu, vv, ww) = (
            self.u.length_squared(),
            self.v.length_squared(),
            self.w.length_squared(),
        );
        [uu, vv - uu - ww, ww]
    }

    /// Coefficients of `a²b²` as a polynomial in `t` (constant term first):
    /// `K0 t + (K1 − K0) t² − K1 t³`.
    pub fn axes_product_squared_poly(&self) -> [f64; 4] {
        let (k0, k1) = self.area_coefficients();
        [0.0, k0, k1 - k0, -k1]
    }

    /// Whether the quadrilateral is a parallelogram (the diagonals bisect each other: `|w|` below
    /// `1e-12` of the half-diagonals), where every member has the same centre.
    pub fn is_parallelogram(&self) -> bool {
        self.w.length() <= 1e-12 * self.u.length().max(self.v.length())
    }

    /// The Newton line's two ends, the midpoints of the diagonals `(M1, M2)`.
    pub fn newton_segment(&self) -> (Point, Point) {
        (self.m1, self.m1 + self.w)
    }

    /// The member at `t` as an ellipse.
    pub fn ellipse(&self, t: f64) -> Result<Ellipse, EllipseError> {
        let (sxx, sxy, syy) = self.shape(t);
        Ellipse::from_shape_matrix(self.centre(t), sxx, sxy, syy)
    }

    /// The parameter of the largest-area member inside the quadrilateral: the root in (0, 1) of
    /// `3 K1 t² − 2 (K1 − K0) t − K0 = 0` (the stable form of the quadratic formula, so that
    /// `K1 → 0` gives the linear root smoothly; `t = ½` when `K1 = 0`). `None` when no root lies
    /// in (0, 1), which does not happen for a convex quadrilateral.
    pub fn largest_area_parameter(&self) -> Option<f64> {
        let (k0, k1) = self.area_coefficients();
        let (qa, qb, qc) = (3.0 * k1, -2.0 * (k1 - k0), -k0);
        let disc = qb * qb - 4.0 * qa * qc;
        if disc < 0.0 || !disc.is_finite() {
            return None;
        }
        let q = -0.5 * (qb + qb.signum() * disc.sqrt());
        let mut roots = Vec::with_capacity(2);
        if q != 0.0 {
            roots.push(qc / q);
            if qa != 0.0 {
                roots.push(q / qa);
            }
        }
        roots
            .into_iter()
            .filter(|t| *t > 0.0 && *t < 1.0)
            .max_by(|s, t| {
                self.axes_product_squared(*s)
                    .total_cmp(&self.axes_product_squared(*t))
            })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn irregular_1() -> TangentFamily {
        TangentFamily::new([
            Point::new(0.0, 0.0),
            Point::new(5.0, 0.0),
            Point::new(4.0, 3.0),
            Point::new(1.0, 4.0),
        ])
    }

    #[test]
    fn coefficients_match_reference() {
        // docs/sources.md M2 "Family data used": irregular_1 K0 = 195/4, K1 = −35/4.
        let (k0, k1) = irregular_1().area_coefficients();
        assert!((k0 - 195.0 / 4.0).abs() < 1e-12 && (k1 + 35.0 / 4.0).abs() < 1e-12);
    }

    #[test]
    fn polynomials_along_newton_line_match_reference() {
        // docs/sources.md M6 (family_table.py, exact sympy): for irregular_1
        // a²+b² = (5t²+2t+25)/4 and a²b² = (35t³ − 230t² + 195t)/4.
        let f = irregular_1();
        for i in 0..=20 {
            let t = -1.0 + 0.25 * i as f64;
            let sum = (5.0 * t * t + 2.0 * t + 25.0) / 4.0;
            let prod = (35.0 * t * t * t - 230.0 * t * t + 195.0 * t) / 4.0;
            assert!((f.axes_sum_squared(t) - sum).abs() < 1e-12 * sum.abs().max(1.0));
            assert!((f.axes_product_squared(t) - prod).abs() < 1e-12 * prod.abs().max(1.0));
            // The same numbers from the shape matrix itself (trace and determinant).
            let (sxx, sxy, syy) = f.shape(t);
            assert!((sxx + syy - sum).abs() < 1e-12 * sum.abs().max(1.0));
            assert!((sxx * syy - sxy * sxy - prod).abs() < 1e-11 * prod.abs().max(1.0));
        }
    }

    #[test]
    fn family_table_rows() {
        // docs/sources.md M6 table, rows t = 0.3 and t = 0.7.
        let f = irregular_1();
        let e = f.ellipse(0.3).unwrap();
        assert!((e.a() - 2.05275578121).abs() < 1e-10 && (e.b() - 1.51614435418).abs() < 1e-10);
        assert!((e.angle().to_degrees() - 28.06161718).abs() < 1e-7);
        let e = f.ellipse(0.7).unwrap();
        assert!((e.a() - 2.37058059551).abs() < 1e-10 && (e.b() - 1.26208067895).abs() < 1e-10);
        assert!((e.angle().to_degrees() + 42.38185235).abs() < 1e-7);
    }
}
