//! Special functions: log-gamma, log-beta and the regularized incomplete beta.
//!
//! Transcendentals come from the pure-Rust `libm` crate so that every platform
//! produces the same last bits (see METHODS 2.3).

/// ln(2π) / 2.
const HALF_LN_2PI: f64 = 0.918_938_533_204_672_8;

/// Natural logarithm of the gamma function for x > 0.
pub fn ln_gamma(x: f64) -> f64 {
    libm::lgamma(x)
}

/// Stirling's error term δ(x) = lnΓ(x) − [(x − ½)ln x − x + ½ln 2π], for x ≥ 10.
///
/// The asymptotic series is truncated after the x⁻⁹ term; at x = 10 the next
/// term is below 1e-14, so δ is accurate to the last bits that matter here.
fn stirling_error(x: f64) -> f64 {
    let r = 1.0 / x;
    let r2 = r * r;
    r * (1.0 / 12.0
        - r2 * (1.0 / 360.0 - r2 * (1.0 / 1260.0 - r2 * (1.0 / 1680.0 - r2 * (1.0 / 1188.0)))))
}

/// ln B(a, b) without the cancellation that `lnΓ(a) + lnΓ(b) − lnΓ(a + b)`
/// suffers when a or b is large (a = 5e6 for a t test with ν = 1e7).
pub fn ln_beta(a: f64, b: f64) -> f64 {
    let (small, large) = if a < b { (a, b) } else { (b, a) };
    if large < 10.0 {
        return ln_gamma(a) + ln_gamma(b) - ln_gamma(a + b);
    }
    // lnΓ(large) − lnΓ(large + small), written so that the big terms cancel
    // analytically: −(L − ½)·ln(1 + s/L) − s·ln(L + s) + s + δ(L) − δ(L + s).
    let ratio = -(large - 0.5) * (small / large).ln_1p() - small * (large + small).ln()
        + small
        + stirling_error(large)
        - stirling_error(large + small);
    if small < 10.0 {
        ln_gamma(small) + ratio
    } else {
        // lnΓ(small) from Stirling too, so nothing large is left to cancel.
        HALF_LN_2PI + (small - 0.5) * small.ln() - small + stirling_error(small) + ratio
    }
}

/// Continued fraction for the incomplete beta (modified Lentz), valid and fast
/// when x < (a + 1)/(a + b + 2). Converges in O(√max(a, b)) steps.
fn beta_continued_fraction(a: f64, b: f64, x: f64) -> f64 {
    const TINY: f64 = 1e-300;
    const EPS: f64 = 1e-16;
    const MAX_STEPS: usize = 200_000;
    let guard = |v: f64| if v.abs() < TINY { TINY } else { v };
    let (qab, qap, qam) = (a + b, a + 1.0, a - 1.0);
    let mut c = 1.0;
    let mut d = 1.0 / guard(1.0 - qab * x / qap);
    let mut h = d;
    for m in 1..=MAX_STEPS {
        let m = m as f64;
        let m2 = 2.0 * m;
        let even = m * (b - m) * x / ((qam + m2) * (a + m2));
        d = 1.0 / guard(1.0 + even * d);
        c = guard(1.0 + even / c);
        h *= d * c;
        let odd = -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2));
        d = 1.0 / guard(1.0 + odd * d);
        c = guard(1.0 + odd / c);
        let delta = d * c;
        h *= delta;
        if (delta - 1.0).abs() < EPS {
            break;
        }
    }
    h
}

/// Regularized incomplete beta I_x(a, b) and its complement 1 − I_x(a, b).
///
/// `x` and `y = 1 − x` are both passed in so that callers who know `y` more
/// accurately than `1 − x` (upper tails of t and F) keep those digits. Both
/// returned values are computed directly, never as one minus the other when
/// that would cancel.
pub fn inc_beta_pair(a: f64, b: f64, x: f64, y: f64) -> (f64, f64) {
    if x <= 0.0 {
        return (0.0, 1.0);
    }
    if y <= 0.0 {
        return (1.0, 0.0);
    }
    // The power series has only positive terms, so it is accurate wherever it
    // converges quickly; it rescues the large-a, small-b corner (t and F tails
    // at ν ≥ 1e7) where the continued fraction sits on its convergence edge.
    // It is used only when the tail it returns is not within 0.001 of 1, so
    // its complement keeps at least 13 correct digits.
    if let Some(lower) = beta_series(a, b, x, y).filter(|v| *v <= 0.999) {
        return (lower, 1.0 - lower);
    }
    if let Some(upper) = beta_series(b, a, y, x).filter(|v| *v <= 0.999) {
        return (1.0 - upper, upper);
    }
    if x > (a + 1.0) / (a + b + 2.0) {
        let (upper, lower) = inc_beta_pair(b, a, y, x);
        return (lower, upper);
    }
    let log_front = a * ln_of(x, y) + b * ln_of(y, x) - ln_beta(a, b);
    let lower = (log_front.exp() * beta_continued_fraction(a, b, x) / a).clamp(0.0, 1.0);
    (lower, 1.0 - lower)
}

/// I_x(a, b) = x^a y^b / (a·B(a, b)) · Σₙ [(a + b)ₙ / (a + 1)ₙ] xⁿ, when the
/// sum needs at most a few thousand terms; `None` otherwise.
fn beta_series(a: f64, b: f64, x: f64, y: f64) -> Option<f64> {
    const MAX_TERMS: usize = 20_000;
    if !(x <= 0.5 && (a + b) * x <= 5000.0) {
        return None;
    }
    let mut term = 1.0;
    let mut sum = 1.0;
    for n in 0..MAX_TERMS {
        let n = n as f64;
        term *= x * (a + b + n) / (a + 1.0 + n);
        sum += term;
        if term < 1e-17 * sum {
            let log_front = a * ln_of(x, y) + b * ln_of(y, x) - ln_beta(a, b);
            return Some((log_front.exp() * sum / a).clamp(0.0, 1.0));
        }
    }
    None
}

/// Log of the beta density's kernel x^(a−1) y^(b−1) / B(a, b).
pub fn ln_beta_density(a: f64, b: f64, x: f64, y: f64) -> f64 {
    (a - 1.0) * ln_of(x, y) + (b - 1.0) * ln_of(y, x) - ln_beta(a, b)
}

/// ln x where y = 1 − x is known: for x near 1, ln(1 − y) keeps the digits
/// that ln x would lose (at ν = 1e7 a t tail has x = 1 − 5e-8).
fn ln_of(x: f64, y: f64) -> f64 {
    if x > 0.5 { (-y).ln_1p() } else { x.ln() }
}

#[cfg(test)]
#[path = "special_tests.rs"]
mod tests;

/// Regularized lower and upper incomplete gamma P(a, x) and Q(a, x), each
/// computed directly: the series for P when x < a + 1, the continued
/// fraction (modified Lentz) for Q otherwise (Numerical Recipes, 3rd ed., §6.2).
pub fn inc_gamma_pair(a: f64, x: f64) -> (f64, f64) {
    if x <= 0.0 {
        return (0.0, 1.0);
    }
    if x.is_infinite() {
        return (1.0, 0.0);
    }
    let log_front = a * x.ln() - x - ln_gamma(a);
    if x < a + 1.0 {
        let mut term = 1.0 / a;
        let mut sum = term;
        let mut ap = a;
        for _ in 0..100_000 {
            ap += 1.0;
            term *= x / ap;
            sum += term;
            if term.abs() < sum.abs() * 1e-17 {
                break;
            }
        }
        let p = (sum * log_front.exp()).clamp(0.0, 1.0);
        (p, 1.0 - p)
    } else {
        const TINY: f64 = 1e-300;
        let mut b = x + 1.0 - a;
        let mut c = 1.0 / TINY;
        let mut d = 1.0 / b;
        let mut h = d;
        for i in 1..100_000 {
            let an = -(i as f64) * (i as f64 - a);
            b += 2.0;
            d = an * d + b;
            if d.abs() < TINY {
                d = TINY;
            }
            c = b + an / c;
            if c.abs() < TINY {
                c = TINY;
            }
            d = 1.0 / d;
            let delta = d * c;
            h *= delta;
            if (delta - 1.0).abs() < 1e-16 {
                break;
            }
        }
        let q = (log_front.exp() * h).clamp(0.0, 1.0);
        (1.0 - q, q)
    }
}
