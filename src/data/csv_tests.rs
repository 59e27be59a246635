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

#[test]
fn a_lone_cr_ends_a_line_wherever_it_stands() {
    // Classic Mac line ends; the count must agree with `count_lines`.
    let text = b"a,b\r1,2\r\r3,\"x\ry\"\r4,5\r";
    let recs = parse_records(text, b',').expect("parses");
    let lines: Vec<usize> = recs.iter().map(|r| r.line).collect();
    assert_eq!(lines, vec![1, 2, 4, 6]);
    assert_eq!(count_lines(text), 6);
}

#[test]
fn the_parser_reports_where_it_stopped() {
    let text = "h1,h2\n\n1,2\n";
    let mut parser = RecordParser::new(text, b',', 1);
    let head = parser.next().expect("record").expect("parses");
    assert_eq!(head.fields, vec!["h1", "h2"]);
    assert_eq!((parser.offset(), parser.line()), (6, 2));
}
