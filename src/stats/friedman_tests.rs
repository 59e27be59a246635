//! Unit tests for `stats::friedman`. The library comparisons (scipy,
//! scikit-posthocs, mpmath) are in tests/friedman.rs.

use super::*;

/// Hollander & Wolfe (1999) Table 7.1 (Woodward 1970), rounding first base,
/// from memory: 22 players × (round out, narrow angle, wide angle).
fn rounding_first_base() -> Vec<Vec<f64>> {
    [
        [5.40, 5.50, 5.55],
        [5.85, 5.70, 5.75],
        [5.20, 5.60, 5.50],
        [5.55, 5.50, 5.40],
        [5.90, 5.85, 5.70],
        [5.45, 5.55, 5.60],
        [5.40, 5.40, 5.35],
        [5.45, 5.50, 5.35],
        [5.25, 5.15, 5.00],
        [5.85, 5.80, 5.70],
        [5.25, 5.20, 5.10],
        [5.65, 5.55, 5.45],
        [5.60, 5.35, 5.45],
        [5.05, 5.00, 4.95],
        [5.50, 5.50, 5.40],
        [5.45, 5.55, 5.50],
        [5.55, 5.55, 5.35],
        [5.45, 5.50, 5.55],
        [5.50, 5.45, 5.25],
        [5.65, 5.60, 5.40],
        [5.70, 5.65, 5.55],
        [6.30, 6.30, 6.25],
    ]
    .iter()
    .map(|r| r.to_vec())
    .collect()
}

#[test]
fn hollander_wolfe_rounding_first_base() {
    // Printed (from memory): rank sums 53, 47, 32; statistic adjusted for
    // ties 11.14, p ≈ 0.004 (11.142857 and 0.0038050 by scipy, which the
    // rank sums and tie counts below reproduce by hand: S = 234, ties in
    // four blocks of two tied values (Σ(t³ − t) = 24), C = 1 − 24/528).
    let f = friedman(&rounding_first_base()).expect("defined");
    assert_eq!(f.rank_sums, vec![53.0, 47.0, 32.0]);
    assert_eq!(f.ties, 24.0);
    assert!((f.chi_sq - 11.142857142857).abs() < 1e-9);
    assert!((f.p - 0.003805040775511).abs() < 1e-9);
    // Without the correction: 12·234/(22·3·4) = 10.636…
    assert!((f.chi_sq_uncorrected - 2808.0 / 264.0).abs() < 1e-12);
    assert!((f.kendall_w - f.chi_sq / 44.0).abs() < 1e-15);
}

#[test]
fn conover_lawn_grasses_with_ties() {
    // Conover (1999) Example 5.8.1 (from memory): rank sums 38, 23.5,
    // 24.5, 34 and T1 = 8.097 (the tie-corrected statistic).
    let grass: Vec<Vec<f64>> = [
        [4.0, 3.0, 2.0, 1.0],
        [4.0, 2.0, 3.0, 1.0],
        [3.0, 1.5, 1.5, 4.0],
        [3.0, 1.0, 2.0, 4.0],
        [4.0, 2.0, 1.0, 3.0],
        [2.0, 2.0, 2.0, 4.0],
        [1.0, 3.0, 2.0, 4.0],
        [2.0, 4.0, 1.0, 3.0],
        [3.5, 1.0, 2.0, 3.5],
        [4.0, 1.0, 3.0, 2.0],
        [4.0, 2.0, 3.0, 1.0],
        [3.5, 1.0, 2.0, 3.5],
    ]
    .iter()
    .map(|r| r.to_vec())
    .collect();
    let f = friedman(&grass).expect("defined");
    assert_eq!(f.rank_sums, vec![38.0, 23.5, 24.5, 34.0]);
    assert!((f.chi_sq - 8.097).abs() < 5e-4);
    assert!(f.has_ties() && f.tie_correction < 1.0);
}

#[test]
fn no_ties_means_no_correction() {
    let table = vec![vec![1.0, 2.0, 3.0], vec![3.0, 1.0, 2.0]];
    let f = friedman(&table).expect("defined");
    assert_eq!(f.tie_correction, 1.0);
    assert_eq!(f.chi_sq, f.chi_sq_uncorrected);
    // Rank sums 4, 3, 5: S = 2, χ² = 12·2/(2·3·4) = 1.
    assert!((f.chi_sq - 1.0).abs() < 1e-15);
}

#[test]
fn perfect_agreement_gives_w_one() {
    // Every block ranks the levels alike: W = 1, χ² = b(k − 1).
    let table: Vec<Vec<f64>> = (0..5)
        .map(|b| vec![b as f64, 10.0 + b as f64, 20.0])
        .collect();
    let f = friedman(&table).expect("defined");
    assert!((f.kendall_w - 1.0).abs() < 1e-15);
    assert!((f.chi_sq - 10.0).abs() < 1e-12);
    // Conover's procedure has no residual spread left to compare with.
    assert!(conover(&f, 0.05).is_none());
}

#[test]
fn refusals() {
    assert_eq!(
        friedman(&[vec![1.0, 2.0]]),
        Err(FriedmanError::TooFewBlocks(1))
    );
    assert_eq!(
        friedman(&[vec![1.0], vec![2.0]]),
        Err(FriedmanError::TooFewLevels(1))
    );
    assert_eq!(
        friedman(&[vec![1.0, 2.0], vec![2.0]]),
        Err(FriedmanError::Ragged(1))
    );
    assert_eq!(
        friedman(&[vec![1.0, 1.0], vec![2.0, 2.0]]),
        Err(FriedmanError::AllTied)
    );
}

#[test]
fn nemenyi_decides_by_the_critical_rank_sum_difference() {
    // Hollander & Wolfe's rule: |R_u − R_v| ≥ q(α; k, ∞)·√(bk(k+1)/12).
    let f = friedman(&rounding_first_base()).expect("defined");
    let family = nemenyi(&f, 0.05);
    let critical = family.critical * (22.0 * 3.0 * 4.0 / 12.0f64).sqrt();
    // q(0.05; 3, ∞) = 3.314 (Harter's table, from memory).
    assert!((family.critical - 3.314).abs() < 5e-4);
    for p in &family.pairs {
        let rank_sum_diff = (f.rank_sums[p.a] - f.rank_sums[p.b]).abs();
        assert_eq!(p.significant, rank_sum_diff >= critical, "{p:?}");
        // p_adj is at α exactly where the statistic reaches the critical q.
        assert_eq!(p.p_adj < 0.05, p.statistic > family.critical);
    }
    // Pairs in sheaf's order: (1, 0), (2, 0), (2, 1).
    let order: Vec<(usize, usize)> = family.pairs.iter().map(|p| (p.a, p.b)).collect();
    assert_eq!(order, vec![(1, 0), (2, 0), (2, 1)]);
    // Rank sums 53 and 32 differ by 21 > 3.314·√22 = 15.5; 53 and 47 do not.
    assert!(family.pairs[1].significant && !family.pairs[0].significant);
}

#[test]
fn conover_matches_its_formula_by_hand() {
    // Three blocks, three levels, no ties: A₁ = 3·14 = 42, rank sums
    // 3, 7, 8 (ΣR² = 122): SE = √(2(3·42 − 122)/4) = √2, df 4.
    let table = vec![
        vec![1.0, 2.0, 3.0],
        vec![1.0, 3.0, 2.0],
        vec![1.0, 2.0, 3.0],
    ];
    let f = friedman(&table).expect("defined");
    let family = conover(&f, 0.05).expect("spread");
    let p = &family.pairs[0];
    assert_eq!((p.a, p.b), (1, 0));
    assert!((p.se - 2f64.sqrt()).abs() < 1e-15);
    assert!((p.diff - 4.0).abs() < 1e-15);
    assert!((p.statistic - 4.0 / 2f64.sqrt()).abs() < 1e-15);
    assert!((p.p_adj - 2.0 * t_sf(4.0 / 2f64.sqrt(), 4.0)).abs() < 1e-15);
}
