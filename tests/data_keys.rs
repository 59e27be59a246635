//! Every numeric table cell of an HTML report names, in its `data-key`, the
//! results-file field it shows, and every such key leads to a field of the
//! results file written beside it. Checked on every golden case
//! (tests/cases/*), built afresh.
//!
//! How a key is read (README, "Outputs"): the first segment is the block's
//! `id` (a key starting `$.` is read from the top of the file instead:
//! `$.inputs.0.bytes`); then, segment by segment, an object's field by name, or an array's
//! element by its whole-number index or by its name: `term` (ANOVA terms),
//! `level` (groups, means), `term` or `term@within` (comparison families)
//! and, for `cells`, the cell's levels joined by ` × ` in the block's factor
//! order. Names may hold dots, so a name is matched against the rest of the
//! key. The last segment is a field, or one of three pairs printed in one
//! cell: `ci` (`ci_lower` and `ci_upper`, or `lower` and `upper`), `iqr`
//! (`q1` and `q3`) and `df` (`df1` and `df2`).

mod common;
#[path = "common/keys.rs"]
mod keys;

use common::{build, cases};
use keys::{BodyCell, body_cells, resolve};
use serde_json::Value;
use sheaf::compile::{World, compile};
use sheaf::render::Format;
use std::path::Path;

/// A golden case's HTML report and results file, built afresh.
fn report_and_results(dir: &Path) -> (String, Value) {
    let built = build(dir, Format::Html);
    let html = String::from_utf8(built.report).expect("utf-8 report");
    let results = serde_json::from_slice(&built.results).expect("results JSON");
    (html, results)
}

/// A cell shows a number when its column is numeric and it holds a digit
/// (a dash, `no data` or `not tested` shows none).
fn shows_number(c: &BodyCell) -> bool {
    c.numeric && c.text.chars().any(|ch| ch.is_ascii_digit())
}

/// What is wrong with one report's keys: numeric cells without a key, keys
/// that lead nowhere.
fn problems(case: &str, html: &str, results: &Value) -> Vec<String> {
    let cells = body_cells(html);
    let numeric = cells.iter().filter(|c| shows_number(c)).count();
    assert!(
        numeric > 0,
        "{case}: no numeric cell found; is the parser reading the tables?"
    );
    let mut found = Vec::new();
    for c in cells.iter().filter(|c| shows_number(c) && c.key.is_none()) {
        found.push(format!("{case}: numeric cell `{}` has no data-key", c.text));
    }
    for c in &cells {
        if let Some(key) = &c.key
            && let Err(why) = resolve(results, key)
        {
            found.push(format!(
                "{case}: data-key `{key}` ({}) does not resolve: {why}",
                c.text
            ));
        }
    }
    found
}

#[test]
fn every_numeric_cell_names_a_field_of_the_results_file() {
    let mut failures = Vec::new();
    for dir in cases() {
        let case = dir.file_name().unwrap_or_default().to_string_lossy();
        let (html, results) = report_and_results(&dir);
        failures.extend(problems(&case, &html, &results));
    }
    assert!(
        failures.is_empty(),
        "{} problems:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

/// Files held in memory.
struct Memory(String);

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        match path {
            "d.csv" => Ok(self.0.as_bytes().to_vec()),
            _ => Err(std::io::Error::from(std::io::ErrorKind::NotFound)),
        }
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

/// Tables the golden cases do not hold: a three-factor design (cells one
/// per row, a family per factor) and a one-sided comparison with a control.
/// Data invented.
#[test]
fn tables_outside_the_golden_cases_are_keyed_too() {
    let mut three = String::from("a,b,c,y\n");
    for i in 0..16 {
        let (a, b, c) = (i % 2, (i / 2) % 2, (i / 4) % 2);
        let y = 10.0 + a as f64 + 2.0 * b as f64 - c as f64 + 0.3 * (i % 5) as f64;
        three.push_str(&format!("A{a},B{b},C{c},{y}\n"));
    }
    let one = "g,y\nA,1.0\nA,2.0\nA,1.5\nB,3.1\nB,2.5\nB,4.0\nC,2.2\nC,1.9\nC,2.8\n".to_string();
    let documents = [
        (
            "three factors",
            "```anova\nid: abc\ndata: d.csv\nmodel: y ~ a * b * c\ncompare: tukey\n```\n",
            three,
        ),
        (
            "one-sided Dunnett",
            "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\ncompare: dunnett\ncontrol: A\nsides: 1\n```\n",
            one,
        ),
    ];
    let mut failures = Vec::new();
    for (case, doc, data) in documents {
        let built = compile("report.md", doc.as_bytes(), &Memory(data), Format::Html)
            .unwrap_or_else(|d| panic!("{case} failed to build:\n{d}"));
        let html = String::from_utf8(built.report).expect("utf-8 report");
        let results: Value = serde_json::from_slice(&built.results).expect("results JSON");
        assert!(
            html.contains("data-key=\"abc.cells.") || case != "three factors",
            "{case}: no cell table"
        );
        failures.extend(problems(case, &html, &results));
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The reading rule itself, on a hand-written results file.
#[test]
fn keys_are_read_by_names_indices_and_pairs() {
    let results: Value = serde_json::from_str(
        r#"{"blocks": [{"id": "b.1", "factors": ["wool", "tension"],
            "anova": {"terms": [{"term": "wool:tension", "f": 1.0}]},
            "groups": [{"level": "x.y", "ci_lower": 1, "ci_upper": 2}],
            "cells": [{"levels": {"tension": "L", "wool": "A"}, "mean": 3}],
            "comparisons": [{"term": "tension", "within": null, "pairs": [{"diff": 1}]},
                            {"term": "tension", "within": "wool=A", "means": [{"level": "L", "n": 9}]}]}]}"#,
    )
    .expect("JSON");
    for good in [
        "b.1.anova.terms.wool:tension.f",
        "b.1.groups.x.y.ci",
        "b.1.cells.A × L.mean",
        "b.1.comparisons.tension.pairs.0.diff",
        "b.1.comparisons.tension@wool=A.means.L.n",
        "b.1.comparisons.tension.pairs.0.statistic",
        "$.blocks.0.anova",
    ] {
        assert!(resolve(&results, good).is_ok(), "{good}");
    }
    for bad in [
        "b.2.anova.terms.wool:tension.f",
        "b.1.anova.terms.wool.f",
        "b.1.groups.x.y.sd",
        "b.1.cells.L × A.mean",
        "b.1.comparisons.tension.pairs.1.diff",
        "b.1.comparisons.tension@wool=B.means.L.n",
        "b.1.comparisons.tension.means.L.statistic",
        "$.inputs.0.bytes",
    ] {
        assert!(resolve(&results, bad).is_err(), "{bad} should not resolve");
    }
}
