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
