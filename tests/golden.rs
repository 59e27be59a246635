//! Whole-document golden tests: each folder in tests/cases/ holds a report.md
//! and its data; `expected/` holds the HTML, Markdown, LaTeX, results file
//! and figure files sheaf must produce, byte for byte, and the parts of the
//! docx (`report.docx.parts.txt`: every XML part as written, every media
//! file by its size and SHA-256). Regenerate after an intended change with
//!
//!     SHEAF_BLESS=1 cargo test --test golden
//!
//! and review the diff before committing. The numbers inside are checked
//! against scipy/statsmodels by tests/oneway_reference.rs; these tests pin
//! the layout, formatting and escaping.

mod common;

use common::{build, cases};
use sheaf::provenance::sha256_hex;
use sheaf::render::{FORMATS, Format};
use std::io::Read;
use std::path::Path;

/// A report as the expected folder keeps it: a text report as written; a
/// docx as the text of its parts in archive order (XML as written, media
/// by size and SHA-256), so that a change reads as a diff.
fn comparable(name: &str, bytes: &[u8]) -> (String, Vec<u8>) {
    if !name.ends_with(".docx") {
        return (name.to_string(), bytes.to_vec());
    }
    let mut archive = zip::ZipArchive::new(std::io::Cursor::new(bytes)).expect("a zip archive");
    let mut text = String::new();
    for i in 0..archive.len() {
        let mut entry = archive.by_index(i).expect("entry");
        let mut data = Vec::new();
        entry.read_to_end(&mut data).expect("entry bytes");
        text.push_str(&format!("==== {} ====\n", entry.name()));
        match String::from_utf8(data) {
            Ok(xml) if !entry.name().starts_with("word/media/") => text.push_str(&xml),
            Ok(other) => text.push_str(&format!(
                "{} bytes, SHA-256 {}\n",
                other.len(),
                sha256_hex(other.as_bytes())
            )),
            Err(e) => text.push_str(&format!(
                "{} bytes, SHA-256 {}\n",
                e.as_bytes().len(),
                sha256_hex(e.as_bytes())
            )),
        }
    }
    (format!("{name}.parts.txt"), text.into_bytes())
}

#[test]
fn every_case_matches_its_expected_output() {
    let bless = std::env::var_os("SHEAF_BLESS").is_some();
    let mut failures = Vec::new();
    for dir in cases() {
        let expected = dir.join("expected");
        for format in FORMATS.iter().copied() {
            let built = build(&dir, format);
            // The results file differs between formats only in figure file
            // names; keep one expected copy per format.
            let results_name = if format == Format::Html {
                built.results_name.clone()
            } else {
                built
                    .results_name
                    .replace(".results.json", &format!(".{}.results.json", format.name()))
            };
            let (report_name, report) = comparable(&built.report_name, &built.report);
            let mut outputs = vec![(&report_name, &report), (&results_name, &built.results)];
            outputs.extend(built.files.iter().map(|(n, b)| (n, b)));
            for (name, bytes) in outputs {
                let path = expected.join(name);
                if bless {
                    std::fs::create_dir_all(&expected).expect("expected folder");
                    std::fs::write(&path, bytes).expect("write expected");
                    continue;
                }
                match std::fs::read(&path) {
                    Ok(want) if &want == bytes => {}
                    Ok(_) => failures.push(format!(
                        "{} differs (rerun with SHEAF_BLESS=1 and review the diff)",
                        path.display()
                    )),
                    Err(_) => failures.push(format!("{} is missing", path.display())),
                }
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn two_builds_are_byte_identical() {
    for dir in cases() {
        for format in FORMATS.iter().copied() {
            let (a, b) = (build(&dir, format), build(&dir, format));
            assert_eq!(a.report, b.report, "{}", dir.display());
            assert_eq!(a.results, b.results, "{}", dir.display());
        }
    }
}

#[test]
fn strings_from_documents_and_data_are_escaped() {
    let built = build(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/cases/escaping"),
        Format::Html,
    );
    let html = String::from_utf8(built.report).expect("utf-8");
    assert!(
        !html.contains("<script>"),
        "a raw <script> reached the HTML"
    );
    assert!(
        !html.contains("<b>check"),
        "front-matter HTML was not escaped"
    );
    assert!(html.contains("&lt;script&gt;"));
    assert!(!html.contains("<script"), "no scripts at all in a report");
    let md = String::from_utf8(
        build(
            &Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/cases/escaping"),
            Format::Markdown,
        )
        .report,
    )
    .expect("utf-8");
    assert!(
        md.contains("a\\|b"),
        "a pipe in a level name must not split a Markdown table cell"
    );
    assert!(
        md.contains("print(\"{{ not evaluated }}\")"),
        "code blocks keep template syntax"
    );
}

#[test]
fn html_is_self_contained() {
    for dir in cases() {
        let html = String::from_utf8(build(&dir, Format::Html).report).expect("utf-8");
        for forbidden in [
            "<script",
            "<link",
            "src=\"http",
            "href=\"http",
            "@import",
            "url(",
        ] {
            assert!(
                !html.contains(forbidden),
                "{}: found {forbidden}",
                dir.display()
            );
        }
    }
}

#[test]
fn plant_growth_numbers_in_prose() {
    // Source: METHODS 6.1 (Dobson 1983; published from memory, confirmed with
    // scipy): F(2, 27) = 4.846, p = 0.0159; means trt2 5.526, trt1 4.661.
    let built = build(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/cases/plant-growth"),
        Format::Markdown,
    );
    let md = String::from_utf8(built.report).expect("utf-8");
    assert!(md.contains("(F(2, 27) = 4.85, p = 0.016)"), "{md}");
    assert!(md.contains("The F statistic was\n4.85 on 2 and 27 degrees of"));
    assert!(md.contains("p = 0.016 (0.016 to two"));
    assert!(md.contains("trt2 exceeded trt1 by\n0.865 g"));
    assert!(md.contains("`{{ growth.f }}`"));
    // Letters: METHODS 6.4, trt2 a, ctrl ab, trt1 b. Pooled 95% CIs, METHODS
    // 6.1: trt2 [5.1215, 5.9305], ctrl [4.6275, 5.4365] to 4 decimals; the
    // unrounded ends are 5.12153/5.93047 and 4.62753/5.43647.
    assert!(
        md.contains("| trt2 | 10 | 5.526 | 0.443 | 0.197 | 5.122 to 5.930 | a |"),
        "{md}"
    );
    assert!(md.contains("| ctrl | 10 | 5.032 | 0.583 | 0.197 | 4.628 to 5.436 | ab |"));
    assert!(md.contains("| trt1 | 10 | 4.661 | 0.794 | 0.197 | 4.257 to 5.065 | b |"));
    // ANOVA table as printed in METHODS 4.1.
    assert!(md.contains("| group | 2 | 3.766 | 1.883 | 4.85 | 0.016 |"));
    assert!(md.contains("| Residual | 27 | 10.492 | 0.389 |  |  |"));
    assert!(md.contains("| Total | 29 | 14.258 |  |  |  |"));
}
