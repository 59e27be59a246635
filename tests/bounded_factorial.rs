//! A factorial block on a streamed file is fitted from its cells' sums and
//! checked by reading the file again (memory bounded whatever the rows),
//! unless a figure needs every row at once. Both ways must give the same
//! numbers, bit for bit: the same block with `plot: means` keeps the rows,
//! without it reads the file again. The checks themselves are compared with
//! statsmodels and scipy (tests/reference/bounded_factorial.json, written by
//! tests/reference/bounded_factorial.py) on an unreplicated design and on
//! one with an empty cell.

mod huge;

use huge::{Huge, cell, scramble};
use sheaf::compile::{Built, World, compile};
use sheaf::render::Format;
use std::sync::atomic::Ordering;

/// Invented press-line thicknesses (mm): 4 lines × 3 shifts, values on a
/// 0.001 grid, the spread growing with the line, one value in 500 written
/// with a fourth decimal (outside the exact sums), one in 997 missing, and
/// a few far-out readings that the outlier check flags.
fn presses(rows: u64) -> Vec<u8> {
    let mut text = String::with_capacity(rows as usize * 20);
    text.push_str("line,shift,thickness\n");
    for i in 0..rows {
        let (line, shift) = ((i * 7 + i / 11) % 4, (i / 5 + i / 1_000) % 3);
        let u = scramble(i) + scramble(i + 7_777_777) + scramble(i + 15_555_555) - 1.5;
        let mut y =
            2.0 + line as f64 * 0.01 + shift as f64 * 0.004 + (0.05 + 0.01 * line as f64) * u;
        if i % 99_991 == 5 {
            y += if i % 2 == 0 { 0.6 } else { -0.6 };
        }
        let cell = cell(i, y);
        text.push_str(&format!("P{line},S{shift},{cell}\n"));
    }
    text.into_bytes()
}

fn build(doc: &str, world: &dyn World) -> Result<Built, String> {
    compile("report.md", doc.as_bytes(), world, Format::Html).map_err(|d| d.to_string())
}

fn results(built: &Built) -> serde_json::Value {
    serde_json::from_slice(&built.results).expect("results parse")
}

/// The block's parts that the two ways must give alike (JSON numbers are
/// written as the shortest text that reads back as the same f64, so equal
/// text is equal bits).
const COMPARED: [&str; 7] = [
    "n",
    "anova",
    "checks",
    "groups",
    "cells",
    "comparisons",
    "warnings",
];

fn assert_same_bits(kept: &serde_json::Value, reread: &serde_json::Value) {
    for key in COMPARED {
        assert_eq!(kept[key], reread[key], "`{key}` differs");
    }
}

#[test]
fn reading_again_gives_the_same_bits_as_keeping_every_row() {
    let world = Huge::new(presses(2_000_000));
    let block = |extra: &str| {
        format!(
            "# Invented press lines\n\n```anova\nid: p\ndata: presses.csv\nmodel: thickness ~ line * shift\ncompare: tukey\n{extra}```\n"
        )
    };
    let kept = results(&build(&block("plot: means\n"), &world).expect("rows kept"));
    let opened_before = world.opened.load(Ordering::SeqCst);
    let reread = results(&build(&block(""), &world).expect("read again"));
    let passes = world.opened.load(Ordering::SeqCst) - opened_before;
    // The cell sums and pass A: here the buckets that hold the medians hold
    // one value each, so the medians are found in pass A, and no bucket
    // holds values on both sides of a median, so Brown-Forsythe comes from
    // pass A's record of each treatment cell (one data cell each).
    assert_eq!(passes, 2, "the bounded path read the file {passes} times");
    let (a, b) = (&kept["blocks"][0], &reread["blocks"][0]);
    assert_same_bits(a, b);
    let checks = &a["checks"];
    assert!(
        checks["brown_forsythe"]["statistic"].is_number(),
        "{checks}"
    );
    assert!(checks["levene"]["statistic"].is_number(), "{checks}");
    assert!(checks["skewness"].is_number(), "{checks}");
    assert!(
        checks["outlier_count"].as_u64().unwrap_or(0) > 0,
        "{checks}"
    );
    assert!(
        checks["outliers"]
            .as_array()
            .is_some_and(|o| !o.is_empty() && o.iter().all(|r| r["line"].as_u64() > Some(1))),
        "{checks}"
    );
    // Far more than 5,000 residuals: Shapiro-Wilk is out of its range.
    assert!(checks["shapiro_wilk"]["w"].is_null(), "{checks}");
    assert_eq!(a["cells"].as_array().map(Vec::len), Some(12));
}

/// A reference block: its data file read from the tests' data folder, once
/// streamed (checked by reading again) and once with the rows kept (for a
/// normal Q-Q plot).
fn both_ways(path: &str, model: &str, extra: &str) -> serde_json::Value {
    let data = std::fs::read(format!("{}/tests/data/{path}", env!("CARGO_MANIFEST_DIR")))
        .expect("test data");
    let world = Huge::new(data);
    let block = |plot: &str| {
        format!(
            "# Reference\n\n```anova\nid: r\ndata: data.csv\nmodel: {model}\n{extra}{plot}```\n"
        )
    };
    let kept = results(&build(&block("plot: qq\n"), &world).expect("rows kept"));
    let reread = results(&build(&block(""), &world).expect("read again"));
    assert_same_bits(&kept["blocks"][0], &reread["blocks"][0]);
    reread["blocks"][0].clone()
}

fn reference(case: &str) -> serde_json::Value {
    let all: serde_json::Value =
        serde_json::from_str(include_str!("reference/bounded_factorial.json"))
            .expect("reference parses");
    all[case].clone()
}

fn number(v: &serde_json::Value) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("expected a number, found {v}"))
}

/// Each check against scipy (Levene with median and mean centres,
/// Shapiro-Wilk, skewness and kurtosis with `bias=False`) on the residuals
/// of a statsmodels OLS fit, and the outlier count against statsmodels'
/// externally studentized residuals. Tolerance 1e-9 relative: the
/// residuals come from different least-squares codes (QR on the cells
/// here, on the rows there), which agree to about 1e-13 on these
/// well-conditioned designs; the statistics amplify that by at most the
/// F tests' conditioning, far below 1e-9.
fn assert_matches_reference(block: &serde_json::Value, expected: &serde_json::Value) {
    let checks = &block["checks"];
    let close = |got: &serde_json::Value, want: &serde_json::Value, what: &str| {
        let (g, w) = (number(got), number(want));
        assert!(
            (g - w).abs() <= 1e-9 * w.abs().max(1e-12),
            "{what}: sheaf {g}, reference {w}"
        );
    };
    for (ours, theirs) in [
        ("brown_forsythe", "levene_median"),
        ("levene", "levene_mean"),
    ] {
        close(
            &checks[ours]["statistic"],
            &expected[theirs]["statistic"],
            ours,
        );
        close(&checks[ours]["p"], &expected[theirs]["p"], ours);
        close(&checks[ours]["df1"], &expected[theirs]["df1"], ours);
        close(&checks[ours]["df2"], &expected[theirs]["df2"], ours);
    }
    close(&checks["shapiro_wilk"]["w"], &expected["shapiro"]["w"], "W");
    // scipy's Shapiro-Wilk p follows the same Royston approximation but is
    // computed in single precision (swilk.f): 1e-6 relative.
    let (p, want) = (
        number(&checks["shapiro_wilk"]["p"]),
        number(&expected["shapiro"]["p"]),
    );
    assert!((p - want).abs() <= 1e-6 * want, "Shapiro-Wilk p {p} {want}");
    close(&checks["skewness"], &expected["skewness"], "skewness");
    close(
        &checks["excess_kurtosis"],
        &expected["kurtosis"],
        "kurtosis",
    );
    assert_eq!(checks["outlier_count"], expected["outliers"]);
}

#[test]
fn unreplicated_cells_compare_the_first_factors_levels() {
    // Barley yields: five varieties at six locations, one plot each.
    let block = both_ways("open/immer.csv", "Y1 ~ Loc + Var", "");
    assert_matches_reference(&block, &reference("unreplicated"));
    let warnings = block["warnings"].to_string();
    assert!(
        warnings.contains("one observation per treatment cell"),
        "{warnings}"
    );
}

#[test]
fn an_empty_cell_is_left_out_of_the_spread_tests() {
    // Warp breaks with the cell B-H removed: five treatment cells.
    let block = both_ways(
        "invented/warp-empty-cell.csv",
        "breaks ~ wool * tension",
        "ss: 2\ncells: yes\ncompare: none\n",
    );
    assert_matches_reference(&block, &reference("empty_cell"));
    assert_eq!(number(&block["checks"]["levene"]["df1"]), 4.0);
}

#[test]
fn a_file_that_changes_between_passes_is_an_error() {
    let world = Huge {
        changed_after: Some(1),
        ..Huge::new(presses(20_000))
    };
    let doc = "# Invented press lines\n\n```anova\nid: p\ndata: presses.csv\nmodel: thickness ~ line * shift\n```\n";
    let Err(err) = build(doc, &world) else {
        panic!("a file that changed after the first pass was accepted");
    };
    assert!(
        err.contains("the file changed while it was being read"),
        "{err}"
    );
}
