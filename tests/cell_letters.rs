//! `cells: yes` on a split-plot: the cell means lettered within rows
//! (lowercase: nitrogen rates at one variety, subplot error) and within
//! columns (uppercase: varieties at one rate, combined error), each pair
//! with its own SED and df (mixed-models specification 4.3). Reference:
//! tests/reference/cell_letters.py (statsmodels stratum mean squares, the
//! textbook split-plot SEDs and Satterthwaite df, scipy's studentized range)
//! on the open oats data.

mod documents;

use documents::{build, open};
use serde_json::Value;
use std::collections::BTreeMap;

fn oats(model: &str, cells: &str) -> Value {
    let doc = format!(
        "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: {model}\nrandom: B + B:V\ncompare: tukey\ncells: {cells}\n```\n"
    );
    build(&doc, &[("oats.csv", open("oats.csv"))]).expect("builds")
}

fn reference() -> Value {
    let path = format!(
        "{}/tests/reference/cell_letters.json",
        env!("CARGO_MANIFEST_DIR")
    );
    serde_json::from_str(&std::fs::read_to_string(path).expect("reference")).expect("json")
}

fn rel(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

/// The family `term@within` of the block's comparisons.
fn family<'a>(block: &'a Value, key: &str) -> &'a Value {
    let (term, within) = key.split_once('@').expect("term@within");
    block["comparisons"]
        .as_array()
        .expect("comparisons")
        .iter()
        .find(|c| c["term"] == term && c["within"] == within)
        .unwrap_or_else(|| panic!("no family {key}"))
}

/// A compact letter display's guarantee: two means share a letter exactly
/// when the pair was not declared different.
fn letters_agree_with_decisions(fam: &Value) {
    let letters: BTreeMap<&str, &str> = fam["letters"]
        .as_object()
        .expect("letters")
        .iter()
        .map(|(k, v)| (k.as_str(), v.as_str().expect("string")))
        .collect();
    for p in fam["pairs"].as_array().expect("pairs") {
        let (a, b) = (
            letters[p["a"].as_str().unwrap()],
            letters[p["b"].as_str().unwrap()],
        );
        let share = a.chars().any(|c| b.contains(c));
        assert_eq!(
            share,
            p["significant"] == false,
            "{} vs {}: letters {a} and {b}",
            p["a"],
            p["b"]
        );
    }
}

#[test]
fn oats_cells_are_compared_within_rows_and_within_columns_with_their_own_errors() {
    let results = oats("Y ~ V * N", "yes");
    let block = &results["blocks"][0];
    let reference = reference();
    let families = reference["families"].as_object().expect("families");
    assert_eq!(families.len(), 7);
    for (key, pairs) in families {
        let fam = family(block, key);
        for want in pairs.as_array().expect("pairs") {
            let got = fam["pairs"]
                .as_array()
                .expect("pairs")
                .iter()
                .find(|p| p["a"] == want["a"] && p["b"] == want["b"])
                .unwrap_or_else(|| panic!("{key}: no pair {} − {}", want["a"], want["b"]));
            let num = |v: &Value| v.as_f64().expect("number");
            // The REML fit reproduces the stratum mean squares to about
            // 1e-11 relative in balanced designs (spec 3.5): 1e-8 on the
            // SED and df. Tukey's p: the two studentized-range
            // implementations agree to about 1e-7 at these p (> 1e-6).
            assert!(
                rel(num(&got["diff"]), num(&want["diff"])) < 1e-12,
                "{key} diff"
            );
            assert!(rel(num(&got["se"]), num(&want["sed"])) < 1e-8, "{key} SED");
            assert!(rel(num(&got["df"]), num(&want["df"])) < 1e-8, "{key} df");
            assert!(
                rel(num(&got["p_adj"]), num(&want["p_adj"])) < 1e-6,
                "{key} p"
            );
        }
        letters_agree_with_decisions(fam);
        // Lowercase within rows (nitrogen at one variety), uppercase within
        // columns (varieties at one nitrogen rate).
        let upper = key.starts_with("V@");
        for l in fam["letters"].as_object().expect("letters").values() {
            let l = l.as_str().expect("string");
            assert_eq!(
                l.chars().all(|c| c.is_ascii_uppercase()),
                upper,
                "{key}: {l}"
            );
        }
    }
    // No one letter set over all twelve cells (it would mix errors).
    assert!(
        block["comparisons"]
            .as_array()
            .expect("comparisons")
            .iter()
            .all(|c| c["term"] != "cells")
    );
}

#[test]
fn the_whole_plot_factor_goes_in_the_rows_whatever_the_model_order() {
    // Written nitrogen first, the varieties (tested against the whole-plot
    // error, 10 df) still index the rows: lowercase letters compare rates.
    let results = oats("Y ~ N * V", "yes");
    let block = &results["blocks"][0];
    let fam = family(block, "N@V=Victory");
    assert_eq!(fam["letters"]["0.0cwt"], "b");
    let fam = family(block, "V@N=0.0cwt");
    assert_eq!(fam["letters"]["Victory"], "A");
}

#[test]
fn cells_all_keeps_one_letter_set_over_every_cell() {
    let results = oats("Y ~ V * N", "all");
    let block = &results["blocks"][0];
    let comparisons = block["comparisons"].as_array().expect("comparisons");
    assert_eq!(comparisons.len(), 1);
    assert_eq!(comparisons[0]["term"], "cells");
    assert_eq!(comparisons[0]["pairs"].as_array().expect("pairs").len(), 66);
    letters_agree_with_decisions(&comparisons[0]);
}
