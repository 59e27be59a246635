//! Unit tests for `stats::compare`.

use super::*;

#[test]
fn holm_matches_statsmodels_on_dobson() {
    // Source: METHODS 6.4, statsmodels multipletests on the LSD p-values
    // 0.194388 / 0.087682 / 0.004459 → Holm 0.194388 / 0.175363 / 0.013378.
    let got = holm(&[0.194388, 0.087682, 0.004459]);
    let want = [0.194388, 0.175364, 0.013377];
    for (g, w) in got.iter().zip(want) {
        assert!((g - w).abs() < 2e-6, "{got:?}");
    }
}
