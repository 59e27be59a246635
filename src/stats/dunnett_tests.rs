//! Unit tests for `stats::dunnett`.

use super::*;

#[test]
fn dunnett_1955_blood_counts() {
    // Source: Dunnett (1955) blood-count data, as in METHODS 6.4: MSE =
    // 1.3805233, ν = 12, t = 0.857032 (A), 3.693752 (B); adjusted two-sided
    // p = 0.6201020 and 0.0058254 and d(0.05) = 2.51348 from a deterministic
    // reference quadrature (computed); scipy.stats.dunnett gives 0.620 and
    // 0.006 (randomized QMC). Tolerance 1e-6: METHODS 6 bar for Dunnett.
    let control = [7.40, 8.50, 7.20, 8.24, 9.84, 8.32];
    let a = [9.76, 8.80, 7.68, 9.36];
    let b = [12.80, 9.68, 12.16, 9.20, 10.55];
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
    let levels = [(6, mean(&control)), (4, mean(&a)), (5, mean(&b))];
    let fam = dunnett(&levels, 0, 1.3805233, 12.0, 0.05, Sides::Two);
    assert!((fam.pairs[0].statistic - 0.857032).abs() < 5e-6);
    assert!(
        (fam.pairs[0].p_adj - 0.6201020).abs() < 1e-6,
        "{}",
        fam.pairs[0].p_adj
    );
    assert!(
        (fam.pairs[1].p_adj - 0.0058254).abs() < 1e-6,
        "{}",
        fam.pairs[1].p_adj
    );
    assert!((fam.critical - 2.51348).abs() < 5e-5, "{}", fam.critical);
}

#[test]
fn dunnett_table_equal_n() {
    // Source: Dunnett (1964), Biometrics 20:482-491, two-sided α = 0.05,
    // equal n (from memory, METHODS 6.5; 2 decimals as printed, with the
    // computed values): ν = 20, m = 4 → 2.65 (2.6510); ν = 5, m = 2 → 3.03
    // (3.0302); ν = 60, m = 5 → 2.58 (2.5825); ν = ∞, m = 3 → 2.35 (2.3490).
    let lam = |m: usize| vec![std::f64::consts::FRAC_1_SQRT_2; m];
    let d = |m: usize, df: f64| {
        brent(
            |d| dunnett_cdf(d, &lam(m), df, Sides::Two) - 0.95,
            0.5,
            10.0,
            1e-12,
            1e-11,
        )
    };
    for (m, df, computed) in [
        (4, 20.0, 2.6510),
        (2, 5.0, 3.0302),
        (5, 60.0, 2.5825),
        (3, f64::INFINITY, 2.3490),
    ] {
        assert!(
            (d(m, df) - computed).abs() < 5e-5,
            "m {m} df {df}: {}",
            d(m, df)
        );
    }
    // One-sided ν = 6, m = 2: 2.34 (computed 2.3368), quoted by the PMCMRplus
    // documentation from Dunnett's table.
    let one = brent(
        |d| dunnett_cdf(d, &lam(2), 6.0, Sides::Greater) - 0.95,
        0.5,
        10.0,
        1e-12,
        1e-11,
    );
    assert!((one - 2.3368).abs() < 5e-5, "{one}");
}

#[test]
fn one_treatment_is_the_t_test() {
    // METHODS 6.8: with m = 1 Dunnett equals the t test.
    let levels = [(5, 10.0), (7, 11.5)];
    let fam = dunnett(&levels, 0, 2.0, 10.0, 0.05, Sides::Two);
    let t = fam.pairs[0].statistic;
    assert!((fam.critical - crate::stats::dist::t_isf(0.025, 10.0)).abs() < 1e-8);
    assert!((fam.pairs[0].p_adj - 2.0 * t_sf(t.abs(), 10.0)).abs() < 1e-15);
}

#[test]
fn one_treatment_gives_the_t_quantile_down_to_the_smallest_alpha() {
    // Source: with m = 1 Dunnett's statistic is Student's t (METHODS 3.10),
    // so the two-sided critical value is t_{1−α/2; ν}. Bar 2e-9 relative:
    // what the root on cdf = 1 − α reaches at DUNNETT_MIN_ALPHA. The search bracket once stopped at d = 50, so ν = 3 at
    // small α gave no value at all. (At ν = 1 the cdf's outer integral does
    // not reach α = 1e-3; the README lists this limit.)
    for &df in &[3.0, 10.0, 30.0] {
        for &alpha in &[0.05, 1e-3, 1e-4, DUNNETT_MIN_ALPHA] {
            let d = dunnett(&[(5, 0.0), (5, 1.0)], 0, 1.0, df, alpha, Sides::Two).critical;
            let t = crate::stats::dist::t_isf(alpha / 2.0, df);
            assert!((d / t - 1.0).abs() < 2e-9, "ν {df} α {alpha}: {d} vs {t}");
        }
    }
    // Many treatments at ν = 1: Bonferroni puts the value above 50.
    let levels: Vec<(usize, f64)> = (0..6).map(|i| (3, i as f64)).collect();
    let d = dunnett(&levels, 0, 1.0, 1.0, 0.05, Sides::Two).critical;
    let (floor, ceiling) = (
        crate::stats::dist::t_isf(0.025, 1.0),
        crate::stats::dist::t_isf(0.005, 1.0),
    );
    assert!(
        d > floor && d < ceiling,
        "{d} not within ({floor}, {ceiling})"
    );
}
