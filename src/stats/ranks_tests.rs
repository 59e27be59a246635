//! Unit tests for `stats::ranks`.

use super::*;

#[test]
fn hollander_wolfe_mucociliary_efficiency() {
    // Source: Hollander & Wolfe, Nonparametric Statistical Methods (1973),
    // p. 116 (from memory, METHODS 6.6): H = 0.7714, df 2, p = 0.680
    // (computed 0.771429, 0.679965).
    let normal = [2.9, 3.0, 2.5, 2.6, 3.2];
    let obstructive = [3.8, 2.7, 4.0, 2.4];
    let asbestosis = [2.8, 3.4, 3.7, 2.2, 2.0];
    let kw = kruskal_wallis(&[&normal, &obstructive, &asbestosis]).expect("defined");
    assert!((kw.h - 0.771429).abs() < 5e-7);
    assert!((kw.p - 0.679965).abs() < 5e-7);
}

#[test]
fn ties_share_the_mid_rank() {
    let (r, ties) = mid_ranks(&[3.0, 1.0, 3.0, 2.0]);
    assert_eq!(r, vec![3.5, 1.0, 3.5, 2.0]);
    assert_eq!(ties, 6.0);
    assert!(kruskal_wallis(&[&[1.0, 1.0], &[1.0]]).is_none());
}
