//! General conics: point conics `xᵀ C x = 0` and their duals, the line conics `lᵀ C* l = 0`.
//!
//! # The matrix
//!
//! A point conic `a x² + b xy + c y² + d x + e y + f = 0` is the symmetric 3×3 matrix
//!
//! ```text
//!     ┌ a    b/2  d/2 ┐
//! C = │ b/2  c    e/2 │      xᵀ C x = 0,  x = (x, y, 1)
//!     └ d/2  e/2  f   ┘
//! ```
//!
//! (docs/sources.md M0). Its upper-left 2×2 block `A` is the quadratic part, `g = (d/2, e/2)` the
//! linear part. A [`Conic`] is stored **normalised**: Frobenius norm 1 and the sign rule
//! "`a + c > 0`" (when `|a + c| ≤` [`CLASSIFY_RELATIVE`], the first of `a, b, c, d, e, f`
//! whose size exceeds [`CLASSIFY_RELATIVE`] is made positive). For a real ellipse this gives the
//! convention of docs/sources.md M5: `A` positive definite, `xᵀ C x < 0` inside, `det C < 0`.
//!
//! # Duality
//!
//! The tangent line at a point `x` of `C` is `l = C x`; the tangent lines of a non-degenerate
//! conic are the lines with `lᵀ adj(C) l = 0` (adj = adjugate ∝ `C⁻¹`; Hartley and Zisserman,
//! *Multiple View Geometry*, §2.2.3, section number from memory, quoted in docs/sources.md M5).
//! [`DualConic`] holds such a line conic (lines `l = (n_x, n_y, −c)` for `n·x = c`); going back
//! takes the adjugate again, `adj(adj(C)) = det(C) C`. A `DualConic` is stored with Frobenius
//! norm 1 and the sign rule "`det > 0`" (which `adj(C)` always meets, `det adj(C) = det(C)²`), so
//! the dual of a normalised ellipse keeps the sign test of docs/sources.md M5: `lᵀ adj(C) l` is
//! negative for a secant, zero for a tangent, positive for a line that misses.
//!
//! # Classification and its tolerances
//!
//! [`Conic::classify`] uses the invariants `det A`, `tr A` and `k = det C / det A` (the value of
//! the form at the centre), each compared with the size of the terms it is computed from, so that
//! the tests do not depend on where the origin is:
//!
//! * `A` counts as zero when `‖A‖_F ≤ CLASSIFY_RELATIVE · ‖C‖_F`;
//! * `A` is singular (parabolic) when `|det A| ≤ CLASSIFY_RELATIVE · ‖A‖_F²`, i.e. the ratio of its
//!   eigenvalues (`b²/a²` for an ellipse) is below about `1e-10`;
//! * a central conic is degenerate when `|k| ≤ CLASSIFY_RELATIVE · (|f| + |gᵀA⁻¹g|)`, i.e. its
//!   squared semi-axes are below `1e-10` of (their own size plus the squared distance of the
//!   centre from the origin);
//! * a parabolic conic is degenerate when the part of `g` along the null direction `v` of `A`
//!   is small, `(g·v)² ≤ CLASSIFY_RELATIVE · (|g|² + |λ f|)`, and then it is a double line when the
//!   discriminant `(g·u)² − λ f` of `λ t² + 2 (g·u) t + f` (`t = u·x`) is below
//!   `CLASSIFY_RELATIVE · ((g·u)² + |λ f|)`;
//! * an ellipse is a circle when its eigenvalues agree, `|λ₁ − λ₂| ≤ CIRCLE_RELATIVE · |λ₁ + λ₂|`,
//!   that is `(a² − b²)/(a² + b²) ≤ 1e-9` for the semi-axes.

use crate::geom::{Ellipse, Line, Point, Vec2};
use nalgebra::{Matrix2, Matrix3, Vector3};
use serde::{Serialize, Serializer};
use std::fmt;

/// Relative tolerance of every classification test (see the module docs for what each compares).
pub const CLASSIFY_RELATIVE: f64 = 1e-10;

/// Relative tolerance for calling an ellipse a circle: `|λ₁ − λ₂| ≤ CIRCLE_RELATIVE · |λ₁ + λ₂|`
/// for the eigenvalues of the quadratic part, i.e. `(a² − b²)/(a² + b²) ≤ 1e-9` for the semi-axes.
pub const CIRCLE_RELATIVE: f64 = 1e-9;

/// What a conic is, by its invariants (see the module docs for the tolerances).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ConicKind {
    /// A real ellipse that is not a circle.
    Ellipse,
    /// A real circle (semi-axes equal within [`CIRCLE_RELATIVE`]).
    Circle,
    Parabola,
    Hyperbola,
    /// Two real lines crossing at a finite point.
    LinePair,
    /// Two distinct real parallel lines.
    ParallelLines,
    /// One real line counted twice.
    DoubleLine,
    /// One real line together with the line at infinity (the quadratic part vanishes).
    SingleLine,
    /// Two complex-conjugate lines crossing at one real point: only that point is real.
    SinglePoint,
    /// No real points at all (an imaginary ellipse or a pair of imaginary parallel lines).
    Imaginary,
    /// Only the line at infinity (counted twice): no finite points.
    LineAtInfinity,
}

impl ConicKind {
    /// Whether the conic is a real ellipse (a circle included), the only kind that can be cut.
    pub fn is_ellipse(self) -> bool {
        matches!(self, ConicKind::Ellipse | ConicKind::Circle)
    }
}

impl fmt::Display for ConicKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            ConicKind::Ellipse => "ellipse",
            ConicKind::Circle => "circle",
            ConicKind::Parabola => "parabola",
            ConicKind::Hyperbola => "hyperbola",
            ConicKind::LinePair => "pair of crossing lines",
            ConicKind::ParallelLines => "pair of parallel lines",
            ConicKind::DoubleLine => "double line",
            ConicKind::SingleLine => "single line (with the line at infinity)",
            ConicKind::SinglePoint => "single real point (two imaginary lines)",
            ConicKind::Imaginary => "imaginary conic (no real points)",
            ConicKind::LineAtInfinity => "line at infinity (no finite points)",
        })
    }
}

/// Why numbers do not make a conic, or a conic has no dual.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ConicError {
    #[error("a conic coefficient is not a finite number")]
    NotFinite,
    #[error("all six conic coefficients are zero: that is no conic")]
    Zero,
    #[error(
        "the conic has rank one (a double line, or for a line conic a double point): its \
         adjugate vanishes, so it has no dual"
    )]
    NoDual,
    #[error(
        "the semi-diameters ({px}, {py}) and ({qx}, {qy}) are parallel or zero, so they span no \
         ellipse; conjugate semi-diameters must point in different directions"
    )]
    DependentSemiDiameters { px: f64, py: f64, qx: f64, qy: f64 },
}

/// A conic that is asked for its ellipse but is something else.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, thiserror::Error)]
#[error("the conic is a {kind}, not an ellipse, so it cannot be cut as one")]
pub struct NotAnEllipse {
    pub kind: ConicKind,
}

/// A point conic `xᵀ C x = 0`, normalised (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conic {
    m: Matrix3<f64>,
}

/// A line conic `lᵀ C* l = 0`: the tangent lines of a point conic, with `l = (n_x, n_y, −c)` for
/// the line `n·x = c`. Normalised to Frobenius norm 1 with `det > 0` (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DualConic {
    m: Matrix3<f64>,
}

impl Conic {
    /// The conic `xᵀ M x = 0`. Only the symmetric part `(M + Mᵀ)/2` matters and is kept.
    pub fn from_matrix(m: Matrix3<f64>) -> Result<Conic, ConicError> {
        let m = normalise(m)?;
        Ok(Conic {
            m: apply_conic_sign_rule(m),
        })
    }

    /// The conic `a x² + b xy + c y² + d x + e y + f = 0` from `[a, b, c, d, e, f]`.
    pub fn from_coefficients(k: [f64; 6]) -> Result<Conic, ConicError> {
        Conic::from_matrix(matrix_from_coefficients(k))
    }

    /// The conic of an ellipse: `(x−c)ᵀ Σ⁻¹ (x−c) = 1`, multiplied by `det Σ = a²b²` so that the
    /// quadratic part is `adj Σ` and no division is needed.
    pub fn from_ellipse(e: &Ellipse) -> Conic {
        let (sxx, sxy, syy) = e.shape_matrix();
        let det = (e.a() * e.b()).powi(2);
        let c = e.centre();
        // A = adj Σ, g = −A c, f = cᵀ A c − det Σ.
        let (a, h, cc) = (syy, -sxy, sxx);
        let (g1, g2) = (-(a * c.x + h * c.y), -(h * c.x + cc * c.y));
        let f = a * c.x * c.x + 2.0 * h * c.x * c.y + cc * c.y * c.y - det;
        let m = Matrix3::new(a, h, g1, h, cc, g2, g1, g2, f);
        Conic::from_matrix(m).expect("an ellipse has finite, non-zero coefficients")
    }

    /// The normalised symmetric matrix `C`.
    pub fn matrix(&self) -> Matrix3<f64> {
        self.m
    }

    /// `[a, b, c, d, e, f]` of `a x² + b xy + c y² + d x + e y + f = 0`, normalised like the
    /// matrix.
    pub fn coefficients(&self) -> [f64; 6] {
        coefficients_of(&self.m)
    }

    /// `xᵀ C x` at `x = (p.x, p.y, 1)`: zero on the conic; for an ellipse negative inside and
    /// positive outside.
    pub fn value(&self, p: Point) -> f64 {
        let x = Vector3::new(p.x, p.y, 1.0);
        x.dot(&(self.m * x))
    }

    /// The relative point residual `|xᵀ C x| / (‖C‖_F ‖x‖²)`, `x = (p.x, p.y, 1)`; it lies in
    /// `[0, 1]` and is a few machine epsilons for a point computed on the conic.
    pub fn point_residual(&self, p: Point) -> f64 {
        let x = Vector3::new(p.x, p.y, 1.0);
        x.dot(&(self.m * x)).abs() / (self.m.norm() * x.norm_squared())
    }

    /// The relative tangency residual `|lᵀ adj(C) l| / (‖adj C‖_F ‖l‖²)` with
    /// `l = (n_x, n_y, −c)` for the line `n·x = c`; in `[0, 1]`. When the adjugate vanishes
    /// (`‖adj C‖_F ≤ CLASSIFY_RELATIVE`, a double line) tangency is undefined and the residual is
    /// reported as 1, the worst value.
    pub fn tangency_residual(&self, line: &Line) -> f64 {
        let adj = adjugate(&self.m);
        let n = adj.norm();
        if n <= CLASSIFY_RELATIVE {
            return 1.0;
        }
        let l = Vector3::from(line.homogeneous());
        (l.dot(&(adj * l)) / (n * l.norm_squared())).abs()
    }

    /// The dual (line) conic, `adj(C)` normalised. Fails for a rank-one conic (a double line),
    /// whose adjugate vanishes (`‖adj C‖_F ≤ CLASSIFY_RELATIVE`).
    pub fn dual(&self) -> Result<DualConic, ConicError> {
        let adj = adjugate(&self.m);
        if adj.norm() <= CLASSIFY_RELATIVE {
            return Err(ConicError::NoDual);
        }
        DualConic::from_matrix(adj)
    }

    /// What the conic is (see the module docs for the tests and their tolerances).
    pub fn classify(&self) -> ConicKind {
        classify_matrix(&self.m)
    }

    /// The ellipse, when the conic is one (a circle included): centre `−A⁻¹ g`, shape matrix
    /// `Σ = −k A⁻¹` with `k = f − gᵀA⁻¹g`, semi-axes and angle from the closed-form eigen
    /// decomposition of `Σ` ([`Ellipse::from_shape_matrix`]).
    pub fn to_ellipse(&self) -> Result<Ellipse, NotAnEllipse> {
        let kind = self.classify();
        if !kind.is_ellipse() {
            return Err(NotAnEllipse { kind });
        }
        let m = &self.m;
        let (a, h, c) = (m[(0, 0)], m[(0, 1)], m[(1, 1)]);
        let (g1, g2, f) = (m[(0, 2)], m[(1, 2)], m[(2, 2)]);
        let delta = a * c - h * h;
        // A⁻¹ = [[c, −h], [−h, a]] / δ.
        let centre = Point::new(-(c * g1 - h * g2) / delta, -(a * g2 - h * g1) / delta);
        let q = (c * g1 * g1 - 2.0 * h * g1 * g2 + a * g2 * g2) / delta;
        let s = -(f - q) / delta;
        Ellipse::from_shape_matrix(centre, s * c, -s * h, s * a).map_err(|_| NotAnEllipse {
            kind: ConicKind::Imaginary,
        })
    }

    /// The distance between two normalised conics as points of the projective space of conics:
    /// `min(‖C₁ − C₂‖_F, ‖C₁ + C₂‖_F)`, zero when they are the same conic.
    pub fn projective_distance(&self, other: &Conic) -> f64 {
        (self.m - other.m).norm().min((self.m + other.m).norm())
    }
}

impl DualConic {
    /// The line conic `lᵀ M l = 0`. Only the symmetric part of `M` matters and is kept.
    pub fn from_matrix(m: Matrix3<f64>) -> Result<DualConic, ConicError> {
        let m = normalise(m)?;
        let m = if m.determinant().abs() > CLASSIFY_RELATIVE {
            if m.determinant() < 0.0 { -m } else { m }
        } else {
            apply_conic_sign_rule(m)
        };
        Ok(DualConic { m })
    }

    /// The tangent lines of an ellipse, written directly (no adjugate): the line `n·x = β`
    /// touches it iff `nᵀΣn = (β − n·c)²` (docs/sources.md M0), i.e.
    /// `C* ∝ [[Σ − c cᵀ, −c], [−cᵀ, −1]]` for `l = (n, −β)`.
    pub fn from_ellipse(e: &Ellipse) -> DualConic {
        let (sxx, sxy, syy) = e.shape_matrix();
        let c = e.centre();
        let m = Matrix3::new(
            sxx - c.x * c.x,
            sxy - c.x * c.y,
            -c.x,
            sxy - c.x * c.y,
            syy - c.y * c.y,
            -c.y,
            -c.x,
            -c.y,
            -1.0,
        );
        DualConic::from_matrix(m).expect("an ellipse has finite, non-zero coefficients")
    }

    /// The normalised symmetric matrix `C*`.
    pub fn matrix(&self) -> Matrix3<f64> {
        self.m
    }

    /// `lᵀ C* l` for the line `n·x = c` with `l = (n_x, n_y, −c)` and `|n| = 1`. For the dual of a
    /// normalised ellipse: negative for a secant, zero for a tangent, positive for a line that
    /// misses it (docs/sources.md M5).
    pub fn line_value(&self, line: &Line) -> f64 {
        let l = Vector3::from(line.homogeneous());
        l.dot(&(self.m * l))
    }

    /// The point conic whose tangent lines these are: `adj(C*)`, normalised. Fails for a rank-one
    /// line conic (a double point), whose adjugate vanishes.
    pub fn dual(&self) -> Result<Conic, ConicError> {
        let adj = adjugate(&self.m);
        if adj.norm() <= CLASSIFY_RELATIVE {
            return Err(ConicError::NoDual);
        }
        Conic::from_matrix(adj)
    }

    /// What its point conic is. A line conic not tangent to the line at infinity
    /// (`|C*₃₃| > CLASSIFY_RELATIVE`) is read directly: the tangents `n·x = β` of a central conic
    /// with centre `c` and shape matrix `Σ` satisfy `nᵀΣn = (β − n·c)²` (docs/sources.md M0), so
    /// `C* ∝ [[Σ − c cᵀ, −c], [−cᵀ, −1]]`, `c = (C*₁₃, C*₂₃)/C*₃₃`, `Σ = −C*₂ₓ₂/C*₃₃ + c cᵀ`, and
    /// the signs of the eigenvalues of `Σ` tell an ellipse (both positive), a hyperbola (one of
    /// each) and an imaginary ellipse (both negative). An eigenvalue is taken as zero below
    /// `CLASSIFY_RELATIVE · (|c|² + |σ|_max)`, the size of the rounding in `Σ`; then, and for a line
    /// conic tangent to the line at infinity, the point conic `adj(C*)` is classified instead
    /// ([`Conic::classify`]; a rank-one line conic, whose adjugate vanishes, is a
    /// [`ConicKind::SinglePoint`]). Reading `Σ` directly keeps very thin ellipses, whose point
    /// conic is nearly a double line, recognised as ellipses.
    pub fn classify(&self) -> ConicKind {
        if let Some((_, sxx, sxy, syy, scale)) = self.central_shape() {
            let m = 0.5 * (sxx + syy);
            let d = (0.5 * (sxx - syy)).hypot(sxy);
            let (big, small) = (m + d, m - d);
            let tol = CLASSIFY_RELATIVE * (scale + big.abs().max(small.abs()));
            if small > tol {
                return if 2.0 * d <= CIRCLE_RELATIVE * (big + small) {
                    ConicKind::Circle
                } else {
                    ConicKind::Ellipse
                };
            }
            if small < -tol && big > tol {
                return ConicKind::Hyperbola;
            }
            if big < -tol {
                return ConicKind::Imaginary;
            }
        }
        match self.dual() {
            Ok(c) => c.classify(),
            Err(_) => ConicKind::SinglePoint,
        }
    }

    /// `(c, sxx, sxy, syy, |c|²)` read from a line conic not tangent to the line at infinity.
    fn central_shape(&self) -> Option<(Point, f64, f64, f64, f64)> {
        let m = &self.m;
        let w = m[(2, 2)];
        if w.abs() <= CLASSIFY_RELATIVE {
            return None;
        }
        let c = Point::new(m[(0, 2)] / w, m[(1, 2)] / w);
        let sxx = -m[(0, 0)] / w + c.x * c.x;
        let sxy = -m[(0, 1)] / w + c.x * c.y;
        let syy = -m[(1, 1)] / w + c.y * c.y;
        Some((c, sxx, sxy, syy, c.x * c.x + c.y * c.y))
    }

    /// The ellipse whose tangent lines these are, read directly from the line conic (no
    /// adjugate; see [`DualConic::classify`]): centre `c = (C*₁₃, C*₂₃)/C*₃₃` and shape matrix
    /// `Σ = −C*₂ₓ₂/C*₃₃ + c cᵀ`. This stays accurate for very thin ellipses, whose point conic is
    /// nearly singular.
    pub fn to_ellipse(&self) -> Result<Ellipse, NotAnEllipse> {
        let kind = self.classify();
        if !kind.is_ellipse() {
            return Err(NotAnEllipse { kind });
        }
        let not = NotAnEllipse {
            kind: ConicKind::Imaginary,
        };
        let (c, sxx, sxy, syy, _) = self.central_shape().ok_or(not)?;
        Ellipse::from_shape_matrix(c, sxx, sxy, syy).map_err(|_| not)
    }

    /// As [`Conic::projective_distance`].
    pub fn projective_distance(&self, other: &DualConic) -> f64 {
        (self.m - other.m).norm().min((self.m + other.m).norm())
    }
}

impl Serialize for Conic {
    /// Serialised as the six normalised coefficients `[a, b, c, d, e, f]`.
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        self.coefficients().serialize(s)
    }
}

/// The ellipse with centre `centre` and conjugate semi-diameters `p`, `q`, i.e. the curve
/// `centre + p cos t + q sin t` (Apollonius; docs/sources.md M4).
///
/// Its shape matrix is `Σ = p pᵀ + q qᵀ = [p q][p q]ᵀ`, so the semi-axes are the singular values of
/// the 2×2 matrix `[p q]` and the major axis is its leading left singular vector (SVD with
/// nalgebra). Refused when `|p × q| ≤ CLASSIFY_RELATIVE · (|p|² + |q|²)` (parallel or zero
/// semi-diameters span no ellipse).
pub fn ellipse_from_conjugate_semi_diameters(
    centre: Point,
    p: Vec2,
    q: Vec2,
) -> Result<Ellipse, ConicError> {
    let dependent = ConicError::DependentSemiDiameters {
        px: p.x,
        py: p.y,
        qx: q.x,
        qy: q.y,
    };
    let finite = [p.x, p.y, q.x, q.y].iter().all(|v| v.is_finite());
    if !(centre.is_finite() && finite) {
        return Err(ConicError::NotFinite);
    }
    let scale = p.length_squared() + q.length_squared();
    if p.cross(q).abs() <= CLASSIFY_RELATIVE * scale {
        return Err(dependent);
    }
    let svd = Matrix2::new(p.x, q.x, p.y, q.y).svd(true, false);
    let Some(u) = svd.u else {
        return Err(dependent);
    };
    let sv = svd.singular_values;
    let (major, minor) = if sv[0] >= sv[1] { (0, 1) } else { (1, 0) };
    let angle = u[(1, major)].atan2(u[(0, major)]);
    Ellipse::new(centre, sv[major], sv[minor], angle).map_err(|_| dependent)
}

/// The adjugate (transposed cofactor matrix) of a 3×3 matrix.
pub(crate) fn adjugate(m: &Matrix3<f64>) -> Matrix3<f64> {
    let c = |r0: usize, r1: usize, c0: usize, c1: usize| {
        m[(r0, c0)] * m[(r1, c1)] - m[(r0, c1)] * m[(r1, c0)]
    };
    Matrix3::new(
        c(1, 2, 1, 2),
        -c(0, 2, 1, 2),
        c(0, 1, 1, 2),
        -c(1, 2, 0, 2),
        c(0, 2, 0, 2),
        -c(0, 1, 0, 2),
        c(1, 2, 0, 1),
        -c(0, 2, 0, 1),
        c(0, 1, 0, 1),
    )
}

/// `C` from `[a, b, c, d, e, f]`.
pub(crate) fn matrix_from_coefficients(k: [f64; 6]) -> Matrix3<f64> {
    let [a, b, c, d, e, f] = k;
    Matrix3::new(
        a,
        0.5 * b,
        0.5 * d,
        0.5 * b,
        c,
        0.5 * e,
        0.5 * d,
        0.5 * e,
        f,
    )
}

fn coefficients_of(m: &Matrix3<f64>) -> [f64; 6] {
    [
        m[(0, 0)],
        2.0 * m[(0, 1)],
        m[(1, 1)],
        2.0 * m[(0, 2)],
        2.0 * m[(1, 2)],
        m[(2, 2)],
    ]
}

/// The symmetric part of `m` scaled to Frobenius norm 1 (scaled by its largest entry first so
/// that huge entries do not overflow).
fn normalise(m: Matrix3<f64>) -> Result<Matrix3<f64>, ConicError> {
    if m.iter().any(|v| !v.is_finite()) {
        return Err(ConicError::NotFinite);
    }
    let s = (m + m.transpose()) * 0.5;
    let big = s.amax();
    if big == 0.0 {
        return Err(ConicError::Zero);
    }
    let s = s / big;
    Ok(s / s.norm())
}

/// Makes `a + c` positive, or when it is within [`CLASSIFY_RELATIVE`] of zero the first of
/// `a, b, c, d, e, f` that exceeds [`CLASSIFY_RELATIVE`] in size.
fn apply_conic_sign_rule(m: Matrix3<f64>) -> Matrix3<f64> {
    let trace = m[(0, 0)] + m[(1, 1)];
    let sign = if trace.abs() > CLASSIFY_RELATIVE {
        trace
    } else {
        coefficients_of(&m)
            .into_iter()
            .find(|v| v.abs() > CLASSIFY_RELATIVE)
            .unwrap_or(1.0)
    };
    if sign < 0.0 { -m } else { m }
}

/// Classification of a normalised symmetric matrix (module docs).
pub(crate) fn classify_matrix(m: &Matrix3<f64>) -> ConicKind {
    let (a, h, c) = (m[(0, 0)], m[(0, 1)], m[(1, 1)]);
    let (g1, g2, f) = (m[(0, 2)], m[(1, 2)], m[(2, 2)]);
    let norm_q2 = a * a + c * c + 2.0 * h * h;
    let scale = m.norm();
    if norm_q2.sqrt() <= CLASSIFY_RELATIVE * scale {
        return if g1.hypot(g2) <= CLASSIFY_RELATIVE * scale {
            ConicKind::LineAtInfinity
        } else {
            ConicKind::SingleLine
        };
    }
    let delta = a * c - h * h;
    let tau = a + c;
    if delta.abs() > CLASSIFY_RELATIVE * norm_q2 {
        // Central conic: (x − x₀)ᵀ A (x − x₀) + k = 0 with k = f − gᵀA⁻¹g = det C / det A.
        let q = (c * g1 * g1 - 2.0 * h * g1 * g2 + a * g2 * g2) / delta;
        let k = f - q;
        if k.abs() <= CLASSIFY_RELATIVE * (f.abs() + q.abs()) {
            return if delta > 0.0 {
                ConicKind::SinglePoint
            } else {
                ConicKind::LinePair
            };
        }
        if delta < 0.0 {
            return ConicKind::Hyperbola;
        }
        if k * tau > 0.0 {
            return ConicKind::Imaginary;
        }
        let spread = (a - c).hypot(2.0 * h);
        if spread <= CIRCLE_RELATIVE * tau.abs() {
            ConicKind::Circle
        } else {
            ConicKind::Ellipse
        }
    } else {
        // Parabolic: A ≈ λ u uᵀ with λ = tr A; u from the larger row of A.
        let lambda = tau;
        let (ux, uy) = if a.abs() >= c.abs() { (a, h) } else { (h, c) };
        let n = ux.hypot(uy);
        let (ux, uy) = (ux / n, uy / n);
        let gu = g1 * ux + g2 * uy;
        let gv = -g1 * uy + g2 * ux;
        let lf = (lambda * f).abs();
        if gv * gv <= CLASSIFY_RELATIVE * (gu * gu + gv * gv + lf) {
            let disc = gu * gu - lambda * f;
            if disc.abs() <= CLASSIFY_RELATIVE * (gu * gu + lf) {
                ConicKind::DoubleLine
            } else if disc > 0.0 {
                ConicKind::ParallelLines
            } else {
                ConicKind::Imaginary
            }
        } else {
            ConicKind::Parabola
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn conic(k: [f64; 6]) -> Conic {
        Conic::from_coefficients(k).unwrap()
    }

    #[test]
    fn normalised_with_unit_norm_and_sign_rule() {
        // x² + y² − 1 given with the opposite sign comes back with a + c > 0.
        let c = conic([-1.0, 0.0, -1.0, 0.0, 0.0, 1.0]);
        assert!((c.matrix().norm() - 1.0).abs() < 1e-15);
        let k = c.coefficients();
        assert!(k[0] > 0.0 && k[2] > 0.0 && k[5] < 0.0);
        // A rectangular hyperbola (a + c = 0) falls back to the first coefficient: b > 0.
        let h = conic([0.0, -2.0, 0.0, 0.0, 0.0, 1.0]);
        assert!(h.coefficients()[1] > 0.0);
        // A non-symmetric matrix keeps only its symmetric part.
        let m = Matrix3::new(1.0, 2.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, -1.0);
        let c = Conic::from_matrix(m).unwrap();
        assert!((c.matrix() - c.matrix().transpose()).norm() == 0.0);
        assert!((c.coefficients()[1] / c.coefficients()[0] - 2.0).abs() < 1e-15);
    }

    #[test]
    fn refuses_zero_and_non_finite() {
        assert_eq!(Conic::from_coefficients([0.0; 6]), Err(ConicError::Zero));
        assert_eq!(
            Conic::from_coefficients([1.0, 0.0, 1.0, f64::NAN, 0.0, -1.0]),
            Err(ConicError::NotFinite)
        );
        // Huge entries are scaled before the norm, so they do not overflow.
        let c = conic([1e300, 0.0, 1e300, 0.0, 0.0, -1e300]);
        assert_eq!(c.classify(), ConicKind::Circle);
    }

    #[test]
    fn classifies_every_kind() {
        // Each conic is written down from its defining property (textbook forms).
        let cases = [
            ([1.0, 0.0, 4.0, 0.0, 0.0, -4.0], ConicKind::Ellipse), // x²/4 + y² = 1
            ([1.0, 0.0, 1.0, -2.0, 0.0, -3.0], ConicKind::Circle), // (x−1)² + y² = 4
            ([1.0, 0.0, 0.0, 0.0, -1.0, 0.0], ConicKind::Parabola), // y = x²
            ([1.0, 0.0, -1.0, 0.0, 0.0, -1.0], ConicKind::Hyperbola), // x² − y² = 1
            ([0.0, 1.0, 0.0, 0.0, 0.0, -1.0], ConicKind::Hyperbola), // xy = 1
            ([1.0, 0.0, -1.0, 0.0, 0.0, 0.0], ConicKind::LinePair), // (x−y)(x+y)
            ([1.0, 0.0, 0.0, 0.0, 0.0, -1.0], ConicKind::ParallelLines), // x = ±1
            ([1.0, 2.0, 1.0, 0.0, 0.0, 0.0], ConicKind::DoubleLine), // (x+y)²
            ([0.0, 0.0, 0.0, 1.0, 1.0, -3.0], ConicKind::SingleLine), // x + y = 3
            ([1.0, 0.0, 1.0, -2.0, -4.0, 5.0], ConicKind::SinglePoint), // (x−1)² + (y−2)² = 0
            ([1.0, 0.0, 1.0, 0.0, 0.0, 1.0], ConicKind::Imaginary), // x² + y² = −1
            ([1.0, 0.0, 0.0, 0.0, 0.0, 1.0], ConicKind::Imaginary), // x² = −1
            ([0.0, 0.0, 0.0, 0.0, 0.0, 1.0], ConicKind::LineAtInfinity), // w² = 0
        ];
        for (k, kind) in cases {
            assert_eq!(conic(k).classify(), kind, "{k:?}");
        }
    }

    #[test]
    fn classification_does_not_depend_on_the_origin() {
        // A 2 mm circle 1.4 m from the origin is still a circle, and its centre and radius come
        // back: (x−1000)² + (y−1000)² = 1.
        let c = conic([1.0, 0.0, 1.0, -2000.0, -2000.0, 2e6 - 1.0]);
        assert_eq!(c.classify(), ConicKind::Circle);
        let e = c.to_ellipse().unwrap();
        assert!((e.a() - 1.0).abs() < 1e-6 && (e.b() - 1.0).abs() < 1e-6);
        assert!(e.centre().distance(Point::new(1000.0, 1000.0)) < 1e-9);
        // Two crossing lines far away stay a line pair: (x − 1000)(y − 1000) = 0.
        let lp = conic([0.0, 1.0, 0.0, -1000.0, -1000.0, 1e6]);
        assert_eq!(lp.classify(), ConicKind::LinePair);
    }

    #[test]
    fn ellipse_round_trip() {
        for (cx, cy, a, b, deg) in [
            (1.0, 2.0, 5.0, 3.0, 30.0),
            (-40.0, 300.0, 120.0, 0.5, -75.0),
            (0.0, 0.0, 2.0, 2.0, 0.0),
            (1e3, -2e3, 800.0, 799.0, 89.0),
        ] {
            let e = Ellipse::new(Point::new(cx, cy), a, b, f64::to_radians(deg)).unwrap();
            let c = Conic::from_ellipse(&e);
            let kind = if a == b {
                ConicKind::Circle
            } else {
                ConicKind::Ellipse
            };
            assert_eq!(c.classify(), kind);
            let r = c.to_ellipse().unwrap();
            let tol = 1e-9 * (a + cx.abs() + cy.abs());
            assert!(r.centre().distance(e.centre()) < tol, "{r:?} vs {e:?}");
            assert!((r.a() - a).abs() < tol && (r.b() - b).abs() < tol, "{r:?}");
            if a != b {
                assert!((r.angle() - e.angle()).abs() < 1e-9, "{r:?}");
            }
            for t in 0..12 {
                let p = e.point(t as f64 * PI / 6.0);
                assert!(c.point_residual(p) < 1e-13, "{}", c.point_residual(p));
            }
        }
    }

    #[test]
    fn non_ellipses_are_refused_with_their_kind() {
        let err = conic([1.0, 0.0, -1.0, 0.0, 0.0, -1.0])
            .to_ellipse()
            .unwrap_err();
        assert_eq!(err.kind, ConicKind::Hyperbola);
        assert!(err.to_string().contains("hyperbola"), "{err}");
        let err = conic([1.0, 0.0, 1.0, 0.0, 0.0, 1.0])
            .to_ellipse()
            .unwrap_err();
        assert_eq!(err.kind, ConicKind::Imaginary);
    }

    #[test]
    fn dual_of_dual_is_the_conic() {
        let e = Ellipse::new(Point::new(3.0, -2.0), 7.0, 2.0, 0.3).unwrap();
        for c in [
            Conic::from_ellipse(&e),
            conic([1.0, 0.0, -1.0, 0.0, 0.0, -1.0]),
            conic([1.0, 0.0, 0.0, 0.0, -1.0, 0.0]),
        ] {
            let back = c.dual().unwrap().dual().unwrap();
            assert!(back.projective_distance(&c) < 1e-14, "{c:?} -> {back:?}");
            // Same sign rule, so the matrices agree without the ±.
            assert!((back.matrix() - c.matrix()).norm() < 1e-14);
        }
        // A double line has no dual.
        assert_eq!(
            conic([1.0, 2.0, 1.0, 0.0, 0.0, 0.0]).dual(),
            Err(ConicError::NoDual)
        );
    }

    #[test]
    fn ellipse_from_the_dual_agrees_with_the_point_conic() {
        for (a, b) in [(5.0, 3.0), (2.0, 2e-4), (40.0, 40.0)] {
            let e = Ellipse::new(Point::new(3.0, -1.0), a, b, 0.7).unwrap();
            let d = DualConic::from_ellipse(&e);
            let f = d.to_ellipse().unwrap();
            assert!(f.centre().distance(e.centre()) < 1e-13 * a, "{f:?}");
            // b² comes out with an absolute error of a few ε (|c|² + a²), so b to ε·a²/b.
            assert!(
                (f.a() - a).abs() < 1e-13 * a && (f.b() - b).abs() < 1e-11 * a,
                "{f:?}"
            );
            // Its support lines are tangent: lᵀ C* l = 0 (docs/sources.md M0).
            for i in 0..12 {
                let n = Vec2::from_angle(i as f64 * PI / 6.0);
                let q = e.centre() + n * e.support(n);
                let l = Line::through(q, q + n.perp()).unwrap();
                assert!(d.line_value(&l).abs() < 1e-14, "{}", d.line_value(&l));
            }
        }
        // For a well-rounded ellipse the two routes agree: adj of the point conic.
        let e = Ellipse::new(Point::new(3.0, -1.0), 5.0, 3.0, 0.7).unwrap();
        let via_adj = Conic::from_ellipse(&e).dual().unwrap();
        assert!(via_adj.projective_distance(&DualConic::from_ellipse(&e)) < 1e-14);
        let h = conic([1.0, 0.0, -1.0, 0.0, 0.0, -1.0]).dual().unwrap();
        assert_eq!(h.to_ellipse().unwrap_err().kind, ConicKind::Hyperbola);
    }

    #[test]
    fn dual_of_line_pair_is_the_crossing_point() {
        // (x − 1)(y − 2) = 0: every line through (1, 2) counts as tangent, others do not.
        let c = conic([0.0, 1.0, 0.0, -2.0, -1.0, 2.0]);
        let through = Line::through(Point::new(1.0, 2.0), Point::new(4.0, 7.0)).unwrap();
        let not = Line::through(Point::new(0.0, 0.0), Point::new(4.0, 7.0)).unwrap();
        assert!(c.tangency_residual(&through) < 1e-15);
        assert!(c.tangency_residual(&not) > 1e-3);
        // A double line: tangency undefined, reported as the worst value.
        let d = conic([1.0, 2.0, 1.0, 0.0, 0.0, 0.0]);
        assert_eq!(d.tangency_residual(&not), 1.0);
    }

    #[test]
    fn tangency_residual_of_support_lines() {
        // The support function (docs/sources.md M0) gives tangent lines independently of the
        // conic code.
        let e = Ellipse::new(Point::new(1.0, 2.0), 5.0, 3.0, f64::to_radians(30.0)).unwrap();
        let c = Conic::from_ellipse(&e);
        for i in 0..24 {
            let n = Vec2::from_angle(i as f64 * PI / 12.0);
            let beta = n.dot(e.centre().to_vec()) + e.support(n);
            let on = e.centre() + n * (beta - n.dot(e.centre().to_vec()));
            let line = Line::through(on, on + n.perp()).unwrap();
            assert!(c.tangency_residual(&line) < 1e-14, "{i}");
            assert!(c.tangency_residual(&line.shifted(0.1)) > 1e-4, "{i}");
        }
    }
}
