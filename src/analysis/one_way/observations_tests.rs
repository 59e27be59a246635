use super::*;
use crate::stats::assumptions::{Center, levene, outliers, quartiles, skewness_kurtosis};

/// A deterministic scramble in [0, 1).
fn scramble(i: u64) -> f64 {
    let x = i
        .wrapping_mul(6_364_136_223_846_793_005)
        .wrapping_add(1_442_695_040_888_963_407);
    (x >> 11) as f64 / (1u64 << 53) as f64
}

/// Invented levels: skewed, on a 0.01 grid with ties, one of a single
/// repeated value plus one outlier, negative values.
fn levels() -> Vec<Vec<f64>> {
    vec![
        (0..4000).map(|i| -2.0 * scramble(i).ln()).collect(),
        (0..3001)
            .map(|i| ((scramble(i + 50_000) * 300.0).floor() - 150.0) / 100.0)
            .collect(),
        (0..500)
            .map(|i| if i == 250 { 40.0 } else { 1.5 })
            .collect(),
        (0..7).map(|i| -3.0 - scramble(i + 9) * 0.1).collect(),
    ]
}

fn relative(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(f64::MIN_POSITIVE)
}

/// The passes agree with the established in-memory functions (which the
/// reference tests compare with scipy): order statistics exactly, sums to
/// rounding (1e-12 relative: the shifted and two-pass formulas differ only
/// in how they round), outliers to the line.
#[test]
fn the_passes_agree_with_the_functions_on_all_values() {
    let groups = levels();
    let summaries: Vec<GroupSummary> = groups
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    let lines: Vec<Vec<usize>> = (groups.iter().scan(2, |next, g| {
        let l: Vec<usize> = (*next..*next + g.len()).collect();
        *next += g.len();
        Some(l)
    }))
    .collect();
    let observed = observe(
        &mut Kept {
            offsets: &groups,
            lines: &lines,
        },
        &summaries,
    )
    .expect("observe");
    let slices: Vec<&[f64]> = groups.iter().map(Vec::as_slice).collect();
    for (q, g) in observed.quartiles.iter().zip(&groups) {
        let (a, b, c) = quartiles(g);
        assert_eq!(
            (q.0.to_bits(), q.1.to_bits(), q.2.to_bits()),
            (a.to_bits(), b.to_bits(), c.to_bits())
        );
    }
    spread_tests_agree(&observed, &slices);
    let residuals: Vec<f64> = groups
        .iter()
        .zip(&summaries)
        .flat_map(|(g, s)| g.iter().map(move |y| y - s.mean))
        .collect();
    let (skew, kurt) = skewness_kurtosis(&residuals);
    assert!(relative(observed.skewness, skew) < 1e-12);
    assert!(relative(observed.excess_kurtosis, kurt) < 1e-12);
    let table = one_way(&summaries, 0.05, None).expect("table");
    let means: Vec<f64> = summaries.iter().map(|s| s.mean).collect();
    let flagged = outliers(&slices, &means, table.ms_within, table.df_within);
    assert_eq!(observed.outlier_count, flagged.total);
    let mut expected: Vec<usize> = flagged
        .most_extreme
        .iter()
        .map(|o| lines[o.level][o.index])
        .collect();
    expected.sort_unstable();
    let got: Vec<usize> = observed.outliers.iter().map(|o| o.line).collect();
    assert_eq!(got, expected);
    assert!(observed.outliers.iter().any(|o| o.offset == 40.0));
    // More than 5,000 residuals: Shapiro-Wilk is out of its range.
    assert_eq!(observed.shapiro_wilk, Err(ShapiroWilkSkip::TooMany));
}

#[test]
fn equal_deviations_have_exactly_no_spread() {
    // Each level is symmetric about its mean: every |y − mean| is the same,
    // so Levene's deviations have no spread and the test is undefined.
    let groups = vec![vec![1.0, 3.0, 1.0, 3.0, 1.0, 3.0], vec![5.0, 9.0, 9.0, 5.0]];
    let summaries: Vec<GroupSummary> = groups
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    let lines = vec![vec![1, 2, 3, 4, 5, 6], vec![7, 8, 9, 10]];
    let observed = observe(
        &mut Kept {
            offsets: &groups,
            lines: &lines,
        },
        &summaries,
    )
    .expect("observe");
    assert_eq!(observed.levene, None);
    assert_eq!(observed.quartiles[1].1, 7.0);
}

/// Cells fitted by values other than their means and grouped two by two
/// (as a factorial block's full cells are grouped into treatment cells):
/// the passes agree with the in-memory functions on the residuals grouped
/// the same way, to rounding (1e-12 relative, as above: the shifted sums
/// merged cell by cell and the two-pass formulas differ only in rounding);
/// the outliers to the line.
#[test]
fn cells_grouped_and_fitted_agree_with_the_functions_on_their_residuals() {
    let cells = levels();
    // Invented fitted values near each cell's mean, and leverages.
    let fitted = [1.9, 0.01, 1.6, -3.04];
    let leverage = [0.0004, 0.0005, 0.003, 0.2];
    let group_of = vec![0, 1, 0, 1];
    let residuals: Vec<Vec<f64>> = (cells.iter().zip(fitted))
        .map(|(c, f)| c.iter().map(|y| y - f).collect())
        .collect();
    let mut groups: Vec<Vec<f64>> = vec![Vec::new(); 2];
    for (r, &g) in residuals.iter().zip(&group_of) {
        groups[g].extend(r);
    }
    let summaries: Vec<GroupSummary> = groups
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    let all: Vec<f64> = cells.concat();
    let (df, mse) = (all.len() - 4, 4.0);
    let fit = Fitting {
        n: cells.iter().map(Vec::len).collect(),
        group_of,
        fitted: fitted.to_vec(),
        shift: fitted.to_vec(),
        leverage: leverage.to_vec(),
        groups: summaries,
        mse,
        df,
        grand: all.iter().sum::<f64>() / all.len() as f64,
    };
    let lines: Vec<Vec<usize>> = (cells.iter().scan(2, |next, g| {
        let l: Vec<usize> = (*next..*next + g.len()).collect();
        *next += g.len();
        Some(l)
    }))
    .collect();
    let observed = observe_fitted(
        &mut Kept {
            offsets: &cells,
            lines: &lines,
        },
        &fit,
    )
    .expect("observe");
    let slices: Vec<&[f64]> = groups.iter().map(Vec::as_slice).collect();
    spread_tests_agree(&observed, &slices);
    for (q, g) in observed.quartiles.iter().zip(&groups) {
        let (a, b, c) = quartiles(g);
        assert_eq!((q.0, q.1, q.2), (a, b, c));
    }
    let (skew, kurt) = skewness_kurtosis(&residuals.concat());
    assert!(relative(observed.skewness, skew) < 1e-12);
    assert!(relative(observed.excess_kurtosis, kurt) < 1e-12);
    // Outliers: every residual against the threshold, with its cell's leverage.
    let mut expected: Vec<usize> = Vec::new();
    for ((r, l), &h) in residuals.iter().zip(&lines).zip(&leverage) {
        for (&e, &line) in r.iter().zip(l) {
            let t = crate::stats::assumptions::externally_studentized(e, mse, h, df as f64);
            if t.abs() > OUTLIER_THRESHOLD {
                expected.push(line);
            }
        }
    }
    assert_eq!(observed.outlier_count, expected.len());
    assert!(expected.len() <= OUTLIERS_KEPT);
    let got: Vec<usize> = observed.outliers.iter().map(|o| o.line).collect();
    assert_eq!(got, expected);
    assert!(!got.is_empty());
}

/// Brown-Forsythe and Levene from the passes against the in-memory tests
/// on the same groups (1e-12 relative: the same sums in another order).
fn spread_tests_agree(observed: &Observed, slices: &[&[f64]]) {
    let bf = levene(slices, Center::Median).expect("bf");
    let lv = levene(slices, Center::Mean).expect("levene");
    let (obf, olv) = (
        observed.brown_forsythe.expect("bf"),
        observed.levene.expect("levene"),
    );
    assert!(
        relative(obf.statistic, bf.statistic) < 1e-12,
        "{obf:?} {bf:?}"
    );
    assert!(
        relative(olv.statistic, lv.statistic) < 1e-12,
        "{olv:?} {lv:?}"
    );
}
