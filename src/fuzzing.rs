//! Entry points shared by the fuzz targets (fuzz/) and the corpus replay test
//! (tests/fuzz_corpus.rs): each takes arbitrary bytes and must never panic.

use crate::compile::{World, compile};
use crate::render::Format;

/// Block bodies: the key-value grammar and both block checkers.
pub fn block_parser(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if let Ok(entries) = crate::doc::keyvalue::parse_entries(text, 1) {
        let defaults = crate::doc::block::Defaults { compare: None };
        let _ = crate::doc::block::anova_spec(&entries, 1, defaults);
        let _ = crate::doc::power::power_spec(&entries, 1);
    }
}

/// Model formulas.
pub fn formula(data: &[u8]) {
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = crate::doc::formula::parse_formula(text);
    }
}

/// Whole documents: front matter, blocks, expressions (no data read).
pub fn document(data: &[u8]) {
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = crate::doc::parse_document("fuzz.md", text.to_string());
    }
}

/// CSV files: the reader, then a one-factor and a two-factor extraction.
pub fn csv(data: &[u8]) {
    let format = crate::data::CsvFormat::default();
    if let Ok(table) = crate::data::Table::parse(data, &format) {
        if let (Some(a), Some(b)) = (table.header.first().cloned(), table.header.get(1).cloned()) {
            let _ = crate::data::factor_response(&table, &a, &b, &format);
            let _ = crate::data::factorial_response(&table, &a, &[b.as_str()], &format);
        }
    }
}

struct Fixed;

impl World for Fixed {
    fn read(&self, _path: &str) -> std::io::Result<Vec<u8>> {
        Ok(
            b"y,g,h\n1.5,a,p\n2.5,a,q\n3.1,b,p\n4.2,b,q\n5.3,c,p\n6.9,c,q\n2.2,a,p\n4.4,b,q\n"
                .to_vec(),
        )
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

/// Template expansion and the whole pipeline: the input is a document whose
/// blocks all read the same small data file.
pub fn expand(data: &[u8]) {
    let _ = compile("fuzz.md", data, &Fixed, Format::Html);
    let _ = compile("fuzz.md", data, &Fixed, Format::Markdown);
}
