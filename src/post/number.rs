//! Numbers as RS274/NGC wants them: fixed decimals, no exponent, no negative zero.
//!
//! NISTIR 6556 §3.3.2.1 allows an optional sign, digits and an optional decimal point, and has no
//! exponent form; a value that rounds to zero is written without a sign so that a reader never
//! sees `-0.000` (DESIGN.md, "Conventions").

/// `value` with exactly `decimals` digits after the decimal point (none and no point when
/// `decimals` is 0), rounded to nearest, never in exponent form and never as a negative zero.
///
/// The value must be finite: [`write_program`](super::write_program) checks every number before
/// it formats it. A non-finite value is written as Rust prints it (`NaN`, `inf`) so that a bug
/// shows instead of hiding behind a plausible number.
///
/// ```
/// use conicut::post::format_number;
/// assert_eq!(format_number(-0.00001, 4), "0.0000");
/// assert_eq!(format_number(12.34567, 3), "12.346");
/// assert_eq!(format_number(-2.0, 0), "-2");
/// ```
pub fn format_number(value: f64, decimals: usize) -> String {
    let text = crate::geom::decimal::fixed(value, decimals);
    match text.strip_prefix('-') {
        Some(rest) if rest.bytes().all(|c| c == b'0' || c == b'.') => rest.to_string(),
        _ => text,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn negative_values_that_round_to_zero_lose_their_sign() {
        // NISTIR 6556 §3.3.2.1 (no exponent) and DESIGN.md "never -0".
        assert_eq!(format_number(-0.00001, 4), "0.0000");
        assert_eq!(format_number(-0.0, 3), "0.000");
        assert_eq!(format_number(-0.4, 0), "0");
        assert_eq!(format_number(-0.00005001, 4), "-0.0001");
    }

    #[test]
    fn small_and_large_values_never_use_exponents() {
        assert_eq!(format_number(1e-7, 4), "0.0000");
        assert_eq!(format_number(1.5e-5, 5), "0.00002");
        assert_eq!(format_number(123_456_789.0, 3), "123456789.000");
        assert_eq!(format_number(1e20, 1), "100000000000000000000.0");
        for v in [1e-12, 3.3e-9, 7.7e15, -4.2e17] {
            let s = format_number(v, 4);
            assert!(!s.contains(['e', 'E']), "{v} gave {s}");
        }
    }

    #[test]
    fn rounds_to_nearest() {
        assert_eq!(format_number(1.23456, 4), "1.2346");
        assert_eq!(format_number(-1.23454, 4), "-1.2345");
        assert_eq!(format_number(9.99996, 4), "10.0000");
        assert_eq!(format_number(599.96, 1), "600.0");
        assert_eq!(format_number(7.0, 0), "7");
    }
}
