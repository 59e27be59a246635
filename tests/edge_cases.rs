//! Edge cases of the design get clear handling, never a crash or a wrong
//! table: a level with one observation, no residual degrees of freedom, no
//! within-level variation, a level whose responses are all missing.

use serde_json::Value;
use sheaf::compile::{Built, World, compile};
use sheaf::render::Format;

/// Files held in memory.
struct Memory(Vec<(&'static str, &'static str)>);

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        self.0
            .iter()
            .find(|(p, _)| *p == path)
            .map(|(_, t)| t.as_bytes().to_vec())
            .ok_or_else(|| std::io::Error::from(std::io::ErrorKind::NotFound))
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

fn build(data: &'static str, extra: &str) -> Built {
    let doc = format!("```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n{extra}```\n");
    compile(
        "report.md",
        doc.as_bytes(),
        &Memory(vec![("d.csv", data)]),
        Format::Markdown,
    )
    .unwrap_or_else(|d| panic!("build failed:\n{d}"))
}

fn results(b: &Built) -> Value {
    serde_json::from_slice(&b.results).expect("results parse")
}

#[test]
fn a_level_with_one_observation_is_kept_and_named() {
    let b = build("y,g\n1,a\n2,a\n3,a\n5,b\n6,b\n9,c\n", "");
    let r = results(&b);
    let block = &r["blocks"][0];
    assert_eq!(block["groups"][2]["n"], 1);
    assert!(
        block["groups"][2]["sd"].is_null(),
        "SD of one value is not defined"
    );
    let warnings = block["warnings"].as_array().expect("warnings");
    assert!(warnings.iter().any(|w| {
        w.as_str()
            .unwrap_or("")
            .contains("level `c` has a single observation")
    }));
    assert_eq!(block["anova"]["residual"]["df"], 3);
}

#[test]
fn no_residual_degrees_of_freedom() {
    let b = build("y,g\n1,a\n2,b\n4,c\n", "");
    let block = &results(&b)["blocks"][0];
    assert!(block["anova"]["terms"][0]["f"].is_null());
    assert!(block["anova"]["terms"][0]["p"].is_null());
    assert!(block["comparisons"].as_array().expect("array").is_empty());
    let text = block["warnings"].to_string();
    assert!(text.contains("no residual degrees of freedom"), "{text}");
    let md = String::from_utf8(b.report).expect("utf-8");
    // SS and MS share one number of decimals.
    assert!(md.contains("| g | 2 | 4.6667 | 2.3333 | – | – |"), "{md}");
}

#[test]
fn no_variation_within_levels() {
    let b = build("y,g\n1,a\n1,a\n2,b\n2,b\n", "");
    let block = &results(&b)["blocks"][0];
    assert!(
        block["anova"]["terms"][0]["f"].is_null(),
        "infinite F is written as null"
    );
    assert_eq!(block["anova"]["terms"][0]["p"], 0.0);
    assert!(block["warnings"].to_string().contains("F is not finite"));
}

#[test]
fn a_level_whose_responses_are_all_missing_is_reported() {
    let b = build("y,g\n1,a\n2,a\n3,b\n4,b\nNA,c\n,c\n", "");
    let block = &results(&b)["blocks"][0];
    assert_eq!(block["groups"].as_array().expect("groups").len(), 2);
    assert_eq!(block["n_excluded"], 2);
    let text = block["warnings"].to_string();
    assert!(text.contains("level `c` has no observations"), "{text}");
}

#[test]
fn protected_lsd_withholds_pairs_after_a_non_significant_f() {
    // Two nearly equal levels: F is far from significant.
    let b = build(
        "y,g\n1.0,a\n2.0,a\n3.0,a\n1.1,b\n2.1,b\n3.1,b\n",
        "compare: lsd\n",
    );
    let block = &results(&b)["blocks"][0];
    let c = &block["comparisons"][0];
    assert_eq!(c["method"], "lsd");
    assert_eq!(c["pairs"][0]["significant"], false);
    assert_eq!(c["letters"]["a"], "a");
    let md = String::from_utf8(b.report).expect("utf-8");
    assert!(md.contains("no pair is declared different"));
}

#[test]
fn results_file_keeps_the_contract() {
    // The field names in the issue's contract, checked by reading them back.
    let b = build("y,g\n1,a\n2,a\n3,b\n5,b\n", "");
    let r = results(&b);
    for key in ["sheaf", "document", "inputs", "blocks"] {
        assert!(r.get(key).is_some(), "{key}");
    }
    assert_eq!(r["inputs"][0]["path"], "d.csv");
    assert_eq!(r["inputs"][0]["bytes"], 20);
    assert_eq!(r["inputs"][0]["sha256"].as_str().expect("hash").len(), 64);
    let block = &r["blocks"][0];
    for key in [
        "id",
        "kind",
        "line",
        "data",
        "response",
        "factors",
        "n",
        "n_excluded",
        "alpha",
        "anova",
        "groups",
        "comparisons",
        "warnings",
    ] {
        assert!(block.get(key).is_some(), "block.{key}");
    }
    for key in ["term", "df", "ss", "ms", "f", "p", "critical_f"] {
        assert!(block["anova"]["terms"][0].get(key).is_some(), "term.{key}");
    }
    for key in ["level", "n", "mean", "sd", "se", "ci_lower", "ci_upper"] {
        assert!(block["groups"][0].get(key).is_some(), "group.{key}");
    }
    let c = &block["comparisons"][0];
    for key in ["term", "within", "method", "alpha", "pairs", "letters"] {
        assert!(c.get(key).is_some(), "comparison.{key}");
    }
    assert!(c["within"].is_null());
    for key in [
        "a",
        "b",
        "diff",
        "se",
        "lower",
        "upper",
        "p_adj",
        "significant",
    ] {
        assert!(c["pairs"][0].get(key).is_some(), "pair.{key}");
    }
    // diff is mean(a) − mean(b): b then a in level order → 4 − 1.5.
    assert_eq!(c["pairs"][0]["a"], "b");
    assert_eq!(c["pairs"][0]["diff"], 2.5);
    assert_eq!(block["id"], "t");
    assert_eq!(block["line"], 1);
}

#[test]
fn results_file_carries_checks_effects_and_alternatives() {
    // Field names from the issue's contract for checks, effect sizes, Welch and Kruskal-Wallis.
    let data = "y,g\n1.0,a\n2.0,a\n3.5,a\n4.0,b\n5.5,b\n6.0,b\n8.0,c\n9.5,c\n9.0,c\n";
    let b = build(data, "");
    let block = &results(&b)["blocks"][0];
    let checks = &block["checks"];
    for key in ["brown_forsythe", "levene"] {
        for field in ["statistic", "df1", "df2", "p"] {
            assert!(checks[key].get(field).is_some(), "checks.{key}.{field}");
        }
    }
    for field in ["statistic", "df", "p"] {
        assert!(checks["bartlett"].get(field).is_some(), "bartlett.{field}");
    }
    for field in ["w", "p", "n"] {
        assert!(
            checks["shapiro_wilk"].get(field).is_some(),
            "shapiro_wilk.{field}"
        );
    }
    assert!(checks.get("skewness").is_some() && checks.get("excess_kurtosis").is_some());
    assert!(checks["outliers"].is_array());
    let effect = &block["anova"]["terms"][0]["effect"];
    for field in [
        "eta_sq",
        "partial_eta_sq",
        "omega_sq",
        "cohens_f",
        "partial_eta_sq_ci",
    ] {
        assert!(effect.get(field).is_some(), "effect.{field}");
    }
    assert_eq!(
        effect["partial_eta_sq_ci"].as_array().expect("pair").len(),
        2
    );
    assert_eq!(block["method"], "anova");

    let w = results(&build(data, "method: welch\n"));
    for field in ["f", "df1", "df2", "p"] {
        assert!(
            w["blocks"][0]["welch"].get(field).is_some(),
            "welch.{field}"
        );
    }
    assert_eq!(w["blocks"][0]["comparisons"][0]["method"], "games-howell");
    assert_eq!(w["blocks"][0]["groups"][0]["ci_error"], "level");

    let k = results(&build(data, "method: ranks\n"));
    for field in ["h", "df", "p"] {
        assert!(
            k["blocks"][0]["kruskal"].get(field).is_some(),
            "kruskal.{field}"
        );
    }
    assert_eq!(k["blocks"][0]["comparisons"][0]["method"], "dunn");
    assert!(k["blocks"][0]["groups"][0]["median"].is_number());

    let d = results(&build(data, "compare: dunnett\ncontrol: a\n"));
    let c = &d["blocks"][0]["comparisons"][0];
    assert_eq!(c["method"], "dunnett");
    assert_eq!(c["control"], "a");
    assert_eq!(c["pairs"].as_array().expect("pairs").len(), 2);
    for m in ["scheffe", "sidak"] {
        let r = results(&build(data, &format!("compare: {m}\n")));
        assert_eq!(r["blocks"][0]["comparisons"][0]["method"], m);
    }
}
