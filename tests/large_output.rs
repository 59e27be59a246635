//! Nothing a reader sees grows with the number of rows: on a large, skewed
//! file with many flagged observations and many rows left out, the report,
//! the results file and the terminal stay within fixed bounds, and figures
//! draw summaries instead of every point (saying so in their captions).

use std::path::Path;
use std::process::Command;

/// An invented file: four lines of a process, a right-skewed reading (the
/// exponential of a sum of uniforms, so thousands of residuals pass ±3), a
/// second factor, and a missing reading on every 40th row.
fn skewed(rows: u64) -> String {
    let mut text = String::from("line,shift,reading\n");
    for i in 0..rows {
        let u = |k: u64| {
            let z = (i.wrapping_mul(6_364_136_223_846_793_005) ^ k)
                .wrapping_mul(1_442_695_040_888_963_407);
            (z >> 11) as f64 / (1u64 << 53) as f64
        };
        let level = i % 4;
        let shift = (i / 4) % 3;
        if i % 40 == 7 {
            text.push_str(&format!("L{level},S{shift},NA\n"));
            continue;
        }
        let x = (u(1) + u(2) + u(3) - 1.5) * 2.4;
        let reading = 50.0 + 2.0 * level as f64 + 6.0 * x.exp();
        text.push_str(&format!("L{level},S{shift},{reading:.2}\n"));
    }
    text
}

fn build(dir: &Path, to: &str) -> (String, usize, usize) {
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .args(["build", "report.md", "-o", "out", "--to", to])
        .output()
        .expect("runs");
    let err = String::from_utf8_lossy(&o.stderr).into_owned();
    assert!(o.status.success(), "{err}");
    let report = if to == "md" {
        "out/report.md"
    } else {
        "out/report.html"
    };
    let size = |p: &str| {
        std::fs::metadata(dir.join(p))
            .map(|m| m.len() as usize)
            .unwrap_or_else(|e| panic!("{p}: {e}"))
    };
    (err, size(report), size("out/report.results.json"))
}

#[test]
fn a_large_skewed_file_gives_a_report_of_bounded_size() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    // 120,000 rows: large enough that per-row output would be megabytes
    // (every outlier line, every excluded line, every point in five figures).
    std::fs::write(p.join("log.csv"), skewed(120_000)).expect("data");
    let doc = "---\ntitle: Invented process log\n---\n\n```anova\nid: one\ndata: log.csv\nmodel: reading ~ line\nplot: box, strip, means, residuals, qq\n```\n\n```anova\nid: two\ndata: log.csv\nmodel: reading ~ line * shift\nplot: box, strip, residuals, qq\n```\n";
    std::fs::write(p.join("report.md"), doc).expect("doc");

    let (err, html, results) = build(p, "html");
    // Bounds: the same document on 2,000 rows gives a report of about
    // 0.3 MB; a fixed budget of 1.5 MB leaves room for wording, not rows.
    assert!(html < 1_500_000, "HTML report is {html} bytes");
    // The results file keeps the full exclusion list (3,000 rows here, about
    // 45 bytes each per block) and 100 outliers per block.
    assert!(results < 800_000, "results file is {results} bytes");
    assert!(err.lines().count() < 40, "terminal output:\n{err}");
    assert!(err.len() < 8_000, "terminal output is {} bytes", err.len());

    let report = std::fs::read_to_string(p.join("out/report.html")).expect("report");
    assert!(report.contains("individual points are not drawn"));
    assert!(report.contains("the results file lists every line"));
    assert!(report.contains("observations have an externally studentized residual beyond ±3"));

    let json: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(p.join("out/report.results.json")).expect("results"),
    )
    .expect("json");
    let checks = &json["blocks"][0]["checks"];
    let count = checks["outlier_count"].as_u64().expect("count");
    let listed = checks["outliers"].as_array().expect("list").len() as u64;
    assert!(count > 1000, "the skewed file flags many ({count})");
    assert_eq!(listed, 100, "the results file keeps the 100 most extreme");
    assert_eq!(json["blocks"][0]["n_excluded"], 3000);
    assert_eq!(
        json["blocks"][0]["excluded"].as_array().map(Vec::len),
        Some(3000)
    );
    // The kept ones are the most extreme: none left out is beyond them.
    let smallest_kept = checks["outliers"]
        .as_array()
        .expect("list")
        .iter()
        .map(|o| o["studentized_residual"].as_f64().expect("t").abs())
        .fold(f64::INFINITY, f64::min);
    assert!(smallest_kept > 3.0);
    assert!(
        report.contains(&format!(
            "{},{:03} observations have",
            count / 1000,
            count % 1000
        )),
        "the report states the count"
    );

    let (_, md, _) = build(p, "md");
    assert!(md < 200_000, "Markdown report is {md} bytes");
    for svg in std::fs::read_dir(p.join("out"))
        .expect("out")
        .filter_map(Result::ok)
        .filter(|e| e.path().extension().is_some_and(|x| x == "svg"))
    {
        let size = svg.metadata().expect("meta").len();
        assert!(size < 300_000, "{:?} is {size} bytes", svg.path());
    }
}
