//! Analysis of covariance (linear-extensions specification A.2-A.9) on the
//! open anorexia data, `Postwt ~ Treat` with `covariate: Prewt`, against
//! tests/reference/ancova.py (statsmodels OLS, `anova_lm` typ 1/2/3 and
//! `get_prediction`, pingouin's `ancova`, scipy's studentized range; the
//! specification's values checked there at 1e-9).

mod documents;

use documents::{assert_close, build, open, term};
use serde_json::Value;

fn reference() -> Value {
    let path = format!("{}/tests/reference/ancova.json", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(path).expect("reference")).expect("json")
}

fn anorexia(extra: &str) -> Value {
    let doc = format!(
        "# Weight\n\n```anova\nid: ano\ndata: anorexia.csv\nmodel: Postwt ~ Treat\ncovariate: Prewt\ncompare: tukey\n{extra}```\n"
    );
    let results = build(&doc, &[("anorexia.csv", open("anorexia.csv"))]).expect("builds");
    results["blocks"][0].clone()
}

/// The reference's computed value at `path` (an object with `value`, or a
/// number).
fn want(r: &Value, path: &[&str]) -> f64 {
    let mut v = r;
    for p in path {
        v = match p.parse::<usize>() {
            Ok(i) => &v[i],
            Err(_) => &v[*p],
        };
    }
    v.get("value")
        .unwrap_or(v)
        .as_f64()
        .unwrap_or_else(|| panic!("{path:?}"))
}

/// Agreement to 1e-9 relative: the reference and sheaf both solve the
/// least squares by orthogonal factorisations in double precision on data
/// with one decimal, so they agree to about 1e-12; the issue asks for 1e-9.
fn close(got: &Value, want: f64, what: &str) {
    assert_close(got, want, 1e-9, what);
}

#[test]
fn the_ancova_table_matches_type_ii_and_type_iii() {
    let r = reference();
    for ss in ["", "ss: 3\n"] {
        let block = anorexia(ss);
        for name in ["Treat", "Prewt"] {
            let t = term(&block, name);
            for (field, key) in [("ss", "ss"), ("f", "F"), ("p", "p")] {
                close(
                    &t[field],
                    want(&r, &["tables", "type2", name, key]),
                    &format!("{ss}{name} {field}"),
                );
            }
        }
        close(
            &block["anova"]["residual"]["ss"],
            want(&r, &["common_slope", "sse"]),
            "SSE",
        );
        assert_eq!(block["anova"]["residual"]["df"], 68);
        // Partial η² as pingouin prints it.
        let eta = want(&r, &["tables", "pingouin", "Treat", "partial_eta_sq"]);
        close(
            &term(&block, "Treat")["effect"]["partial_eta_sq"],
            eta,
            "partial eta",
        );
    }
}

#[test]
fn type_i_follows_the_written_order() {
    let r = reference();
    // Covariate first (added first when the model does not name it).
    let block = anorexia("ss: 1\n");
    close(
        &term(&block, "Prewt")["ss"],
        want(&r, &["tables", "type1_covariate_first", "Prewt", "ss"]),
        "Prewt first",
    );
    close(
        &term(&block, "Treat")["ss"],
        want(&r, &["tables", "type1_covariate_first", "Treat", "ss"]),
        "Treat after",
    );
    // Treatment first when the model writes it so.
    let doc = "# W\n\n```anova\nid: ano\ndata: anorexia.csv\nmodel: Postwt ~ Treat + Prewt\ncovariate: Prewt\nss: 1\n```\n";
    let results = build(doc, &[("anorexia.csv", open("anorexia.csv"))]).expect("builds");
    let block = &results["blocks"][0];
    close(
        &term(block, "Treat")["ss"],
        want(&r, &["tables", "type1_treat_first", "Treat", "ss"]),
        "Treat first",
    );
}

#[test]
fn adjusted_means_slope_and_pairs_match_the_reference() {
    let r = reference();
    let block = anorexia("");
    let cov = &block["covariates"]["covariates"][0];
    close(
        &cov["adjusted_to"],
        want(&r, &["adjusted_means", "at_covariate"]),
        "x̄",
    );
    close(&cov["slope"], want(&r, &["common_slope", "slope"]), "slope");
    close(
        &cov["slope_se"],
        want(&r, &["common_slope", "slope_se"]),
        "slope SE",
    );
    let family = &block["comparisons"][0];
    let levels = ["Cont", "CBT", "FT"];
    let means = family["means"].as_array().expect("means");
    for (i, level) in levels.iter().enumerate() {
        let m = means.iter().find(|m| m["level"] == *level).expect("level");
        close(
            &m["mean"],
            want(&r, &["adjusted_means", "means", &i.to_string()]),
            level,
        );
        close(
            &m["se"],
            want(&r, &["adjusted_means", "se", &i.to_string()]),
            level,
        );
        close(
            &m["ci_lower"],
            want(&r, &["adjusted_means", "ci_lower", &i.to_string()]),
            level,
        );
        close(
            &m["ci_upper"],
            want(&r, &["adjusted_means", "ci_upper", &i.to_string()]),
            level,
        );
        let g = &cov["groups"][i];
        close(
            &g["mean"],
            want(&r, &["descriptives", "covariate_means", &i.to_string()]),
            level,
        );
        let unadjusted = &block["covariates"]["unadjusted"][0]["means"][level];
        close(
            unadjusted,
            want(&r, &["descriptives", "unadjusted_means", &i.to_string()]),
            level,
        );
    }
    // Pairs in the reference's order Cont−CBT, Cont−FT, CBT−FT; sheaf
    // prints later minus earlier, so the differences change sign.
    let pairs = family["pairs"].as_array().expect("pairs");
    for (k, (a, b)) in [("Cont", "CBT"), ("Cont", "FT"), ("CBT", "FT")]
        .iter()
        .enumerate()
    {
        let p = pairs
            .iter()
            .find(|p| (p["a"] == *a && p["b"] == *b) || (p["a"] == *b && p["b"] == *a))
            .expect("pair");
        let d = p["diff"].as_f64().expect("diff").abs();
        let k = k.to_string();
        close(
            &Value::from(d),
            want(&r, &["differences", "d", &k]).abs(),
            "difference",
        );
        close(
            &p["se"],
            want(&r, &["differences", "se", &k]),
            "SE of difference",
        );
        close(
            &p["p_adj"],
            want(&r, &["differences", "p_tukey", &k]),
            "Tukey-type p",
        );
    }
    for (level, letters) in [("FT", "a"), ("CBT", "ab"), ("Cont", "b")] {
        assert_eq!(family["letters"][level], letters, "{level}");
    }
}

#[test]
fn the_slopes_test_fails_here_and_the_separate_lines_are_reported() {
    let r = reference();
    let block = anorexia("");
    let c = &block["covariates"];
    close(
        &c["equal_slopes"]["f"],
        want(&r, &["slopes_test", "F"]),
        "slopes F",
    );
    close(
        &c["equal_slopes"]["p"],
        want(&r, &["slopes_test", "p"]),
        "slopes p",
    );
    assert_eq!(c["equal_slopes"]["df2"], 66.0);
    let s = &c["separate_slopes"];
    close(
        &s["ms"],
        want(&r, &["slopes_test", "separate_mse"]),
        "separate MSE",
    );
    for i in 0..3 {
        let k = i.to_string();
        close(
            &s["groups"][i]["slope"],
            want(&r, &["slopes_test", "slopes_by_level", &k]),
            "own slope",
        );
        close(
            &s["groups"][i]["mean_at"],
            want(&r, &["slopes_test", "separate_means_at_grand_mean", &k]),
            "mean at x̄",
        );
        close(
            &s["groups"][i]["mean_at_se"],
            want(&r, &["slopes_test", "separate_se_at_grand_mean", &k]),
            "SE at x̄",
        );
    }
    // Johnson-Neyman boundaries for FT − Cont.
    let region = s["regions"]
        .as_array()
        .expect("regions")
        .iter()
        .find(|g| g["a"] == "Cont" && g["b"] == "FT")
        .expect("FT − Cont");
    for i in 0..2 {
        let k = i.to_string();
        close(
            &region["boundaries"][i],
            want(
                &r,
                &[
                    "slopes_test",
                    "johnson_neyman_FT_minus_Cont",
                    "boundaries",
                    &k,
                ],
            ),
            "boundary",
        );
    }
    // Within the data (70.0 to 94.9) FT exceeds Cont above the upper boundary.
    let significant = region["significant"].as_array().expect("ranges");
    assert_eq!(significant.len(), 1);
    close(
        &significant[0][0],
        want(
            &r,
            &[
                "slopes_test",
                "johnson_neyman_FT_minus_Cont",
                "boundaries",
                "1",
            ],
        ),
        "from",
    );
    close(&significant[0][1], 94.9, "to the largest Prewt");
    // The balance check (Prewt ~ Treat).
    close(
        &c["covariates"][0]["balance"]["f"],
        want(&r, &["other_checks", "balance_F"]),
        "balance F",
    );
    close(
        &c["covariates"][0]["balance"]["p"],
        want(&r, &["other_checks", "balance_p"]),
        "balance p",
    );
    assert!(
        block["warnings"]
            .as_array()
            .expect("warnings")
            .iter()
            .any(|w| w
                .as_str()
                .is_some_and(|w| w.contains("slopes on the covariate differ")))
    );
}

/// A block's build error, as the author reads it.
fn refused(block: &str, csv: &str) -> String {
    let doc = format!("# W\n\n```anova\nid: w\ndata: d.csv\n{block}```\n");
    build(&doc, &[("d.csv", csv.to_string())]).expect_err("refused")
}

#[test]
fn covariates_the_data_or_the_keys_cannot_support_are_refused_with_reasons() {
    let csv = "g,x,y\na,1.5,10\na,2.5,12\nb,1.0,11\nb,3.0,15\nc,2.0,13\nc,2.2,14\n";
    let e = refused("model: y ~ g * x\ncovariate: x\n", csv);
    assert!(
        e.contains("interaction") && e.contains("equal slopes"),
        "{e}"
    );
    // A covariate is a number measured on units, never the units themselves.
    let e = refused("model: y ~ g\ncovariate: x\nrandom: x\n", csv);
    assert!(
        e.contains("both as a covariate and in a random term"),
        "{e}"
    );
    let e = refused("model: y ~ g\ncovariate: y\n", csv);
    assert!(e.contains("is the response"), "{e}");
    // Not a number, named with its line.
    let text = "g,x,y\na,1.5,10\na,heavy,12\nb,1.0,11\nb,3.0,15\n";
    let e = refused("model: y ~ g\ncovariate: x\n", text);
    assert!(e.contains("d.csv:3") && e.contains("`heavy`"), "{e}");
    // One value per group: the slope is the groups' differences.
    let constant = "g,x,y\na,1,10\na,1,12\nb,2,11\nb,2,15\nc,3,13\nc,3,14\n";
    let e = refused("model: y ~ g\ncovariate: x\n", constant);
    assert!(e.contains("does not vary within the groups"), "{e}");
}

#[test]
fn a_missing_covariate_drops_its_row_and_says_so() {
    let csv = "g,x,y\na,1.5,10\na,2.5,12\na,,13\nb,1.0,11\nb,3.0,15\nb,2.0,14\nc,2.0,13\nc,2.2,14\nc,1.7,12\n";
    let doc = "# W\n\n```anova\nid: w\ndata: d.csv\nmodel: y ~ g\ncovariate: x\n```\n";
    let results = build(doc, &[("d.csv", csv.to_string())]).expect("builds");
    let block = &results["blocks"][0];
    assert_eq!(block["n"], 8);
    assert_eq!(block["excluded"][0]["line"], 4);
    assert!(
        block["excluded"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("`x`")
    );
}
