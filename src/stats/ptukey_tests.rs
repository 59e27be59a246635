//! Unit tests for `stats::ptukey`.

use super::*;
use crate::stats::dist::t_cdf;

#[test]
fn the_integral_with_two_means_reduces_to_t() {
    // Source: identity P(Q ≤ q; 2, ν) = 2·F_t(q/√2; ν) − 1 (METHODS 6.8).
    // ptukey_cdf uses the identity itself for k = 2, so this checks the
    // double integral that serves every other k against it; the bar is the
    // 1e-11 the quadrature is held to against mpmath.
    for &df in &[1.0, 2.0, 5.0, 27.0, 1000.0, 1e6] {
        for &q in &[0.5, 2.0, 3.5, 6.0, 12.0, 20.0] {
            let t = 2.0 * t_cdf(q / std::f64::consts::SQRT_2, df) - 1.0;
            let integral =
                crate::stats::chi_scale::chi_scale_expectation(df, 2, |s| range_cdf(q * s, 2));
            assert!(
                (integral - t).abs() < 1e-11,
                "q {q} df {df}: {integral} vs {t}"
            );
            assert!((ptukey_cdf(q, 2, df) - t).abs() < 1e-15, "q {q} df {df}");
        }
    }
}

#[test]
fn many_quantiles_agree_with_one_at_a_time() {
    // Reference: the exact search for each ν alone (itself held to scipy
    // by the grid tests above). Both find the root to 1e-11 relative, so
    // they may differ by twice that.
    let dfs: Vec<f64> = (0..300)
        .map(|i| 2.5 + 1.7 * i as f64 + (i % 7) as f64 * 0.31)
        .collect();
    for k in [3usize, 10, 40] {
        let many = qtukey_isf_many(0.05, k, &dfs);
        for (&df, &q) in dfs.iter().zip(&many) {
            let one = qtukey_isf(0.05, k, df);
            assert!(
                (q - one).abs() <= 3e-11 * one,
                "k {k}, ν {df}: {q} vs {one}"
            );
        }
    }
}
