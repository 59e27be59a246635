//! Unit tests for `doc::block`.

use super::*;
use crate::doc::keyvalue::parse_entries;

const DEFAULTS: Defaults = Defaults {
    compare: Some(Method::Tukey),
};

#[test]
fn a_full_block() {
    let e = parse_entries("id: growth\ndata: plants.csv\nmodel: weight ~ group\ncompare: lsd\nalpha: 0.01\nlevels: ctrl, trt1, trt2", 3).expect("entries");
    let s = anova_spec(&e, 2, DEFAULTS).expect("spec");
    assert_eq!(s.compare, Some(Method::Lsd));
    assert_eq!(s.alpha, Some(0.01));
    assert_eq!(
        s.levels.expect("levels").value,
        vec!["ctrl", "trt1", "trt2"]
    );
    assert_eq!(s.model.line, 5);
}

#[test]
fn unknown_key_suggests_the_nearest() {
    let e = parse_entries("data: a.csv\nmodel: y ~ g\ncompar: tukey", 10).expect("entries");
    let err = &anova_spec(&e, 9, DEFAULTS).unwrap_err()[0];
    assert_eq!(err.line, 12);
    assert_eq!(err.hint.as_deref(), Some("did you mean `compare`?"));
}

#[test]
fn missing_model_points_at_the_fence() {
    let e = parse_entries("data: a.csv", 10).expect("entries");
    let err = &anova_spec(&e, 9, DEFAULTS).unwrap_err()[0];
    assert_eq!(err.line, 9);
}
