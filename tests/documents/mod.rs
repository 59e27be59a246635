//! A document built by the binary in a temporary folder, for the tests that
//! check a block's results file end to end (mixed models, repeated
//! measures, covariance structures).

use serde_json::Value;
use std::process::Command;

/// Builds `document` with `files` (name, contents) beside it; the results
/// file, or the error output.
pub fn build(document: &str, files: &[(&str, String)]) -> Result<Value, String> {
    build_report(document, files).map(|(_, results)| results)
}

/// As `build`, with the Markdown report too.
pub fn build_report(document: &str, files: &[(&str, String)]) -> Result<(String, Value), String> {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    for (name, text) in files {
        std::fs::write(p.join(name), text).expect("data");
    }
    std::fs::write(p.join("report.md"), document).expect("doc");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(p)
        .args(["build", "report.md", "-o", "out", "--to", "md"])
        .output()
        .expect("runs");
    if !o.status.success() {
        return Err(String::from_utf8_lossy(&o.stderr).into_owned());
    }
    let text = std::fs::read_to_string(p.join("out/report.results.json")).expect("results");
    let report = std::fs::read_to_string(p.join("out/report.md")).expect("report");
    Ok((report, serde_json::from_str(&text).expect("json")))
}

/// An open dataset of tests/data/open (sources in its SOURCES.md).
pub fn open(name: &str) -> String {
    std::fs::read_to_string(format!(
        "{}/tests/data/open/{name}",
        env!("CARGO_MANIFEST_DIR")
    ))
    .expect("data file")
}

/// sleepstudy with rows 17, 34, …, 170 deleted (mixed-models spec 7.5 and
/// 9.4 D; an invented pattern): each deleted row is a different subject's
/// and a different day, leaving 8 complete subjects of 18. (Each test file
/// compiles this module on its own and not all of them use this.)
#[allow(dead_code)]
pub fn sleepstudy_with_deletions() -> String {
    let text = open("sleepstudy.csv");
    let mut lines = text.lines();
    let header = lines.next().unwrap_or_default();
    std::iter::once(header)
        .chain(
            lines
                .enumerate()
                .filter(|(i, _)| (i + 1) % 17 != 0)
                .map(|(_, l)| l),
        )
        .map(|l| format!("{l}\n"))
        .collect()
}

/// A reference value: a number, or an object holding it in `value` (the
/// reference scripts' `{value, spec_value, agrees}` records).
#[allow(dead_code)]
pub fn reference_number(v: &Value) -> f64 {
    v.get("value")
        .unwrap_or(v)
        .as_f64()
        .unwrap_or_else(|| panic!("not a number: {v}"))
}

/// Asserts that the results-file number `got` is within `tolerance`
/// (relative) of `want`, naming `what` in the failure.
#[allow(dead_code)]
pub fn assert_close(got: &Value, want: f64, tolerance: f64, what: &str) {
    let g = got.as_f64().unwrap_or_else(|| panic!("{what}: {got}"));
    let rel = (g - want).abs() / want.abs().max(1e-300);
    assert!(rel < tolerance, "{what}: {g} vs {want} (rel {rel:e})");
}

/// The planned contrast of a block's `planned_contrasts` record with this
/// name.
#[allow(dead_code)]
pub fn contrast_named<'a>(set: &'a Value, name: &str) -> &'a Value {
    set["contrasts"]
        .as_array()
        .expect("contrasts")
        .iter()
        .find(|c| c["name"] == name)
        .unwrap_or_else(|| panic!("no contrast {name}"))
}

/// A reference file of tests/reference (written by the script beside it).
#[allow(dead_code)]
pub fn reference_json(name: &str) -> Value {
    let path = format!("{}/tests/reference/{name}", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(path).expect("reference")).expect("json")
}

/// An invented data file of tests/data/invented (see its README).
#[allow(dead_code)]
pub fn invented(name: &str) -> String {
    std::fs::read_to_string(format!(
        "{}/tests/data/invented/{name}",
        env!("CARGO_MANIFEST_DIR")
    ))
    .expect("data file")
}

/// A block's ANOVA line for `name`.
#[allow(dead_code)]
pub fn term<'a>(block: &'a Value, name: &str) -> &'a Value {
    block["anova"]["terms"]
        .as_array()
        .expect("terms")
        .iter()
        .find(|t| t["term"] == name)
        .unwrap_or_else(|| panic!("no term {name}"))
}
