//! Unit tests for `doc::formula`.

use super::*;

fn terms(text: &str) -> Vec<String> {
    parse_formula(text)
        .expect("parses")
        .terms
        .iter()
        .map(|t| t.to_string())
        .collect()
}

#[test]
fn one_factor() {
    let f = parse_formula("weight ~ group").expect("parses");
    assert_eq!(f.response, "weight");
    assert_eq!(terms("weight ~ group"), vec!["group"]);
}

#[test]
fn crossing_and_interactions() {
    assert_eq!(terms("y ~ a * b"), vec!["a", "b", "a:b"]);
    assert_eq!(terms("y ~ a + b + a:b"), vec!["a", "b", "a:b"]);
    assert_eq!(
        terms("y ~ a*b*c"),
        vec!["a", "b", "c", "a:b", "a:c", "b:c", "a:b:c"]
    );
    assert_eq!(
        terms("y ~ `dry weight` + block"),
        vec!["dry weight", "block"]
    );
}

#[test]
fn errors_point_at_the_problem() {
    assert_eq!(parse_formula("weight group").unwrap_err().offset, 7);
    assert_eq!(parse_formula("weight ~ ").unwrap_err().offset, 9);
    assert_eq!(parse_formula("weight ~ a b").unwrap_err().offset, 11);
    assert!(parse_formula("y ~ a + $").is_err());
    assert!(parse_formula("y ~ y").is_err());
}
