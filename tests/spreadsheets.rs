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
    let place = err.place.expect("a place").file;
    assert!(
        place.ends_with("sheet `weights`, row 4, column 3 of the table"),
        "{place}"
    );
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

/// A minimal Office Open XML workbook: one sheet named `data` with the
/// given `<sheetData>` content, and optionally a shared-strings part whose
/// `<si>` entries are written by `strings` in pieces (so that a huge part
/// never sits in memory). Built here with the zip crate, so the hostile
/// cases need no committed binaries.
type WriteStrings<'a> = &'a dyn Fn(&mut dyn std::io::Write);

fn workbook(sheet_data: &str, strings: Option<WriteStrings<'_>>) -> Vec<u8> {
    use std::io::Write;
    use zip::write::SimpleFileOptions;
    let mut zip = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let options = SimpleFileOptions::default().compression_level(Some(1));
    let mut part = |name: &str, text: &str| {
        zip.start_file(name, options).expect("part");
        zip.write_all(text.as_bytes()).expect("write");
    };
    part(
        "[Content_Types].xml",
        r#"<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/><Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/><Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/></Types>"#,
    );
    part(
        "_rels/.rels",
        r#"<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/></Relationships>"#,
    );
    part(
        "xl/workbook.xml",
        r#"<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets><sheet name="data" sheetId="1" r:id="rId1"/></sheets></workbook>"#,
    );
    part(
        "xl/_rels/workbook.xml.rels",
        r#"<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings" Target="sharedStrings.xml"/></Relationships>"#,
    );
    part(
        "xl/worksheets/sheet1.xml",
        &format!(
            r#"<?xml version="1.0" encoding="UTF-8"?><worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"><sheetData>{sheet_data}</sheetData></worksheet>"#
        ),
    );
    if let Some(write_strings) = strings {
        zip.start_file("xl/sharedStrings.xml", options)
            .expect("part");
        zip.write_all(br#"<?xml version="1.0" encoding="UTF-8"?><sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">"#)
            .expect("write");
        write_strings(&mut zip);
        zip.write_all(b"</sst>").expect("write");
    }
    zip.finish().expect("zip").into_inner()
}

/// An inline-string cell and a number cell.
fn text_cell(at: &str, text: &str) -> String {
    format!(r#"<c r="{at}" t="inlineStr"><is><t>{text}</t></is></c>"#)
}
fn number_cell(at: &str, value: &str) -> String {
    format!(r#"<c r="{at}"><v>{value}</v></c>"#)
}

/// A small table (header weight, group; eight rows) starting at row `top`.
fn plant_rows(top: usize) -> String {
    let mut rows = format!(
        r#"<row r="{top}">{}{}</row>"#,
        text_cell(&format!("A{top}"), "weight"),
        text_cell(&format!("B{top}"), "group")
    );
    for i in 1..=8 {
        let r = top + i;
        rows.push_str(&format!(
            r#"<row r="{r}">{}{}</row>"#,
            number_cell(&format!("A{r}"), &format!("{}.{}", 4 + i % 3, i)),
            text_cell(&format!("B{r}"), if i % 2 == 0 { "ctrl" } else { "trt" })
        ));
    }
    rows
}

/// Builds a document reading `book.xlsx` with `keys`; the error, if any.
fn build_workbook(book: &[u8], keys: &str) -> Result<Value, Box<sheaf::diag::Diagnostic>> {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("book.xlsx"), book).expect("write");
    let doc = format!("```anova\nid: t\ndata: book.xlsx\n{keys}model: weight ~ group\n```\n");
    compile(
        "report.md",
        doc.as_bytes(),
        &DiskWorld {
            base: dir.path().to_path_buf(),
        },
        Format::Markdown,
    )
    .map(|built| serde_json::from_slice(&built.results).expect("json"))
    .map_err(Box::new)
}

fn refused(book: &[u8], keys: &str) -> sheaf::diag::Diagnostic {
    match build_workbook(book, keys) {
        Ok(_) => panic!("expected a refusal for {keys:?}"),
        Err(d) => *d,
    }
}

#[test]
fn the_built_workbook_reads_like_the_csv_it_holds() {
    // The hostile cases below start from this workbook; it must read.
    let results = build_workbook(&workbook(&plant_rows(1), None), "").expect("reads");
    assert_eq!(
        results["blocks"][0]["groups"].as_array().map(Vec::len),
        Some(2)
    );
}

#[test]
fn a_stray_cell_at_the_last_row_and_column_is_refused_before_allocating() {
    // The used area would be A1:XFD1048576, 17 billion cells (calamine lays
    // it out densely: hundreds of GB). Refused from the sparse cells.
    let sheet = format!(
        "{}<row r=\"1048576\">{}</row>",
        plant_rows(1),
        number_cell("XFD1048576", "1")
    );
    let d = refused(&workbook(&sheet, None), "");
    assert!(
        d.message.contains(
            "the used area A1:XFD1048576 of sheet `data` spans 1048576 rows × 16384 columns"
        ),
        "{d}"
    );
    assert!(d.hints.iter().any(|h| h.contains("range:")), "{d}");
    // The same workbook with a range around the table reads.
    assert!(build_workbook(&workbook(&sheet, None), "range: A1:B9\n").is_ok());
}

#[test]
fn huge_or_impossible_ranges_are_refused_with_the_sheet() {
    let book = workbook(&plant_rows(1), None);
    for (range, want) in [
        (
            "A1:XFD1048576",
            "the range A1:XFD1048576 of sheet `data` spans 1048576 rows × 16384 columns",
        ),
        (
            "A1:ZZZ99999999",
            "reaches beyond the last cell a sheet can have",
        ),
        ("B2:A1", "runs backwards"),
    ] {
        let d = refused(&book, &format!("range: {range}\n"));
        assert!(d.message.contains(want), "{range}: {d}");
    }
}

#[test]
fn shared_strings_that_unpack_beyond_the_limit_are_refused() {
    // 300 MiB of one repeated string compress to well under 1 MiB.
    let write: WriteStrings<'_> = &|w| {
        let piece = format!("<si><t>{}</t></si>", "a".repeat(1 << 20));
        for _ in 0..300 {
            w.write_all(piece.as_bytes()).expect("write");
        }
    };
    let book = workbook(&plant_rows(1), Some(write));
    assert!(book.len() < 4 << 20, "{} bytes", book.len());
    let d = refused(&book, "");
    assert!(
        d.message
            .contains("the workbook unpacks to more than 256 MiB")
            && d.message.contains("xl/sharedStrings.xml"),
        "{d}"
    );
}

#[test]
fn formula_errors_and_unstored_results_name_their_cell() {
    let mut sheet = plant_rows(1);
    // A #DIV/0! result in the response column.
    sheet = sheet.replace(
        &number_cell("A4", "4.3"),
        r#"<c r="A4" t="e"><f>1/0</f><v>#DIV/0!</v></c>"#,
    );
    let d = refused(&workbook(&sheet, None), "");
    assert!(
        d.message == "cell A4 of sheet `data` holds the formula error `#DIV/0!`, not a value",
        "{d}"
    );
    assert!(
        d.hints.iter().any(|h| h.contains("correct the formula")),
        "{d}"
    );
    assert!(d.place.is_some_and(|p| {
        p.file
            .ends_with("book.xlsx, the first sheet, row 4, column 1 of the table")
    }),);
    // A formula whose result was never stored (no <v>).
    let sheet = plant_rows(1).replace(&number_cell("A6", "6.5"), r#"<c r="A6"><f>A5*2</f></c>"#);
    let d = refused(&workbook(&sheet, None), "");
    assert_eq!(
        d.message,
        "cell A6 of sheet `data` holds a formula whose result was never stored in the file"
    );
    // An error cell in a column the block does not use is no obstacle.
    let sheet = plant_rows(1).replacen("</row>", r#"<c r="C1" t="e"><v>#REF!</v></c></row>"#, 1);
    assert!(build_workbook(&workbook(&sheet, None), "").is_ok());
}

#[test]
fn a_header_below_a_title_gets_a_range_hint() {
    let sheet = format!(
        "<row r=\"1\">{}</row>{}",
        text_cell("A1", "Trial 2027, fresh weights (invented)"),
        plant_rows(3)
    );
    let d = refused(&workbook(&sheet, None), "");
    assert!(d.message.contains("no column named `weight`"), "{d}");
    assert!(
        d.hints
            .iter()
            .any(|h| h.contains("`weight` stands in row 3") && h.contains("range: A3:")),
        "{d}"
    );
    assert!(build_workbook(&workbook(&sheet, None), "range: A3:B11\n").is_ok());
}

/// A cell reference longer than any worksheet's (found by the `spreadsheet`
/// fuzz target): the spreadsheet library accumulates it in 32 bits and
/// overflows, so sheaf refuses the part before the library reads it.
#[test]
fn an_overlong_cell_reference_is_refused_before_it_is_read() {
    let columns = "X".repeat(40);
    for reference in [
        format!("{columns}1"),
        "A99999999".into(),
        "XFE1".into(),
        "A0".into(),
    ] {
        let sheet = format!(
            r#"<row r="1"><c r="A1" t="inlineStr"><is><t>y</t></is></c><c r="{reference}"><v>2</v></c></row>"#
        );
        let book = sheaf::fuzzing::minimal_workbook(&sheet).expect("workbook");
        let err = sheaf::data::spreadsheet::read_sheet(&book, None, None)
            .err()
            .unwrap_or_else(|| panic!("{reference} was accepted"));
        assert!(
            err.message.contains("is not a cell of a worksheet"),
            "{reference}: {}",
            err.message
        );
    }
    // The largest legal references still read.
    let sheet =
        r#"<row r="1"><c r="A1"><v>1</v></c></row><row r="2"><c r="xfd2"><v>2</v></c></row>"#;
    let book = sheaf::fuzzing::minimal_workbook(sheet).expect("workbook");
    let refused = sheaf::data::spreadsheet::read_sheet(&book, None, None)
        .err()
        .is_some_and(|e| e.message.contains("is not a cell of a worksheet"));
    assert!(!refused);
}
