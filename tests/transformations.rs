//! Response transformations (linear-extensions specification C) on the open
//! P.promelas data (dry weight by concentration, 4 replicates), against
//! tests/reference/transformations.py (scipy `f_oneway` and `gmean`,
//! statsmodels OLS on ln y, scipy `tukey_hsd` on the logs, a nested-quadrature
//! Dunnett critical value, the Box-Cox profile of the one-way model solved
//! with scipy `brentq` and confirmed with mpmath; the specification's values
//! checked there at 1e-9).

mod documents;

use documents::{assert_close, build, open, reference_number};
use serde_json::Value;

fn reference() -> Value {
    let path = format!(
        "{}/tests/reference/transformations.json",
        env!("CARGO_MANIFEST_DIR")
    );
    serde_json::from_str(&std::fs::read_to_string(path).expect("reference")).expect("json")
}

fn fry(keys: &str) -> Result<Value, String> {
    let doc = format!(
        "# Fry\n\n```anova\nid: fry\ndata: P.promelas.csv\nmodel: dryweight ~ conc\n{keys}```\n"
    );
    build(&doc, &[("P.promelas.csv", open("P.promelas.csv"))])
        .map(|results| results["blocks"][0].clone())
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("list")
        .iter()
        .map(reference_number)
        .collect()
}

/// Both sides compute in double precision from four-decimal data (sums of
/// logs, one least-squares fit, exponentials): they agree to about 1e-13;
/// 1e-10 leaves room for the t and F quantiles' own accuracy.
const TIGHT: f64 = 1e-10;

#[test]
fn the_log_scale_anova_matches_scipy_and_the_base_does_not_matter() {
    let r = reference();
    for transform in ["log", "log10"] {
        let b = fry(&format!("transform: {transform}\n")).expect("builds");
        let term = &b["anova"]["terms"][0];
        assert_close(
            &term["f"],
            reference_number(&r["anova_log"]["F"]),
            TIGHT,
            "F",
        );
        assert_close(
            &term["p"],
            reference_number(&r["anova_log"]["p"]),
            TIGHT,
            "p",
        );
        if transform == "log" {
            let mse = reference_number(&r["anova_log"]["mse"]);
            assert_close(&b["anova"]["residual"]["ms"], mse, TIGHT, "MSE");
        }
        // Geometric means and their pooled intervals: identical for either
        // base (spec C.1 property).
        let m = &r["means"];
        let (gm, lo, hi, am) = (
            numbers(&m["geometric_means"]),
            numbers(&m["geometric_ci_lower"]),
            numbers(&m["geometric_ci_upper"]),
            numbers(&m["arithmetic_means"]),
        );
        let groups = b["groups"].as_array().expect("groups");
        for (i, g) in groups.iter().enumerate() {
            let what = format!("{transform} level {}", g["level"]);
            assert_close(&g["back"]["mean"], gm[i], TIGHT, &what);
            assert_close(&g["back"]["lower"], lo[i], TIGHT, &what);
            assert_close(&g["back"]["upper"], hi[i], TIGHT, &what);
            assert_close(&g["arithmetic_mean"], am[i], TIGHT, &what);
        }
        assert_eq!(b["transform"]["back_transformed"], "geometric mean");
        assert!(b["anova"]["cv_percent"].is_null(), "no CV on a log scale");
    }
}

#[test]
fn ratios_to_the_control_match_with_dunnett_intervals() {
    let r = reference();
    let b = fry("transform: log\ncompare: dunnett\ncontrol: 0\n").expect("builds");
    let m = &r["means"];
    let (ratio, lo, hi, pct) = (
        numbers(&m["ratio_to_control"]),
        numbers(&m["ratio_ci_dunnett_lower"]),
        numbers(&m["ratio_ci_dunnett_upper"]),
        numbers(&m["percent_change"]),
    );
    let pairs = b["comparisons"][0]["pairs"].as_array().expect("pairs");
    assert_eq!(pairs.len(), 5);
    // The Dunnett critical value is sheaf's own quadrature against the
    // reference's nested scipy quadrature (both to about 1e-11 in d); the
    // limits carry it through exp(d ± c·SE).
    let dunnett = 1e-9;
    for (i, p) in pairs.iter().enumerate() {
        assert_eq!(p["b"], "0", "the control is the second of each pair");
        let what = format!("{} / 0", p["a"]);
        // 100 (r − 1) magnifies r's relative error by r/(r − 1), 19 here.
        assert_close(&p["ratio"]["estimate"], ratio[i], TIGHT, &what);
        assert_close(&p["ratio"]["percent_change"], pct[i], 1e-9, &what);
        assert_close(&p["ratio"]["lower"], lo[i], dunnett, &what);
        assert_close(&p["ratio"]["upper"], hi[i], dunnett, &what);
    }
    // The 256 µg/L upper limit is 0.99990: the table must not print 1.000.
    let upper = pairs[3]["ratio"]["upper"].as_f64().expect("upper");
    assert!(upper < 1.0);
}

#[test]
fn ratios_between_all_pairs_match_tukey_on_the_logs() {
    let r = reference();
    let b = fry("transform: log\ncompare: tukey\n").expect("builds");
    let pairs = b["comparisons"][0]["pairs"].as_array().expect("pairs");
    for want in r["pairwise_ratios"].as_array().expect("pairs") {
        let label = want["pair"].as_str().expect("label");
        let (x, y) = label.split_once(" / ").expect("x / y");
        // sheaf's pair a − b is the ratio a / b; the reference may list it
        // the other way round.
        let (p, inverted) = pairs
            .iter()
            .find_map(|p| match (p["a"].as_str(), p["b"].as_str()) {
                (Some(a), Some(b)) if a == x && b == y => Some((p, false)),
                (Some(a), Some(b)) if a == y && b == x => Some((p, true)),
                _ => None,
            })
            .unwrap_or_else(|| panic!("no pair {label}"));
        let ratio = reference_number(&want["ratio"]);
        let ci = numbers(&want["ci_tukey"]);
        let (estimate, lower, upper) = match inverted {
            false => (ratio, ci[0], ci[1]),
            true => (1.0 / ratio, 1.0 / ci[1], 1.0 / ci[0]),
        };
        // Tukey limits carry the studentized-range quantile, sheaf's own
        // against scipy's (both to about 1e-10 relative).
        assert_close(&p["ratio"]["estimate"], estimate, TIGHT, label);
        assert_close(&p["ratio"]["lower"], lower, 1e-8, label);
        assert_close(&p["ratio"]["upper"], upper, 1e-8, label);
    }
}

#[test]
fn box_cox_profiles_the_blocks_own_model() {
    let r = reference();
    let b = fry("transform: boxcox\n").expect("builds");
    let bc = &b["transform"]["box_cox"];
    let one_way = &r["box_cox"]["one_way_model"];
    // The reference's λ̂ is the root of dℓ/dλ confirmed in 50-digit mpmath;
    // sheaf solves the same equation with Brent to 1e-13.
    assert_close(
        &bc["lambda"],
        reference_number(&one_way["mpmath_lambda"]),
        1e-10,
        "λ",
    );
    let interval = numbers(&one_way["interval"]);
    assert_close(&bc["lower"], interval[0], 1e-10, "lower");
    assert_close(&bc["upper"], interval[1], 1e-10, "upper");
    assert_close(
        &bc["log_likelihood"],
        reference_number(&one_way["llf_at_lambda"]),
        TIGHT,
        "ℓ(λ̂)",
    );
    for (lambda, key) in [(0.0, "llf_at_0"), (0.5, "llf_at_0_5"), (1.0, "llf_at_1")] {
        let point = bc["profile"]
            .as_array()
            .expect("profile")
            .iter()
            .find(|p| p["lambda"].as_f64() == Some(lambda))
            .expect("conventional power");
        assert_close(
            &point["log_likelihood"],
            reference_number(&one_way[key]),
            TIGHT,
            key,
        );
    }
    assert_eq!(bc["suggestion"].as_f64(), Some(2.0));
    assert_eq!(bc["no_transformation_indicated"], false);
    // The pooled (intercept-only) profile that libraries compute is a
    // different answer (spec C.4): sheaf must not give it.
    let pooled = reference_number(&r["box_cox"]["pooled_intercept_only"]["mpmath_lambda"]);
    let got = bc["lambda"].as_f64().expect("λ");
    assert!((got - pooled).abs() > 0.1, "{got} is the pooled λ");
    // Nothing is applied: the ANOVA is on the data's scale.
    assert!(b["transform"]["name"].is_null());
    assert!(b["groups"][0].get("back").is_none());
}

#[test]
fn values_outside_the_domain_name_their_lines_and_the_offset() {
    // P.promelas has no zero; a copy with two zeros and the log.
    let text = open("P.promelas.csv")
        .replacen("0,0.711", "0,0", 1)
        .replacen("512,0.358", "512,0.000", 1);
    let doc = "# F\n\n```anova\nid: f\ndata: p.csv\nmodel: dryweight ~ conc\ntransform: log\n```\n";
    let e = build(doc, &[("p.csv", text.clone())]).expect_err("refused");
    assert!(e.contains("`transform: log` needs values above 0"), "{e}");
    assert!(e.contains("on line 2") && e.contains("on line 22"), "{e}");
    assert!(e.contains("offset: 1"), "{e}");
    // With a declared offset the same data are analysed, and the offset is
    // recorded.
    let offset = doc.replace("transform: log\n", "transform: log\noffset: 1\n");
    let results = build(&offset, &[("p.csv", text)]).expect("builds");
    let t = &results["blocks"][0]["transform"];
    assert_eq!(t["offset"].as_f64(), Some(1.0));
    assert_eq!(t["back_transformed"], "shifted geometric mean");
    assert!(
        results["blocks"][0]["comparisons"][0]["pairs"][0]
            .get("ratio")
            .is_none()
    );
}

#[test]
fn proportions_say_when_the_column_holds_percentages() {
    let text = "dose,germinated\na,45\na,50\na,55\nb,70\nb,75\nb,72\n".to_string();
    let doc =
        "# G\n\n```anova\nid: g\ndata: g.csv\nmodel: germinated ~ dose\ntransform: logit\n```\n";
    let e = build(doc, &[("g.csv", text.clone())]).expect_err("refused");
    assert!(e.contains("transform: logit percent"), "{e}");
    let percent = doc.replace("logit", "logit percent");
    let results = build(&percent, &[("g.csv", text)]).expect("builds");
    let g = &results["blocks"][0]["groups"];
    // Back-transformed proportions come back as percentages: the level
    // with 45, 50, 55 % has a mean logit near 0, so about 50 %.
    let a = g
        .as_array()
        .expect("groups")
        .iter()
        .find(|x| x["level"] == "a")
        .expect("a");
    let back = a["back"]["mean"].as_f64().expect("mean");
    assert!((back - 50.0).abs() < 0.5, "{back}");
}

#[test]
fn transformations_refuse_what_they_cannot_combine_with() {
    let cases = [
        ("transform: log\nmethod: ranks\n", "robust or rank method"),
        ("transform: cube\n", "does not know `cube`"),
        ("transform: log percent\n", "is not understood"),
        ("offset: 1\n", "`offset` needs `transform"),
        ("transform: logit\noffset: 1\n", "does not apply"),
    ];
    for (keys, message) in cases {
        let e = fry(keys).expect_err(keys);
        assert!(e.contains(message), "{keys}: {e}");
    }
}

#[test]
fn box_cox_on_a_blocked_factorial_uses_the_models_residuals() {
    // tests/reference/box_cox_factorial.py: statsmodels OLS residuals of
    // yield ~ block + N + P + K at each λ, the maximum by scipy `brentq` on
    // dℓ/dλ. The additive model does not fit the cell means, so this checks
    // the least-squares route, not the one-way shortcut.
    let path = format!(
        "{}/tests/reference/box_cox_factorial.json",
        env!("CARGO_MANIFEST_DIR")
    );
    let r: Value =
        serde_json::from_str(&std::fs::read_to_string(path).expect("ref")).expect("json");
    let doc = "# N\n\n```anova\nid: npk\ndata: npk.csv\nmodel: yield ~ block + N + P + K\nblock: block\ntransform: boxcox\n```\n";
    let results = build(doc, &[("npk.csv", open("npk.csv"))]).expect("builds");
    let bc = &results["blocks"][0]["transform"]["box_cox"];
    // λ̂ against the 40-digit mpmath maximum (statsmodels' own root is
    // 1.5e-9 away from it): sheaf's is 4.5e-10 away, 3e-11 absolute on
    // λ̂ = 0.058, where the profile is flat (ℓ changes by 1e-21).
    assert_close(
        &bc["lambda"],
        reference_number(&r["mpmath_lambda"]),
        1e-9,
        "λ",
    );
    assert_close(
        &bc["log_likelihood"],
        reference_number(&r["log_likelihood"]),
        TIGHT,
        "ℓ",
    );
    let interval = numbers(&r["interval"]);
    assert_close(&bc["lower"], interval[0], 1e-9, "lower");
    assert_close(&bc["upper"], interval[1], 1e-9, "upper");
    for point in bc["profile"].as_array().expect("profile") {
        let lambda = point["lambda"].as_f64().expect("λ");
        let key = format!("{lambda:.1}");
        assert_close(
            &point["log_likelihood"],
            reference_number(&r["profile"][&key]),
            TIGHT,
            &key,
        );
    }
    assert_eq!(bc["no_transformation_indicated"], true);
}
