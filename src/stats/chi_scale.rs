//! Expectations over the studentized scale s = √(χ²_ν/ν), the outer
//! integral of the studentized range and of Dunnett's multivariate t.
//!
//! The integral is taken in t = ln s, where the density of s is a smooth bump
//! centred at t = 0 with standard deviation 1/√(2ν) for every ν, so panels a
//! fixed number of standard deviations wide resolve ν = 2 and ν = 1e9 alike;
//! a cap on their width in t keeps a steep f resolved too.

use super::quadrature::gauss_legendre_16;
use super::range_tail::{integrate_bump, maximise};
use super::special::ln_gamma;

const LN_2: f64 = std::f64::consts::LN_2;
const HALF_LN_2PI: f64 = 0.918_938_533_204_672_8;
/// What the outer integral may leave out on the left: 1e-17 in probability.
const NEGLIGIBLE: f64 = 1e-17;

/// ln of the density of t = ln s at its mode t = 0, where s = √(χ²_ν/ν).
///
/// ln g(0) = ln 2 + (ν/2)ln(ν/2) − ν/2 − lnΓ(ν/2); for large ν the big terms
/// cancel, so there Stirling's series is used to cancel them analytically.
fn ln_density_at_mode(df: f64) -> f64 {
    let h = 0.5 * df;
    if h < 10.0 {
        LN_2 + h * h.ln() - h - ln_gamma(h)
    } else {
        let r = 1.0 / h;
        let r2 = r * r;
        let stirling =
            r * (1.0 / 12.0 - r2 * (1.0 / 360.0 - r2 * (1.0 / 1260.0 - r2 * (1.0 / 1680.0))));
        LN_2 + 0.5 * h.ln() - HALF_LN_2PI - stirling
    }
}

/// e^x − 1 − x without cancellation near 0 (its Taylor series there). With
/// huge ν the log density is ν times this at |x| ~ 1/√ν: the difference
/// e^x − 1 − x taken directly would lose every digit.
fn exp_m1_minus_x(x: f64) -> f64 {
    if x.abs() >= 0.1 {
        // Cancellation costs at most a factor 2/|x| ≤ 20 in relative error.
        return x.exp_m1() - x;
    }
    // x²/2! + x³/3! + … ; at |x| < 0.1 the terms after x¹² are below 1e-22
    // of the first.
    let mut term = 0.5 * x * x;
    let mut sum = term;
    for n in 3..=12 {
        term *= x / n as f64;
        sum += term;
    }
    sum
}

/// E[f(s)] for s = √(χ²_ν/ν), where f is non-decreasing with values in
/// [0, 1] (a probability that grows with s) and rises about as steeply in
/// ln s as the cdf of the range of `means` normals. ν may be fractional;
/// ν = ∞ gives f(1).
pub fn chi_scale_expectation(df: f64, means: usize, f: impl Fn(f64) -> f64) -> f64 {
    if df.is_infinite() {
        return f(1.0);
    }
    let mode = ln_density_at_mode(df);
    // ln g(t) − ln g(0) = ν·t − (ν/2)·(e^{2t} − 1) = −(ν/2)·(e^{2t} − 1 − 2t)
    let shape = |t: f64| -0.5 * df * exp_m1_minus_x(2.0 * t);
    let sd = 1.0 / (2.0 * df).sqrt();
    // Mass beyond a log-density drop of 46 is below 1e-20.
    const CUT: f64 = -46.0;
    let mut t_hi = sd;
    while shape(t_hi) > CUT {
        t_hi += sd;
    }
    let mut t_lo = -sd;
    while shape(t_lo) > CUT && t_lo > -60.0 {
        t_lo -= sd;
    }
    // Panels 6.5 local standard deviations wide near the mode (the log
    // density curves by 2ν·e^{2t}, so the local scale shrinks like e^{−t} to
    // the right of it) and sixteen in the long left tail of small ν, 16 nodes
    // each. f bounds them too: its rise in t narrows about like 1/ln k (the
    // range of k normals has a coefficient of variation near 0.76 at k = 2,
    // 0.26 at k = 10 and 0.12 at k = 100, from memory), so panels are at most
    // 0.5 wide near the mode and 1.0 in the tail from about 20 means on,
    // and up to 4.3 times wider with two (the factor 3/ln k, tuned). For the
    // studentized range this keeps |Δcdf| within 4e-12 of the same integral
    // on panels one standard deviation wide (at most 0.05 in t) with 20 nodes
    // each, over k = 2..100, ν = 1..1e7, q = 0.5..20; fixed caps of 0.5 and
    // 1.0 for every k cost half as much again, and eight standard deviations
    // near the mode gave 1.4e-10 at ν = 1e7.
    let steepness = (3.0 / (means.max(2) as f64).ln()).max(1.0);
    let rule = gauss_legendre_16();
    let mut total = 0.0;
    let mut right = t_hi;
    while right > t_lo {
        let width = if right > -4.0 * sd {
            (6.5 * sd * (-right.max(0.0)).exp()).min(0.5 * steepness)
        } else {
            (16.0 * sd).min(steepness)
        };
        let left = (right - width).max(t_lo);
        // f and the weight at the panel's leftmost evaluated node (the rule
        // runs left to right). f is non-decreasing, so f(t_l) bounds it on
        // everything further left; left of the mode ln g rises at least at
        // the rate ν(1 − e^{2t_l}) there, so ∫_{−∞}^{t_l} g·f is at most
        // f(t_l)·g(t_l)/(ν(1 − e^{2t_l})), and also at most f(t_l).
        let mut leftmost = None;
        total += rule.integrate(left, right, |t| {
            let ln_weight = shape(t);
            if ln_weight < CUT {
                0.0
            } else {
                let value = f(t.exp());
                let weight = (mode + ln_weight).exp();
                leftmost.get_or_insert((t, value, weight));
                weight * value
            }
        });
        // Once nothing more can come from the left, stop.
        if let Some((t, value, weight)) = leftmost {
            let rate = -df * (2.0 * t).exp_m1();
            let rest = if t < 0.0 {
                value * (weight / rate).min(1.0)
            } else {
                value
            };
            if rest < NEGLIGIBLE {
                break;
            }
        }
        right = left;
    }
    total.clamp(0.0, 1.0)
}

/// ln E[f(s)] for s = √(χ²_ν/ν), given ln f for a non-increasing f (a
/// survival probability), keeping its relative accuracy however small the
/// expectation is. ν = ∞ gives ln f(1).
///
/// The integrand in t = ln s, ln g(t) + ln f(eᵗ), is a single bump: ln g
/// rises at rate ν to its mode at t = 0 and ln f falls, so its peak lies at or
/// left of 0 (far left when f is a far tail and ν small, where the tail of
/// s near 0 dominates). It is integrated around that peak, scaled to one
/// there, on panels as wide as the peak (its log curves by about
/// 2ν·e^{2t} + `curvature`(t) there, `curvature` being ln f's own bend).
pub fn chi_scale_ln_tail_expectation(
    df: f64,
    ln_f: impl Fn(f64) -> f64,
    curvature: impl Fn(f64) -> f64,
    start: f64,
) -> f64 {
    if df.is_infinite() {
        return ln_f(1.0);
    }
    let mode = ln_density_at_mode(df);
    let ln_integrand = |t: f64| mode - 0.5 * df * exp_m1_minus_x(2.0 * t) + ln_f(t.exp());
    let top = maximise(ln_integrand, start.min(-1.0) - 1.0, 0.25);
    let height = ln_integrand(top);
    let bend = 2.0 * df * (2.0 * top).exp() + curvature(top);
    let width = (1.0 / bend.sqrt()).min(0.5);
    let total = integrate_bump(
        |t| (ln_integrand(t) - height).exp(),
        ln_integrand,
        height,
        top,
        width,
    );
    height + total.ln()
}
