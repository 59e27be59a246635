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
