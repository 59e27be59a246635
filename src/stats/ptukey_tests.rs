//! Unit tests for `stats::ptukey`.

use super::*;
use crate::stats::dist::{t_cdf, t_isf};

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

#[test]
fn extreme_arguments_stay_probabilities_and_monotone_in_q() {
    // Property (METHODS 6.8): for any k and ν the cdf is a probability and
    // does not decrease in q. Covers the table's edges (|x| near 9), the
    // inner and outer stopping bounds, fractional and huge ν, many means.
    let qs = [
        1e-6, 0.01, 0.3, 1.0, 2.0, 3.5, 5.0, 7.0, 10.0, 17.0, 18.0, 40.0, 1e3,
    ];
    for &k in &[3usize, 7, 100, 1000, 10_000] {
        for &df in &[1.0, 1.5, 2.0, 7.3, 1e3, 1e9, 1e300, f64::INFINITY] {
            let mut last = 0.0;
            for &q in &qs {
                let p = ptukey_cdf(q, k, df);
                assert!((0.0..=1.0).contains(&p), "k {k} ν {df} q {q}: {p}");
                // Quadrature noise may wiggle the last digits: 1e-12.
                assert!(p >= last - 1e-12, "k {k} ν {df} q {q}: {p} < {last}");
                last = p;
            }
        }
    }
}

#[test]
fn huge_error_df_approach_the_infinite_limit() {
    // Property: as ν → ∞ the studentized range tends to the range of k
    // normals; at ν = 1e300 the two agree to the quadrature's own accuracy
    // (1e-11). This once looped forever: the chi density's log, taken as
    // ν·t − (ν/2)(e^{2t} − 1), lost every digit to cancellation.
    for &k in &[3usize, 10, 50] {
        for &q in &[2.0, 3.5, 5.0] {
            let (huge, limit) = (ptukey_cdf(q, k, 1e300), ptukey_cdf(q, k, f64::INFINITY));
            assert!(
                (huge - limit).abs() < 1e-11,
                "k {k} q {q}: {huge} vs {limit}"
            );
        }
        let (huge, limit) = (
            qtukey_isf(0.05, k, 1e300),
            qtukey_isf(0.05, k, f64::INFINITY),
        );
        assert!(
            (huge / limit - 1.0).abs() < 1e-9,
            "k {k}: {huge} vs {limit}"
        );
    }
}

#[test]
fn the_direct_tail_with_two_means_matches_t_far_out() {
    // Source: identity P(Q > q; 2, ν) = 2·P(T > q/√2; ν) (METHODS 6.8),
    // whose t tail comes from the incomplete beta with relative accuracy far
    // into the tail. ptukey_sf uses the identity for k = 2, so this checks
    // the direct tail integral that serves every other k against it, at p
    // from 1e-3 to 1e-300. Bar: the 1e-9 relative the tail is held to.
    let mut worst: f64 = 0.0;
    for &df in &[2.0, 3.5, 10.0, 24.0, 100.0, 1e3, 1e5, f64::INFINITY] {
        for &p in &[1e-3, 1e-7, 1e-12, 1e-30, 1e-80, 1e-150, 1e-250, 1e-300] {
            let q = std::f64::consts::SQRT_2 * t_isf(p / 2.0, df);
            let exact = two_means_sf(q, df).ln();
            let direct = ptukey_ln_sf(q, 2, df);
            let error = (direct - exact).exp_m1().abs();
            worst = worst.max(error);
            assert!(
                error < 1e-9,
                "ν {df} p {p}: {direct} vs {exact} ({error:e})"
            );
        }
    }
    eprintln!("worst relative error {worst:e}");
}

#[test]
fn the_direct_tail_meets_one_minus_cdf_where_both_hold() {
    // Reference: 1 − cdf from the separate cdf integral (its own split, the
    // normal table, absolute error below 1e-12 against mpmath), at q where
    // p is near 5e-3: there that is under 2e-10 relative, so the two
    // integrals must agree to 1e-9 relative over k = 3..100, ν = 2..∞.
    let mut worst: f64 = 0.0;
    for &k in &[3usize, 5, 10, 20, 50, 100] {
        for &df in &[2.0, 5.0, 24.0, 120.0, 1e4, f64::INFINITY] {
            let q = qtukey_isf(5e-3, k, df);
            let direct = direct_ln_sf(q, k, df).exp();
            let complement = 1.0 - ptukey_cdf(q, k, df);
            let rel = (direct / complement - 1.0).abs();
            worst = worst.max(rel);
            assert!(
                rel < 1e-9,
                "k {k} ν {df} q {q}: {direct:e} vs {complement:e}"
            );
        }
    }
    eprintln!("worst relative difference {worst:e}");
}
