//! Planned contrasts in a mixed model: the oats split plot (open data,
//! Yates 1935) with contrasts among the variety means (whole-plot stratum)
//! and among the nitrogen means (subplot stratum), against
//! tests/reference/mixed_contrasts.py (statsmodels OLS in each stratum,
//! which gives the exact tests that Kenward-Roger reproduces in a balanced
//! split plot).

mod documents;

use documents::{
    assert_close, build, build_report, contrast_named, open, reference_json, reference_number,
};
use serde_json::Value;

fn reference() -> Value {
    reference_json("mixed_contrasts.json")
}

fn oats_block(contrasts: &str, ddf: &str) -> String {
    format!(
        "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\nrandom: B + B:V\n{ddf}compare: none\n{contrasts}```\n"
    )
}

fn contrasts(doc: &str) -> Value {
    let results = build(doc, &[("oats.csv", open("oats.csv"))]).expect("builds");
    results["blocks"][0]["planned_contrasts"].clone()
}

/// 1e-8 relative: the estimates are the same closed forms, the SEs rest on
/// the REML variance components, which converge to about 1e-11 relative
/// (as in tests/mixed_reports.rs).
const TOLERANCE: f64 = 1e-8;

fn matches(got: &Value, want: &Value, what: &str) {
    for field in ["estimate", "se", "t", "df", "p"] {
        assert_close(
            &got[field],
            reference_number(&want[field]),
            TOLERANCE,
            &format!("{what} {field}"),
        );
    }
}

#[test]
fn a_variety_contrast_is_judged_by_the_whole_plots() {
    let want = &reference()["variety"]["Marvellous vs the others"];
    let set = contrasts(&oats_block(
        "contrast: Marvellous vs the others = Marvellous 1, Golden.rain -1/2, Victory -1/2\n",
        "",
    ));
    assert_eq!(set["factor"], "V");
    assert_eq!(set["df_method"], "kenward-roger");
    matches(
        contrast_named(&set, "Marvellous vs the others"),
        want,
        "variety",
    );
    // One contrast: one df, so one critical value (t on 10 df).
    assert!(set["critical_value"].is_number(), "{set}");
}

#[test]
fn nitrogen_contrasts_are_judged_by_the_subplots_and_tested_jointly() {
    let r = reference();
    let doc = oats_block(
        "contrast: nitrogen vs none = 0.2cwt 1/3, 0.4cwt 1/3, 0.6cwt 1/3, 0.0cwt -1\ncontrast: top vs middle = 0.6cwt 1, 0.4cwt -1/2, 0.2cwt -1/2\n",
        "",
    );
    let (html, results) = build_report(&doc, &[("oats.csv", open("oats.csv"))]).expect("builds");
    let set = &results["blocks"][0]["planned_contrasts"];
    assert_eq!(set["factor"], "N");
    for name in ["nitrogen vs none", "top vs middle"] {
        matches(contrast_named(set, name), &r["nitrogen"][name], name);
    }
    let joint = &r["nitrogen_joint"];
    for field in ["f", "df1", "df2", "p"] {
        assert_close(
            &set["joint"][field],
            reference_number(&joint[field]),
            TOLERANCE,
            &format!("joint {field}"),
        );
    }
    // Equal replication: Σ cᵢdᵢ = 0 − 1/6 − 1/6 + 1/3 = 0, so the two are
    // orthogonal in the subplot stratum.
    assert_eq!(set["orthogonal"], true);
    assert!(
        html.contains("SE and df of each contrast from the mixed model (df by Kenward-Roger"),
        "the table says where each contrast's SE and df come from"
    );
}

/// Satterthwaite gives the same exact stratum df in a balanced split plot,
/// and says so in the results file.
#[test]
fn satterthwaite_is_recorded_and_agrees_in_a_balanced_split_plot() {
    let want = &reference()["variety"]["Marvellous vs the others"];
    let set = contrasts(&oats_block(
        "contrast: Marvellous vs the others = Marvellous 1, Golden.rain -1/2, Victory -1/2\n",
        "ddf: satterthwaite\n",
    ));
    assert_eq!(set["df_method"], "satterthwaite");
    matches(
        contrast_named(&set, "Marvellous vs the others"),
        want,
        "variety",
    );
}

/// A fixed-effects block records its pooled error as no df method.
#[test]
fn a_fixed_effects_block_has_no_df_method() {
    let doc = "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ B + V * N\ncompare: none\ncontrast: top vs middle = 0.6cwt 1, 0.4cwt -1/2, 0.2cwt -1/2\n```\n";
    let set = contrasts(doc);
    assert!(set["df_method"].is_null(), "{set}");
    assert!(set["critical_value"].is_number(), "{set}");
}

/// With `subject` (repeated measures, a covariance structure over the
/// weeks) a contrast of two diets is the very linear function the pairwise
/// comparison of those diets tests: the same difference, SE and own df.
/// (The repeated-measures engine's numbers themselves are checked against
/// references in tests/repeated_reports.rs; this checks the wiring.)
#[test]
fn a_repeated_measures_contrast_is_the_pairwise_difference() {
    let path = format!(
        "{}/tests/cases/repeated-measures/weights.csv",
        env!("CARGO_MANIFEST_DIR")
    );
    let data = std::fs::read_to_string(path).expect("lamb weights");
    let doc = "# Lambs\n\n```anova\nid: lambs\ndata: weights.csv\nmodel: weight ~ diet * week\nsubject: animal\ncompare: tukey\ncontrast: barley vs control = barley 1, control -1\n```\n";
    let results = build(doc, &[("weights.csv", data)]).expect("builds");
    let block = &results["blocks"][0];
    let set = &block["planned_contrasts"];
    let contrast = contrast_named(set, "barley vs control");
    let family = block["comparisons"]
        .as_array()
        .expect("families")
        .iter()
        .find(|f| f["term"] == "diet" && f["within"].is_null())
        .expect("the diet family");
    let pair = family["pairs"]
        .as_array()
        .expect("pairs")
        .iter()
        .find(|p| p["a"] == "barley" && p["b"] == "control")
        .expect("barley − control");
    // 1e-12 relative: the pair's difference is taken between the two
    // means, the contrast's as one lβ (rounding differs in the last bits).
    assert_close(
        &contrast["estimate"],
        pair["diff"].as_f64().expect("diff"),
        1e-12,
        "difference",
    );
    assert_close(
        &contrast["se"],
        pair["se"].as_f64().expect("se"),
        1e-12,
        "SE",
    );
    assert_close(
        &contrast["df"],
        pair["df"].as_f64().expect("df"),
        1e-12,
        "df",
    );
    assert!(
        pair["df"].as_f64().is_some_and(|df| df.fract() != 0.0),
        "a df of its own, not a stratum's: {}",
        pair["df"]
    );
}
