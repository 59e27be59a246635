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
