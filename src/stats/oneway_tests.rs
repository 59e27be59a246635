//! Unit tests for `stats::oneway`.

use super::*;

#[test]
fn dobson_plant_weights() {
    // Source: Dobson (1983) plant weights; published (from memory) and
    // computed with scipy in METHODS 6.1: SSB = 3.76634, SSW = 10.49209,
    // F = 4.846088, p = 0.015910.
    let ctrl = [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14];
    let trt1 = [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69];
    let trt2 = [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26];
    let groups: Vec<GroupSummary> = [&ctrl[..], &trt1, &trt2]
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    let t = one_way(&groups, 0.05, None).expect("anova");
    // The METHODS values are printed to 6 or 7 significant digits.
    assert!((t.ss_between - 3.76634).abs() < 5e-6);
    assert!((t.ss_within - 10.49209).abs() < 5e-6);
    assert!((t.f - 4.846088).abs() < 5e-7);
    assert!((t.p - 0.015910).abs() < 5e-7);
    assert_eq!((t.df_between, t.df_within), (2, 27));
}

#[test]
fn one_level_is_refused() {
    let g = GroupSummary::from_values(&[1.0, 2.0]);
    assert_eq!(one_way(&[g], 0.05, None), Err(OneWayError::TooFewLevels(1)));
}

#[test]
fn zero_within_variance_gives_infinite_f() {
    let a = GroupSummary::from_values(&[1.0, 1.0]);
    let b = GroupSummary::from_values(&[2.0, 2.0]);
    let t = one_way(&[a, b], 0.05, None).expect("anova");
    assert!(t.f.is_infinite() && t.p == 0.0 && !t.warnings.is_empty());
}

#[test]
fn merged_halves_equal_the_whole() {
    let values = [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14];
    let whole = GroupSummary::from_values(&values);
    let merged =
        GroupSummary::from_values(&values[..3]).merge(&GroupSummary::from_values(&values[3..]));
    assert_eq!(merged.n, whole.n);
    // Different rounding paths agree to a few ulps.
    assert!((merged.mean - whole.mean).abs() < 1e-14);
    assert!((merged.ss - whole.ss).abs() < 1e-13);
}
