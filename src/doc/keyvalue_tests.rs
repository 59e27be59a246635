//! Unit tests for `doc::keyvalue`.

use super::*;

#[test]
fn comments_quotes_and_lines() {
    let text = "# setup\nid: growth\n\ncaption: \"Trial #3\"   # shown above\nalpha: 0.05";
    let e = parse_entries(text, 10).expect("parses");
    assert_eq!(e.len(), 3);
    assert_eq!(
        (e[0].key.as_str(), e[0].value.as_str(), e[0].line),
        ("id", "growth", 11)
    );
    assert_eq!(e[1].value, "Trial #3");
    assert_eq!(e[2].line, 14);
}

#[test]
fn duplicate_and_malformed_lines_are_errors() {
    let e = parse_entries("alpha: 0.05\nalpha: 0.01", 1).unwrap_err();
    assert_eq!((e.line, e.column), (2, 1));
    let e = parse_entries("id growth", 5).unwrap_err();
    assert_eq!(e.line, 5);
}
