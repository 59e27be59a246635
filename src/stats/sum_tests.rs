//! Unit tests for `stats::sum`.

#[test]
fn recovers_what_plain_summation_loses() {
    // 1 + 1e100 + 1 − 1e100 = 2 exactly; a plain sum gives 0.
    assert_eq!(super::neumaier([1.0, 1e100, 1.0, -1e100]), 2.0);
}
