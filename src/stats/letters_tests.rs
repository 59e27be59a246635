//! Unit tests for `stats::letters`.

use super::*;

#[test]
fn dobson_tukey_letters() {
    // Source: METHODS 6.4 (computed, descending convention): trt2 a, ctrl ab, trt1 b.
    // Order ctrl, trt1, trt2; only trt1–trt2 differ.
    let means = [5.032, 4.661, 5.526];
    let got = compact_letters(&means, |i, j| (i, j) == (1, 2));
    assert_eq!(got, vec!["ab", "b", "a"]);
}

#[test]
fn chick_weight_letters() {
    // Source: METHODS 6.4 (computed with scipy Tukey-Kramer): sunflower a,
    // casein a, meatmeal ab, soybean b, linseed bc, horsebean c.
    // Order: horsebean, linseed, soybean, sunflower, meatmeal, casein.
    let means = [160.2, 218.75, 246.43, 328.92, 276.91, 323.58];
    let sig = [
        (0, 2),
        (0, 3),
        (0, 4),
        (0, 5),
        (1, 3),
        (1, 5),
        (2, 3),
        (2, 5),
    ];
    let got = compact_letters(&means, |i, j| sig.contains(&(i, j)));
    assert_eq!(got, vec!["c", "bc", "b", "a", "ab", "a"]);
}

#[test]
fn no_differences_means_one_letter() {
    assert_eq!(
        compact_letters(&[1.0, 2.0, 3.0], |_, _| false),
        vec!["a", "a", "a"]
    );
}
