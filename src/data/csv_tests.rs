//! Unit tests for `data::csv`.

use super::*;

fn fields(text: &str) -> Vec<Vec<String>> {
    parse_records(text.as_bytes(), b',')
        .expect("parses")
        .into_iter()
        .map(|r| r.fields)
        .collect()
}

#[test]
fn quoted_fields_hold_delimiters_quotes_and_newlines() {
    // Source: RFC 4180 section 2, rules 5-7.
    let got = fields("a,b\n\"x,1\",\"say \"\"hi\"\"\"\n\"two\nlines\",3\n");
    assert_eq!(got[1], vec!["x,1", "say \"hi\""]);
    assert_eq!(got[2], vec!["two\nlines", "3"]);
}

#[test]
fn records_remember_their_first_line() {
    let recs = parse_records(b"\xef\xbb\xbfa,b\r\n\"1\n2\",3\r\n\r\n4,5", b',').expect("parses");
    let lines: Vec<usize> = recs.iter().map(|r| r.line).collect();
    assert_eq!(lines, vec![1, 2, 5]);
    assert_eq!(recs[0].fields, vec!["a", "b"]);
}

#[test]
fn unterminated_quote_points_at_its_start() {
    let err = parse_records(b"a,b\n1,2\n\"3,4\n5,6\n", b',').unwrap_err();
    assert_eq!(err.line, 3);
}

#[test]
fn empty_trailing_field_is_kept() {
    assert_eq!(fields("a,b\n1,\n"), vec![vec!["a", "b"], vec!["1", ""]]);
}
