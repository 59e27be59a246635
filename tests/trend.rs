//! Polynomial trends on unequally spaced concentrations (linear-extensions
//! specification B.3, B.6): the open P.promelas data (0 to 512, n = 4
//! each) and an invented deletion of one 512 observation, against
//! tests/reference/contrasts_trends.json (statsmodels nested `ols` fits and
//! `C(conc, Poly(scores=…))`; the specification's values checked there).

mod documents;

use documents::{assert_close, build, open, reference_number};
use serde_json::Value;

fn reference() -> Value {
    let path = format!(
        "{}/tests/reference/contrasts_trends.json",
        env!("CARGO_MANIFEST_DIR")
    );
    let all: Value =
        serde_json::from_str(&std::fs::read_to_string(path).expect("reference")).expect("json");
    all["promelas"].clone()
}

/// 1e-9 relative: the reference fits nested least squares in double
/// precision, sheaf weighs level means; both agree to about 1e-12.
fn close(got: &Value, want: &Value, what: &str) {
    assert_close(got, reference_number(want), 1e-9, what);
}

fn trend(file: &str, data: &str, extra: &str) -> Value {
    let doc = format!(
        "# T\n\n```anova\nid: t\ndata: {file}\nmodel: dryweight ~ conc\ntrend: conc\n{extra}```\n"
    );
    let results = build(&doc, &[(file, data.to_string())]).expect("builds");
    results["blocks"][0]["trend"].clone()
}

fn named<'a>(rows: &'a Value, term: &str) -> &'a Value {
    rows.as_array()
        .expect("rows")
        .iter()
        .find(|r| r["term"] == term)
        .unwrap_or_else(|| panic!("no {term}"))
}

#[test]
fn components_and_lack_of_fit_use_the_actual_spacing() {
    let r = reference();
    let t = trend("p.csv", &open("P.promelas.csv"), "");
    for name in ["linear", "quadratic", "cubic"] {
        let (got, want) = (
            named(&t["components"], name),
            &r["trend"]["components"][name],
        );
        for (field, key) in [("ss", "ss"), ("f", "F"), ("p", "p")] {
            close(&got[field], &want[key], &format!("{name} {field}"));
        }
    }
    for (term, key) in [
        ("after linear", "after_linear"),
        ("after quadratic", "after_quadratic"),
    ] {
        let (got, want) = (
            named(&t["lack_of_fit"], term),
            &r["trend"]["lack_of_fit"][key],
        );
        for (field, k) in [("ss", "ss"), ("f", "F"), ("p", "p")] {
            close(&got[field], &want[k], &format!("{term} {field}"));
        }
    }
    close(
        &t["treatment_ss"],
        &r["trend"]["treatment_ss"],
        "treatment SS",
    );
    close(&t["error_ms"], &r["trend"]["pure_error_mse"], "pure error");
    // The degree rule chooses the straight line, fitted with the
    // regression's residual mean square.
    assert_eq!(t["degree"], 1);
    let line = &r["fitted_line"];
    close(
        &t["curve"]["coefficients"][0],
        &line["intercept"],
        "intercept",
    );
    close(&t["curve"]["coefficients"][1], &line["slope"], "slope");
    close(
        &t["curve"]["se"][0],
        &line["se_regression_mse"][0],
        "SE intercept",
    );
    close(
        &t["curve"]["se"][1],
        &line["se_regression_mse"][1],
        "SE slope",
    );
    close(&t["curve"]["ms"], &line["regression_mse"], "regression MS");
    assert_eq!(t["curve"]["df"], 22.0);
}

#[test]
fn with_unequal_replication_the_weighted_components_add_up() {
    let r = reference();
    let u = &r["unequal_replication"];
    let data = std::fs::read_to_string(format!(
        "{}/tests/data/invented/promelas-unequal.csv",
        env!("CARGO_MANIFEST_DIR")
    ))
    .expect("data");
    let t = trend("u.csv", &data, "");
    for (i, name) in ["linear", "quadratic", "cubic"].iter().enumerate() {
        close(
            &named(&t["components"], name)["ss"],
            &u["statsmodels_sequential_ss"][i],
            name,
        );
    }
    close(&t["treatment_ss"], &u["treatment_ss"], "treatment SS");
}

#[test]
fn scores_can_be_given_and_bad_ones_are_refused() {
    let plants = open("PlantGrowth.csv");
    let doc = |trend: &str| {
        format!("# T\n\n```anova\nid: t\ndata: p.csv\nmodel: weight ~ group\n{trend}\n```\n")
    };
    let ok = build(
        &doc("trend: group = ctrl 0, trt1 1, trt2 3"),
        &[("p.csv", plants.clone())],
    )
    .expect("builds");
    let t = &ok["blocks"][0]["trend"];
    assert_eq!(t["scores"][2]["score"], 3.0);
    assert_eq!(t["components"].as_array().map(Vec::len), Some(2));
    let e = build(&doc("trend: group"), &[("p.csv", plants.clone())]).expect_err("names");
    assert!(e.contains("not a number"), "{e}");
    let e = build(
        &doc("trend: group = ctrl 0, trt1 1, trt2 1"),
        &[("p.csv", plants.clone())],
    )
    .expect_err("same");
    assert!(e.contains("same value"), "{e}");
    let e =
        build(&doc("trend: group = ctrl 0, trt1 1"), &[("p.csv", plants)]).expect_err("missing");
    assert!(e.contains("no value for the level `trt2`"), "{e}");
}

/// An invented nutrient series (tests/data/invented/nutrient.csv, the demo's)
/// with a significant quadratic: its maximum and the Fieller interval,
/// against statsmodels `ols` of `y ~ x + I(x**2)` with `cov_params` and the
/// scipy t quantile in the reference.
#[test]
fn a_significant_quadratic_locates_its_maximum_with_a_fieller_interval() {
    let r = reference();
    let want = &r["nutrient_quadratic"];
    let text = std::fs::read_to_string(format!(
        "{}/tests/data/invented/nutrient.csv",
        env!("CARGO_MANIFEST_DIR")
    ))
    .expect("data");
    let doc = "# N\n\n```anova\nid: n\ndata: n.csv\nmodel: fresh_weight_g ~ strength_pct\ntrend: strength_pct\n```\n";
    let results = build(doc, &[("n.csv", text)]).expect("builds");
    let t = &results["blocks"][0]["trend"];
    assert_eq!(t["degree"], 2);
    let o = &t["curve"]["optimum"];
    assert_eq!(o["kind"], "maximum");
    assert_eq!(o["set"], "bounded");
    assert_eq!(o["within_range"], true);
    close(&o["x"], &want["x_star"], "x*");
    close(&o["lower"], &want["fieller_limits"][0], "Fieller lower");
    close(&o["upper"], &want["fieller_limits"][1], "Fieller upper");
    close(&t["curve"]["coefficients"][2], &want["b2"], "b2");
}
