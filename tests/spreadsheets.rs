//! Spreadsheet input gives the same results as the same data in CSV.
//! Fixtures: tests/data/spreadsheets/ (written by openpyxl and by pandas'
//! odf writer from the open PlantGrowth data; see README.md there).

use serde_json::Value;
use sheaf::compile::{DiskWorld, compile};
use sheaf::render::Format;
use std::path::Path;

fn results(block: &str) -> Value {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data");
    let doc = format!("```anova\nid: t\n{block}model: weight ~ group\n```\n");
    let built = compile(
        "report.md",
        doc.as_bytes(),
        &DiskWorld { base: dir },
        Format::Markdown,
    )
    .unwrap_or_else(|d| panic!("{d}"));
    serde_json::from_slice(&built.results).expect("json")
}

#[test]
fn xlsx_and_ods_match_the_csv() {
    let csv = results("data: open/PlantGrowth.csv\n");
    let xlsx = results("data: spreadsheets/plants.xlsx\nsheet: weights\nrange: B3:D33\n");
    let ods = results("data: spreadsheets/plants.ods\n");
    for other in [&xlsx, &ods] {
        assert_eq!(other["blocks"][0]["anova"], csv["blocks"][0]["anova"]);
        assert_eq!(other["blocks"][0]["groups"], csv["blocks"][0]["groups"]);
        assert_eq!(
            other["blocks"][0]["comparisons"],
            csv["blocks"][0]["comparisons"]
        );
    }
    // Spreadsheet rows keep their row numbers: the data start on row 4.
    let bad = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data");
    let doc = "```anova\ndata: spreadsheets/plants.xlsx\nsheet: weights\nrange: B3:D33\nmodel: sown ~ group\n```\n";
    let err = compile(
        "report.md",
        doc.as_bytes(),
        &DiskWorld { base: bad },
        Format::Html,
    )
    .expect_err("a date is not a number");
    assert!(
        err.message
            .contains("`sown` must be a number, found `2024-05-01`"),
        "{}",
        err.message
    );
    assert_eq!(err.place.and_then(|p| p.line), Some(4));
}

#[test]
fn a_missing_sheet_is_named_with_the_choices() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data");
    let doc =
        "```anova\ndata: spreadsheets/plants.xlsx\nsheet: weight\nmodel: weight ~ group\n```\n";
    let err = compile(
        "report.md",
        doc.as_bytes(),
        &DiskWorld { base: dir },
        Format::Html,
    )
    .expect_err("no such sheet");
    assert_eq!(err.message, "no sheet named `weight`");
    assert!(
        err.hints[0].contains("did you mean `weights`?"),
        "{:?}",
        err.hints
    );
}
