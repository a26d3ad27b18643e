//! The one conic touching the five sides of a convex pentagon.
//!
//! An ellipse with centre `c` and shape matrix Σ touches the line `n·x = β` exactly when
//! `(β − n·c)² = nᵀΣn` (the support function). With the homogeneous line `l = (n, −β)` that reads
//! `lᵀ D l = 0` for the symmetric dual matrix `D = [[ccᵀ − Σ, c], [cᵀ, 1]]`: five sides give five
//! linear equations in the six entries of D, whose null vector (SVD) is the dual conic. Scaling it
//! to `D₃₃ = 1` gives back the centre `c = (D₁₃, D₂₃)` and `Σ = ccᵀ − D₂ₓ₂`; `D₃₃ = 0` is a
//! parabola, a Σ that is not positive definite a hyperbola.

use crate::geom::{Ellipse, Line, Point, Vec2};
use nalgebra::{DMatrix, SVD};

/// The ellipse touching the five side lines of the counter-clockwise convex pentagon
/// `corners`, or the reason there is none to cut.
pub fn tangent_conic(corners: &[Point]) -> Result<Ellipse, String> {
    if corners.len() != 5 {
        return Err(format!(
            "a pentagon has five corners, not {}",
            corners.len()
        ));
    }
    // Solved about the corners' mean and in units of their size, so that a bay far from the
    // drawing's origin loses no digits: `Σ = ccᵀ − D` cancels terms of the size of |c|² there.
    let mean = corners
        .iter()
        .fold(Vec2::new(0.0, 0.0), |acc, p| acc + p.to_vec())
        / 5.0;
    let size = corners
        .iter()
        .map(|p| (p.to_vec() - mean).length())
        .fold(0.0, f64::max);
    if !(size > 0.0 && size.is_finite()) {
        return Err("the corners coincide".into());
    }
    let local: Vec<Point> = corners
        .iter()
        .map(|p| Point::ORIGIN + (p.to_vec() - mean) / size)
        .collect();
    let e = tangent_conic_near_origin(&local)?;
    let (sxx, sxy, syy) = e.shape_matrix();
    let s2 = size * size;
    Ellipse::from_shape_matrix(
        Point::ORIGIN + (e.centre().to_vec() * size + mean),
        sxx * s2,
        sxy * s2,
        syy * s2,
    )
    .map_err(|_| "the linear algebra failed".to_string())
}

/// [`tangent_conic`] for corners of size about 1 about the origin.
fn tangent_conic_near_origin(corners: &[Point]) -> Result<Ellipse, String> {
    let mut rows = Vec::with_capacity(30);
    for i in 0..5 {
        let line = Line::through(corners[i], corners[(i + 1) % 5])
            .ok_or_else(|| "two corners coincide".to_string())?;
        let [a, b, c] = line.homogeneous();
        // lᵀ D l for D = [[d0, d1, d3], [d1, d2, d4], [d3, d4, d5]]
        rows.extend_from_slice(&[a * a, 2.0 * a * b, b * b, 2.0 * a * c, 2.0 * b * c, c * c]);
    }
    let m = DMatrix::from_row_slice(5, 6, &rows);
    // The null vector of the 5×6 system: pad to 6×6 with a zero row so that the SVD returns the
    // full right singular basis; the last row of Vᵀ belongs to the smallest singular value.
    let mut sq = DMatrix::zeros(6, 6);
    sq.view_mut((0, 0), (5, 6)).copy_from(&m);
    let svd = SVD::new(sq, false, true);
    let vt = svd.v_t.ok_or("the linear algebra failed")?;
    let (imin, _) = svd
        .singular_values
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))
        .ok_or("the linear algebra failed")?;
    let d: Vec<f64> = vt.row(imin).iter().copied().collect();
    let scale = d.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if d[5].abs() <= 1e-12 * scale {
        return Err(
            "the conic touching all five sides is a parabola; there is no ellipse to cut".into(),
        );
    }
    let k = 1.0 / d[5];
    let (cx, cy) = (d[3] * k, d[4] * k);
    let (sxx, sxy, syy) = (cx * cx - d[0] * k, cx * cy - d[1] * k, cy * cy - d[2] * k);
    Ellipse::from_shape_matrix(Point::new(cx, cy), sxx, sxy, syy).map_err(|_| {
        "the conic touching all five sides is a hyperbola, not an ellipse; a five-sided bay has an \
         ellipse touching every side only for some shapes. Use rule largest-inside"
            .to_string()
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The pentagon bounded by `known`'s tangent lines at five fixed parameters: its one tangent
    /// conic is `known`.
    fn corners_around(known: &Ellipse) -> Vec<Point> {
        let lines: Vec<Line> = [0.2, 1.4, 2.6, 3.9, 5.1]
            .iter()
            .map(|&t| {
                let p = known.point(t);
                Line::through(p, p + known.derivative(t)).unwrap()
            })
            .collect();
        (0..5)
            .map(|i| lines[(i + 4) % 5].intersection(&lines[i]).unwrap())
            .collect()
    }

    #[test]
    fn regular_pentagon_gives_its_incircle() {
        // By symmetry the one conic touching a regular pentagon's sides is its incircle, radius
        // = circumradius · cos(36°).
        let p: Vec<Point> = (0..5)
            .map(|k| {
                let a = 0.3 + std::f64::consts::TAU / 5.0 * k as f64;
                Point::new(10.0 + 3.0 * a.cos(), -4.0 + 3.0 * a.sin())
            })
            .collect();
        let e = tangent_conic(&p).unwrap();
        let r = 3.0 * 36f64.to_radians().cos();
        assert!((e.a() - r).abs() < 1e-10 && (e.b() - r).abs() < 1e-10);
        assert!(e.centre().distance(Point::new(10.0, -4.0)) < 1e-10);
    }

    #[test]
    fn pentagon_cut_from_an_ellipse_recovers_it() {
        // Five tangent lines of a known ellipse bound a pentagon whose one tangent conic is that
        // ellipse.
        let known = Ellipse::new(Point::new(3.0, 1.0), 7.0, 4.0, 0.4).unwrap();
        let e = tangent_conic(&corners_around(&known)).unwrap();
        assert!((e.a() - 7.0).abs() < 1e-9 && (e.b() - 4.0).abs() < 1e-9);
        assert!((e.angle() - 0.4).abs() < 1e-9);
    }

    #[test]
    fn a_pentagon_far_from_the_origin_loses_no_digits() {
        // docs/sources.md M12. The same construction 3 m out on a sheet (and 2 km, for margin):
        // solved about the corners' mean, the answer is as good as near the origin. Without the
        // shift the cancellation in Σ = ccᵀ − D lost about |c|²/size² of relative precision.
        for offset in [Vec2::new(3000.0, -1500.0), Vec2::new(2.0e6, 1.0e6)] {
            let known = Ellipse::new(Point::ORIGIN + offset, 7.0, 4.0, 0.4).unwrap();
            let e = tangent_conic(&corners_around(&known)).unwrap();
            // Line intersections at |p| = 2e6 carry about 1e-9 mm of rounding themselves.
            let tol = 1e-9 * (1.0 + offset.length() / 1000.0);
            assert!(
                (e.a() - 7.0).abs() < tol && (e.b() - 4.0).abs() < tol,
                "{e:?}"
            );
            assert!(e.centre().distance(known.centre()) < tol);
            assert!((e.angle() - 0.4).abs() < tol);
        }
    }
}
