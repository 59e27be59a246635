//! Equivalence by two one-sided tests (linear-extensions specification F)
//! on the specification's INVENTED data (tests/data/invented/assay-pair.csv,
//! equivalence-levels.csv), against tests/reference/equivalence.py:
//! statsmodels `ttost_ind` for the pair (pooled and Welch, ±3, ±2,
//! asymmetric, 3 % of the reference mean, ratio limits on ln y), statsmodels
//! OLS `t_test` for each level against the control with the ANOVA's MSE,
//! scipy's t quantiles for the 90 % and Bonferroni intervals; the
//! specification's printed values were checked there at 1e-9.

mod documents;

use documents::{assert_close, build, build_report, invented, reference_json, reference_number};
use serde_json::Value;

fn pair_doc(keys: &str) -> String {
    format!(
        "# Assay\n\n```anova\nid: assay\ndata: assay-pair.csv\nmodel: assay ~ batch\ncontrol: reference\n{keys}```\n"
    )
}

fn pair(keys: &str) -> Result<Value, String> {
    build(
        &pair_doc(keys),
        &[("assay-pair.csv", invented("assay-pair.csv"))],
    )
    .map(|r| r["blocks"][0]["equivalence"].clone())
}

fn levels(keys: &str) -> Result<Value, String> {
    let doc = format!(
        "# Levels\n\n```anova\nid: lv\ndata: levels.csv\nmodel: y ~ level\ncontrol: control\nlevels: control, A, B, C\n{keys}```\n"
    );
    build(&doc, &[("levels.csv", invented("equivalence-levels.csv"))])
        .map(|r| r["blocks"][0]["equivalence"].clone())
}

/// Both sides compute in double precision from one-decimal data (means,
/// pooled variances, one t distribution call each): they agree to about
/// 1e-14; 1e-10 leaves room for the t quantile's and tail's own accuracy
/// (sheaf's t functions are held to 1e-12 against scipy elsewhere).
const TIGHT: f64 = 1e-10;

/// Compares one comparison record with a `tost_record` of the script.
fn same_tost(got: &Value, want: &Value, what: &str) {
    for (g, w) in [
        ("difference", "difference"),
        ("se", "se"),
        ("df", "df"),
        ("t_lower", "t_lower"),
        ("t_upper", "t_upper"),
        ("p_lower", "p_lower"),
        ("p_upper", "p_upper"),
        ("p", "p"),
    ] {
        assert_close(
            &got[g],
            reference_number(&want[w]),
            TIGHT,
            &format!("{what} {g}"),
        );
    }
    assert_close(
        &got["lower"],
        reference_number(&want["ci_90"][0]),
        TIGHT,
        what,
    );
    assert_close(
        &got["upper"],
        reference_number(&want["ci_90"][1]),
        TIGHT,
        what,
    );
    assert_eq!(got["equivalent"], want["equivalent"], "{what}");
}

#[test]
fn the_pair_matches_ttost_ind_for_each_margin() {
    let r = &reference_json("equivalence.json")["pair"];
    for (keys, case) in [
        ("margin: 3\n", "margin_3"),
        ("margin: 2\n", "margin_2"),
        ("margin: -1.5, 2\n", "margin_asymmetric"),
        ("margin: 3\nmethod: welch\n", "margin_3_welch"),
        ("margin: 3%\n", "margin_3_percent"),
    ] {
        let e = pair(keys).unwrap_or_else(|x| panic!("{case}: {x}"));
        let rows = e["comparisons"].as_array().expect("comparisons");
        assert_eq!(rows.len(), 1, "{case}");
        same_tost(&rows[0], &r[case], case);
        assert_eq!(rows[0]["level"], "test");
        assert_eq!(rows[0]["control"], "reference");
        // One comparison: no adjustment, the 90 % interval.
        assert_eq!(e["interval_level"].as_f64(), Some(0.9), "{case}");
    }
    // ±2: the 90 % interval reaches past 2, so not shown equivalent, and the
    // two-sided test (scipy `ttest_ind`, p = 0.287) shows no difference either.
    let e = pair("margin: 2\n").expect("builds");
    assert_eq!(e["comparisons"][0]["equivalent"], false);
    assert_eq!(e["comparisons"][0]["different"], false);
    assert_close(
        &e["comparisons"][0]["p_difference"],
        reference_number(&r["two_sided_p"]),
        TIGHT,
        "two-sided p",
    );
    let percent = pair("margin: 3%\n").expect("builds");
    assert_eq!(percent["margins"]["kind"], "percent");
    assert_close(
        &percent["margins"]["on_analysis_scale"]["upper"],
        reference_number(&r["margin_3_percent"]["margin"]),
        TIGHT,
        "3 % of the reference mean",
    );
}

#[test]
fn ratio_margins_on_the_log_scale_match_ttost_ind_with_log() {
    let want = &reference_json("equivalence.json")["pair"]["ratio_095"];
    for transform in ["log", "log10"] {
        let e = pair(&format!(
            "transform: {transform}\nmargin: ratio 0.95, 1.0526315789473684\n"
        ))
        .unwrap_or_else(|x| panic!("{transform}: {x}"));
        let row = &e["comparisons"][0];
        // The base changes t's scale nowhere: t, p and the ratio are the same.
        for q in ["t_lower", "t_upper", "p_lower", "p_upper", "p"] {
            assert_close(&row[q], reference_number(&want[q]), TIGHT, q);
        }
        assert_close(
            &row["ratio"]["estimate"],
            reference_number(&want["ratio"]),
            TIGHT,
            "ratio",
        );
        assert_close(
            &row["ratio"]["lower"],
            reference_number(&want["ratio_ci_90"][0]),
            TIGHT,
            "ratio lower",
        );
        assert_close(
            &row["ratio"]["upper"],
            reference_number(&want["ratio_ci_90"][1]),
            TIGHT,
            "ratio upper",
        );
        assert_eq!(row["equivalent"], true);
        assert_eq!(e["margins"]["kind"], "ratio");
    }
    // One ratio limit stands for the pair (r, 1/r).
    let one = pair("transform: log\nmargin: ratio 0.95\n").expect("builds");
    assert_close(
        &one["comparisons"][0]["p"],
        reference_number(&want["p"]),
        TIGHT,
        "ratio 0.95 alone",
    );
}

#[test]
fn each_level_against_the_control_matches_the_ols_t_tests() {
    let r = &reference_json("equivalence.json")["against_control"];
    // claim: all: one intersection-union claim, each test at α (90 % CIs).
    let all = levels("margin: 2\nclaim: all\n").expect("builds");
    assert_eq!(all["claim"], "all");
    assert_eq!(all["comparison_alpha"].as_f64(), Some(0.05));
    for row in all["comparisons"].as_array().expect("rows") {
        let level = row["level"].as_str().expect("level");
        let want = &r["levels"][level];
        for q in [
            "difference",
            "se",
            "t_lower",
            "t_upper",
            "p_lower",
            "p_upper",
            "p",
        ] {
            assert_close(
                &row[q],
                reference_number(&want[q]),
                TIGHT,
                &format!("{level} {q}"),
            );
        }
        assert_close(&row["df"], reference_number(&r["df"]), TIGHT, "df");
        assert_close(
            &row["lower"],
            reference_number(&want["ci_90"][0]),
            TIGHT,
            level,
        );
        assert_close(
            &row["upper"],
            reference_number(&want["ci_90"][1]),
            TIGHT,
            level,
        );
        assert_eq!(row["equivalent"], want["equivalent_alone"], "{level}");
    }
    // A alone is equivalent; B and C are not, so the claim for all fails.
    assert_eq!(all["all_equivalent"], false);
    assert_eq!(all["comparisons"][0]["level"], "A");
    assert_eq!(all["comparisons"][0]["equivalent"], true);

    // claim: each (the default): Bonferroni over 3 claims, 1 − 2(0.05/3) intervals.
    let each = levels("margin: 2\n").expect("builds");
    assert_eq!(each["claim"], "each");
    assert_close(&each["comparison_alpha"], 0.05 / 3.0, 1e-15, "α/3");
    for row in each["comparisons"].as_array().expect("rows") {
        let level = row["level"].as_str().expect("level");
        let want = &r["levels"][level];
        assert_close(
            &row["lower"],
            reference_number(&want["ci_bonferroni"][0]),
            TIGHT,
            level,
        );
        assert_close(
            &row["upper"],
            reference_number(&want["ci_bonferroni"][1]),
            TIGHT,
            level,
        );
        assert_close(&row["p"], reference_number(&want["p"]), TIGHT, level);
        assert_eq!(row["equivalent"], want["equivalent_bonferroni"], "{level}");
    }
    // A: equivalent alone but not under Bonferroni (upper limit 2.14 > 2);
    // B: higher than the control; C: neither shown.
    let by = |l: &str| {
        each["comparisons"]
            .as_array()
            .and_then(|a| a.iter().find(|x| x["level"] == l))
            .cloned()
            .expect("row")
    };
    assert_eq!(by("A")["equivalent"], false);
    assert_eq!(by("B")["different"], true);
    assert_eq!(by("C")["different"], false);
    assert_eq!(by("C")["equivalent"], false);
}

#[test]
fn the_welch_version_per_level_matches_ttost_ind_unequal() {
    let r = &reference_json("equivalence.json")["against_control"]["levels"];
    let e = levels("margin: 2\nmethod: welch\nclaim: all\n").expect("builds");
    assert_eq!(e["variance"], "welch");
    for row in e["comparisons"].as_array().expect("rows") {
        let level = row["level"].as_str().expect("level");
        same_tost(row, &r[level]["welch"], level);
    }
}

#[test]
fn the_report_states_the_result_and_replaces_the_standing_caution() {
    let (md, _) = build_report(
        &pair_doc("margin: 3\nplot: equivalence\n").replace(
            "```\n",
            "```\n\nThe test batch: {{ assay.equivalence.statement }}.\n",
        ),
        &[("assay-pair.csv", invented("assay-pair.csv"))],
    )
    .expect("builds");
    assert!(
        md.contains("test was equivalent to reference within ±3 (difference 0.92, 90% CI −0.56 to 2.39; TOST p = 0.014)"),
        "{md}"
    );
    assert!(md.contains("Why 90%"), "{md}");
    assert!(md.contains("equivalent within ±3"), "{md}");
    assert!(!md.contains("equivalence needs its own test"), "{md}");
    assert!(md.contains("must be justified"), "{md}");
}

#[test]
fn bad_margins_are_refused_with_the_place_and_a_hint() {
    for (keys, message) in [
        ("margin: 0\n", "a single margin must be positive"),
        ("margin: -2\n", "a single margin must be positive"),
        ("margin: 2, 3\n", "the lower margin must be negative"),
        ("margin: -2, -1\n", "the upper margin must be positive"),
        ("margin: 1, 2, 3\n", "one or two numbers"),
        ("margin: two\n", "is not a number"),
        (
            "margin: ratio 0.8, 1.25\n",
            "ratio margins need the analysis on the log scale",
        ),
        ("transform: log\nmargin: ratio 1.1, 1.25\n", "not below 1"),
        ("transform: log\nmargin: 2\n", "must be ratio limits"),
        ("claim: all\n", "`claim` applies only"),
        ("margin: 2\nmethod: ranks\n", "ranks are not offered"),
        ("plot: equivalence\n", "`plot: equivalence` draws"),
    ] {
        let err = pair(keys).expect_err(keys);
        assert!(err.contains(message), "{keys}: {err}");
        assert!(
            err.contains("hint") || err.contains("help"),
            "{keys}: {err}"
        );
    }
    // The column points at the offending number.
    let err = pair("margin: -1.5, -2\n").expect_err("wrong sign");
    assert!(err.contains(":8:15"), "{err}");
    // `control` is required.
    let doc = "# A\n\n```anova\ndata: a.csv\nmodel: assay ~ batch\nmargin: 2\n```\n";
    let err = build(doc, &[("a.csv", invented("assay-pair.csv"))]).expect_err("no control");
    assert!(err.contains("reference level"), "{err}");
}
