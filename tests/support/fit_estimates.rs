//! Asymptotic move counts for the parallel curves of an ellipse, computed here independently of
//! the crate (only `f64` arithmetic), for comparison with what the fitters build.
//!
//! Curve: the ellipse `P(t) = (a cos t, b sin t)` and its inward parallel curve at distance `d`
//! (`d < 0`: outward). With `q = a² sin² t + b² cos² t`:
//! `κ = ab / q^{3/2}`, `dκ/dt = −3ab(a² − b²) sin t cos t / q^{5/2}` (docs/sources.md M8 for κ; the
//! derivative by the chain rule), and for the parallel curve, which shares the normals,
//! `ds_d/dt = √q (1 − dκ)`, `κ_d = κ / (1 − dκ)`, `dκ_d/dt = (dκ/dt) / (1 − dκ)²`.
//!
//! Counts (docs/sources.md P3.2, §3.3):
//! - lines in a band of width `W` (vertices on its outer edge, chords touching its inner edge):
//!   `∫ √(κ_d / 8W) ds_d`; two-sided `±ε` is `W = 2ε`, the `√(κ/16ε)` formula;
//! - arcs within `w` of the curve either way: `∫ (|κ_d′| / (72√3 w))^{1/3} ds_d`, `κ_d′` the
//!   derivative by arc length.
//!
//! Integration: the midpoint rule over one period with 2¹⁸ points. The lines integrand is smooth
//! and periodic, so the rule converges faster than any power; the arcs integrand has
//! `|sin t cos t|^{1/3}` zeros, where the midpoint rule's error is O(h^{4/3}) ≈ 1e-7 relative.
//! Checked against the published integrals for a = 50, b = 20, d = 0 in the tests:
//! `∫√κ ds = 34.00150`, `∫|κ′|^{1/3} ds = 22.29415` (docs/sources.md P3.4, cross-checked
//! there with mpmath at 30 digits).

#![allow(dead_code)]

use std::f64::consts::{PI, TAU};

const STEPS: usize = 1 << 18;

/// `∫ f(t) dt` over one period by the midpoint rule.
fn integrate(f: impl Fn(f64) -> f64) -> f64 {
    let h = TAU / STEPS as f64;
    (0..STEPS).map(|i| f((i as f64 + 0.5) * h)).sum::<f64>() * h
}

/// `(κ_d, dκ_d/ds_d, ds_d/dt)` at `t`.
fn local(a: f64, b: f64, d: f64, t: f64) -> (f64, f64, f64) {
    let (s, c) = t.sin_cos();
    let q = a * a * s * s + b * b * c * c;
    let k = a * b / q.powf(1.5);
    let dk_dt = -3.0 * a * b * (a * a - b * b) * s * c / q.powf(2.5);
    let stretch = 1.0 - d * k;
    let ds_dt = q.sqrt() * stretch;
    let kd = k / stretch;
    let dkd_dt = dk_dt / (stretch * stretch);
    (kd, dkd_dt / ds_dt, ds_dt)
}

/// `∫ √κ_d ds_d`.
pub fn sqrt_curvature_integral(a: f64, b: f64, d: f64) -> f64 {
    integrate(|t| {
        let (k, _, ds) = local(a, b, d, t);
        k.sqrt() * ds
    })
}

/// `∫ |κ_d′|^{1/3} ds_d`.
pub fn cbrt_curvature_rate_integral(a: f64, b: f64, d: f64) -> f64 {
    integrate(|t| {
        let (_, dk, ds) = local(a, b, d, t);
        dk.abs().cbrt() * ds
    })
}

/// Lines in a band of width `width` (mm): `∫ √(κ_d / 8W) ds_d`.
pub fn band_lines(a: f64, b: f64, d: f64, width: f64) -> f64 {
    sqrt_curvature_integral(a, b, d) / (8.0 * width).sqrt()
}

/// Arcs within `half_width` (mm) either way: `∫ (|κ_d′| / (72√3 w))^{1/3} ds_d`.
pub fn spline_arcs(a: f64, b: f64, d: f64, half_width: f64) -> f64 {
    cbrt_curvature_rate_integral(a, b, d) / (72.0 * 3f64.sqrt() * half_width).cbrt()
}

/// The perimeter of the parallel curve, `∫ ds_d`.
pub fn perimeter(a: f64, b: f64, d: f64) -> f64 {
    integrate(|t| local(a, b, d, t).2)
}

/// π, for the circle checks.
pub const HALF_TURN: f64 = PI;
