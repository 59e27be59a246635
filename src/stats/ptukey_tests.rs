//! Unit tests for `stats::ptukey`.

use super::*;
use crate::stats::dist::t_cdf;

#[test]
fn two_means_reduce_to_t() {
    // Source: identity P(Q ≤ q; 2, ν) = 2·F_t(q/√2; ν) − 1 (METHODS 6.8).
    for &df in &[2.0, 5.0, 27.0, 1000.0] {
        for &q in &[0.5, 2.0, 3.5, 6.0] {
            let t = 2.0 * t_cdf(q / std::f64::consts::SQRT_2, df) - 1.0;
            assert!((ptukey_cdf(q, 2, df) - t).abs() < 1e-9, "q {q} df {df}");
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
