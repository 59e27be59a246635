//! Covariates in mixed models, against tests/reference/mixed_covariates.py
//! (a dense REML fitter with Kenward-Roger and Satterthwaite df written
//! from the likelihood, cross-checked there with statsmodels MixedLM to
//! 1e-9): an invented split plot with a stand count measured on every
//! subplot and one subplot missing, and invented repeated weighings with
//! a baseline weight per animal and three weighings missing.

mod documents;

use documents::{
    assert_close, build, build_report, invented, reference_json, reference_number, term,
};
use serde_json::Value;

/// 1e-9 relative: both fitters stop at REML gradients near 1e-13 and every
/// number here agreed within 1e-11 when this test was written; the margin
/// covers other platforms' floating-point libraries (the reference itself
/// agrees with statsmodels MixedLM within 1e-9).
const TOLERANCE: f64 = 1e-9;

const BEANS: &str =
    "model: yield ~ irrigation * coating\ncovariate: stand\nrandom: block + block:irrigation\n";
const PENS: &str = "model: weight ~ diet * week\ncovariate: initial\nsubject: animal\n";

fn document(file: &str, keys: &str, ddf: &str, extra: &str) -> String {
    format!("# Trial\n\n```anova\nid: trial\ndata: {file}\n{keys}{ddf}compare: tukey\n{extra}```\n")
}

fn results(file: &str, keys: &str, ddf: &str, extra: &str) -> Value {
    let doc = document(file, keys, ddf, extra);
    let mut block = build(&doc, &[(file, invented(file))]).expect("builds");
    block["blocks"][0].take()
}

fn family<'a>(block: &'a Value, name: &str) -> &'a Value {
    block["comparisons"]
        .as_array()
        .expect("comparisons")
        .iter()
        .find(|f| f["term"] == name && f["within"].is_null())
        .unwrap_or_else(|| panic!("no family {name}"))
}

/// Every number the reference gives for one case and df method.
fn compare(block: &Value, want: &Value, case: &Value, method: &str) {
    for (name, t) in want["tests"].as_object().expect("tests") {
        let got = term(block, name);
        assert_eq!(got["df"], t["df1"], "{method} {name} df1");
        for (field, key) in [("f", "F"), ("df_den", "df2"), ("p", "p")] {
            let what = format!("{method} {name} {field}");
            assert_close(&got[field], reference_number(&t[key]), TOLERANCE, &what);
        }
    }
    let covariate = &block["covariates"]["covariates"][0];
    assert_eq!(covariate["name"], case["covariate"]);
    assert_close(
        &covariate["adjusted_to"],
        reference_number(&case["covariate_mean"]),
        1e-14,
        "covariate mean",
    );
    let slope = &want["slope"];
    for (field, key) in [
        ("slope", "estimate"),
        ("slope_se", "se"),
        ("slope_df", "df"),
    ] {
        let what = format!("{method} slope {field}");
        assert_close(
            &covariate[field],
            reference_number(&slope[key]),
            TOLERANCE,
            &what,
        );
    }
    for (factor, means) in want["emm"].as_object().expect("emm") {
        let got = &family(block, factor)["means"];
        for m in means.as_array().expect("means") {
            let level = got
                .as_array()
                .expect("means")
                .iter()
                .find(|g| g["level"] == m["level"])
                .expect("level");
            for (field, key) in [("mean", "estimate"), ("se", "se"), ("df", "df")] {
                let what = format!("{method} {factor} {} {field}", m["level"]);
                assert_close(&level[field], reference_number(&m[key]), TOLERANCE, &what);
            }
        }
    }
    for (factor, pairs) in want["pairwise"].as_object().expect("pairwise") {
        let got = family(block, factor)["pairs"].as_array().expect("pairs");
        for p in pairs.as_array().expect("pairs") {
            // sheaf reports a − b; the reference first − second.
            let (pair, sign) = got
                .iter()
                .find_map(|g| match (&g["a"], &g["b"]) {
                    (a, b) if *a == p["first"] && *b == p["second"] => Some((g, 1.0)),
                    (a, b) if *a == p["second"] && *b == p["first"] => Some((g, -1.0)),
                    _ => None,
                })
                .expect("pair");
            let what = format!("{method} {} − {}", p["first"], p["second"]);
            let diff = sign * pair["diff"].as_f64().expect("diff");
            assert_close(
                &diff.into(),
                reference_number(&p["estimate"]),
                TOLERANCE,
                &what,
            );
            assert_close(&pair["se"], reference_number(&p["se"]), TOLERANCE, &what);
            assert_close(&pair["df"], reference_number(&p["df"]), TOLERANCE, &what);
        }
    }
    let slopes = &block["covariates"]["equal_slopes"];
    let test = &case["equal_slopes"]["test"][method];
    assert_eq!(
        slopes["df1"].as_f64(),
        test["df1"].as_f64(),
        "{method} slopes df1"
    );
    for (field, key) in [("f", "F"), ("df2", "df2"), ("p", "p")] {
        let what = format!("{method} equal slopes {field}");
        assert_close(
            &slopes[field],
            reference_number(&test[key]),
            TOLERANCE,
            &what,
        );
    }
}

#[test]
fn a_split_plot_with_a_stand_count_matches_the_reference_by_kenward_roger() {
    let r = reference_json("mixed_covariates.json");
    let case = &r["cases"]["beans_split"];
    let block = results("beans-split.csv", BEANS, "", "");
    compare(&block, &case["kenward_roger"], case, "kenward_roger");
    // A covariate leaves no classical stratum table.
    assert!(block.get("strata").is_none_or(Value::is_null), "{block}");
}

#[test]
fn a_split_plot_with_a_stand_count_matches_the_reference_by_satterthwaite() {
    let r = reference_json("mixed_covariates.json");
    let case = &r["cases"]["beans_split"];
    let block = results("beans-split.csv", BEANS, "ddf: satterthwaite\n", "");
    compare(&block, &case["satterthwaite"], case, "satterthwaite");
}

#[test]
fn repeated_weighings_with_a_baseline_weight_match_the_reference() {
    let r = reference_json("mixed_covariates.json");
    let case = &r["cases"]["pens_repeated"];
    for (ddf, method) in [
        ("", "kenward_roger"),
        ("ddf: satterthwaite\n", "satterthwaite"),
    ] {
        let block = results("pens-repeated.csv", PENS, ddf, "");
        compare(&block, &case[method], case, method);
    }
}

/// At α = 0.15 the split plot's slopes test (p = 0.111) rejects, and each
/// cell's own slope comes from the refitted model with its own SE and df.
#[test]
fn differing_slopes_give_each_cell_its_own_slope_from_the_mixed_model() {
    let r = reference_json("mixed_covariates.json");
    let case = &r["cases"]["beans_split"];
    let doc = document("beans-split.csv", BEANS, "", "alpha: 0.15\n");
    let (report, results) =
        build_report(&doc, &[("beans-split.csv", invented("beans-split.csv"))]).expect("builds");
    let separate = &results["blocks"][0]["covariates"]["separate_slopes"];
    assert!(
        separate["ms"].is_null() && separate["df"].is_null(),
        "{separate}"
    );
    let groups = separate["groups"].as_array().expect("groups");
    let want = case["equal_slopes"]["group_slopes"]
        .as_array()
        .expect("slopes");
    assert_eq!(groups.len(), want.len());
    for w in want {
        let label = format!(
            "{} × {}",
            w["irrigation"].as_str().expect("irrigation"),
            w["coating"].as_str().expect("coating")
        );
        let g = groups
            .iter()
            .find(|g| g["level"] == label.as_str())
            .unwrap_or_else(|| panic!("no slope for {label}"));
        assert_close(
            &g["slope"],
            reference_number(&w["estimate"]),
            TOLERANCE,
            &label,
        );
        assert_close(&g["se"], reference_number(&w["se_kr"]), TOLERANCE, &label);
        assert_close(&g["df"], reference_number(&w["df_kr"]), TOLERANCE, &label);
    }
    // The differences between lines carry their own df, and the report
    // says where they come from.
    let first = &separate["differences"][0];
    assert!(first["df"].as_f64().is_some_and(|df| df > 0.0), "{first}");
    assert!(
        report.contains("from the mixed model with one slope per group"),
        "{report}"
    );
    assert!(report.contains("No classical stratum table: the model adjusts for `stand`"));
    // Under the tests of the fixed effects: the slope with its own df (the
    // reference's 6.6304, 0.61629, 17.255 as printed), and the slopes test.
    assert!(
        report.contains("one common slope: 6.630 per unit (SE 0.616, 17.26 df)"),
        "{report}"
    );
    assert!(report.contains("Test of equal slopes (the covariate's slope the same in every level of irrigation × coating): F(8, 8.48) = 2.41, p = 0.111."));
}

#[test]
fn the_univariate_repeated_measures_analysis_declines_a_covariate() {
    let block = results("pens-repeated.csv", PENS, "", "");
    let warnings = block["warnings"].to_string();
    assert!(
        warnings.contains("no version that adjusts for a covariate such as `initial`"),
        "{warnings}"
    );
}

#[test]
fn a_covariate_cannot_also_name_the_units() {
    let doc = document(
        "beans-split.csv",
        "model: yield ~ irrigation * coating\ncovariate: block\nrandom: block + block:irrigation\n",
        "",
        "",
    );
    let err =
        build(&doc, &[("beans-split.csv", invented("beans-split.csv"))]).expect_err("refused");
    assert!(
        err.contains("both as a covariate and in a random term"),
        "{err}"
    );
}

/// Compound symmetry is parameterised as a subject variance and a residual
/// variance, the subject variance allowed below zero (mixed-models
/// specification 2.3, item 1); where it is positive, as here (1.19), the
/// model is the random-intercept one, so the covariance-structure route
/// reproduces the same reference: the structured fit and its equal-slopes
/// refit with the structure, under Kenward-Roger.
#[test]
fn compound_symmetry_with_a_baseline_weight_matches_the_random_intercept_reference() {
    let r = reference_json("mixed_covariates.json");
    let case = &r["cases"]["pens_repeated"];
    let keys = format!("{PENS}covariance: compound-symmetry\n");
    let block = results("pens-repeated.csv", &keys, "", "");
    compare(&block, &case["kenward_roger"], case, "kenward_roger");
}

/// Where along the observed stand counts two cells' lines differ at
/// α = 0.15, each value with its own Kenward-Roger df, against
/// tests/reference/mixed_regions.py (a 2001-point grid and Brent's root
/// finder on the same refit; its closest approach to the critical value
/// without crossing is 0.14, so no crossing hides between grid points).
/// Boundaries to 1e-8 relative: both sides refine a root of a smooth
/// function to about 1e-12 of the range, and the function's inputs agree
/// to 1e-11 (above).
#[test]
fn where_two_lines_differ_follows_each_values_own_df() {
    let want = reference_json("mixed_regions.json");
    let doc = document("beans-split.csv", BEANS, "", "alpha: 0.15\n");
    let results = build(&doc, &[("beans-split.csv", invented("beans-split.csv"))]).expect("builds");
    let regions = results["blocks"][0]["covariates"]["separate_slopes"]["regions"]
        .as_array()
        .expect("regions")
        .clone();
    let pairs = want["pairs"].as_array().expect("pairs");
    assert_eq!(regions.len(), pairs.len());
    let numbers = |v: &Value| -> Vec<f64> {
        let flat = v.as_array().expect("list").iter().flat_map(|x| match x {
            Value::Array(pair) => pair.clone(),
            other => vec![other.clone()],
        });
        flat.map(|x| x.as_f64().expect("number")).collect()
    };
    for w in pairs {
        let got = regions
            .iter()
            .find(|r| r["a"] == w["a"] && r["b"] == w["b"])
            .unwrap_or_else(|| panic!("no region for {} and {}", w["a"], w["b"]));
        for field in ["boundaries", "significant"] {
            let (g, r) = (numbers(&got[field]), numbers(&w[field]));
            assert_eq!(
                g.len(),
                r.len(),
                "{field} of {} − {}: {g:?} vs {r:?}",
                w["b"],
                w["a"]
            );
            for (x, y) in g.iter().zip(&r) {
                assert_close(
                    &(*x).into(),
                    *y,
                    1e-8,
                    &format!("{field} {} − {}", w["b"], w["a"]),
                );
            }
        }
    }
}
