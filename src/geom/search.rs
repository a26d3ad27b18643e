//! One-dimensional searches for the extreme of a function on a bracket.
//!
//! # Tolerances
//!
//! * [`golden_min`] stops when the bracket is no wider than 1e-15 · (1 + max(|a|, |b|)) (the
//!   resolution of `f64` about the bracket's ends) or after 100 steps (the bracket shrinks by
//!   0.618 per step, so 100 steps take any bracket below 1e-20 of its width).
//! * [`brent_max`] stops when the peak is located within the caller's `tol` (its value is then
//!   within about `|f″| tol²`) or after 60 steps.
//!
//! Both are exact only for a function with one extreme in the bracket (unimodal); on any other
//! they return some local extreme, the best value evaluated.

/// Golden-section search for the smallest value of `f` on `[a, b]` (exact for unimodal `f` up to
/// the final bracket, 1e-15 of the interval or 100 steps). Returns `(value, argument)`.
pub fn golden_min(f: &impl Fn(f64) -> f64, a: f64, b: f64) -> (f64, f64) {
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let (mut a, mut b) = (a, b);
    let (mut c, mut d) = (b - g * (b - a), a + g * (b - a));
    let (mut fc, mut fd) = (f(c), f(d));
    let scale = 1e-15 * (1.0 + a.abs().max(b.abs()));
    for _ in 0..100 {
        if b - a <= scale {
            break;
        }
        if fc < fd {
            b = d;
            d = c;
            fd = fc;
            c = b - g * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + g * (b - a);
            fd = f(d);
        }
    }
    if fc < fd { (fc, c) } else { (fd, d) }
}

/// The largest value of `f` on `[a, b]` (a bracket of one peak, `x` inside it with value `fx`),
/// by Brent's method: successive parabolic interpolation, with golden-section steps whenever a
/// parabola's step is not safely inside the bracket or does not shrink fast enough (R. P. Brent,
/// Algorithms for Minimization without Derivatives, 1973, ch. 5, procedure `localmin`). Stops
/// when the peak is located within `tol` (so its value is within about `|f″| tol²`) or after 60
/// steps; returns the largest value evaluated and where.
pub fn brent_max(f: &impl Fn(f64) -> f64, a: f64, b: f64, x: f64, fx: f64, tol: f64) -> (f64, f64) {
    // Minimise g = −f.
    const GOLDEN: f64 = 0.381_966_011_250_105_1;
    let (mut a, mut b) = (a, b);
    let (mut x, mut w, mut v) = (x, x, x);
    let (mut gx, mut gw, mut gv) = (-fx, -fx, -fx);
    let (mut d, mut e): (f64, f64) = (0.0, 0.0);
    for _it in 0..60 {
        let xm = 0.5 * (a + b);
        let tol2 = 2.0 * tol;
        if (x - xm).abs() <= tol2 - 0.5 * (b - a) {
            break;
        }
        let mut golden = true;
        if e.abs() > tol {
            // The parabola through x, w and v.
            let r = (x - w) * (gx - gv);
            let q = (x - v) * (gx - gw);
            let mut p = (x - v) * q - (x - w) * r;
            let mut q = 2.0 * (q - r);
            if q > 0.0 {
                p = -p;
            }
            q = q.abs();
            let e_before = e;
            e = d;
            if p.abs() < (0.5 * q * e_before).abs() && p > q * (a - x) && p < q * (b - x) {
                d = p / q;
                let u = x + d;
                if u - a < tol2 || b - u < tol2 {
                    d = tol.copysign(xm - x);
                }
                golden = false;
            }
        }
        if golden {
            e = if x >= xm { a - x } else { b - x };
            d = GOLDEN * e;
        }
        let u = if d.abs() >= tol {
            x + d
        } else {
            x + tol.copysign(d)
        };
        let gu = -f(u);
        if gu <= gx {
            if u >= x {
                a = x;
            } else {
                b = x;
            }
            (v, gv) = (w, gw);
            (w, gw) = (x, gx);
            (x, gx) = (u, gu);
        } else {
            if u < x {
                a = u;
            } else {
                b = u;
            }
            if gu <= gw || w == x {
                (v, gv) = (w, gw);
                (w, gw) = (u, gu);
            } else if gu <= gv || v == x || v == w {
                (v, gv) = (u, gu);
            }
        }
    }
    (-gx, x)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A function, its bracket and its extreme value there.
    type Case<'a> = (&'a dyn Fn(f64) -> f64, f64, f64, f64);

    const TOL: f64 = 1e-7;

    /// Peaks inside, at a kink, and at either end of the bracket (docs/sources.md M13).
    fn peaks() -> [Case<'static>; 5] {
        [
            (&|u| 1.0 - (u - 0.3).powi(2), 0.0, 1.0, 1.0),
            (&|u| (7.0 * u).sin(), 0.0, 0.5, 1.0),
            (&|u| 2.0 - (u - 0.7).abs(), 0.5, 0.9, 2.0),
            (&|u| u, 0.2, 0.4, 0.4),
            (&|u| -u * u, 0.1, 0.3, -0.01),
        ]
    }

    #[test]
    fn brent_finds_smooth_peaks_kinks_and_peaks_at_the_ends() {
        for (k, (f, lo, hi, peak)) in peaks().into_iter().enumerate() {
            for x in [lo, 0.5 * (lo + hi), hi] {
                let (found, _) = brent_max(&|u| f(u), lo, hi, x, f(x), TOL);
                assert!(found <= peak + 1e-15, "case {k}: {found} above {peak}");
                // Located within a few TOL, the value is within slope (≤ 7) times that.
                assert!(
                    found >= peak - 7.0 * 4.0 * TOL,
                    "case {k} from {x}: {found} vs {peak}"
                );
            }
        }
    }

    #[test]
    fn golden_section_finds_the_same_extremes() {
        for (k, (f, lo, hi, peak)) in peaks().into_iter().enumerate() {
            let (least, _) = golden_min(&|u| -f(u), lo, hi);
            assert!(
                (-least - peak).abs() < 1e-7,
                "case {k}: {} vs {peak}",
                -least
            );
        }
    }
}
