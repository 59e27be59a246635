//! Blocks with random terms, end to end: the report's results file against
//! the check values of the mixed-model specification (section 9), computed
//! there by closed forms, scipy and an independent REML fitter. Data: the
//! open oats split-plot and Machines datasets (tests/data/open, sources in
//! SOURCES.md there); the deletion of two oats subplots is invented.

mod documents;

use documents::{build, open};
use serde_json::Value;

/// Relative agreement; the spec's values carry 10 to 12 digits, and the
/// REML fit converges to about 1e-11 relative (spec 2.3), so 1e-8 is the bar.
fn close(got: &Value, want: f64, tol: f64, what: &str) {
    let g = got
        .as_f64()
        .unwrap_or_else(|| panic!("{what}: not a number: {got}"));
    assert!(
        (g - want).abs() <= tol * want.abs().max(1e-300),
        "{what}: got {g}, want {want}"
    );
}

fn term<'a>(block: &'a Value, name: &str) -> &'a Value {
    block["anova"]["terms"]
        .as_array()
        .and_then(|t| t.iter().find(|t| t["term"] == name))
        .unwrap_or_else(|| panic!("term {name}"))
}

fn oats_document(compare: &str) -> String {
    format!(
        "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\nrandom: B + B:V\ncompare: {compare}\n```\n"
    )
}

#[test]
fn oats_split_plot_tests_varieties_against_the_whole_plot_error() {
    let results =
        build(&oats_document("tukey"), &[("oats.csv", open("oats.csv"))]).expect("builds");
    let b = &results["blocks"][0];
    // Spec 9.1: closed forms and scipy.
    let v = term(b, "V");
    close(&v["f"], 1.48534037944, 1e-9, "F V");
    close(&v["p"], 0.272386856735, 1e-9, "p V");
    assert_eq!(
        v["df_den"], 10.0,
        "KR df of V is the whole-plot error df exactly"
    );
    assert_eq!(v["error"], "B:V");
    close(&term(b, "N")["f"], 37.6856470588, 1e-9, "F N");
    close(&term(b, "V:N")["f"], 0.302823529412, 1e-9, "F V:N");
    assert_eq!(term(b, "N")["error"], "Residual");
    // Variance components: closed form = REML (spec 9.1).
    let comps = b["variance_components"].as_array().expect("components");
    for (c, want) in comps
        .iter()
        .zip([214.477083333, 106.061805556, 177.083333333])
    {
        close(&c["variance"], want, 1e-9, "variance component");
    }
    // The classical strata, and the fit.
    let strata = b["strata"].as_array().expect("balanced: strata");
    let dfs: Vec<u64> = strata
        .iter()
        .map(|s| s["df"].as_u64().unwrap_or(0))
        .collect();
    assert_eq!(dfs, [5, 10, 45]);
    close(&strata[1]["ss"], 6013.30555556, 1e-9, "Error (a) SS");
    assert_eq!(b["fit"]["method"], "reml");
    assert_eq!(b["fit"]["ddf"], "kenward-roger");
    close(
        &b["fit"]["log_likelihood"],
        -507.527393376 / 2.0,
        1e-9,
        "REML log-likelihood (invariant)",
    );
    // SEDs per kind (spec 9.1).
    let seds = b["seds"].as_array().expect("seds");
    let sed = |kind: &str| {
        seds.iter()
            .find(|s| s["kind"] == kind)
            .unwrap_or_else(|| panic!("SED {kind}"))
    };
    close(&sed("two V means")["sed"], 7.07890384379, 1e-9, "SED V");
    close(&sed("two V means")["lsd"], 15.7727806838, 1e-9, "LSD V");
    close(
        &sed("two N levels at the same V")["sed"],
        7.68295371441,
        1e-9,
        "SED N at V",
    );
    let across = sed("two V levels at the same N");
    close(&across["sed"], 9.71502511386, 1e-9, "SED V at N");
    close(
        &across["df"],
        30.2307802367,
        1e-9,
        "Satterthwaite df V at N",
    );
    close(&across["lsd"], 19.8343787457, 1e-9, "LSD V at N");
    // Variety means: SE with blocks random and its KR df (spec 9.1), Tukey
    // p with k = 3 on 10 df (scipy), all letters a.
    let fam = &b["comparisons"][0];
    assert_eq!(fam["term"], "V");
    for m in fam["means"].as_array().expect("means") {
        close(&m["se"], 7.79753937921, 1e-9, "SE of a V mean");
        close(&m["df"], 8.86898066056, 1e-8, "df of a V mean");
    }
    let tukey = [0.610353759258, 0.245830144977, 0.741872697267];
    for (p, want) in fam["pairs"].as_array().expect("pairs").iter().zip(tukey) {
        close(&p["p_adj"], want, 1e-8, "Tukey p, V pair");
        assert_eq!(p["df"], 10.0);
    }
    assert!(
        fam["letters"]
            .as_object()
            .expect("letters")
            .values()
            .all(|l| l == "a")
    );
    // Nitrogen: Tukey on 45 df and its letters (spec 9.1, scipy), except
    // 0.0cwt v 0.6cwt (p ≈ 4e-12): scipy takes its sf as 1 − cdf with the cdf
    // integrated to 1e-11 absolute, which leaves 7.4e-4 relative there, so
    // that pair's reference is mpmath's 40-digit tail integral at
    // q = 44·√(432/4250) (tests/reference/studentized_range_tail.py).
    let n = &b["comparisons"][1];
    let want = [
        3.7643062616e-04,
        3.36209027285e-09,
        oats_far_tail_mpmath(),
        6.39021054258e-03,
        9.24485577647e-06,
        0.179719486545,
    ];
    for (p, w) in n["pairs"].as_array().expect("pairs").iter().zip(want) {
        // scipy's 1 − cdf carries about 1e-15 absolute, within 1e-6 relative
        // of p ≥ 3e-9. Against mpmath the bar is 1e-9: q comes from the fit
        // (about 1e-11 relative) and p moves some 30 times as fast as q here
        // (measured: 4.4e-14 relative).
        let tol = if w < 1e-10 { 1e-9 } else { 1e-6 };
        close(&p["p_adj"], w, tol, "Tukey p, N pair");
    }
    let letters: Vec<&str> = ["0.0cwt", "0.2cwt", "0.4cwt", "0.6cwt"]
        .iter()
        .map(|l| n["letters"][l].as_str().unwrap_or(""))
        .collect();
    assert_eq!(letters, ["c", "b", "a", "a"]);
}

/// P(Q > 44·√(432/4250); 4, 45) from tests/reference/studentized_range_tail.json.
fn oats_far_tail_mpmath() -> f64 {
    let fx: Value = serde_json::from_str(include_str!("reference/studentized_range_tail.json"))
        .expect("fixture");
    let row = fx["points"]
        .as_array()
        .and_then(|rows| {
            rows.iter()
                .find(|r| r["label"] == "oats nitrogen 0.0cwt v 0.6cwt")
        })
        .expect("oats point");
    row["sf"].as_str().expect("digits").parse().expect("number")
}

#[test]
fn oats_lsd_bonferroni_and_holm_use_the_whole_plot_error_for_varieties() {
    // Spec 9.1: t and LSD p from scipy, Bonferroni and Holm from statsmodels.
    for (compare, want) in [
        (
            "lsd\nprotected: no",
            [0.354355465537, 0.116411706897, 0.471958105701],
        ),
        ("bonferroni", [1.0, 0.349235120691, 1.0]),
        ("holm", [0.708710931075, 0.349235120691, 0.708710931075]),
    ] {
        let results =
            build(&oats_document(compare), &[("oats.csv", open("oats.csv"))]).expect("builds");
        let pairs = results["blocks"][0]["comparisons"][0]["pairs"]
            .as_array()
            .cloned()
            .expect("pairs");
        // The file lists pairs as (Golden.rain − Victory, Marvellous − Victory,
        // Marvellous − Golden.rain); the spec's order is the same pairs.
        for (p, w) in pairs.iter().zip(want) {
            close(&p["p_adj"], w, 1e-9, compare);
        }
    }
}

#[test]
fn oats_with_two_subplots_missing_is_analysed_by_reml_and_says_why_there_is_no_stratum_table() {
    // The invented deletion of spec 9.2: (I, Victory, 0.0cwt) and (IV, Marvellous, 0.6cwt).
    let data: String = open("oats.csv")
        .lines()
        .filter(|l| *l != "I,Victory,0.0cwt,111" && !l.starts_with("IV,Marvellous,0.6cwt,"))
        .map(|l| format!("{l}\n"))
        .collect();
    assert_eq!(data.lines().count(), 71, "header and 70 rows");
    let results = build(&oats_document("tukey"), &[("oats.csv", data)]).expect("builds");
    let b = &results["blocks"][0];
    assert_eq!(b["n"], 70);
    assert!(
        b.get("strata").is_none(),
        "no classical table for unbalanced data"
    );
    // Spec 9.2, own REML and KR.
    let v = term(b, "V");
    close(&v["f"], 1.40350012949, 1e-7, "KR F V");
    close(&v["df_den"], 9.98832119065, 1e-7, "KR df V");
    close(&v["p"], 0.29029166815, 1e-7, "p V");
    assert_eq!(v["error"], "combined");
    close(&term(b, "N")["f"], 33.5204224775, 1e-7, "KR F N");
    let comps = b["variance_components"].as_array().expect("components");
    for (c, want) in comps
        .iter()
        .zip([214.438407669, 107.352693278, 184.249963435])
    {
        close(&c["variance"], want, 1e-7, "variance component");
    }
}

#[test]
fn machines_are_tested_against_the_worker_by_machine_interaction() {
    // Spec 9.3: workers random, machines fixed, worker × machine random.
    let doc = "# Machines\n\n```anova\nid: m\ndata: Machines.csv\nmodel: score ~ Machine\nrandom: Worker + Worker:Machine\ncompare: tukey\n```\n";
    let results = build(doc, &[("Machines.csv", open("Machines.csv"))]).expect("builds");
    let b = &results["blocks"][0];
    let m = term(b, "Machine");
    close(&m["f"], 20.5760829641, 1e-9, "F Machine");
    close(&m["p"], 2.85548485771e-04, 1e-8, "p Machine");
    assert_eq!(m["df_den"], 10.0);
    let fam = &b["comparisons"][0];
    for m in fam["means"].as_array().expect("means") {
        close(&m["se"], 2.4858302138, 1e-9, "SE of a machine mean");
        close(&m["df"], 8.52169850561, 1e-8, "df of a machine mean");
    }
    let tukey = [0.0111404726882, 2.11582827911e-04, 0.0506706458465];
    // Pairs in file order: B − A, C − A, C − B (spec lists A-B, A-C, B-C).
    for (p, w) in fam["pairs"].as_array().expect("pairs").iter().zip(tukey) {
        close(&p["p_adj"], w, 1e-7, "Tukey p, machine pair");
    }
    let comps = b["variance_components"].as_array().expect("components");
    for (c, want) in comps
        .iter()
        .zip([22.8584444444, 13.9094567901, 0.92462962963])
    {
        close(&c["variance"], want, 1e-9, "variance component");
    }
    // Profile intervals of the SDs (spec 9.3, own, two routes).
    close(
        &comps[0]["ci_lower"],
        1.823963669,
        1e-7,
        "profile CI worker, lower",
    );
    close(
        &comps[0]["ci_upper"],
        11.2392148258,
        1e-7,
        "profile CI worker, upper",
    );
}

#[test]
fn a_random_factor_with_few_levels_is_warned_about() {
    // oats has 6 blocks: no warning; Machines has 6 workers: none either.
    // Three invented sites in a balanced two-treatment layout get one.
    let mut csv = String::from("site,trt,y\n");
    for (s, site) in ["north", "east", "west"].iter().enumerate() {
        for (t, trt) in ["a", "b"].iter().enumerate() {
            for r in 0..3 {
                let y = 10.0 + 2.0 * s as f64 + t as f64 + 0.3 * r as f64 - 0.1 * (s * r) as f64;
                csv.push_str(&format!("{site},{trt},{y:.1}\n"));
            }
        }
    }
    let doc = "# Sites (invented data)\n\n```anova\nid: s\ndata: d.csv\nmodel: y ~ trt\nrandom: site\ncompare: none\n```\n";
    let results = build(doc, &[("d.csv", csv)]).expect("builds");
    let warnings = results["blocks"][0]["warnings"].to_string();
    assert!(warnings.contains("`site` has only 3 levels"), "{warnings}");
}

#[test]
fn an_empty_random_list_is_the_fixed_effects_analysis() {
    let data = [("oats.csv", open("oats.csv"))];
    let fixed = build(
        "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\ncompare: tukey\n```\n",
        &data,
    )
    .expect("builds");
    let empty = build(
        "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\nrandom:\ncompare: tukey\n```\n",
        &data,
    )
    .expect("builds");
    assert_eq!(fixed["blocks"], empty["blocks"]);
}

#[test]
fn display_names_reach_the_columns_of_random_terms() {
    let doc = "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\nrandom: B + B:V\ncompare: none\nnames: B = Block, V = Variety\n```\n";
    let results = build(doc, &[("oats.csv", open("oats.csv"))]);
    assert!(results.is_ok(), "{:?}", results.err());
}

#[test]
fn an_empty_cell_under_an_interaction_is_refused_with_the_reason() {
    // Every Victory plot at 0.0cwt removed (an invented deletion): the V × N
    // interaction and the marginal means are not estimable.
    let data: String = open("oats.csv")
        .lines()
        .filter(|l| !l.contains(",Victory,0.0cwt,"))
        .map(|l| format!("{l}\n"))
        .collect();
    let err = build(&oats_document("tukey"), &[("oats.csv", data)]).expect_err("refused");
    assert!(err.contains("have no observations"), "{err}");
    assert!(
        err.contains("report.md:"),
        "the message names the document: {err}"
    );
}

/// The checks of a block with random terms read its conditional residuals
/// and each random term's predicted effects. Shapiro-Wilk values from
/// tests/reference/mixed_predictions.json (scipy `shapiro` on numpy's
/// conditional residuals and standardised BLUPs); 1e-6 relative covers the
/// residuals' agreement (about 1e-9) carried through W and its p.
#[test]
fn oats_checks_read_conditional_residuals_and_predicted_effects() {
    let reference: Value = serde_json::from_str(
        &std::fs::read_to_string(format!(
            "{}/tests/reference/mixed_predictions.json",
            env!("CARGO_MANIFEST_DIR")
        ))
        .unwrap(),
    )
    .unwrap();
    let want = &reference["oats"];
    let doc = oats_document("tukey").replace("```\n", "plot: residuals, qq\n```\n");
    let r = build(&doc, &[("oats.csv", open("oats.csv"))]).expect("builds");
    let b = &r["blocks"][0];
    assert_eq!(b["checks"]["residuals"], "conditional");
    let sw = &b["checks"]["shapiro_wilk"];
    close(
        &sw["w"],
        want["shapiro_residuals"][0].as_f64().unwrap(),
        1e-6,
        "SW W",
    );
    close(
        &sw["p"],
        want["shapiro_residuals"][1].as_f64().unwrap(),
        1e-6,
        "SW p",
    );
    for c in b["variance_components"].as_array().unwrap() {
        let name = c["term"].as_str().unwrap();
        if name == "residual" {
            assert!(c.get("predicted_effects").is_none());
            continue;
        }
        let p = &c["predicted_effects"];
        let sw = &want["shapiro_effects"][name];
        close(
            &p["shapiro_wilk"]["w"],
            sw[0].as_f64().unwrap(),
            1e-6,
            "effects W",
        );
        close(
            &p["shapiro_wilk"]["p"],
            sw[1].as_f64().unwrap(),
            1e-6,
            "effects p",
        );
        assert_eq!(p["flagged_count"], 0, "{name}");
    }
}

/// One subplot made 80 units higher (an invented gross error) is flagged by
/// its studentized conditional residual, on its own data line.
#[test]
fn a_gross_error_is_flagged_by_its_conditional_residual() {
    let data = open("oats.csv").replacen("I,Victory,0.6cwt,174", "I,Victory,0.6cwt,254", 1);
    assert_ne!(data, open("oats.csv"));
    let line = data
        .lines()
        .position(|l| l == "I,Victory,0.6cwt,254")
        .unwrap()
        + 1;
    let r = build(&oats_document("lsd"), &[("oats.csv", data)]).expect("builds");
    let checks = &r["blocks"][0]["checks"];
    assert_eq!(checks["outlier_count"], 1, "{checks}");
    assert_eq!(checks["outliers"][0]["line"], line);
    assert!(
        checks["outliers"][0]["studentized_residual"]
            .as_f64()
            .unwrap()
            > 3.0
    );
}

/// Dunnett against machine A (spec 9.3's design): both comparisons share
/// the worker × machine error on 10 df with correlation 1/2, so the joint
/// critical value applies. SED 2.1769754758 on 10 df (spec 9.3, closed
/// form); p-values and the critical value from scipy 1.17.1
/// `multivariate_t(shape=[[1, .5], [.5, 1]], df=10).cdf` over the box
/// (quasi-Monte Carlo, seed 1, 4e6 points): 0.00810252475 and 0.000149514662,
/// critical 2.56833866. That integration is good to about 1e-5 absolute, so
/// the p-values are compared at 2e-5 and the critical value at 1e-4.
#[test]
fn machines_dunnett_against_a_control_uses_the_interaction_error() {
    let doc = "# Machines\n\n```anova\nid: m\ndata: Machines.csv\nmodel: score ~ Machine\nrandom: Worker + Worker:Machine\ncompare: dunnett\ncontrol: A\n```\n";
    let results = build(doc, &[("Machines.csv", open("Machines.csv"))]).expect("builds");
    let fam = &results["blocks"][0]["comparisons"][0];
    let pairs = fam["pairs"].as_array().expect("pairs");
    assert_eq!(pairs.len(), 2);
    for (p, want) in pairs.iter().zip([0.00810252475, 0.000149514662]) {
        close(&p["se"], 2.1769754758, 1e-9, "SED");
        close(&p["df"], 10.0, 1e-12, "df");
        let got = p["p_adj"].as_f64().expect("p");
        assert!((got - want).abs() < 2e-5, "Dunnett p {got} vs {want}");
    }
    close(
        &fam["critical_value"],
        2.56833866,
        1e-4,
        "Dunnett critical value",
    );
}

/// With two subplots missing (spec 9.2's invented pattern) the nitrogen
/// comparisons with the control no longer share one df: refused, with the
/// reason and the alternatives.
#[test]
fn dunnett_is_refused_where_the_comparisons_do_not_share_one_df() {
    let data: String = open("oats.csv")
        .lines()
        .filter(|l| !l.starts_with("I,Victory,0.0cwt") && !l.starts_with("IV,Marvellous,0.6cwt"))
        .map(|l| format!("{l}\n"))
        .collect();
    let doc = "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ N\nrandom: B + B:V\ncompare: dunnett\ncontrol: 0.0cwt\n```\n";
    let err = build(doc, &[("oats.csv", data)]).expect_err("refused");
    assert!(
        err.contains("Dunnett's comparisons cannot be made here"),
        "{err}"
    );
    assert!(err.contains("bonferroni"), "{err}");
}

/// A model with more random-effect levels than profile intervals are
/// computed for (200) gets Satterthwaite's χ² intervals, said in the
/// results file (invented subsampling data: 210 plots, two samples each).
#[test]
fn large_models_get_satterthwaite_intervals() {
    let mut csv = String::from("plot,trt,y\n");
    for p in 0..210 {
        for s in 0..2 {
            let y = 10.0
                + (p % 3) as f64
                + ((p * 37 + s * 11) % 17) as f64 / 5.0
                + (p % 7) as f64 / 3.0;
            csv.push_str(&format!("P{p:03},T{},{y:.2}\n", p % 3));
        }
    }
    let doc =
        "# Sub\n\n```anova\nid: s\ndata: d.csv\nmodel: y ~ trt\nrandom: plot\ncompare: none\n```\n";
    let r = build(doc, &[("d.csv", csv)]).expect("builds");
    for c in r["blocks"][0]["variance_components"].as_array().unwrap() {
        assert_eq!(c["ci_method"], "satterthwaite", "{c}");
        let (lo, sd, hi) = (
            c["ci_lower"].as_f64().unwrap(),
            c["sd"].as_f64().unwrap(),
            c["ci_upper"].as_f64().unwrap(),
        );
        assert!(lo < sd && sd < hi, "{c}");
    }
}
