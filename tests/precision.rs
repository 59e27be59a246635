//! CV% and the SED and LSD of each comparison family (linear-extensions
//! specification D): the open npk data, `yield ~ block + N*P*K`, against
//! tests/reference/traits.json (numpy and scipy from the residual mean
//! square: CV = 100·√MSE/grand mean, SED = √(2·MSE/r), LSD = t·SED).

mod documents;

use documents::{assert_close, build, open, reference_number};
use serde_json::Value;

/// 1e-10 relative: closed forms on the same residual mean square.
fn close(got: &Value, want: f64, what: &str) {
    assert_close(got, want, 1e-10, what);
}

#[test]
fn cv_sed_and_lsd_match_the_reference() {
    let path = format!("{}/tests/reference/traits.json", env!("CARGO_MANIFEST_DIR"));
    let all: Value =
        serde_json::from_str(&std::fs::read_to_string(path).expect("ref")).expect("json");
    let r = &all["npk"];
    let doc = "# N\n\n```anova\nid: npk\ndata: npk.csv\nmodel: yield ~ block + N * P * K\nblock: block\ncompare: lsd\nprotected: no\n```\n";
    let results = build(doc, &[("npk.csv", open("npk.csv"))]).expect("builds");
    let block = &results["blocks"][0];
    close(
        &block["anova"]["cv_percent"],
        reference_number(&r["cv_percent"]),
        "CV%",
    );
    for family in block["comparisons"].as_array().expect("families") {
        let term = family["term"].as_str().expect("term");
        // Two levels of 12 plots each: one SED, one LSD.
        for i in 0..2 {
            close(
                &family["sed"][i],
                reference_number(&r["sed_main_effect_r12"]),
                &format!("{term} SED"),
            );
            close(
                &family["lsd"][i],
                reference_number(&r["lsd_5"]),
                &format!("{term} LSD"),
            );
        }
    }
}

#[test]
fn unequal_replication_gives_a_range_and_random_terms_give_none() {
    // PlantGrowth without its first row: n = 9, 10, 10.
    let plants = open("PlantGrowth.csv");
    let mut lines: Vec<&str> = plants.lines().collect();
    lines.remove(1);
    let csv = lines.join("\n") + "\n";
    let doc = "# P\n\n```anova\nid: pg\ndata: p.csv\nmodel: weight ~ group\ncompare: tukey\n```\n";
    let results = build(doc, &[("p.csv", csv)]).expect("builds");
    let family = &results["blocks"][0]["comparisons"][0];
    let (lo, hi) = (
        family["sed"][0].as_f64().unwrap(),
        family["sed"][1].as_f64().unwrap(),
    );
    let mse = results["blocks"][0]["anova"]["residual"]["ms"]
        .as_f64()
        .unwrap();
    // SED √(MSE(1/10 + 1/10)) between two full groups, √(MSE(1/9 + 1/10))
    // against the short one (common practice).
    close(&Value::from(lo), (mse * 0.2).sqrt(), "smallest SED");
    close(
        &Value::from(hi),
        (mse * (1.0 / 9.0 + 0.1)).sqrt(),
        "largest SED",
    );
    let doc = "# O\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\nrandom: B + B:V\ncompare: tukey\n```\n";
    let results = build(doc, &[("oats.csv", open("oats.csv"))]).expect("builds");
    let block = &results["blocks"][0];
    assert!(block["anova"].get("cv_percent").is_none());
    assert!(block["comparisons"][0].get("sed").is_none());
}
