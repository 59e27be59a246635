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

#[test]
fn several_responses_share_the_terms() {
    let f = parse_formula("yield, height , `dry mass` ~ variety + block").expect("parses");
    assert_eq!(f.responses, vec!["yield", "height", "dry mass"]);
    assert_eq!(f.response, "yield");
    assert!(f.several());
    let one = f.for_response("height");
    assert_eq!((one.response.as_str(), one.responses.len()), ("height", 1));
    assert_eq!(one.terms, f.terms);
    assert!(!parse_formula("y ~ a").expect("parses").several());
    // Errors point at the place: a missing name after `,`, a repeated one,
    // a comma among the terms.
    assert_eq!(parse_formula("a, ~ g").unwrap_err().offset, 3);
    assert_eq!(parse_formula("a, b, a ~ g").unwrap_err().offset, 6);
    assert_eq!(parse_formula("a ~ g, h").unwrap_err().offset, 5);
}
