//! Least-squares ellipse fit to measured points (probe or scan data).
//!
//! # Method
//!
//! The direct least-squares fit of Fitzgibbon, Pilu and Fisher ("Direct least square fitting of
//! ellipses", IEEE Trans. PAMI 21(5), 1999): among conics `a x² + b xy + c y² + d x + e y + f = 0`
//! with `4ac − b² = 1`, take the one that minimises the algebraic error `Σ (a xᵢ² + … + f)²`.
//! The constraint makes the result an ellipse whenever the scatter matrix is positive definite,
//! and the solution is the eigenvector of the generalised problem `S x = λ C x` with the one
//! positive eigenvalue.
//!
//! It is solved in the numerically stable block form of Halíř and Flusser ("Numerically stable
//! direct least squares fitting of ellipses", WSCG 1998): with the design matrix split into its
//! quadratic columns `D₁ = [x², xy, y²]` and linear columns `D₂ = [x, y, 1]`, the scatter blocks
//! `S₁ = D₁ᵀD₁`, `S₂ = D₁ᵀD₂`, `S₃ = D₂ᵀD₂`, and `C₁ = [[0, 0, 2], [0, −1, 0], [2, 0, 0]]`, the
//! quadratic part `a₁ = (a, b, c)` is an eigenvector of the 3×3 matrix
//! `M = C₁⁻¹ (S₁ − S₂ S₃⁻¹ S₂ᵀ)` with `4ac − b² > 0`, and the linear part is
//! `a₂ = (d, e, f) = −S₃⁻¹ S₂ᵀ a₁`.
//!
//! `M` is not symmetric and nalgebra gives no eigenvectors for non-symmetric matrices, so each
//! real eigenvalue `λ` of `M` (from its Schur form) is turned into an eigenvector as the null
//! vector of `M − λI`: the right singular vector of its smallest singular value.
//!
//! # Conditioning
//!
//! The fourth powers in `S₁` lose every digit when the points are small and far from the origin
//! (a 0.4 mm ellipse 1000 mm away gives NaN or a wrong ellipse in raw coordinates, docs/sources.md
//! §9). The points are therefore first moved to their centroid `m` and divided by their RMS
//! distance `s` from it, `u = (p − m)/s`. The fit is similarity-covariant, so the ellipse found for
//! the `u` is mapped back exactly: centre `m + s c_u`, semi-axes `s a_u`, `s b_u`, same angle. The
//! coefficients in the original coordinates follow by substituting `u = (x − m)/s` and
//! multiplying by `s²`, which leaves `4ac − b²` unchanged.
//!
//! # Residuals
//!
//! The fit minimises an algebraic error, not the distance of the points to the curve (the two
//! differ visibly on partial arcs, docs/sources.md M9 and surprise S6). The residuals reported are
//! the true geometric distances of each point to the fitted ellipse in mm, from
//! [`Ellipse::distance_to`].
//!
//! # Tolerances (all relative, stated once here)
//!
//! * [`COINCIDENT_RELATIVE`]: the points are taken as one point when their RMS distance from their
//!   centroid is at most this fraction of their largest coordinate (or of 1 mm, if larger).
//! * [`COLLINEAR_RATIO`]: the points are taken as lying on a line when their RMS spread across
//!   their best-fit line is at most this fraction of their RMS spread along it.
//! * [`UNDERDETERMINED_RATIO`]: the points do not fix one conic when the fifth singular value of
//!   the (normalised) design matrix is at most this fraction of the first: fewer than five
//!   distinct points, or all but one of them on one line (then a whole family of conics fits).
//! * [`EXACT_CONIC_RATIO`]: the points lie on one conic (to within about this fraction of their
//!   spread) when the sixth singular value of the normalised design matrix is at most this
//!   fraction of the first. If that conic is a hyperbola, a parabola or a line pair, the fit is
//!   refused: the direct method always returns an ellipse, and here it would be one that misses
//!   the points. Measured points are never this exact; points placed on a drawing can be.
//! * [`REAL_EIGENVALUE_RELATIVE`]: an eigenvalue of `M` counts as real when its imaginary part is
//!   at most this fraction of the largest eigenvalue's modulus.
//! * What a conic is (ellipse, hyperbola, parabola, line pair, no real points, …) is decided by
//!   [`Conic::classify`], with the tolerance [`super::conic::CLASSIFY_RELATIVE`] stated there,
//!   applied in the normalised coordinates.

use super::conic::{Conic, ConicKind};
use crate::geom::{Ellipse, Point};
use nalgebra::{DMatrix, Matrix3, Vector3};

/// RMS distance from the centroid, relative to the coordinates' size, below which the points are
/// one point.
pub const COINCIDENT_RELATIVE: f64 = 1e-12;

/// Ratio of the RMS spread across to the RMS spread along the points' principal line below which
/// they are collinear.
pub const COLLINEAR_RATIO: f64 = 1e-9;

/// Ratio of the fifth to the first singular value of the normalised design matrix below which the
/// points do not determine one conic.
pub const UNDERDETERMINED_RATIO: f64 = 1e-10;

/// Ratio of the sixth to the first singular value of the normalised design matrix below which the
/// points lie exactly (to rounding) on one conic; if that conic is not an ellipse, the fit is
/// refused.
pub const EXACT_CONIC_RATIO: f64 = 1e-7;

/// Largest imaginary part, relative to the largest eigenvalue modulus, of an eigenvalue still
/// taken as real.
pub const REAL_EIGENVALUE_RELATIVE: f64 = 1e-9;

/// The fewest points a fit takes: five points fix a conic.
pub const MIN_POINTS: usize = 5;

/// An ellipse fitted to measured points.
#[derive(Debug, Clone, PartialEq)]
pub struct LeastSquaresEllipse {
    /// The fitted ellipse, in the points' coordinates (mm).
    pub ellipse: Ellipse,
    /// `[a, b, c, d, e, f]` of `a x² + b xy + c y² + d x + e y + f = 0` in the points'
    /// coordinates, scaled so that `4ac − b² = 1` and signed so that `a + c > 0`.
    ///
    /// For a small ellipse far from the origin these numbers are badly conditioned (`f` is a
    /// difference of large terms); use [`LeastSquaresEllipse::ellipse`] for geometry.
    pub coefficients: [f64; 6],
    /// Root mean square of the geometric distances of the points to the ellipse (mm).
    pub rms_residual: f64,
    /// Largest geometric distance of a point to the ellipse (mm).
    pub max_residual: f64,
    /// How many points were fitted.
    pub points: usize,
}

/// Why no ellipse was fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LeastSquaresError {
    #[error(
        "an ellipse fit needs at least {MIN_POINTS} points and {found} were given; measure more \
         points around the feature"
    )]
    TooFewPoints { found: usize },
    #[error(
        "point {index} (counting from 1) has a coordinate that is not a finite number ({x}, {y}); \
         check the measured data"
    )]
    NotFinite { index: usize, x: f64, y: f64 },
    #[error(
        "all {points} points are at the same place (within {COINCIDENT_RELATIVE:e} of their \
         coordinates); measure points spread around the feature"
    )]
    Coincident { points: usize },
    #[error(
        "the {points} points lie on a straight line (their spread across it is {ratio:.1e} of their \
         spread along it, limit {COLLINEAR_RATIO:e}); an ellipse needs points around a curve"
    )]
    Collinear { points: usize, ratio: f64 },
    #[error(
        "the {points} points do not fix one conic (fifth singular value of the design matrix is \
         {ratio:.1e} of the first, limit {UNDERDETERMINED_RATIO:e}): there are fewer than five \
         distinct points, or all but one lie on one straight line. Measure at least five \
         different points spread around the feature"
    )]
    Underdetermined { points: usize, ratio: f64 },
    #[error(
        "the conic that best fits the {points} points is not an ellipse but {} {kind}; check \
         that the points belong to one elliptical feature and come from one measurement",
        article(kind)
    )]
    NotAnEllipse { points: usize, kind: ConicKind },
    #[error("the ellipse fit broke down numerically ({reason}); check the measured data")]
    Numerical { reason: String },
}

/// Fits an ellipse to `points` (mm) by the direct least-squares method (Fitzgibbon, Pilu, Fisher
/// 1999) in the block form of Halíř and Flusser (1998), on centred and scaled data; see the module
/// docs for the method, the tolerances and the residuals.
///
/// ```
/// use conicut::geom::{Ellipse, Point};
/// use conicut::solve::least_squares_ellipse;
///
/// let e = Ellipse::new(Point::new(30.0, -12.0), 40.0, 15.0, 25f64.to_radians()).unwrap();
/// let points: Vec<Point> = (0..8).map(|k| e.point(0.7 * k as f64)).collect();
/// let fit = least_squares_ellipse(&points).unwrap();
/// assert!((fit.ellipse.a() - 40.0).abs() < 1e-9);
/// assert!(fit.max_residual < 1e-9);
/// ```
pub fn least_squares_ellipse(points: &[Point]) -> Result<LeastSquaresEllipse, LeastSquaresError> {
    check_points(points)?;
    let frame = Normalised::of(points)?;
    let free = check_design(&frame.u)?;
    let (coeffs_u, ellipse_u) = fit_normalised(&frame.u, free)?;
    let (ellipse, coefficients) = frame.map_back(&ellipse_u, coeffs_u)?;
    let (rms_residual, max_residual) = residuals(points, &ellipse)?;
    Ok(LeastSquaresEllipse {
        ellipse,
        coefficients,
        rms_residual,
        max_residual,
        points: points.len(),
    })
}

/// Enough points, every coordinate finite.
fn check_points(points: &[Point]) -> Result<(), LeastSquaresError> {
    let n = points.len();
    if n < MIN_POINTS {
        return Err(LeastSquaresError::TooFewPoints { found: n });
    }
    if let Some((i, p)) = points.iter().enumerate().find(|(_, p)| !p.is_finite()) {
        return Err(LeastSquaresError::NotFinite {
            index: i + 1,
            x: p.x,
            y: p.y,
        });
    }
    Ok(())
}

/// The points centred and scaled: `u = (p − m) / s` with `s` the RMS distance from the centroid.
struct Normalised {
    mx: f64,
    my: f64,
    s: f64,
    u: Vec<(f64, f64)>,
}

impl Normalised {
    /// Refuses points that are one point or lie on a line.
    fn of(points: &[Point]) -> Result<Normalised, LeastSquaresError> {
        let n = points.len();
        let nf = n as f64;
        let mx = points.iter().map(|p| p.x).sum::<f64>() / nf;
        let my = points.iter().map(|p| p.y).sum::<f64>() / nf;
        let (mut cxx, mut cxy, mut cyy) = (0.0, 0.0, 0.0);
        for p in points {
            let (dx, dy) = (p.x - mx, p.y - my);
            cxx += dx * dx;
            cxy += dx * dy;
            cyy += dy * dy;
        }
        let s = ((cxx + cyy) / nf).sqrt();
        let size = points
            .iter()
            .map(|p| p.x.abs().max(p.y.abs()))
            .fold(1.0, f64::max);
        if !s.is_finite() {
            return Err(numerical(
                "the coordinates are too large to square without overflow",
            ));
        }
        if s <= COINCIDENT_RELATIVE * size {
            return Err(LeastSquaresError::Coincident { points: n });
        }
        // Principal spreads of the points (eigenvalues of the 2×2 scatter), closed form.
        let half_sum = 0.5 * (cxx + cyy);
        let half_diff = (0.5 * (cxx - cyy)).hypot(cxy);
        let along = half_sum + half_diff;
        let across = ((cxx * cyy - cxy * cxy) / along).max(0.0);
        let thickness = (across / along).sqrt();
        if thickness.is_nan() || thickness <= COLLINEAR_RATIO {
            return Err(LeastSquaresError::Collinear {
                points: n,
                ratio: thickness,
            });
        }
        let u = points
            .iter()
            .map(|p| ((p.x - mx) / s, (p.y - my) / s))
            .collect();
        Ok(Normalised { mx, my, s, u })
    }

    /// The ellipse and coefficients found for `u` in the points' own coordinates: centre
    /// `m + s c_u`, axes × s, angle unchanged.
    fn map_back(
        &self,
        ellipse_u: &Ellipse,
        coeffs_u: [f64; 6],
    ) -> Result<(Ellipse, [f64; 6]), LeastSquaresError> {
        let (mx, my, s) = (self.mx, self.my, self.s);
        let cu = ellipse_u.centre();
        let ellipse = Ellipse::new(
            Point::new(mx + s * cu.x, my + s * cu.y),
            s * ellipse_u.a(),
            s * ellipse_u.b(),
            ellipse_u.angle(),
        )
        .map_err(|e| numerical(&format!("mapping the ellipse back failed: {e}")))?;
        let coefficients = unnormalise(coeffs_u, mx, my, s);
        if !coefficients.iter().all(|c| c.is_finite()) {
            return Err(numerical("the coefficients are not finite"));
        }
        Ok((ellipse, coefficients))
    }
}

/// Checks that the normalised points fix one conic and do not lie exactly on a conic that is no
/// ellipse; returns the free least-squares conic (the right singular vector of the smallest
/// singular value of the design matrix).
fn check_design(u: &[(f64, f64)]) -> Result<[f64; 6], LeastSquaresError> {
    let n = u.len();
    // Five distinct points at least: the design matrix must have rank five. Padded with zero rows
    // to at least six so that the SVD returns all six right singular vectors.
    let rows = n.max(6);
    let design = DMatrix::from_fn(rows, 6, |i, j| {
        if i >= n {
            return 0.0;
        }
        let (x, y) = u[i];
        [x * x, x * y, y * y, x, y, 1.0][j]
    });
    // The singular values and right vectors of the design are those of its QR factor R (6 × 6),
    // which is far cheaper to decompose than the n × 6 design itself.
    let r_factor = design.qr().r();
    let svd = r_factor.svd(false, true);
    let v_t = svd
        .v_t
        .as_ref()
        .ok_or_else(|| numerical("the SVD gave no singular vectors"))?;
    let sv = &svd.singular_values;
    let ratio = sv[4] / sv[0];
    if ratio.is_nan() || ratio <= UNDERDETERMINED_RATIO {
        return Err(LeastSquaresError::Underdetermined { points: n, ratio });
    }
    let r = v_t.row(5);
    let free = [r[0], r[1], r[2], r[3], r[4], r[5]];

    // Points that lie on a hyperbola, parabola or line pair to within rounding (the smallest
    // singular value is negligible): the direct fit would still return an ellipse (it is
    // ellipse-specific), one that misses the points; refuse and say what they lie on.
    let exact = sv[5] / sv[0];
    if exact <= EXACT_CONIC_RATIO {
        let kind = classify(free)?;
        if !kind.is_ellipse() {
            return Err(LeastSquaresError::NotAnEllipse { points: n, kind });
        }
    }
    Ok(free)
}

/// The direct fit of the normalised points: its coefficients and its ellipse. `free` is the free
/// least-squares conic, described when no eigenvector gives an ellipse.
fn fit_normalised(
    u: &[(f64, f64)],
    free: [f64; 6],
) -> Result<([f64; 6], Ellipse), LeastSquaresError> {
    let n = u.len();
    let coeffs_u = match halir_flusser(u) {
        Some(c) => c,
        None => {
            // No eigenvector with 4ac − b² > 0: describe the free least-squares conic instead.
            let kind = classify(free)?;
            return Err(if kind.is_ellipse() {
                numerical("no eigenvector with 4ac − b² > 0 was found")
            } else {
                LeastSquaresError::NotAnEllipse { points: n, kind }
            });
        }
    };
    // 4ac − b² = 1 > 0 holds by construction; the conic can still have no real points or be a
    // single point.
    let conic_u = Conic::from_coefficients(coeffs_u)
        .map_err(|e| numerical(&format!("the fitted conic is unusable: {e}")))?;
    let ellipse_u = conic_u
        .to_ellipse()
        .map_err(|e| LeastSquaresError::NotAnEllipse {
            points: n,
            kind: e.kind,
        })?;
    Ok((coeffs_u, ellipse_u))
}

/// RMS and largest geometric distance of the points to `ellipse` (mm).
fn residuals(points: &[Point], ellipse: &Ellipse) -> Result<(f64, f64), LeastSquaresError> {
    let (mut sum_sq, mut max_residual) = (0.0_f64, 0.0_f64);
    for p in points {
        let (d, _) = ellipse.distance_to(*p);
        sum_sq += d * d;
        max_residual = max_residual.max(d);
    }
    let rms_residual = (sum_sq / points.len() as f64).sqrt();
    if !(rms_residual.is_finite() && max_residual.is_finite()) {
        return Err(numerical("the residuals are not finite"));
    }
    Ok((rms_residual, max_residual))
}

fn numerical(reason: &str) -> LeastSquaresError {
    LeastSquaresError::Numerical {
        reason: reason.to_string(),
    }
}

/// The Halíř–Flusser solution for normalised points, scaled to `4ac − b² = 1` with `a + c > 0`;
/// `None` when no real eigenvector of `M` has `4ac − b² > 0`.
fn halir_flusser(u: &[(f64, f64)]) -> Option<[f64; 6]> {
    let mut s1 = Matrix3::<f64>::zeros();
    let mut s2 = Matrix3::<f64>::zeros();
    let mut s3 = Matrix3::<f64>::zeros();
    for &(x, y) in u {
        let d1 = Vector3::new(x * x, x * y, y * y);
        let d2 = Vector3::new(x, y, 1.0);
        s1 += d1 * d1.transpose();
        s2 += d1 * d2.transpose();
        s3 += d2 * d2.transpose();
    }
    // T = −S₃⁻¹ S₂ᵀ; S₃ is invertible because the points are not collinear (checked).
    let t = -(s3.lu().solve(&s2.transpose())?);
    let reduced = s1 + s2 * t; // S₁ − S₂ S₃⁻¹ S₂ᵀ, symmetric
    // M = C₁⁻¹ reduced, with C₁⁻¹ = [[0, 0, ½], [0, −1, 0], [½, 0, 0]].
    let m = Matrix3::from_rows(&[
        (reduced.row(2) * 0.5),
        (reduced.row(1) * -1.0),
        (reduced.row(0) * 0.5),
    ]);
    let eigenvalues = m.complex_eigenvalues();
    let largest = eigenvalues.iter().map(|z| z.norm()).fold(0.0, f64::max);
    let mut best: Option<(f64, Vector3<f64>)> = None;
    for z in eigenvalues.iter() {
        if z.im.abs() > REAL_EIGENVALUE_RELATIVE * largest {
            continue;
        }
        let shifted = m - Matrix3::identity() * z.re;
        let svd = shifted.svd(false, true);
        let v_t = svd.v_t?;
        // Singular values come sorted in descending order: the last row is the null vector.
        let v: Vector3<f64> = v_t.row(2).transpose();
        let cond = 4.0 * v[0] * v[2] - v[1] * v[1];
        if cond.is_nan() || cond <= 0.0 {
            continue;
        }
        // Algebraic error per unit constraint, a₁ᵀ(S₁ − S₂S₃⁻¹S₂ᵀ)a₁ / (4ac − b²): the ellipse
        // solution is the one eigenvector with 4ac − b² > 0 (FPF99); should rounding admit more,
        // the smallest error wins.
        let error = (v.transpose() * reduced * v)[0] / cond;
        if best.as_ref().is_none_or(|(e, _)| error < *e) {
            best = Some((error, v));
        }
    }
    let (_, a1) = best?;
    let a2 = t * a1;
    let mut c = [a1[0], a1[1], a1[2], a2[0], a2[1], a2[2]];
    let norm = (4.0 * c[0] * c[2] - c[1] * c[1]).sqrt();
    let sign = if c[0] + c[2] < 0.0 { -1.0 } else { 1.0 };
    for x in &mut c {
        *x *= sign / norm;
    }
    c.iter().all(|x| x.is_finite()).then_some(c)
}

/// What a conic is, by [`Conic::classify`] (tolerances in [`super::conic`]).
fn classify(c: [f64; 6]) -> Result<ConicKind, LeastSquaresError> {
    Conic::from_coefficients(c)
        .map(|conic| conic.classify())
        .map_err(|e| numerical(&format!("the least-squares conic is unusable: {e}")))
}

/// "a" or "an" before a conic kind's name.
fn article(kind: &ConicKind) -> &'static str {
    if kind.to_string().starts_with(['a', 'e', 'i', 'o', 'u']) {
        "an"
    } else {
        "a"
    }
}

/// Coefficients in the original coordinates from those in `u = (p − m)/s`, multiplied by `s²`
/// (which keeps `4ac − b²`).
fn unnormalise(c: [f64; 6], mx: f64, my: f64, s: f64) -> [f64; 6] {
    let [a, b, cc, d, e, f] = c;
    [
        a,
        b,
        cc,
        -2.0 * a * mx - b * my + d * s,
        -b * mx - 2.0 * cc * my + e * s,
        a * mx * mx + b * mx * my + cc * my * my - d * s * mx - e * s * my + f * s * s,
    ]
}
