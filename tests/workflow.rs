//! The reproducible workflow: `verify` detects drift and explains it,
//! `new` scaffolds a study that builds, `validate` passes and writes its report.

use std::path::Path;
use std::process::{Command, Output};

fn sheaf(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .args(args)
        .output()
        .expect("runs")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn study() -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("plants.csv"), "weight,group\n4.17,ctrl\n5.58,ctrl\n5.18,ctrl\n4.81,trt1\n4.17,trt1\n4.41,trt1\n6.31,trt2\n5.12,trt2\n5.54,trt2\n")
        .expect("data");
    std::fs::write(dir.path().join("report.md"), "# Trial\n\n```anova\nid: growth\ndata: plants.csv\nmodel: weight ~ group\nplot: box\n```\n\nF = {{ growth.f | round(2) }}.\n")
        .expect("doc");
    dir
}

#[test]
fn verify_passes_on_a_fresh_build_and_explains_each_kind_of_drift() {
    let dir = study();
    let p = dir.path();
    for to in ["html", "md", "tex", "docx"] {
        let out = format!("out-{to}");
        assert!(
            sheaf(p, &["build", "report.md", "-o", &out, "--to", to])
                .status
                .success()
        );
        let ok = sheaf(p, &["verify", "report.md", "-o", &out, "--to", to]);
        assert_eq!(ok.status.code(), Some(0), "{}", stderr(&ok));
        assert!(stderr(&ok).contains("is up to date"));
    }

    // A changed data value: the input hash and the numbers are named.
    let data = std::fs::read_to_string(p.join("plants.csv")).expect("data");
    std::fs::write(p.join("plants.csv"), data.replace("6.31", "6.91")).expect("edit");
    let drift = sheaf(p, &["verify", "report.md", "-o", "out-html"]);
    assert_eq!(drift.status.code(), Some(1));
    let text = stderr(&drift);
    assert!(
        text.contains("inputs changed:") && text.contains("plants.csv: SHA-256"),
        "{text}"
    );
    assert!(
        text.contains("numbers changed:") && text.contains("growth: anova.terms[0].f:"),
        "{text}"
    );
    assert!(text.contains("text changed:"), "{text}");
    std::fs::write(p.join("plants.csv"), data).expect("restore");

    // An edited block: the document is named as changed.
    let doc = std::fs::read_to_string(p.join("report.md")).expect("doc");
    std::fs::write(
        p.join("report.md"),
        doc.replace(
            "model: weight ~ group",
            "model: weight ~ group\ncompare: lsd",
        ),
    )
    .expect("edit");
    let drift = sheaf(p, &["verify", "report.md", "-o", "out-html"]);
    assert_eq!(drift.status.code(), Some(1));
    let text = stderr(&drift);
    assert!(
        text.contains("document changed:")
            && text.contains("comparisons[0].method: \"tukey\" → \"lsd\""),
        "{text}"
    );
    std::fs::write(p.join("report.md"), doc).expect("restore");

    // A hand-edited report: the changed line is shown.
    let report = std::fs::read_to_string(p.join("out-md/report.md")).expect("report");
    std::fs::write(p.join("out-md/report.md"), report.replace("F = ", "F was ")).expect("edit");
    let drift = sheaf(p, &["verify", "report.md", "-o", "out-md", "--to", "md"]);
    assert_eq!(drift.status.code(), Some(1));
    assert!(
        stderr(&drift).contains("report.md line"),
        "{}",
        stderr(&drift)
    );

    // A missing figure file is named.
    std::fs::remove_file(p.join("out-md/report-growth-box.svg")).expect("remove");
    let drift = sheaf(p, &["verify", "report.md", "-o", "out-md", "--to", "md"]);
    assert!(
        stderr(&drift).contains("missing outputs:")
            && stderr(&drift).contains("report-growth-box.svg")
    );
}

#[test]
fn new_scaffolds_a_study_that_builds_and_never_overwrites() {
    let dir = tempfile::tempdir().expect("temp dir");
    let made = sheaf(dir.path(), &["new", "basil"]);
    assert!(made.status.success(), "{}", stderr(&made));
    let built = sheaf(dir.path(), &["build", "basil/report.md", "-o", "basil/out"]);
    assert!(built.status.success(), "{}", stderr(&built));
    let html = std::fs::read_to_string(dir.path().join("basil/out/report.html")).expect("report");
    assert!(html.contains("Invented example"));
    let again = sheaf(dir.path(), &["new", "basil"]);
    assert_eq!(again.status.code(), Some(1));
    assert!(stderr(&again).contains("already exists and is not empty"));
}

#[test]
fn validate_passes_and_writes_its_report() {
    let dir = tempfile::tempdir().expect("temp dir");
    let v = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir.path())
        .args(["validate", "-o", "validation"])
        .env("SOURCE_DATE_EPOCH", "1700000000")
        .output()
        .expect("runs");
    let stdout = String::from_utf8_lossy(&v.stdout);
    assert_eq!(v.status.code(), Some(0), "{stdout}");
    assert!(stdout.contains(" passed, 0 failed"));
    // 1700000000 s after the epoch is 2023-11-14 22:13:20 UTC.
    assert!(stdout.contains("run on 2023-11-14"), "{stdout}");
    let json: serde_json::Value = serde_json::from_slice(
        &std::fs::read(dir.path().join("validation/validation.results.json")).expect("json"),
    )
    .expect("parses");
    let checks = json["checks"].as_array().expect("checks");
    assert!(checks.len() > 500);
    assert!(
        checks
            .iter()
            .any(|c| c["source"] == "NIST StRD ANOVA certified values")
    );
    assert!(json["revision"].is_string() && json["platform"].is_string());
    assert_eq!(json["date"], "2023-11-14");
    let html =
        std::fs::read_to_string(dir.path().join("validation/validation.html")).expect("html");
    assert!(html.contains("SmLs09: F"));
    assert!(html.contains("run on 2023-11-14"));
    // The summary opens the page, and each area's counts are its table's
    // rows and the results file's checks of that area.
    assert!(html.find("Summary by area") < html.find("<section"));
    let mut total = 0;
    for row in html.split("<tr data-area=\"").skip(1) {
        let key = row.split('"').next().expect("key");
        let numbers: Vec<usize> = row
            .split("<td class=\"num\">")
            .skip(1)
            .take(2)
            .map(|t| t.split('<').next().expect("cell").parse().expect("count"))
            .collect();
        let (count, passed) = (numbers[0], numbers[1]);
        assert_eq!(count, passed, "{key}: every check passes");
        let section = html
            .split(&format!("<section id=\"{key}\">"))
            .nth(1)
            .and_then(|s| s.split("</section>").next())
            .expect("section");
        assert_eq!(
            section.matches("<tr>").count() - 1,
            count,
            "{key}: table rows"
        );
        let area = key.replace('-', "_");
        let in_json = checks.iter().filter(|c| c["area"] == area.as_str()).count();
        assert_eq!(in_json, count, "{key}: results file");
        total += count;
    }
    assert_eq!(total, checks.len());
}

/// Runs `verify` on `out` and returns (exit code, stderr).
fn verify(p: &Path, out: &str, extra: &[&str]) -> (Option<i32>, String) {
    let mut args = vec!["verify", "report.md", "-o", out];
    args.extend_from_slice(extra);
    let o = sheaf(p, &args);
    (o.status.code(), stderr(&o))
}

#[test]
fn verify_catches_every_edit_of_the_results_file() {
    let dir = study();
    let p = dir.path();
    assert!(
        sheaf(p, &["build", "report.md", "-o", "out"])
            .status
            .success()
    );
    let path = p.join("out/report.results.json");
    let original = std::fs::read_to_string(&path).expect("results");
    let version = format!("\"sheaf\": \"{}\"", env!("CARGO_PKG_VERSION"));
    let bytes_field = original
        .lines()
        .find(|l| l.contains("\"bytes\":"))
        .expect("an input size")
        .trim()
        .to_string();
    let edits: Vec<(&str, String, &str)> = vec![
        (
            "whitespace only",
            original.replacen("{\n", "{\n ", 1),
            "in layout only",
        ),
        (
            "an added field",
            original.replacen("{\n", "{\n  \"extra\": 1,\n", 1),
            "file: extra: 1 → absent",
        ),
        (
            "the document's name",
            original.replacen(
                "\"document\": \"report.md\"",
                "\"document\": \"other.md\"",
                1,
            ),
            "file: document: \"other.md\" → \"report.md\"",
        ),
        (
            "sheaf's version",
            original.replacen(&version, "\"sheaf\": \"0.0.9\"", 1),
            "file: sheaf: \"0.0.9\"",
        ),
        (
            "an input's size",
            original.replacen(&bytes_field, "\"bytes\": 1", 1),
            "plants.csv: size 1 →",
        ),
    ];
    for (what, edited, expect) in edits {
        assert_ne!(edited, original, "{what}: the edit applies");
        std::fs::write(&path, &edited).expect("edit");
        let (code, text) = verify(p, "out", &[]);
        assert_eq!(code, Some(1), "{what}: {text}");
        assert!(
            text.contains("edited after sheaf wrote them:"),
            "{what}: {text}"
        );
        assert!(text.contains(expect), "{what}: {text}");
        assert!(!text.contains("inputs changed:"), "{what}: {text}");
    }
    // A tampered input hash is an edit of the results file, not a changed input.
    let hash_at = original.find("\"sha256\": \"").expect("a hash") + 11;
    let mut tampered = original.clone();
    let flipped = if &original[hash_at..=hash_at] == "0" {
        "1"
    } else {
        "0"
    };
    tampered.replace_range(hash_at..=hash_at, flipped);
    std::fs::write(&path, &tampered).expect("tamper");
    let (code, text) = verify(p, "out", &[]);
    assert_eq!(code, Some(1), "{text}");
    assert!(
        text.contains("report.results.json: its SHA-256 is not the one report.sha256 records"),
        "{text}"
    );
    assert!(!text.contains("inputs changed:"), "{text}");
    std::fs::write(&path, &original).expect("restore");
    let (code, text) = verify(p, "out", &[]);
    assert_eq!(code, Some(0), "{text}");
}

#[test]
fn verify_knows_the_format_and_its_advice_works() {
    let dir = study();
    let p = dir.path();
    assert!(
        sheaf(p, &["build", "report.md", "-o", "md", "--to", "md"])
            .status
            .success()
    );
    // No --to: the results file says Markdown.
    let (code, text) = verify(p, "md", &[]);
    assert_eq!(code, Some(0), "{text}");
    // After a data change the advice names --to md, and following it works.
    let data = std::fs::read_to_string(p.join("plants.csv")).expect("data");
    std::fs::write(p.join("plants.csv"), data.replace("6.31", "6.91")).expect("edit");
    let (code, text) = verify(p, "md", &[]);
    assert_eq!(code, Some(1), "{text}");
    assert!(
        text.contains("`sheaf build report.md -o md --to md`"),
        "{text}"
    );
    assert!(!text.contains("missing outputs"), "{text}");
    let rebuilt = sheaf(p, &["build", "report.md", "-o", "md", "--to", "md"]);
    assert!(rebuilt.status.success());
    assert_eq!(verify(p, "md", &[]).0, Some(0));
    assert!(!p.join("md/report.html").exists());
}

#[test]
fn verify_shows_where_a_line_changed_and_notes_other_files() {
    let dir = study();
    let p = dir.path();
    let doc = std::fs::read_to_string(p.join("report.md")).expect("doc");
    let long = format!("{doc}\n{} the end of a long line.\n", "Words ".repeat(40));
    std::fs::write(p.join("report.md"), &long).expect("doc");
    assert!(
        sheaf(p, &["build", "report.md", "-o", "out", "--to", "md"])
            .status
            .success()
    );
    let report = std::fs::read_to_string(p.join("out/report.md")).expect("report");
    std::fs::write(
        p.join("out/report.md"),
        report.replace("the end of a long line", "the END of a long line"),
    )
    .expect("hand edit");
    let (code, text) = verify(p, "out", &[]);
    assert_eq!(code, Some(1), "{text}");
    assert!(
        text.contains("the end of a long line") && text.contains("the END of a long line"),
        "both excerpts show the change: {text}"
    );
    assert!(
        text.contains("report.md: its SHA-256 is not the one"),
        "{text}"
    );
    std::fs::write(p.join("out/report.md"), &report).expect("restore");

    // A file the build does not write is worth a line, not a failure.
    std::fs::write(p.join("out/stale-figure.svg"), "<svg/>").expect("stray");
    let (code, text) = verify(p, "out", &[]);
    assert_eq!(code, Some(0), "{text}");
    assert!(
        text.contains("not written by this build") && text.contains("stale-figure.svg"),
        "{text}"
    );
    // A link in place of an output is never read through.
    #[cfg(unix)]
    {
        std::fs::remove_file(p.join("out/report.md")).expect("rm");
        std::os::unix::fs::symlink(p.join("report.md"), p.join("out/report.md")).expect("link");
        let (code, text) = verify(p, "out", &[]);
        assert_eq!(code, Some(1), "{text}");
        assert!(
            text.contains("cannot be read as a file sheaf wrote"),
            "{text}"
        );
    }
}
