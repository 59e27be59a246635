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
/// Whatever the values, an accepted response gives finite summaries (values
/// beyond the analysable range are refused, never turned into inf or NaN),
/// and the level checks run on the levels found.
pub fn csv(data: &[u8]) {
    let format = crate::data::CsvFormat::default();
    if let Ok(table) = crate::data::Table::parse(data, &format)
        && let (Some(a), Some(b)) = (table.header.first().cloned(), table.header.get(1).cloned())
    {
        if let Ok(scanned) = crate::data::factor_response(&table, &a, &b, &format) {
            for level in scanned.levels.iter().filter(|l| l.summary.n > 0) {
                assert!(
                    level.summary.mean.is_finite() && level.summary.ss.is_finite(),
                    "non-finite summary for level {:?}: {:?}",
                    level.name,
                    level.summary
                );
            }
            let named: Vec<(&str, usize)> = scanned
                .levels
                .iter()
                .map(|l| (l.name.as_str(), l.lines.first().copied().unwrap_or(0)))
                .collect();
            let _ = crate::data::levels::level_warnings(&b, &named, table.rows.len());
        }
        let _ = crate::data::factorial_response(&table, &a, &[b.as_str()], &format);
    }
}

/// Workbooks: the bytes as a workbook file, then as the sheet data of a
/// minimal Office Open XML workbook, with a `range` taken from the first
/// line. Neither may panic or allocate beyond the documented limits (run
/// the fuzzer with a memory cap, see DEVELOPERS.md).
pub fn spreadsheet(data: &[u8]) {
    use crate::data::spreadsheet::read_sheet;
    let _ = read_sheet(data, None, None);
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let (range, sheet_data) = text.split_once('\n').unwrap_or(("", text));
    let Some(book) = minimal_workbook(sheet_data) else {
        return;
    };
    let range = (!range.trim().is_empty()).then_some(range.trim());
    if let Ok(table) = read_sheet(&book, None, range)
        && let (Some(y), Some(g)) = (table.header.first(), table.header.get(1))
    {
        let format = crate::data::CsvFormat::default();
        let _ = crate::data::factor_response(&table, y, g, &format);
    }
}

/// Parquet files: the whole table, and the rows of two named columns as
/// the streaming reader gets them (up to 64 MiB of text, so that a forged
/// row count cannot make the target run for ever).
pub fn parquet(data: &[u8]) {
    use std::io::Read;
    let format = crate::data::CsvFormat::default();
    let _ = crate::data::read_table("fuzz.parquet", data, &format, None, None);
    if let Ok(rows) = crate::data::parquet::rows_in_memory(
        bytes::Bytes::copy_from_slice(data),
        &["head", "fill_g"],
    ) {
        let _ = rows.take(64 << 20).read_to_end(&mut Vec::new());
    }
}

/// A one-sheet workbook (sheet `data`) around `sheet_data`, the content of
/// its `<sheetData>` element.
pub fn minimal_workbook(sheet_data: &str) -> Option<Vec<u8>> {
    use std::io::Write;
    let options =
        zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
    let mut zip = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let parts = [
        ("xl/workbook.xml", r#"<workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet name="data" sheetId="1" r:id="rId1"/></sheets></workbook>"#.to_string()),
        ("xl/_rels/workbook.xml.rels", r#"<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/></Relationships>"#.to_string()),
        ("xl/worksheets/sheet1.xml", format!(r#"<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>{sheet_data}</sheetData></worksheet>"#)),
    ];
    for (name, text) in parts {
        zip.start_file(name, options).ok()?;
        zip.write_all(text.as_bytes()).ok()?;
    }
    Some(zip.finish().ok()?.into_inner())
}

/// The chunked reader against the whole-table reader (differential): on
/// tiny chunks, from memory with two threads and from a stream with one,
/// it must accept exactly what the table reader accepts and find the same
/// levels, values (bit for bit), lines and exclusions. Panics on a mismatch,
/// which is what the fuzzer looks for.
pub fn scan(data: &[u8]) {
    use crate::data::scan::{ScanSpec, Source, scan_file};
    let format = crate::data::CsvFormat::default();
    let whole = crate::data::Table::parse(data, &format)
        .ok()
        .and_then(|table| {
            let (y, g) = (table.header.first()?.clone(), table.header.get(1)?.clone());
            let result = crate::data::factor_response(&table, &y, &g, &format);
            Some((y, g, result))
        });
    if let Ok(table) = crate::data::Table::parse(data, &format)
        && table.header.len() >= 3
    {
        factorial_scan(data, &table, &format);
    }
    let Some((y, g, whole)) = whole else {
        return;
    };
    let spec = ScanSpec {
        response: &y,
        factors: &[g.as_str()],
        format: &format,
        filters: &[],
        exclude: &[],
        keep_values: true,
    };
    let runs = [
        scan_file(Source::Memory(data), &spec, 7, 2),
        scan_file(Source::Stream(Box::new(data)), &spec, 5, 1),
    ];
    for chunked in runs {
        match (&whole, chunked) {
            (Ok(w), Ok(c)) => {
                assert_eq!(w.levels.len(), c.levels.len(), "levels");
                for (wl, cl) in w.levels.iter().zip(&c.levels) {
                    assert_eq!(wl.name, cl.name, "level name");
                    assert_eq!(wl.lines, cl.lines, "lines");
                    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
                    assert_eq!(bits(&wl.offsets), bits(&cl.offsets), "offsets");
                    assert_eq!(wl.offsets.len(), cl.summary.n, "n");
                }
                assert_eq!(w.excluded, c.excluded, "exclusions");
                assert_eq!(w.decimals, c.decimals, "decimals");
            }
            (Err(_), Err(_)) => {}
            (w, c) => panic!("whole-table and chunked readers disagree: {w:?} vs {c:?}"),
        }
    }
}

/// The factorial side of [`scan`]: two factors read both ways.
fn factorial_scan(data: &[u8], table: &crate::data::Table, format: &crate::data::CsvFormat) {
    use crate::data::scan::{ScanSpec, Source, scan_file};
    let (y, a, b) = (&table.header[0], &table.header[1], &table.header[2]);
    let whole = crate::data::factorial_response(table, y, &[a, b], format);
    let spec = ScanSpec {
        response: y,
        factors: &[a.as_str(), b.as_str()],
        format,
        filters: &[],
        exclude: &[],
        keep_values: true,
    };
    let chunked = scan_file(Source::Memory(data), &spec, 6, 2)
        .map(|s| crate::data::factorial_from_scan(s, 2));
    match (whole, chunked) {
        (Ok(w), Ok(c)) => {
            assert_eq!(w.layout.levels, c.layout.levels, "factorial levels");
            assert_eq!(w.rows(), c.rows(), "factorial rows");
            assert_eq!(w.lines, c.lines, "factorial lines");
            assert_eq!(w.excluded, c.excluded, "factorial exclusions");
            let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&w.offsets), bits(&c.offsets), "factorial offsets");
        }
        (Err(_), Err(_)) => {}
        (w, c) => panic!("factorial readings disagree: {w:?} vs {c:?}"),
    }
}

/// The small data file every block of [`expression`] and [`expand`] reads.
const FIXED: Bytes<'static> =
    Bytes(b"y,g,h\n1.5,a,p\n2.5,a,q\n3.1,b,p\n4.2,b,q\n5.3,c,p\n6.9,c,q\n2.2,a,p\n4.4,b,q\n");

/// The analysis part of [`expression`]'s document: every block kind and
/// method, so that expressions can reach every context.
const EXPRESSION_BLOCKS: &str = "```anova\nid: a\ndata: d.csv\nmodel: y ~ g\n```\n\n\
```anova\nid: w\ndata: d.csv\nmodel: y ~ g\nmethod: welch\n```\n\n\
```anova\nid: k\ndata: d.csv\nmodel: y ~ g\nmethod: ranks\n```\n\n\
```anova\nid: f\ndata: d.csv\nmodel: y ~ g * h\n```\n\n\
```power\nid: p\ngroups: 3\neffect: f = 0.4\npower: 0.8\n```\n\n";

/// Prose expressions: the input is the text of one `{{ … }}` expression,
/// evaluated against blocks of every kind in every output format. Run with
/// a memory cap (`-malloc_limit_mb`) so that an unbounded allocation is a
/// finding, not just a slow input.
pub fn expression(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let doc = format!("{EXPRESSION_BLOCKS}Quoted: {{{{ {text} }}}}\n");
    let _ = compile("fuzz.md", doc.as_bytes(), &FIXED, Format::Html);
    let _ = compile("fuzz.md", doc.as_bytes(), &FIXED, Format::Markdown);
    let _ = compile("fuzz.md", doc.as_bytes(), &FIXED, Format::Tex);
    let _ = compile("fuzz.md", doc.as_bytes(), &FIXED, Format::Docx);
}

/// Template expansion and the whole pipeline: the input is a document whose
/// blocks all read the same small data file.
pub fn expand(data: &[u8]) {
    let _ = compile("fuzz.md", data, &FIXED, Format::Html);
    let _ = compile("fuzz.md", data, &FIXED, Format::Markdown);
    let _ = compile("fuzz.md", data, &FIXED, Format::Tex);
    let _ = compile("fuzz.md", data, &FIXED, Format::Docx);
}

/// The engines on hostile data: the input is the CSV every block of a
/// fixed document reads (columns y, a, b, u, t, x: a response, two
/// treatment factors, a unit or subject, a numeric time or rate, a
/// covariate), analysed as a split plot, with a covariate, as repeated
/// measures with and without a covariance structure, with trends, a
/// transformation, two traits and a rank test. Whatever the values, layout
/// or emptiness of the cells, each block ends in a report or an error.
pub fn engines(data: &[u8]) {
    let _ = compile(
        "fuzz.md",
        ENGINE_BLOCKS.as_bytes(),
        &Bytes(data),
        Format::Html,
    );
}

/// Every path of a fuzzed document reads the same bytes.
struct Bytes<'a>(&'a [u8]);

impl World for Bytes<'_> {
    fn read(&self, _path: &str) -> std::io::Result<Vec<u8>> {
        Ok(self.0.to_vec())
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

/// The document of [`engines`]: one block per engine and model form.
const ENGINE_BLOCKS: &str = "```anova\nid: split\ndata: d.csv\nmodel: y ~ a * b\nrandom: u + u:a\ncompare: tukey\ncells: yes\n```\n\n\
```anova\nid: kr\ndata: d.csv\nmodel: y ~ a + b\nrandom: u\nddf: satterthwaite\ncompare: lsd\n```\n\n\
```anova\nid: mixed_cov\ndata: d.csv\nmodel: y ~ a\nrandom: u\ncovariate: x\n```\n\n\
```anova\nid: repeated\ndata: d.csv\nmodel: y ~ a * t\nsubject: u\ncompare: tukey\nwithin: t\n```\n\n\
```anova\nid: structured\ndata: d.csv\nmodel: y ~ a * t\nsubject: u\ncovariance: autoregressive, compare\n```\n\n\
```anova\nid: ancova\ndata: d.csv\nmodel: y ~ a\ncovariate: x\ncompare: tukey\n```\n\n\
```anova\nid: trend\ndata: d.csv\nmodel: y ~ t\ntrend: t\n```\n\n\
```anova\nid: mixed_trend\ndata: d.csv\nmodel: y ~ a * t\nrandom: u\ntrend: t\n```\n\n\
```anova\nid: logged\ndata: d.csv\nmodel: y ~ a + b\ntransform: log\ncompare: tukey\n```\n\n\
```anova\nid: traits\ndata: d.csv\nmodel: y, x ~ a * b\n```\n\n\
```anova\nid: ranks\ndata: d.csv\nmodel: y ~ a + u\nblock: u\nmethod: ranks\n```\n";

/// Block-cache entries: arbitrary bytes as an entry, and as the payload of
/// an entry with a valid checksum and header (which only a forger could
/// write), must open as a miss or a result, never panic.
pub fn cache_entry(data: &[u8]) {
    let key = "0".repeat(64);
    let _ = crate::cache::open::<crate::outcome::BlockResult>(&key, data);
    let _ = crate::cache::open::<crate::outcome::BlockResult>(
        &key,
        &crate::cache::seal_payload::<crate::outcome::BlockResult>(&key, data),
    );
}
