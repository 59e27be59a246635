//! Unit tests for `stats::welch`.

use super::*;

#[test]
fn dobson_welch() {
    // Source: METHODS 6.6 (computed; pingouin.welch_anova): F = 5.18097,
    // df = (2, 17.1284), p = 0.017393.
    let g: Vec<GroupSummary> = [
        &[4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14][..],
        &[4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69],
        &[6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26],
    ]
    .iter()
    .map(|v| GroupSummary::from_values(v))
    .collect();
    let w = welch_anova(&g).expect("defined");
    assert!(
        (w.f - 5.18097).abs() < 5e-6
            && (w.df2 - 17.1284).abs() < 5e-5
            && (w.p - 0.017393).abs() < 5e-7
    );
}
