//! The README's demo must build: every feature it shows has to work on a
//! fresh clone.

use sheaf::compile::{DiskWorld, compile};
use sheaf::render::Format;
use std::path::Path;

#[test]
fn the_demo_report_builds_in_both_formats() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/substrate-trial");
    let bytes = std::fs::read(dir.join("report.md")).expect("the demo document exists");
    for format in [Format::Html, Format::Markdown] {
        let built = compile(
            "report.md",
            &bytes,
            &DiskWorld { base: dir.clone() },
            format,
        )
        .unwrap_or_else(|d| panic!("the demo failed to build:\n{d}"));
        let text = String::from_utf8(built.report).expect("utf-8");
        assert!(
            text.contains("Invented data"),
            "the demo says its data are invented"
        );
        assert!(text.contains("Reading these results"));
    }
}

#[test]
fn the_readme_figure_is_the_demo_output() {
    // docs/demo-box.svg is shown in the README; it must be what the demo
    // draws today. Regenerate with:
    //   cargo run -- build examples/substrate-trial/report.md -o out --to md
    //   cp out/report-fresh-box.svg docs/demo-box.svg
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"));
    let bytes = std::fs::read(dir.join("examples/substrate-trial/report.md")).expect("demo");
    let built = compile(
        "report.md",
        &bytes,
        &DiskWorld {
            base: dir.join("examples/substrate-trial"),
        },
        Format::Markdown,
    )
    .expect("builds");
    let svg = &built
        .files
        .iter()
        .find(|(n, _)| n == "report-fresh-box.svg")
        .expect("box plot")
        .1;
    let committed = std::fs::read(dir.join("docs/demo-box.svg")).expect("docs/demo-box.svg");
    assert!(svg == &committed, "docs/demo-box.svg is stale");
}
