//! Unit tests for `data`.

use super::*;

#[test]
fn splits_by_level_and_counts_missing() {
    let text = b"y,g\n1.5,a\nNA,b\n2.25,b\n3,a\n4,\n";
    let table = Table::parse(text, &CsvFormat::default()).expect("table");
    let fr = factor_response(&table, "y", "g", &CsvFormat::default()).expect("data");
    assert_eq!(fr.levels.len(), 2);
    assert_eq!(fr.levels[0].lines, vec![2, 5]);
    assert_eq!(fr.excluded.len(), 2);
    assert_eq!(fr.decimals, 2);
    assert_eq!(fr.origin + fr.levels[1].offsets[0], 2.25);
}

#[test]
fn text_in_the_response_names_line_and_column() {
    let table = Table::parse(b"g,y\na,1\na,x\n", &CsvFormat::default()).expect("table");
    let err = factor_response(&table, "y", "g", &CsvFormat::default()).unwrap_err();
    assert_eq!((err.line, err.column), (Some(3), Some(2)));
}

#[test]
fn decimal_comma() {
    let format = CsvFormat {
        delimiter: b';',
        decimal_comma: true,
        ..CsvFormat::default()
    };
    let table = Table::parse("g;y\na;4,25\nb;2,5\n".as_bytes(), &format).expect("table");
    let fr = factor_response(&table, "y", "g", &format).expect("data");
    assert_eq!(fr.origin, 4.25);
    assert_eq!(fr.levels[1].offsets[0], -1.75);
}

#[test]
fn cell_keys_keep_any_level_text() {
    let levels = ["3:x", "", "ü:1", "12", "a:b:c", "a level of 21 bytes.."];
    let key = scan::cell_key(levels.iter().copied());
    assert_eq!(scan::cell_levels(&key), levels);
    // Lengths in decimal, ten and more with several digits.
    assert!(key.ends_with("21:a level of 21 bytes.."), "{key}");
    assert!(key.starts_with("3:3:x0:4:ü:1"), "{key}");
}

#[test]
fn the_chunked_factorial_reading_matches_the_table_reading() {
    // Invented: two factors, missing values in each column, quoted levels,
    // a level first seen on a row whose response is missing.
    let mut text = String::from("y,a,b\n");
    for i in 0..300 {
        let y = if i % 17 == 4 {
            "NA".to_string()
        } else {
            format!("{}.{}", i % 23, i % 7)
        };
        let a = if i % 29 == 5 {
            ""
        } else {
            ["a1", "\"a2\"", "a3"][i % 3]
        };
        let b = if i == 2 {
            "late"
        } else {
            ["b1", "b2"][(i / 3) % 2]
        };
        text.push_str(&format!("{y},{a},{b}\n"));
    }
    let format = CsvFormat::default();
    let table = Table::parse(text.as_bytes(), &format).expect("table");
    let whole = factorial_response(&table, "y", &["a", "b"], &format).expect("table reading");
    let spec = scan::ScanSpec {
        response: "y",
        factors: &["a", "b"],
        format: &format,
        filters: &[],
        exclude: &[],
        keep_values: true,
    };
    let scanned =
        scan::scan_file(scan::Source::Memory(text.as_bytes()), &spec, 256, 2).expect("scan");
    let chunked = factorial_from_scan(scanned, 2);
    assert_eq!(chunked.layout.levels, whole.layout.levels);
    assert_eq!(chunked.rows(), whole.rows());
    assert_eq!(chunked.lines, whole.lines);
    assert_eq!(chunked.offsets, whole.offsets);
    assert_eq!(chunked.excluded, whole.excluded);
    assert_eq!(chunked.decimals, whole.decimals);
}
