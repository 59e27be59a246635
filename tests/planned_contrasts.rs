//! Planned contrasts (linear-extensions specification B.1, B.2): on the
//! open PlantGrowth data against tests/reference/planned_contrasts.py
//! (statsmodels `t_test`/`f_test`, `multipletests`, scipy's F), and on the
//! open npk data (N1 − N0 over marginal means, with N:P:K confounded with
//! blocks) against the specification's values in
//! tests/reference/contrasts_trends.json (statsmodels `t_test`).

mod documents;

use documents::{assert_close, build, contrast_named, open, reference_number};
use serde_json::Value;

fn reference(name: &str) -> Value {
    let path = format!("{}/tests/reference/{name}", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(path).expect("reference")).expect("json")
}

/// 1e-10 relative: both sides compute the same closed forms (estimate,
/// SE from the pooled error, t and F tails) in double precision.
fn close(got: &Value, want: &Value, what: &str) {
    assert_close(got, reference_number(want), 1e-10, what);
}

fn plant_growth(extra: &str) -> Value {
    let doc = format!(
        "# P\n\n```anova\nid: pg\ndata: plants.csv\nmodel: weight ~ group\ncontrast: control vs treated = ctrl 1, trt1 -1/2, trt2 -1/2\ncontrast: trt2 vs trt1 = trt2 1, trt1 -1\n{extra}```\n"
    );
    let results = build(&doc, &[("plants.csv", open("PlantGrowth.csv"))]).expect("builds");
    results["blocks"][0]["planned_contrasts"].clone()
}

#[test]
fn each_contrast_matches_the_reference_and_the_pair_is_tested_jointly() {
    let r = reference("planned_contrasts.json");
    let set = plant_growth("");
    assert_eq!(set["adjustment"], "none");
    for name in ["control vs treated", "trt2 vs trt1"] {
        let (got, want) = (contrast_named(&set, name), &r["contrasts"][name]);
        for field in ["estimate", "se", "t", "p", "ci_lower", "ci_upper"] {
            close(&got[field], &want[field], &format!("{name} {field}"));
        }
        assert!(got["p_adj"].is_null());
        assert_eq!(got["in_response_units"], true);
    }
    // Orthogonal with equal n: together they carry the treatment SS, so
    // the joint F is the ANOVA's F.
    assert_eq!(set["orthogonal"], true);
    close(&set["joint"]["f"], &r["joint_first_two"]["f"], "joint F");
    close(&set["joint"]["p"], &r["joint_first_two"]["p"], "joint p");
}

#[test]
fn adjustments_follow_the_reference() {
    let r = reference("planned_contrasts.json");
    let third = "contrast: trt1 vs control = trt1 1, ctrl -1\n";
    for (key, field) in [
        ("bonferroni", "bonferroni_p"),
        ("holm", "holm_p"),
        ("scheffe", "scheffe_p"),
    ] {
        let set = plant_growth(&format!("{third}contrast_adjust: {key}\n"));
        assert_eq!(set["adjustment"], key);
        for name in ["control vs treated", "trt2 vs trt1", "trt1 vs control"] {
            let want = &r["contrasts"][name];
            close(
                &contrast_named(&set, name)["p_adj"],
                &want[field],
                &format!("{key} {name}"),
            );
        }
        // The third contrast is not orthogonal to the first two.
        assert_eq!(set["orthogonal"], false);
        let critical = match key {
            "scheffe" => &r["scheffe_critical"],
            _ => &r["bonferroni_critical_3"],
        };
        close(&set["critical_value"], critical, &format!("{key} critical"));
    }
}

#[test]
fn a_contrast_over_marginal_means_in_a_confounded_factorial() {
    let r = reference("contrasts_trends.json");
    let want = &r["npk"]["contrasts"][0];
    assert_eq!(want["contrast"], "N1 - N0");
    let doc = "# N\n\n```anova\nid: npk\ndata: npk.csv\nmodel: yield ~ block + N * P * K\nblock: block\ncontrast: N1 - N0 = N=1 1, N=0 -1\n```\n";
    let results = build(doc, &[("npk.csv", open("npk.csv"))]).expect("builds");
    let set = &results["blocks"][0]["planned_contrasts"];
    assert_eq!(set["factor"], "N");
    let got = contrast_named(set, "N1 - N0");
    for field in ["estimate", "se", "t", "p"] {
        close(&got[field], &want[field], field);
    }
    assert_eq!(got["df"], 12.0);
}

#[test]
fn contrasts_that_cannot_be_read_are_refused_with_reasons() {
    let refused = |lines: &str, file: (&str, &str)| {
        let doc = format!("# P\n\n```anova\nid: pg\ndata: {}\n{lines}```\n", file.0);
        build(&doc, &[(file.0, open(file.1))]).expect_err("refused")
    };
    let plants = ("plants.csv", "PlantGrowth.csv");
    let e = refused(
        "model: weight ~ group\ncontrast: c = ctrl 1, trt1 -1/2\n",
        plants,
    );
    assert!(e.contains("sum to 0.5, not 0"), "{e}");
    let e = refused(
        "model: weight ~ group\ncontrast: c = ctrl 1, trt9 -1\n",
        plants,
    );
    assert!(e.contains("`trt9`") && e.contains("not a level"), "{e}");
    let e = refused(
        "model: weight ~ group\ncontrast: c = ctrl one, trt1 -1\n",
        plants,
    );
    assert!(e.contains("not a level followed by its weight"), "{e}");
    let e = refused(
        "model: weight ~ group\nmethod: welch\ncontrast: c = ctrl 1, trt1 -1\n",
        plants,
    );
    assert!(e.contains("pooled error"), "{e}");
    let npk = ("npk.csv", "npk.csv");
    let e = refused(
        "model: yield ~ block + N * P * K\nblock: block\ncontrast: c = 1 1, 0 -1\n",
        npk,
    );
    assert!(e.contains("several factors") && e.contains("N=1"), "{e}");
}
