//! The upper tail of the range of k standard normals, P(R > w), computed
//! directly in logarithms so that it keeps its relative accuracy down to
//! values far below the smallest double (the studentized range's tail
//! integrates it over the chi scale, where it is needed at that depth).
//!
//! With x the smallest of the k normals and m = k − 1,
//! P(R > w) = k ∫ φ(x)·[Φ̄(x)^m − (Φ̄(x) − Φ̄(x + w))^m] dx
//!          = k ∫ φ(x)·Φ̄(x)^m·(1 − (1 − r)^m) dx,   r = Φ̄(x + w)/Φ̄(x),
//! where every factor is positive and 1 − (1 − r)^m = −expm1(m·ln(1 − r))
//! loses nothing when r is tiny: no difference of nearly equal numbers
//! remains.

use super::dist::normal_sf;
use super::quadrature::gauss_legendre_16;

const HALF_LN_2PI: f64 = 0.918_938_533_204_672_8;
/// Panels end where the integrand is below e^−50 ≈ 2e-22 of its peak.
const DEPTH: f64 = 50.0;
/// From this range on the pairs' union is exact (see `ln_range_sf`).
const UNION_EXACT: f64 = 40.0;

/// ln Φ̄(x) = ln P(Z > x), accurate to a few ulps of Φ̄ for every x, far
/// beyond where Φ̄ itself underflows (x > 38.5).
pub fn ln_normal_sf(x: f64) -> f64 {
    if x < 0.0 {
        return (-normal_sf(-x)).ln_1p();
    }
    if x < 30.0 {
        return normal_sf(x).ln();
    }
    // Φ̄(x) = φ(x)/x·(1 − 1/x² + 3/x⁴ − 15/x⁶ + …) (Abramowitz & Stegun
    // 26.2.12); at x ≥ 30 the term after the last kept one is below 3e-15.
    let u = 1.0 / (x * x);
    let series = 1.0 - u * (1.0 - 3.0 * u * (1.0 - 5.0 * u * (1.0 - 7.0 * u * (1.0 - 9.0 * u))));
    -0.5 * x * x - HALF_LN_2PI - x.ln() + series.ln()
}

/// ln of the integrand above without the factor k, at x.
fn ln_integrand(x: f64, w: f64, m: f64) -> f64 {
    let ln_upper = ln_normal_sf(x);
    let ln_ratio = ln_normal_sf(x + w) - ln_upper;
    // 1 − (1 − r)^m: m·r·(1 − (m − 1)r/2 + …) once r is below e^−40, where
    // the dropped term is under m·r/2 < 1e-15 for m < 1e3; directly above.
    let ln_bracket = if ln_ratio < -40.0 {
        m.ln() + ln_ratio
    } else {
        (-(m * (-ln_ratio.exp()).ln_1p()).exp_m1()).ln()
    };
    -0.5 * x * x - HALF_LN_2PI + m * ln_upper + ln_bracket
}

/// ln P(R > w) for the range R of k ≥ 2 standard normals. 0 for w ≤ 0.
pub fn ln_range_sf(w: f64, k: usize) -> f64 {
    if w.is_nan() {
        return f64::NAN;
    }
    if w <= 0.0 {
        return 0.0;
    }
    if w.is_infinite() {
        return f64::NEG_INFINITY;
    }
    let m = (k - 1) as f64;
    if w >= UNION_EXACT {
        // P(R > w) = Σ over pairs of P(|Zᵢ − Zⱼ| > w) less the chance that
        // two pairs exceed w at once, which is of order e^{−w²/3} against
        // the pairs' e^{−w²/4}: below e^{−w²/12} < 1e-57 relative here.
        return (k as f64 * m).ln() + ln_normal_sf(w * std::f64::consts::FRAC_1_SQRT_2);
    }
    let f = |x: f64| ln_integrand(x, w, m);
    // The integrand is a single bump: near x = −w/2 (the two extremes
    // straddling 0) for a wide range, near the expected minimum of k
    // normals (above −4 for k ≤ 1e4) for a narrow one; both lie within 8
    // of −w/2.
    let top = maximise(f, -0.5 * w - 8.0, -0.5 * w + 8.0);
    let height = f(top);
    let total = integrate_bump(|x| (f(x) - height).exp(), f, height, top, 1.0);
    (k as f64).ln() + height + total.ln()
}

/// The maximum of a unimodal function on [a, b], by golden-section search
/// to 1e-7 of the span (the bump's panels do not need it finer).
pub(crate) fn maximise(f: impl Fn(f64) -> f64, mut a: f64, mut b: f64) -> f64 {
    const G: f64 = 0.618_033_988_749_894_9;
    let (mut c, mut d) = (b - G * (b - a), a + G * (b - a));
    let (mut fc, mut fd) = (f(c), f(d));
    for _ in 0..34 {
        if fc > fd {
            (b, d, fd) = (d, c, fc);
            c = b - G * (b - a);
            fc = f(c);
        } else {
            (a, c, fc) = (c, d, fd);
            d = a + G * (b - a);
            fd = f(d);
        }
    }
    0.5 * (a + b)
}

/// ∫ g over the real line for a positive unimodal g = exp(ln_g − height)
/// peaking near `top`: 16-point Gauss-Legendre panels of width `width`
/// outward from the peak on both sides, each side widening its panels while
/// the integrand falls slowly and stopping once it is DEPTH below the peak
/// (the rest is then below e^−DEPTH of the total for any bump whose log falls
/// at least linearly, at rate ≥ 1/width, beyond that point).
pub(crate) fn integrate_bump(
    g: impl Fn(f64) -> f64,
    ln_g: impl Fn(f64) -> f64,
    height: f64,
    top: f64,
    width: f64,
) -> f64 {
    let rule = gauss_legendre_16();
    let mut total = 0.0;
    for direction in [1.0, -1.0] {
        let (mut edge, mut step) = (top, width);
        // How far below the peak the panel's near edge lies.
        let mut fall = height - ln_g(top);
        for _ in 0..200 {
            let next = edge + direction * step;
            total += direction * rule.integrate(edge, next, &g);
            let drop = height - ln_g(next);
            if drop.is_nan() || drop > DEPTH {
                break;
            }
            // Panels grow while each spans a fall of under 10 in the log.
            step *= (10.0 / (drop - fall).max(1e-3)).clamp(1.0, 2.0);
            (edge, fall) = (next, drop);
        }
    }
    total
}

#[cfg(test)]
#[path = "range_tail_tests.rs"]
mod tests;
