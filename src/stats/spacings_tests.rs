//! Unit tests for `stats::spacings`.

use super::*;

#[test]
fn one_count_is_the_mann_whitney_tail() {
    // Exact Mann-Whitney tail, 4 and 4: P(U ≤ 2) = 4/70 (scipy
    // mannwhitneyu(method='exact'), the same value as in dose_ranks.json);
    // P(U ≤ 0) = 1/70 and P(U ≤ 16) = 1 (counting).
    close(any_count_at_most(4, &[4], &[2]).unwrap(), 4.0 / 70.0);
    close(any_count_at_most(4, &[4], &[0]).unwrap(), 1.0 / 70.0);
    close(any_count_at_most(4, &[4], &[16]).unwrap(), 1.0);
}

#[test]
fn negative_cut_offs_never_trigger() {
    assert_eq!(any_count_at_most(4, &[4, 4], &[-1, -1]).unwrap(), 0.0);
    // With one cut-off negative only the other treatment counts.
    close(any_count_at_most(4, &[4, 4], &[-1, 2]).unwrap(), 4.0 / 70.0);
}

#[test]
fn oversized_designs_are_refused() {
    let why = any_count_at_most(30, &[30; 5], &[200; 5]).unwrap_err();
    assert!(why.contains("at most"), "{why}");
    let why = any_count_at_most(12, &[12; 6], &[72; 6]).unwrap_err();
    assert!(why.contains("cap"), "{why}");
}

/// Exact rationals rounded once: 1e-14 relative (measured at most 1.3e-16).
fn close(got: f64, want: f64) {
    assert!(
        (got - want).abs() <= 1e-14 * want.abs(),
        "got {got}, want {want}"
    );
}
