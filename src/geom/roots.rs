//! Real roots of small polynomials on an interval.
//!
//! Method: the roots of `p′` split the interval into pieces on which `p` is monotone, so each
//! piece holds at most one root, found by bisection to the resolution of `f64`. Applied
//! recursively down to degree 1 this finds every real root in the interval, double roots
//! included (a double root is a root of `p′` where `p` vanishes), without the cancellation of the
//! closed-form cubic and quartic formulas.

/// Relative size below which a value of `p` at a root of `p′` counts as zero (a double root):
/// `|p(x)| ≤ DOUBLE_ROOT_RELATIVE · Σ|cᵢ||x|ⁱ`.
pub const DOUBLE_ROOT_RELATIVE: f64 = 1e-12;

/// `p(x)` for coefficients `c[0] + c[1] x + c[2] x² + …` (Horner).
pub fn eval(c: &[f64], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * x + ci)
}

/// The coefficients of `p′`.
pub fn derivative(c: &[f64]) -> Vec<f64> {
    c.iter()
        .enumerate()
        .skip(1)
        .map(|(i, &ci)| i as f64 * ci)
        .collect()
}

/// `Σ |cᵢ| |x|ⁱ`, the scale against which `p(x)` is judged zero.
fn magnitude(c: &[f64], x: f64) -> f64 {
    c.iter()
        .rev()
        .fold(0.0, |acc, &ci| acc * x.abs() + ci.abs())
}

/// Drops leading coefficients that are zero relative to the largest one (1e-14), so that a
/// cubic whose cubic term cancels (a trapezoid's area polynomial) is handled as a quadratic.
fn trimmed(c: &[f64]) -> Vec<f64> {
    let big = c.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let mut v = c.to_vec();
    while v.len() > 1 && v.last().is_some_and(|l| l.abs() <= 1e-14 * big) {
        v.pop();
    }
    v
}

/// Every real root of `p` in the closed interval `[lo, hi]`, ascending, without repeats.
/// A polynomial that vanishes identically has no isolated roots and gives none.
pub fn real_roots_in(c: &[f64], lo: f64, hi: f64) -> Vec<f64> {
    let c = trimmed(c);
    if c.len() <= 1 || lo > hi {
        return Vec::new();
    }
    // Breakpoints: the ends and the roots of p′ inside.
    let mut cuts = vec![lo];
    cuts.extend(real_roots_in(&derivative(&c), lo, hi));
    cuts.push(hi);
    let mut roots: Vec<f64> = Vec::new();
    for w in cuts.windows(2) {
        let (a, b) = (w[0], w[1]);
        let (fa, fb) = (eval(&c, a), eval(&c, b));
        let root = if fa == 0.0 {
            Some(a)
        } else if fb == 0.0 {
            Some(b)
        } else if fa.signum() != fb.signum() {
            Some(bisect(&c, a, b, fa))
        } else {
            None
        };
        if let Some(r) = root {
            push_unique(&mut roots, r);
        }
    }
    // Double roots: a root of p′ where p is (relatively) zero.
    for &x in &cuts[1..cuts.len() - 1] {
        if eval(&c, x).abs() <= DOUBLE_ROOT_RELATIVE * magnitude(&c, x) {
            push_unique(&mut roots, x);
        }
    }
    roots.sort_by(f64::total_cmp);
    roots
}

fn push_unique(roots: &mut Vec<f64>, r: f64) {
    if !roots
        .iter()
        .any(|&q| (q - r).abs() <= 1e-12 * (1.0 + r.abs()))
    {
        roots.push(r);
    }
}

fn bisect(c: &[f64], mut a: f64, mut b: f64, mut fa: f64) -> f64 {
    for _ in 0..200 {
        let m = 0.5 * (a + b);
        if m <= a || m >= b {
            break;
        }
        let fm = eval(c, m);
        if fm == 0.0 {
            return m;
        }
        if fm.signum() == fa.signum() {
            a = m;
            fa = fm;
        } else {
            b = m;
        }
    }
    0.5 * (a + b)
}

/// Product of two polynomials.
pub fn mul(p: &[f64], q: &[f64]) -> Vec<f64> {
    if p.is_empty() || q.is_empty() {
        return Vec::new();
    }
    let mut out = vec![0.0; p.len() + q.len() - 1];
    for (i, a) in p.iter().enumerate() {
        for (j, b) in q.iter().enumerate() {
            out[i + j] += a * b;
        }
    }
    out
}

/// `p + k q`.
pub fn add_scaled(p: &[f64], q: &[f64], k: f64) -> Vec<f64> {
    let n = p.len().max(q.len());
    (0..n)
        .map(|i| p.get(i).copied().unwrap_or(0.0) + k * q.get(i).copied().unwrap_or(0.0))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cubic_with_three_roots() {
        // (x − 1)(x − 2)(x − 3) = x³ − 6x² + 11x − 6
        let r = real_roots_in(&[-6.0, 11.0, -6.0, 1.0], 0.0, 10.0);
        assert_eq!(r.len(), 3);
        for (got, want) in r.iter().zip([1.0, 2.0, 3.0]) {
            assert!((got - want).abs() < 1e-13);
        }
        assert_eq!(real_roots_in(&[-6.0, 11.0, -6.0, 1.0], 1.5, 2.5).len(), 1);
    }

    #[test]
    fn double_root_and_degenerate_leading_term() {
        // (x − 0.5)² (x + 4): a double root at 0.5.
        let p = mul(&mul(&[-0.5, 1.0], &[-0.5, 1.0]), &[4.0, 1.0]);
        let r = real_roots_in(&p, 0.0, 1.0);
        assert_eq!(r.len(), 1);
        assert!((r[0] - 0.5).abs() < 1e-7);
        // A "cubic" whose cubic coefficient is zero is a quadratic: 2x² − 1.
        let r = real_roots_in(&[-1.0, 0.0, 2.0, 0.0], 0.0, 1.0);
        assert_eq!(r.len(), 1);
        assert!((r[0] - 0.5f64.sqrt()).abs() < 1e-15);
        assert!(real_roots_in(&[1.0, 0.0, 1.0], -5.0, 5.0).is_empty());
    }
}
