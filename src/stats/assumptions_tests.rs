//! Unit tests for `stats::assumptions`.

use super::*;

const CTRL: [f64; 10] = [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14];
const TRT1: [f64; 10] = [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69];
const TRT2: [f64; 10] = [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26];

#[test]
fn dobson_variance_tests() {
    // Source: METHODS 6.6 on Dobson's plant weights (computed with scipy.stats.levene
    // and scipy.stats.bartlett; printed to 5-6 significant digits).
    let groups: [&[f64]; 3] = [&CTRL, &TRT1, &TRT2];
    let bf = levene(&groups, Center::Median).expect("defined");
    assert!((bf.statistic - 1.11919).abs() < 5e-6 && (bf.p - 0.34123).abs() < 5e-6);
    let lv = levene(&groups, Center::Mean).expect("defined");
    assert!((lv.statistic - 1.23696).abs() < 5e-6 && (lv.p - 0.30619).abs() < 5e-6);
    let s: Vec<GroupSummary> = groups
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    let b = bartlett(&s).expect("defined");
    assert!((b.statistic - 2.87857).abs() < 5e-6 && (b.p - 0.23710).abs() < 5e-6);
}

#[test]
fn dobson_residual_normality() {
    // Source: METHODS 6.6, scipy.stats.shapiro on the ANOVA residuals:
    // W = 0.96607, p = 0.43790.
    let mut residuals = Vec::new();
    for g in [&CTRL[..], &TRT1, &TRT2] {
        let m = g.iter().sum::<f64>() / g.len() as f64;
        residuals.extend(g.iter().map(|y| y - m));
    }
    let sw = shapiro_wilk(&residuals).expect("computed");
    assert!((sw.w - 0.96607).abs() < 5e-6);
    assert!((sw.p - 0.43790).abs() < 5e-5);
}

#[test]
fn shapiro_wilk_exact_for_three() {
    // Source: METHODS 6.6 (computed): x = (1, 2, 4) gives W = 27/28 and the
    // exact n = 3 p = 0.636887.
    let sw = shapiro_wilk(&[1.0, 2.0, 4.0]).expect("computed");
    assert!((sw.w - 27.0 / 28.0).abs() < 1e-12);
    assert!((sw.p - 0.636887).abs() < 5e-7);
    assert_eq!(shapiro_wilk(&[1.0, 2.0]), Err(ShapiroWilkSkip::TooFew));
    assert_eq!(
        shapiro_wilk(&[2.0, 2.0, 2.0]),
        Err(ShapiroWilkSkip::NoSpread)
    );
}

#[test]
fn royston_coefficients_are_antisymmetric_and_normalised() {
    // Royston's construction makes Σaᵢ² = 1 and a₁ = −aₙ (common practice).
    for n in [4, 5, 6, 11, 12, 50, 500] {
        let a = shapiro_wilk_coefficients(n);
        let norm: f64 = a.iter().map(|x| x * x).sum();
        assert!((norm - 1.0).abs() < 1e-12, "n = {n}: Σa² = {norm}");
        for i in 0..n {
            assert!((a[i] + a[n - 1 - i]).abs() < 1e-15);
        }
    }
}

#[test]
fn median_of_even_and_odd() {
    assert_eq!(median(&[3.0, 1.0, 2.0]), 2.0);
    assert_eq!(median(&[4.0, 1.0, 3.0, 2.0]), 2.5);
}

#[test]
fn royston_coefficients_against_the_published_table() {
    // Source: Shapiro & Wilk (1965), Biometrika 52:591-611, Table 5 of exact
    // coefficients (from memory) for n = 5, 10 and 20. Royston's (1992)
    // approximation is not the exact table; it agrees to within 1e-3, the
    // size of its published approximation error.
    let table: [(usize, &[f64]); 3] = [
        (5, &[0.6646, 0.2413]),
        (10, &[0.5739, 0.3291, 0.2141, 0.1224, 0.0399]),
        (
            20,
            &[
                0.4734, 0.3211, 0.2565, 0.2085, 0.1686, 0.1334, 0.1013, 0.0711, 0.0422, 0.0140,
            ],
        ),
    ];
    for (n, published) in table {
        let a = shapiro_wilk_coefficients(n);
        for (i, want) in published.iter().enumerate() {
            let got = a[n - 1 - i];
            assert!(
                (got - want).abs() < 1e-3,
                "n = {n}, a[{}] = {got}, table {want}",
                n - i
            );
        }
    }
}

#[test]
fn selection_gives_the_sorted_order_statistics() {
    // Reference: a full sort of the same values (common practice: the
    // k-th order statistic is the k-th value after sorting).
    let mut state = 0x2545_f491_4f6c_dd1du64;
    for n in [1usize, 2, 3, 4, 5, 8, 33, 100] {
        let values: Vec<f64> = (0..n)
            .map(|_| {
                state ^= state << 13;
                state ^= state >> 7;
                state ^= state << 17;
                (state % 17) as f64 - 8.0
            })
            .collect();
        let mut sorted = values.clone();
        sorted.sort_by(f64::total_cmp);
        let type7 = |q: f64| {
            let h = (n - 1) as f64 * q;
            let lo = h.floor() as usize;
            let hi = (lo + 1).min(n - 1);
            sorted[lo] + (h - lo as f64) * (sorted[hi] - sorted[lo])
        };
        assert_eq!(
            quartiles(&values),
            (type7(0.25), type7(0.5), type7(0.75)),
            "n = {n}"
        );
        let m = n / 2;
        let expected = if n % 2 == 1 {
            sorted[m]
        } else {
            0.5 * (sorted[m - 1] + sorted[m])
        };
        assert_eq!(median(&values), expected, "n = {n}");
    }
}
