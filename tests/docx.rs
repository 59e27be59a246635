//! The docx output (`--to docx`), read back from the archive: every XML
//! part is well-formed, every part has a content type, every relationship
//! leads to a part and every relationship id the parts use is declared; every
//! table cell is the cell the HTML report prints, and every number in a
//! table is the number its results-file field holds, as printed (rounded to
//! the digits shown); builds are byte-identical and hold no machine path;
//! `verify` explains a changed number by its field. The demo is converted
//! to PDF with LibreOffice where it is installed (else that test says so
//! and passes): the page count is checked and no page may be blank.
//!
//! The rules checked are those of ECMA-376 Part 2 (Open Packaging
//! Conventions): content types (section 10.1.2), relationships (section
//! 9.3), and XML 1.0 well-formedness.

mod common;
#[path = "common/keys.rs"]
mod keys;

use common::{build, cases};
use keys::{body_cells, resolve};
use serde_json::Value;
use sheaf::compile::Built;
use sheaf::render::Format;
use std::collections::{BTreeMap, BTreeSet};
use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::Command;

const MAIN: &str = "http://schemas.openxmlformats.org/wordprocessingml/2006/main";
const RELATIONSHIPS: &str = "http://schemas.openxmlformats.org/officeDocument/2006/relationships";

fn demo_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/substrate-trial")
}

/// The demo and every golden case, each with a name.
fn studies() -> Vec<(String, PathBuf)> {
    let mut all = vec![("demo".to_string(), demo_dir())];
    for dir in cases() {
        let name = dir.file_name().unwrap_or_default().to_string_lossy();
        all.push((name.into_owned(), dir));
    }
    all
}

/// The entries of a docx, in archive order.
fn parts(docx: &[u8]) -> Vec<(String, Vec<u8>)> {
    let mut archive = zip::ZipArchive::new(std::io::Cursor::new(docx)).expect("a zip archive");
    (0..archive.len())
        .map(|i| {
            let mut entry = archive.by_index(i).expect("entry");
            let mut data = Vec::new();
            entry.read_to_end(&mut data).expect("entry bytes");
            (entry.name().to_string(), data)
        })
        .collect()
}

fn part<'a>(parts: &'a [(String, Vec<u8>)], name: &str) -> &'a str {
    let bytes = &parts
        .iter()
        .find(|(n, _)| n == name)
        .unwrap_or_else(|| panic!("no part {name}"))
        .1;
    std::str::from_utf8(bytes).expect("UTF-8 part")
}

fn is_xml(name: &str) -> bool {
    name.ends_with(".xml") || name.ends_with(".rels")
}

/// The part a relationship's target names, from the part that holds it
/// (ECMA-376 Part 2, 9.3.2: targets are relative to the source's folder).
fn resolve_target(source: &str, target: &str) -> String {
    let mut path: Vec<&str> = source.split('/').collect();
    path.pop();
    for segment in target.split('/') {
        match segment {
            ".." => {
                path.pop();
            }
            "." | "" => {}
            s => path.push(s),
        }
    }
    path.join("/")
}

/// The source part of a relationships part: `word/_rels/document.xml.rels`
/// belongs to `word/document.xml`, `_rels/.rels` to the package.
fn source_of(rels: &str) -> String {
    let (folder, file) = rels.rsplit_once("_rels/").expect("a relationships part");
    format!("{folder}{}", file.trim_end_matches(".rels"))
}

/// What breaks the package rules in one docx.
fn package_problems(parts: &[(String, Vec<u8>)]) -> Vec<String> {
    let mut found = Vec::new();
    let names: BTreeSet<&str> = parts.iter().map(|(n, _)| n.as_str()).collect();
    let mut documents = BTreeMap::new();
    for (name, bytes) in parts.iter().filter(|(n, _)| is_xml(n)) {
        let text = match std::str::from_utf8(bytes) {
            Ok(t) => t,
            Err(e) => {
                found.push(format!("{name}: not UTF-8: {e}"));
                continue;
            }
        };
        match roxmltree::Document::parse(text) {
            Ok(doc) => {
                documents.insert(name.as_str(), doc);
            }
            Err(e) => found.push(format!("{name}: not well-formed: {e}")),
        }
    }
    let Some(types) = documents.get("[Content_Types].xml") else {
        found.push("no [Content_Types].xml".into());
        return found;
    };
    let mut defaults = BTreeSet::new();
    let mut overrides = BTreeSet::new();
    for node in types.descendants() {
        match node.tag_name().name() {
            "Default" => {
                defaults.insert(node.attribute("Extension").unwrap_or("").to_lowercase());
            }
            "Override" => {
                let part = node.attribute("PartName").unwrap_or("");
                overrides.insert(part.trim_start_matches('/').to_string());
                if !names.contains(part.trim_start_matches('/')) {
                    found.push(format!("content type for a missing part {part}"));
                }
            }
            _ => {}
        }
    }
    for name in names.iter().filter(|n| **n != "[Content_Types].xml") {
        let extension = name.rsplit_once('.').map_or("", |(_, e)| e).to_lowercase();
        if !overrides.contains(*name) && !defaults.contains(&extension) {
            found.push(format!("{name} has no content type"));
        }
    }
    let mut declared: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for (name, doc) in documents.iter().filter(|(n, _)| n.ends_with(".rels")) {
        let source = source_of(name);
        let ids = declared.entry(source.clone()).or_default();
        for rel in doc.descendants().filter(|n| n.has_tag_name("Relationship")) {
            let id = rel.attribute("Id").unwrap_or("");
            if !ids.insert(id.to_string()) {
                found.push(format!("{name}: id {id} given twice"));
            }
            let target = rel.attribute("Target").unwrap_or("");
            if rel.attribute("TargetMode") != Some("External") {
                let resolved = resolve_target(&source, target);
                if !names.contains(resolved.as_str()) {
                    found.push(format!("{name}: {id} leads to a missing part {resolved}"));
                }
            }
        }
    }
    for (name, doc) in &documents {
        for node in doc.descendants() {
            for attribute in node.attributes() {
                if attribute.namespace() != Some(RELATIONSHIPS) {
                    continue;
                }
                let known = declared
                    .get(*name)
                    .is_some_and(|ids| ids.contains(attribute.value()));
                if !known {
                    found.push(format!(
                        "{name}: r:{} names undeclared relationship {}",
                        attribute.name(),
                        attribute.value()
                    ));
                }
            }
        }
    }
    found
}

/// The text of a table cell as the word processor shows it.
fn cell_text(cell: roxmltree::Node) -> String {
    let mut text = String::new();
    for node in cell
        .descendants()
        .filter(|n| n.tag_name().namespace() == Some(MAIN))
    {
        match node.tag_name().name() {
            "t" => text.push_str(node.text().unwrap_or("")),
            "tab" => text.push('\t'),
            "br" => text.push('\n'),
            _ => {}
        }
    }
    text
}

/// Every table of the document: its rows, each with whether it is a
/// repeated header row and its cells' text.
fn tables(document: &str) -> Vec<Vec<(bool, Vec<String>)>> {
    let doc = roxmltree::Document::parse(document).expect("document.xml");
    fn child<'a, 'i>(node: roxmltree::Node<'a, 'i>, name: &str) -> Vec<roxmltree::Node<'a, 'i>> {
        node.children()
            .filter(|c| c.tag_name().name() == name)
            .collect()
    }
    doc.descendants()
        .filter(|n| n.tag_name().name() == "tbl")
        .map(|table| {
            child(table, "tr")
                .into_iter()
                .map(|row| {
                    let header = row
                        .descendants()
                        .any(|n| n.tag_name().name() == "tblHeader");
                    let cells = child(row, "tc").into_iter().map(cell_text).collect();
                    (header, cells)
                })
                .collect()
        })
        .collect()
}

/// A number as printed: its value, its decimals, and the bound it states
/// (`<` in "< 0.001", `>` in "> 0.999"), if any.
#[derive(Debug)]
struct Printed {
    value: f64,
    decimals: i32,
    bound: Option<char>,
}

/// The numbers a cell prints, in order (U+2212 is a minus sign).
fn printed_numbers(text: &str) -> Vec<Printed> {
    let chars: Vec<char> = text.chars().collect();
    let mut found = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let starts = chars[i].is_ascii_digit()
            && (i == 0 || !(chars[i - 1].is_alphanumeric() || chars[i - 1] == '.'));
        if !starts {
            i += 1;
            continue;
        }
        let negative = i > 0 && matches!(chars[i - 1], '−' | '-');
        let start = i;
        while i < chars.len() && (chars[i].is_ascii_digit() || chars[i] == '.') {
            i += 1;
        }
        let digits: String = chars[start..i].iter().collect();
        let digits = digits.trim_end_matches('.');
        let decimals = digits.split_once('.').map_or(0, |(_, d)| d.len() as i32);
        let Ok(magnitude) = digits.parse::<f64>() else {
            continue;
        };
        let before: String = chars[..start].iter().collect();
        let bound = before
            .trim_end()
            .chars()
            .last()
            .filter(|c| matches!(c, '<' | '>'));
        found.push(Printed {
            value: if negative { -magnitude } else { magnitude },
            decimals,
            bound,
        });
    }
    found
}

/// Whether `printed` shows `value`: within half a unit of its last digit
/// (the rounding rule, half away from zero, lands there; a relative 1e-12
/// covers the binary representation of the value), or on the side its
/// bound states.
fn shows(printed: &Printed, value: f64) -> bool {
    match printed.bound {
        Some('<') => value < printed.value,
        Some('>') => value > printed.value,
        _ => {
            let half = 0.5 * 10f64.powi(-printed.decimals);
            (value - printed.value).abs() <= half * (1.0 + 1e-9) + 1e-12 * value.abs()
        }
    }
}

/// Strips the markup from an HTML cell's text (which `body_cells` has
/// unescaped already: a `<` that opens no tag, as in "< 0.001", stays).
fn html_text(cell: &str) -> String {
    let mut out = String::new();
    let mut rest = cell;
    while let Some(open) = rest.find('<') {
        let after = &rest[open + 1..];
        let is_tag = after.starts_with(|c: char| c.is_ascii_alphabetic() || c == '/');
        match after.find('>').filter(|_| is_tag) {
            Some(close) => {
                out.push_str(&rest[..open]);
                rest = &after[close + 1..];
            }
            None => {
                out.push_str(&rest[..=open]);
                rest = after;
            }
        }
    }
    out.push_str(rest);
    out
}

/// Decodes the numeric character references pulldown-cmark writes in code
/// (`&#x2f;` for `/`), which `body_cells` leaves.
fn decode_numeric_entities(text: &str) -> String {
    let mut out = String::new();
    let mut rest = text;
    while let Some(at) = rest.find("&#") {
        out.push_str(&rest[..at]);
        let after = &rest[at + 2..];
        let decoded = after.split_once(';').and_then(|(code, tail)| {
            let number = match code.strip_prefix('x') {
                Some(hex) => u32::from_str_radix(hex, 16).ok()?,
                None => code.parse().ok()?,
            };
            Some((char::from_u32(number)?, tail))
        });
        match decoded {
            Some((c, tail)) => {
                out.push(c);
                rest = tail;
            }
            None => {
                out.push_str("&#");
                rest = after;
            }
        }
    }
    out.push_str(rest);
    out
}

/// What differs between the docx's tables and the HTML report's, and the
/// numbers a docx table prints that are not its field's value as printed.
fn table_problems(study: &str, docx: &Built, html: &Built) -> Vec<String> {
    let parts = parts(&docx.report);
    let body: Vec<String> = tables(part(&parts, "word/document.xml"))
        .into_iter()
        .flatten()
        .filter(|(header, _)| !header)
        .flat_map(|(_, cells)| cells)
        .collect();
    let html_cells = body_cells(std::str::from_utf8(&html.report).expect("UTF-8 HTML"));
    let results: Value = serde_json::from_slice(&docx.results).expect("results JSON");
    let mut found = Vec::new();
    if body.len() != html_cells.len() {
        found.push(format!(
            "{study}: {} body cells in the docx, {} in the HTML",
            body.len(),
            html_cells.len()
        ));
        return found;
    }
    let mut checked = 0;
    for (text, cell) in body.iter().zip(&html_cells) {
        // A level name such as `<script>` is text in both; a prose table's
        // cell may hold markup in the HTML.
        let html = decode_numeric_entities(&cell.text);
        if *text != html && *text != html_text(&html) {
            found.push(format!("{study}: docx cell `{text}`, HTML cell `{html}`"));
            continue;
        }
        let Some(key) = cell.key.as_deref().filter(|_| cell.numeric) else {
            continue;
        };
        let values = match resolve(&results, key) {
            Ok(values) => values,
            Err(why) => {
                found.push(format!("{study}: `{key}` does not resolve: {why}"));
                continue;
            }
        };
        let printed = printed_numbers(text);
        // A one-sided interval has its open end null and prints one number.
        let numbers = values.iter().filter_map(Value::as_f64);
        for (k, mut value) in numbers.enumerate() {
            // The covariance-structure table prints −2 log-likelihood from
            // the log-likelihood field (src/render/tables/covariance.rs);
            // the Box-Cox table prints the log-likelihood itself.
            if key.ends_with(".log_likelihood") && !key.contains(".box_cox.") {
                value *= -2.0;
            }
            checked += 1;
            match printed.get(k) {
                Some(p) if shows(p, value) => {}
                _ => found.push(format!(
                    "{study}: cell `{text}` does not print `{key}` = {value} as rounded"
                )),
            }
        }
    }
    assert!(checked > 0 || body.is_empty(), "{study}: no number checked");
    eprintln!(
        "{study}: {} cells read back, {checked} numbers checked",
        body.len()
    );
    found
}

#[test]
fn every_part_is_well_formed_typed_and_linked() {
    let mut problems = Vec::new();
    for (study, dir) in studies() {
        let built = build(&dir, Format::Docx);
        let parts = parts(&built.report);
        problems.extend(
            package_problems(&parts)
                .into_iter()
                .map(|p| format!("{study}: {p}")),
        );
        // The package's first entry is its content types, and the main
        // document is reached from the package relationships.
        assert_eq!(parts[0].0, "[Content_Types].xml", "{study}");
        assert!(part(&parts, "_rels/.rels").contains("Target=\"word/document.xml\""));
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn every_table_number_is_the_number_the_results_file_records() {
    let mut problems = Vec::new();
    for (study, dir) in studies() {
        let docx = build(&dir, Format::Docx);
        let html = build(&dir, Format::Html);
        problems.extend(table_problems(&study, &docx, &html));
    }
    assert!(
        problems.is_empty(),
        "{} problems:\n{}",
        problems.len(),
        problems.join("\n")
    );
}

#[test]
fn printed_numbers_are_read_with_their_digits_and_bounds() {
    let read = printed_numbers("−27.88 to 2.87");
    assert_eq!(read.len(), 2);
    assert_eq!((read[0].value, read[0].decimals), (-27.88, 2));
    assert!(shows(&read[0], -27.875));
    assert!(!shows(&read[0], -27.87));
    let bound = &printed_numbers("< 0.001")[0];
    assert!(shows(bound, 4.6e-7) && !shows(bound, 0.002));
    let pair = printed_numbers("3, 24");
    assert_eq!((pair[0].value, pair[1].value), (3.0, 24.0));
    assert!(printed_numbers("peat-perlite").is_empty());
}

#[test]
fn tables_are_native_with_captions_above_repeating_headers_and_numbers_right_aligned() {
    let built = build(&demo_dir(), Format::Docx);
    let parts = parts(&built.report);
    let document = part(&parts, "word/document.xml");
    let doc = roxmltree::Document::parse(document).expect("document.xml");
    let results: Value = serde_json::from_slice(&built.results).expect("results JSON");
    let mut captioned = 0;
    for table in doc.descendants().filter(|n| n.tag_name().name() == "tbl") {
        let first_row = table
            .children()
            .find(|c| c.tag_name().name() == "tr")
            .expect("a row");
        assert!(
            first_row
                .descendants()
                .any(|n| n.tag_name().name() == "tblHeader"),
            "a table without a repeating header row"
        );
        let style = table
            .descendants()
            .find(|n| n.tag_name().name() == "tblStyle")
            .and_then(|n| n.attribute((MAIN, "val")));
        assert_eq!(style, Some("ReportTable"));
        let before = table.prev_sibling_element().expect("a paragraph before");
        let caption = before
            .descendants()
            .find(|n| n.tag_name().name() == "pStyle")
            .and_then(|n| n.attribute((MAIN, "val")));
        if caption == Some("TableCaption") {
            captioned += 1;
            assert!(cell_text(before).starts_with(&format!("Table {captioned}. ")));
        }
    }
    let in_views = document.matches("SEQ Table \\* ARABIC").count();
    assert_eq!(captioned, in_views);
    assert!(captioned > 40, "{captioned} captioned tables");
    assert!(document.contains("<w:jc w:val=\"right\"/>"));
    // Every figure the results file lists is a picture in the document.
    let figures: usize = results["blocks"]
        .as_array()
        .expect("blocks")
        .iter()
        .map(|b| b["figures"].as_array().map_or(0, Vec::len))
        .sum();
    let pictures = parts
        .iter()
        .filter(|(n, b)| n.ends_with(".png") && b.starts_with(b"\x89PNG"))
        .count();
    assert_eq!(pictures, figures);
    assert_eq!(document.matches("<wp:inline").count(), figures);
    for style in ["Heading1", "FigureCaption", "TableNote", "Title"] {
        assert!(
            document.contains(&format!("<w:pStyle w:val=\"{style}\"/>")),
            "{style}"
        );
    }
    let styles = part(&parts, "word/styles.xml");
    for name in [
        "Table caption",
        "Table note",
        "Figure caption",
        "Report table",
    ] {
        assert!(
            styles.contains(&format!("<w:name w:val=\"{name}\"/>")),
            "{name}"
        );
    }
}

#[test]
fn the_page_is_a4_unless_the_front_matter_says_letter() {
    let dir = tempfile::tempdir().expect("temp dir");
    let data = "g,y\na,1\na,2\na,1.5\nb,3\nb,2.5\nb,3.5\n";
    std::fs::write(dir.path().join("d.csv"), data).expect("data");
    let body = "## A\n\n```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n";
    for (front, width, height) in [
        ("", 11906, 16838),
        ("---\npaper: letter\n---\n", 12240, 15840),
    ] {
        std::fs::write(dir.path().join("report.md"), format!("{front}{body}")).expect("document");
        let built = build(dir.path(), Format::Docx);
        let parts = parts(&built.report);
        let document = part(&parts, "word/document.xml");
        assert!(
            document.contains(&format!("<w:pgSz w:w=\"{width}\" w:h=\"{height}\"/>")),
            "{front}"
        );
        // The footer shows the page number.
        assert!(part(&parts, "word/footer1.xml").contains(" PAGE "));
    }
}

/// Text with every character XML treats specially, and characters XML 1.0
/// cannot hold at all, in level names, the caption and prose.
#[test]
fn every_string_is_escaped_and_forbidden_characters_dropped() {
    let dir = tempfile::tempdir().expect("temp dir");
    let data = "mix & <1>,y\n\"a&b\",1.0\n\"a&b\",1.4\n\"a&b\",1.2\n\"<c> \"\"q\"\" 'x'\",2.1\n\"<c> \"\"q\"\" 'x'\",2.5\n\"<c> \"\"q\"\" 'x'\",2.2\n\"bell\u{7}\",3.3\n\"bell\u{7}\",3.1\n\"bell\u{7}\",3.6\n";
    std::fs::write(dir.path().join("d.csv"), data).expect("data");
    let document = "---\ntitle: A & B <i>\nauthor: \"Q\" 'R'\n---\n\nProse with & < > \" ' and a [link](https://example.org/?a=1&b=2) and ]]>.\n\n```anova\nid: odd\ndata: d.csv\nmodel: y ~ `mix & <1>`\ncaption: \"Caption & <x>\"\n```\n";
    std::fs::write(dir.path().join("report.md"), document).expect("document");
    let built = build(dir.path(), Format::Docx);
    let parts = parts(&built.report);
    let problems = package_problems(&parts);
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    let xml = part(&parts, "word/document.xml");
    let doc = roxmltree::Document::parse(xml).expect("document.xml");
    let text: String = doc
        .descendants()
        .filter(|n| n.tag_name().name() == "t")
        .filter_map(|n| n.text())
        .collect();
    for shown in [
        "A & B <i>",
        "\"Q\" 'R'",
        "Prose with & < > \" ' and a ",
        "]]>",
        "Caption & <x>",
        "a&b",
        "<c> \"q\" 'x'",
        "mix & <1>",
        "bell",
    ] {
        assert!(text.contains(shown), "`{shown}` not in the text:\n{text}");
    }
    assert!(
        !text.contains('\u{7}'),
        "a control character reached the text"
    );
    let rels = part(&parts, "word/_rels/document.xml.rels");
    assert!(rels.contains("Target=\"https://example.org/?a=1&amp;b=2\" TargetMode=\"External\""));
    assert!(part(&parts, "docProps/core.xml").contains("<dc:title>A &amp; B &lt;i&gt;</dc:title>"));
}

#[test]
fn two_builds_are_byte_identical_and_hold_no_machine_path() {
    // A copy of the demo in a fresh folder, built from its full path: no
    // part may name that folder, or this checkout.
    let dir = tempfile::tempdir().expect("temp dir");
    for entry in ["report.md", "data"] {
        let from = demo_dir().join(entry);
        if from.is_dir() {
            std::fs::create_dir(dir.path().join(entry)).expect("folder");
            for file in std::fs::read_dir(&from).expect("data folder").flatten() {
                std::fs::copy(file.path(), dir.path().join(entry).join(file.file_name()))
                    .expect("copy");
            }
        } else {
            std::fs::copy(&from, dir.path().join(entry)).expect("copy");
        }
    }
    let document = dir.path().join("report.md");
    let build = || {
        sheaf::compile::build_file(&document, Format::Docx, None, false).expect("the demo builds")
    };
    let (a, b) = (build(), build());
    assert_eq!(a.report, b.report, "two builds differ");
    let machine = [
        dir.path().display().to_string(),
        env!("CARGO_MANIFEST_DIR").to_string(),
    ];
    for (name, bytes) in parts(&a.report) {
        let text = String::from_utf8_lossy(&bytes);
        for path in &machine {
            assert!(!text.contains(path.as_str()), "{name} holds {path}");
        }
    }
    // Every entry is dated 1980-01-01, the earliest a zip entry holds.
    let mut archive = zip::ZipArchive::new(std::io::Cursor::new(&a.report)).expect("zip");
    for i in 0..archive.len() {
        let entry = archive.by_index(i).expect("entry");
        let date = entry.last_modified().expect("a date");
        assert_eq!((date.year(), date.month(), date.day()), (1980, 1, 1));
    }
}

#[test]
fn verify_explains_a_changed_number_by_its_field() {
    let dir = tempfile::tempdir().expect("temp dir");
    let data = "g,y\na,1.0\na,2.0\na,1.5\nb,3.1\nb,2.5\nb,4.0\nc,2.2\nc,1.9\nc,2.8\n";
    std::fs::write(dir.path().join("d.csv"), data).expect("data");
    let body = "## A\n\n```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n";
    std::fs::write(dir.path().join("report.md"), body).expect("document");
    let out = dir.path().join("out");
    let document = dir.path().join("report.md");
    let build =
        || sheaf::compile::build_file(&document, Format::Docx, None, false).expect("builds");
    sheaf::output::write_outputs(&out, &build()).expect("written");
    let drift = sheaf::verify::verify(&build(), &out).expect("verified");
    assert!(drift.is_clean(), "{}", drift.account());
    std::fs::write(dir.path().join("d.csv"), data.replace("4.0", "4.6")).expect("data");
    let drift = sheaf::verify::verify(&build(), &out).expect("verified");
    assert!(!drift.is_clean());
    assert!(
        drift
            .numbers
            .iter()
            .any(|n| n.starts_with("t: anova.terms[0].f:")),
        "{}",
        drift.account()
    );
    assert!(
        drift
            .text
            .iter()
            .any(|t| t.starts_with("report.docx: word/document.xml line ")),
        "{}",
        drift.account()
    );
}

fn installed(program: &str, flag: &str) -> bool {
    Command::new(program)
        .arg(flag)
        .output()
        .is_ok_and(|o| o.status.success())
}

/// The page count pdfinfo reads.
fn page_count(pdf: &Path) -> usize {
    let info = Command::new("pdfinfo")
        .arg(pdf)
        .output()
        .expect("pdfinfo runs");
    String::from_utf8_lossy(&info.stdout)
        .lines()
        .find_map(|l| l.strip_prefix("Pages:"))
        .and_then(|n| n.trim().parse().ok())
        .expect("pdfinfo prints the page count")
}

#[test]
fn libreoffice_converts_the_demo_to_pages_none_blank() {
    if !installed("soffice", "--version") {
        eprintln!("skipped: soffice (LibreOffice) is not on PATH, so the docx was not converted");
        return;
    }
    if !installed("pdfinfo", "-v") || !installed("pdftotext", "-v") {
        eprintln!("skipped: pdfinfo or pdftotext is not on PATH, so the PDF was not read");
        return;
    }
    let built = build(&demo_dir(), Format::Docx);
    let out = tempfile::tempdir().expect("temp dir");
    let docx = out.path().join(&built.report_name);
    std::fs::write(&docx, &built.report).expect("docx");
    // A profile of its own, so that no user's settings (or running
    // instance) take part.
    let profile = out.path().join("profile");
    let started = std::time::Instant::now();
    let run = Command::new("soffice")
        .env("HOME", out.path())
        .arg(format!(
            "-env:UserInstallation=file://{}",
            profile.display()
        ))
        .args(["--headless", "--convert-to", "pdf", "--outdir"])
        .arg(out.path())
        .arg(&docx)
        .output()
        .expect("soffice runs");
    let pdf = docx.with_extension("pdf");
    assert!(
        run.status.success() && pdf.is_file(),
        "LibreOffice did not convert the docx:\n{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let pages = page_count(&pdf);
    eprintln!(
        "LibreOffice: {pages} pages in {:.1} s",
        started.elapsed().as_secs_f64()
    );
    // Eleven blocks with 60-odd tables and eight figures, the contents and
    // the provenance: well over ten pages.
    assert!(pages > 10, "{pages} pages");
    for page in 1..=pages {
        let text = Command::new("pdftotext")
            .args(["-f", &page.to_string(), "-l", &page.to_string()])
            .arg(&pdf)
            .arg("-")
            .output()
            .expect("pdftotext runs");
        let text = String::from_utf8_lossy(&text.stdout);
        assert!(
            text.chars().filter(|c| c.is_alphanumeric()).count() > 20,
            "page {page} of {pages} is blank"
        );
    }
    let all = Command::new("pdftotext")
        .arg(&pdf)
        .arg("-")
        .output()
        .expect("pdftotext");
    let all = String::from_utf8_lossy(&all.stdout);
    for shown in [
        "Lettuce fresh weight",
        "Table 1. Analysis of variance",
        "Provenance",
    ] {
        assert!(all.contains(shown), "`{shown}` not in the PDF's text");
    }
}

const PROSE_DOCUMENT: &str = "\
## Prose of every kind

A [safe link](https://example.org/x%20y) and an [unsafe one](javascript:alert(1)),
*emphasis*, **strong**, ~~struck~~, `code`, an ![image](picture.svg) and <b>raw</b>.

> A quotation.

1. one
   - two
2. back

A paragraph between the lists.

5. a list starting at five

```python
def f(x):
    return x  # & <
```

| Name | Value |
|:-----|------:|
| a_b  | 1.5   |

### A subsection
";

#[test]
fn prose_keeps_headings_emphasis_links_lists_quotes_and_code() {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("report.md"), PROSE_DOCUMENT).expect("document");
    let built = build(dir.path(), Format::Docx);
    let parts = parts(&built.report);
    let problems = package_problems(&parts);
    assert!(problems.is_empty(), "{}", problems.join("\n"));
    let document = part(&parts, "word/document.xml");
    let rels = part(&parts, "word/_rels/document.xml.rels");
    for written in [
        "<w:pStyle w:val=\"Heading1\"/></w:pPr><w:r><w:t xml:space=\"preserve\">Prose of every kind</w:t>",
        "<w:pStyle w:val=\"Heading2\"/></w:pPr><w:r><w:t xml:space=\"preserve\">A subsection</w:t>",
        "<w:rStyle w:val=\"Hyperlink\"/></w:rPr><w:t xml:space=\"preserve\">safe link</w:t>",
        "<w:t xml:space=\"preserve\">unsafe one</w:t>",
        "<w:i/></w:rPr><w:t xml:space=\"preserve\">emphasis</w:t>",
        "<w:b/></w:rPr><w:t xml:space=\"preserve\">strong</w:t>",
        "<w:strike/></w:rPr><w:t xml:space=\"preserve\">struck</w:t>",
        "<w:rStyle w:val=\"CodeChar\"/>",
        "<w:i/></w:rPr><w:t xml:space=\"preserve\">image</w:t>",
        "&lt;b&gt;",
        "<w:pStyle w:val=\"Quote\"/>",
        "<w:pStyle w:val=\"CodeBlock\"/></w:pPr><w:r><w:t xml:space=\"preserve\">    return x  # &amp; &lt;</w:t>",
        "<w:ilvl w:val=\"1\"/>",
    ] {
        assert!(
            document.contains(written),
            "missing `{written}` in:\n{document}"
        );
    }
    assert!(rels.contains("Target=\"https://example.org/x%20y\" TargetMode=\"External\""));
    assert!(!rels.contains("javascript") && !document.contains("javascript"));
    // The list starting at five starts there; the first restarts at one.
    let numbering = part(&parts, "word/numbering.xml");
    assert!(
        numbering.contains("<w:startOverride w:val=\"1\"/>"),
        "{numbering}"
    );
    assert!(
        numbering.contains("<w:startOverride w:val=\"5\"/>"),
        "{numbering}"
    );
    // The Markdown table is a native table, its number column right-aligned.
    let table = &tables(document)[0];
    assert_eq!(
        table[0],
        (true, vec!["Name".to_string(), "Value".to_string()])
    );
    assert_eq!(
        table[1],
        (false, vec!["a_b".to_string(), "1.5".to_string()])
    );
}
