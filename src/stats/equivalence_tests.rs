//! The TOST kernel against the specification's F.4 pair (INVENTED data;
//! values from statsmodels `ttost_ind` and scipy's t, copied in F.4 to 12
//! significant digits) and against identities that need no library.

use super::*;

/// F.4 prints 12 significant digits: 1e-10 relative covers that rounding
/// and the t functions' own accuracy.
const TOL: f64 = 1e-10;

fn close(a: f64, b: f64, what: &str) {
    assert!(
        (a - b).abs() <= TOL * b.abs().max(1e-300),
        "{what}: {a} vs {b}"
    );
}

#[test]
fn the_spec_pair_at_three_and_two() {
    // d = 0.916666666667, SE = 0.815032378362, ν = 10 (F.4).
    let (d, se) = (100.65 - 99.733_333_333_333_33, 0.815_032_378_362);
    let t = tost(d, se, 10.0, (-3.0, 3.0), 0.05);
    close(t.t_lower, 4.805_535_056_83, "t_L");
    close(t.t_upper, -2.556_135_668_53, "t_U");
    close(t.p_lower, 0.000_358_819_533_469, "p_L");
    close(t.p, 0.014_280_919_218_3, "p");
    close(t.lower, -0.560_547_832_946, "lower");
    close(t.upper, 2.393_881_166_28, "upper");
    assert!(t.equivalent);
    let t = tost(d, se, 10.0, (-2.0, 2.0), 0.05);
    close(t.p, 0.106_656_170_176, "p at ±2");
    assert!(!t.equivalent);
}

#[test]
fn a_difference_at_a_margin_has_p_one_half() {
    // t_U = 0 exactly, and P(T ≤ 0) = 1/2 for any df (symmetry).
    let t = tost(2.0, 0.7, 12.0, (-2.0, 2.0), 0.05);
    assert_eq!(t.t_upper, 0.0);
    close(t.p, 0.5, "p at the margin");
    assert!(!t.equivalent);
}

#[test]
fn the_decision_is_the_interval_inside_the_margins() {
    // Schuirmann (1987): p_TOST < α exactly when the 1 − 2α interval lies
    // inside (θ_L, θ_U); checked over a grid of differences.
    for i in -40..=40 {
        let d = i as f64 * 0.1;
        let t = tost(d, 0.9, 7.0, (-2.5, 3.0), 0.05);
        let inside = t.lower > -2.5 && t.upper < 3.0;
        assert_eq!(t.equivalent, inside, "d = {d}");
    }
}

#[test]
fn no_spread_declares_nothing() {
    let t = tost(0.1, 0.0, 10.0, (-1.0, 1.0), 0.05);
    assert!(t.p.is_nan() && !t.equivalent);
}

#[test]
fn welch_se_and_df_of_equal_groups_are_the_pooled_ones() {
    // Equal n and variances: SE = sqrt(2s²/n), ν = 2n − 2 (Satterthwaite's
    // formula reduces exactly).
    let (se, df) = welch_se_df((4.0, 6), (4.0, 6));
    close(se, (8.0f64 / 6.0).sqrt(), "SE");
    close(df, 10.0, "df");
}

#[test]
fn bonferroni_applies_to_separate_claims_only() {
    close(comparison_alpha(0.05, 3, true), 0.05 / 3.0, "each");
    close(comparison_alpha(0.05, 3, false), 0.05, "all");
    close(comparison_alpha(0.05, 1, true), 0.05, "one");
}
