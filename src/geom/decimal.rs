//! Numbers written with fixed decimals, the same text as Rust's `format!("{v:.N}")`, faster.
//!
//! Rust rounds the exact binary value to `N` decimals (half to even on its exact expansion), by
//! an exact algorithm that is slow for these short outputs. When `v × 10ᴺ` is below 10¹² its
//! floating-point product is within 10⁻⁴ of the exact one, so wherever that product is not
//! within 10⁻³ of a half, rounding it gives the same integer; then the digits are written from
//! that integer. Near a half, and for large values, the standard formatter is used.

use std::fmt::Write;

/// The product `|v| × 10ᴺ` must be below this for the fast path.
const FAST_LIMIT: f64 = 1e12;

/// How far from a half the product must be for the fast path.
const TIE_MARGIN: f64 = 1e-3;

/// `value` with exactly `decimals` digits after the point: the text of `format!("{value:.decimals$}")`.
pub fn fixed(value: f64, decimals: usize) -> String {
    let mut out = String::with_capacity(16);
    push_fixed(&mut out, value, decimals);
    out
}

/// Appends [`fixed`]`(value, decimals)` to `out`.
pub fn push_fixed(out: &mut String, value: f64, decimals: usize) {
    if decimals <= 9 && value.is_finite() {
        let scale = 10f64.powi(decimals as i32);
        let scaled = value.abs() * scale;
        let floor = scaled.floor();
        let frac = scaled - floor;
        if scaled < FAST_LIMIT && (frac - 0.5).abs() > TIE_MARGIN {
            let n = (if frac > 0.5 { floor + 1.0 } else { floor }) as u64;
            if value.is_sign_negative() {
                out.push('-');
            }
            let unit = 10u64.pow(decimals as u32);
            let _ = write!(out, "{}", n / unit);
            if decimals > 0 {
                let _ = write!(out, ".{:0width$}", n % unit, width = decimals);
            }
            return;
        }
    }
    let _ = write!(out, "{value:.decimals$}");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_text_is_the_standard_formatters() {
        let mut random = crate::geom::random::XorShift::from_state(0x9E37_79B9_7F4A_7C15_u64);
        let mut next = || random.next_f64();
        let mut values = vec![
            0.0,
            -0.0,
            0.5,
            1.5,
            2.5,
            -0.5,
            0.125,
            0.0625,
            1e-9,
            -1e-9,
            0.05,
            0.15,
            0.25,
            0.35,
            1.0005,
            2.675,
            1e11,
            9.9999995,
            -123.45675,
            1e15,
            1e300,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::MIN_POSITIVE,
        ];
        for _ in 0..20_000 {
            let magnitude = 10f64.powi((next() * 14.0) as i32 - 6);
            let sign = if next() < 0.5 { -1.0 } else { 1.0 };
            values.push(sign * magnitude * next());
            // Values on a grid of 0.0005: ties and near-ties at 3 decimals.
            values.push(sign * (next() * 20_000.0).round() * 0.0005);
        }
        for v in values {
            for d in 0..=7 {
                assert_eq!(fixed(v, d), format!("{v:.d$}"), "{v:e} at {d} decimals");
            }
        }
    }
}
