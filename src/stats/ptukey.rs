//! The studentized range distribution: cdf, survival function and quantile.
//!
//! P(Q ≤ q; k, ν) = ∫ f_s(s) · P_R(q·s; k) ds, with s = √(χ²_ν/ν) and P_R the
//! cdf of the range of k standard normals (Copenhaver & Holland 1988,
//! *J. Stat. Comput. Simul.* 30:1–15). We follow their split of the inner
//! integral; the outer one is `chi_scale::chi_scale_expectation`, which needs
//! no switch to the ν = ∞ limit until ν is infinite.

use super::chi_scale::{chi_scale_expectation, chi_scale_ln_tail_expectation};
use super::dist::{normal_sf, t_isf, t_sf};
use super::normal_table::NormalTable;
use super::quadrature::gauss_legendre_16;
use super::range_tail::{ln_normal_sf, ln_range_sf};
use super::roots::{brent, brent_known};

/// Beyond this the normal tail holds below 1e-17: nothing left to integrate.
const NORMAL_EDGE: f64 = 8.5;
/// What the inner integral may leave out, in probability: 1e-17, far below
/// the cdf's own rounding.
const NEGLIGIBLE: f64 = 1e-17;

/// P(range of k iid N(0, 1) ≤ w).
pub fn range_cdf(w: f64, k: usize) -> f64 {
    if w <= 0.0 {
        return 0.0;
    }
    let half = 0.5 * w;
    if half >= NORMAL_EDGE {
        return 1.0;
    }
    let km1 = k - 1;
    let normal = NormalTable::get();
    // P_R = (2Φ(w/2) − 1)^k + 2k ∫_{w/2}^{∞} φ(x)·B(x)^{k−1} dx with
    // B(x) = Φ(x) − Φ(x − w), by 16-point Gauss-Legendre panels (see
    // chi_scale for the measured error).
    let tail = normal_sf(half);
    let peak = 1.0 - 2.0 * tail;
    let central = power(peak, k);
    // B peaks at x = w/2 with value `peak` and falls on both sides, so the
    // integral is at most peak^{k−1}·tail: with many means and a short range
    // the whole probability is below 1e-20 and not worth integrating.
    let bound = central + 2.0 * k as f64 * power(peak, km1) * tail;
    if bound < 1e-20 {
        return 0.0;
    }
    // Bonferroni over the k(k − 1)/2 pairs: P(R > w) ≤ k(k − 1)·Φ̄(w/√2).
    if (k * km1) as f64 * normal.sf(w * std::f64::consts::FRAC_1_SQRT_2) < NEGLIGIBLE {
        return 1.0;
    }
    // Panels 2.5 wide from w/2 up to where φ vanishes, or sooner: B falls
    // beyond w/2, so the integral beyond a panel's last node x is at most
    // B(x)^{k−1}·Φ̄(x), which with many means is negligible long before φ is.
    let scale = 2.0 * k as f64;
    let rule = gauss_legendre_16();
    let mut integral = 0.0;
    let mut a = half;
    // B^{k−1} falls from w/2 like a bell about 1/√(k − 1) wide: the first
    // panel is narrower with many means, so that it resolves that fall.
    let mut width = (8.0 / (km1 as f64).sqrt()).min(2.5);
    while a < NORMAL_EDGE {
        let b = (a + width).min(NORMAL_EDGE);
        width = 2.5;
        let mut last = (b, 1.0);
        integral += rule.integrate(a, b, |x| {
            // B(x) = Φ(x) − Φ(x − w) without cancellation when both are near
            // 1, and φ(x) from the same table step as Φ(x).
            let (bracket, density) = if x - w >= 0.0 {
                let (upper, density) = normal.sf_and_pdf(x);
                (normal.sf(x - w) - upper, density)
            } else {
                let (lower, density) = normal.cdf_and_pdf(x);
                (lower - normal.cdf(x - w), density)
            };
            let value = power(bracket, km1);
            last = (x, value);
            density * value
        });
        let (x, value) = last;
        if scale * value * normal.sf(x) < NEGLIGIBLE {
            break;
        }
        a = b;
    }
    (central + scale * integral).min(1.0)
}

/// x^n by repeated squaring, inlined: the library's powi is an out-of-line
/// call, and this runs for every node of the inner integral.
#[inline(always)]
fn power(mut x: f64, mut n: usize) -> f64 {
    let mut result = 1.0;
    while n > 0 {
        if n & 1 == 1 {
            result *= x;
        }
        x *= x;
        n >>= 1;
    }
    result
}

/// P(Q ≤ q) for the studentized range with k means and ν error df
/// (ν may be fractional, and `f64::INFINITY`).
pub fn ptukey_cdf(q: f64, k: usize, df: f64) -> f64 {
    if q.is_nan() || k < 2 || df.is_nan() || df < 1.0 {
        return f64::NAN;
    }
    if q <= 0.0 {
        return 0.0;
    }
    if q.is_infinite() {
        return 1.0;
    }
    if k == 2 {
        return 1.0 - two_means_sf(q, df);
    }
    if df.is_infinite() {
        return range_cdf(q, k);
    }
    chi_scale_expectation(df, k, |s| range_cdf(q * s, k))
}

/// Where 1 − cdf is still used: there its absolute error (below 1e-12 on
/// k = 2..100, ν ≥ 2, against the direct tail) is under 1e-10 relative.
const DIRECT_BELOW: f64 = 0.01;

/// P(Q > q): the p-value of a studentized range statistic. Below 0.01 it is
/// computed as a tail in its own right (never as 1 − cdf), so that it keeps
/// its relative accuracy down to the smallest positive double.
pub fn ptukey_sf(q: f64, k: usize, df: f64) -> f64 {
    if k == 2 && q > 0.0 {
        return two_means_sf(q, df);
    }
    let fast = 1.0 - ptukey_cdf(q, k, df);
    if fast >= DIRECT_BELOW {
        return fast;
    }
    direct_ln_sf(q, k, df).exp()
}

/// ln P(Q > q), finite far below the smallest double (for root finding).
pub fn ptukey_ln_sf(q: f64, k: usize, df: f64) -> f64 {
    if k == 2 && q > 0.0 {
        let t = q * std::f64::consts::FRAC_1_SQRT_2;
        return if df.is_infinite() {
            std::f64::consts::LN_2 + ln_normal_sf(t)
        } else {
            (2.0 * t_sf(t, df)).min(1.0).ln()
        };
    }
    let fast = 1.0 - ptukey_cdf(q, k, df);
    if fast >= DIRECT_BELOW {
        return fast.ln();
    }
    direct_ln_sf(q, k, df)
}

/// ln P(Q > q) as E over s of P(R > q·s), integrated in logarithms.
pub(crate) fn direct_ln_sf(q: f64, k: usize, df: f64) -> f64 {
    if q.is_nan() || k < 2 || df.is_nan() || df < 1.0 {
        return f64::NAN;
    }
    if q <= 0.0 {
        return 0.0;
    }
    if q.is_infinite() {
        return f64::NEG_INFINITY;
    }
    // ln P(R > w) bends like −w²/4 in its tail, by w² in t = ln s; below
    // w = 0.1 it is 0 to within 1e-40 for k ≤ 100.
    chi_scale_ln_tail_expectation(
        df,
        |s| ln_range_sf(q * s, k),
        |t| (q * t.exp()).powi(2),
        (0.1 / q).ln(),
    )
}

/// With two means the studentized range is √2·|t| exactly (METHODS 6.8), so
/// P(Q > q) = 2·P(T > q/√2) in closed form, accurate even in the far tail.
fn two_means_sf(q: f64, df: f64) -> f64 {
    (2.0 * t_sf(q * std::f64::consts::FRAC_1_SQRT_2, df)).min(1.0)
}

/// The upper-α critical value q_{1−α; k, ν}.
pub fn qtukey_isf(alpha: f64, k: usize, df: f64) -> f64 {
    qtukey_isf_near(alpha, k, df, None)
}

/// [`qtukey_isf`] starting from a nearby value (the critical value at a
/// neighbouring ν, as for Games-Howell's pairs): a bracket of ±0.1% around
/// it, widened as needed, costs about half the evaluations of a cold search.
/// The root is found to 1e-11 relative either way.
pub fn qtukey_isf_near(alpha: f64, k: usize, df: f64, guess: Option<f64>) -> f64 {
    if !(alpha > 0.0 && alpha < 1.0) || k < 2 || df.is_nan() || df < 1.0 {
        return f64::NAN;
    }
    // The root of ln sf(q) = ln α: the tail is accurate in relative terms
    // down to the smallest α, where 1 − cdf = α would lose α in rounding.
    let target = alpha.ln();
    let f = |q: f64| ptukey_ln_sf(q, k, df) - target;
    // Bounds: for k = 2 the range is √2·|t|, and q grows with k; Bonferroni
    // over the k(k − 1)/2 pairs bounds it above.
    let pairs = (k * (k - 1)) as f64;
    let (floor, ceiling) = (
        std::f64::consts::SQRT_2 * t_isf(alpha / 2.0, df),
        std::f64::consts::SQRT_2 * t_isf(alpha / pairs, df),
    );
    if let Some(g) = guess.filter(|g| g.is_finite() && *g > floor && *g < ceiling) {
        let mut width = 1e-3 * g;
        for _ in 0..3 {
            let (a, b) = ((g - width).max(floor), (g + width).min(ceiling));
            let (fa, fb) = (f(a), f(b));
            if fa.signum() != fb.signum() {
                return brent_known(f, (a, fa), (b, fb), 0.0, 1e-11);
            }
            width *= 16.0;
        }
    }
    if floor.is_finite() && ceiling.is_finite() && k > 2 {
        let (fa, fb) = (f(floor), f(ceiling));
        if fa > 0.0 && fb < 0.0 {
            return brent_known(f, (floor, fa), (ceiling, fb), 0.0, 1e-11);
        }
    }
    // A plain search from below (k = 2, or bounds lost to rounding).
    let mut lo = floor.min(1.0);
    if f(lo) < 0.0 || lo.is_nan() {
        lo = 1e-3;
    }
    let mut hi = lo.max(1.0) * 2.0;
    while f(hi) > 0.0 && hi < 1e300 {
        lo = hi;
        hi *= 1.6;
    }
    brent(f, lo, hi, 0.0, 1e-11)
}

/// Critical values q_{1−α; k, ν} for many ν at once (Games-Howell gives
/// each pair its own ν). q is smooth in 1/ν, so it is interpolated from a
/// Chebyshev series through exact values at 33 nodes in 1/ν, then checked at
/// the 32 points between them against exact values; only if every check
/// agrees to 1e-11 relative (the tolerance of the exact search itself) is the
/// series used. Otherwise, or for fewer than 200 values, each is searched
/// directly, in order of ν, each search starting from the last answer.
pub fn qtukey_isf_many(alpha: f64, k: usize, dfs: &[f64]) -> Vec<f64> {
    const NODES: usize = 33;
    let finite: Vec<f64> = dfs
        .iter()
        .copied()
        .filter(|d| d.is_finite() && *d >= 1.0)
        .collect();
    let direct = || {
        let mut order: Vec<usize> = (0..dfs.len()).collect();
        order.sort_by(|&a, &b| dfs[a].total_cmp(&dfs[b]).then(a.cmp(&b)));
        let mut out = vec![f64::NAN; dfs.len()];
        let mut previous: Option<(f64, f64)> = None;
        for i in order {
            let df = dfs[i];
            let q = match previous {
                Some((d, q)) if d == df => q,
                _ => qtukey_isf_near(alpha, k, df, previous.map(|p| p.1)),
            };
            previous = Some((df, q));
            out[i] = q;
        }
        out
    };
    if finite.len() < 200 {
        return direct();
    }
    let lo = 1.0 / finite.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let hi = 1.0 / finite.iter().copied().fold(f64::INFINITY, f64::min);
    if hi <= lo || hi.is_nan() || lo.is_nan() {
        return direct();
    }
    // Chebyshev points of the first kind on [lo, hi], in u = 1/ν.
    let at = |theta: f64| 0.5 * (lo + hi) + 0.5 * (hi - lo) * theta.cos();
    let nodes: Vec<f64> = (0..NODES)
        .map(|j| at(std::f64::consts::PI * (j as f64 + 0.5) / NODES as f64))
        .collect();
    let mut guess = None;
    let values: Vec<f64> = nodes
        .iter()
        .map(|&u| {
            let q = qtukey_isf_near(alpha, k, 1.0 / u, guess);
            guess = Some(q);
            q
        })
        .collect();
    // Barycentric interpolation through Chebyshev points of the first kind
    // (Berrut & Trefethen 2004): weights (−1)^j sin θⱼ.
    let weights: Vec<f64> = (0..NODES)
        .map(|j| {
            let theta = std::f64::consts::PI * (j as f64 + 0.5) / NODES as f64;
            if j % 2 == 0 {
                theta.sin()
            } else {
                -theta.sin()
            }
        })
        .collect();
    let series = |u: f64| {
        let (mut top, mut bottom) = (0.0, 0.0);
        for ((&x, &w), &f) in nodes.iter().zip(&weights).zip(&values) {
            if u == x {
                return f;
            }
            let c = w / (u - x);
            top += c * f;
            bottom += c;
        }
        top / bottom
    };
    let checks_pass = (0..NODES - 1).all(|j| {
        let u = at(std::f64::consts::PI * (j as f64 + 1.0) / NODES as f64);
        let exact = qtukey_isf_near(alpha, k, 1.0 / u, Some(values[j]));
        (series(u) - exact).abs() <= 1e-11 * exact.abs()
    });
    if !checks_pass || values.iter().any(|v| !v.is_finite()) {
        return direct();
    }
    dfs.iter()
        .map(|&df| {
            if df.is_finite() && df >= 1.0 {
                series(1.0 / df)
            } else {
                f64::NAN
            }
        })
        .collect()
}

#[cfg(test)]
#[path = "ptukey_tests.rs"]
mod tests;
