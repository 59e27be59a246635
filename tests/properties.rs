//! Invariances the statistics must satisfy (METHODS 6.8; no published source
//! needed: each follows from the definitions).

use proptest::prelude::*;
use sheaf::data::{CsvFormat, Table, factor_response};
use sheaf::stats::compare::{LevelMean, Method, pairwise};
use sheaf::stats::oneway::{GroupSummary, OneWay, one_way};

/// ANOVA of a CSV text with columns y,g, through the decimal-aware reader.
fn anova_of_csv(text: &str) -> (OneWay, Vec<GroupSummary>) {
    let format = CsvFormat::default();
    let table = Table::parse(text.as_bytes(), &format).expect("table");
    let data = factor_response(&table, "y", "g", &format).expect("data");
    let s: Vec<GroupSummary> = data
        .levels
        .iter()
        .map(|l| GroupSummary::from_values(&l.offsets))
        .collect();
    (one_way(&s, 0.05, None).expect("anova"), s)
}

fn csv(values: &[(u32, i64)]) -> String {
    let mut text = String::from("y,g\n");
    for (g, v) in values {
        // v/100 written as a decimal string.
        let sign = if *v < 0 { "-" } else { "" };
        let a = v.unsigned_abs();
        text.push_str(&format!("{sign}{}.{:02},L{g}\n", a / 100, a % 100));
    }
    text
}

fn rel(a: f64, b: f64) -> f64 {
    if a == b { 0.0 } else { ((a - b) / b).abs() }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn shifting_by_a_trillion_leaves_the_table_unchanged(
        values in proptest::collection::vec((0u32..3, 0i64..100_000), 9..40)
    ) {
        prop_assume!((0..3).all(|g| values.iter().filter(|(x, _)| *x == g).count() >= 2));
        let (base, _) = anova_of_csv(&csv(&values));
        prop_assume!(base.ss_within > 0.0 && base.ss_between > 0.0);
        // Shift every value by 1e12 in the decimal text itself: 123.45 → 1000000000123.45.
        let shifted: Vec<(u32, i64)> = values.iter().map(|(g, v)| (*g, v + 100_000_000_000_000)).collect();
        let (big, _) = anova_of_csv(&csv(&shifted));
        // 1e-12 relative: the shift is exact in decimal, so only rounding of
        // the small offsets remains (METHODS 6.8, property 5).
        prop_assert!(rel(big.ss_between, base.ss_between) < 1e-12);
        prop_assert!(rel(big.ss_within, base.ss_within) < 1e-12);
        prop_assert!(rel(big.f, base.f) < 1e-12);
        prop_assert!((big.p - base.p).abs() < 1e-12);
    }

    #[test]
    fn scaling_the_data_leaves_f_and_p_unchanged(
        values in proptest::collection::vec((0u32..4, 0i64..100_000), 12..40)
    ) {
        prop_assume!((0..4).all(|g| values.iter().filter(|(x, _)| *x == g).count() >= 2));
        let (base, _) = anova_of_csv(&csv(&values));
        prop_assume!(base.ss_within > 0.0 && base.ss_between > 0.0);
        let times_1000: Vec<(u32, i64)> = values.iter().map(|(g, v)| (*g, v * 1000)).collect();
        let (scaled, _) = anova_of_csv(&csv(&times_1000));
        prop_assert!(rel(scaled.ss_between, base.ss_between * 1e6) < 1e-12);
        prop_assert!(rel(scaled.f, base.f) < 1e-12);
        prop_assert!((scaled.p - base.p).abs() < 1e-12);
    }

    #[test]
    fn with_two_levels_tukey_lsd_and_f_agree(
        values in proptest::collection::vec((0u32..2, 0i64..10_000), 5..30)
    ) {
        prop_assume!((0..2).all(|g| values.iter().filter(|(x, _)| *x == g).count() >= 2));
        let (t, s) = anova_of_csv(&csv(&values));
        prop_assume!(t.ss_within > 0.0);
        let levels: Vec<LevelMean> = s.iter().map(|g| LevelMean { n: g.n, mean: g.mean }).collect();
        let nu = t.df_within as f64;
        let lsd = pairwise(&levels, t.ms_within, nu, 0.05, Method::Lsd);
        let tukey = pairwise(&levels, t.ms_within, nu, 0.05, Method::Tukey);
        // k = 2: F = t², and the ANOVA, LSD and Tukey p-values coincide.
        let tt = lsd.pairs[0].statistic;
        prop_assert!(rel(tt * tt, t.f) < 1e-10);
        prop_assert!((lsd.pairs[0].p_adj - t.p).abs() < 1e-12);
        // The studentized range is held to 1e-8 (its accuracy bar).
        prop_assert!((tukey.pairs[0].p_adj - t.p).abs() < 1e-8);
    }

    #[test]
    fn holm_never_exceeds_bonferroni(
        values in proptest::collection::vec((0u32..5, 0i64..10_000), 15..40)
    ) {
        prop_assume!((0..5).all(|g| values.iter().filter(|(x, _)| *x == g).count() >= 2));
        let (t, s) = anova_of_csv(&csv(&values));
        prop_assume!(t.ss_within > 0.0);
        let levels: Vec<LevelMean> = s.iter().map(|g| LevelMean { n: g.n, mean: g.mean }).collect();
        let nu = t.df_within as f64;
        let holm = pairwise(&levels, t.ms_within, nu, 0.05, Method::Holm);
        let bonf = pairwise(&levels, t.ms_within, nu, 0.05, Method::Bonferroni);
        for (h, b) in holm.pairs.iter().zip(&bonf.pairs) {
            prop_assert!(h.p_adj <= b.p_adj + 1e-15);
            prop_assert!(h.p_adj >= h.p_raw - 1e-15);
        }
    }
}
