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

/// Parses one `anova` block with `keys` and returns every error message.
fn random_errors(keys: &str) -> Vec<String> {
    let text = format!("```anova\nid: t\ndata: d.csv\n{keys}\n```\n");
    match crate::doc::parse_document("t.md", text) {
        Ok(_) => Vec::new(),
        Err(e) => e.to_string().lines().map(str::to_string).collect(),
    }
}

#[test]
fn random_terms_are_read_in_model_notation() {
    let text = "```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\nrandom: B + B:V\n```\n";
    let doc = crate::doc::parse_document("t.md", text.to_string()).expect("parses");
    let crate::doc::BlockSpec::Anova(spec) = &doc.blocks[0].spec else {
        panic!("an anova block")
    };
    let random = spec.random.as_ref().expect("random terms");
    let names: Vec<String> = random.value.iter().map(|t| t.to_string()).collect();
    assert_eq!(names, ["B", "B:V"]);
    assert_eq!(spec.ddf, crate::doc::block::DdfMethod::KenwardRoger);
}

#[test]
fn random_terms_refuse_what_has_no_mixed_model_version() {
    let cases = [
        (
            "model: y ~ g\nrandom: b\nmethod: welch",
            "has no version with random terms",
        ),
        (
            "model: y ~ g\nrandom: b\nmethod: welch\ncompare: games-howell",
            "has no version with random terms",
        ),
        (
            "model: y ~ g\nrandom: b\ninput: summary",
            "need the observations",
        ),
        (
            "model: y ~ g + b\nrandom: b",
            "both a fixed term of the model and a random term",
        ),
        ("model: y ~ g\nrandom: y", "is the response"),
        (
            "model: y ~ g\nddf: satterthwaite",
            "applies to models with random terms",
        ),
        ("model: y ~ g\nrandom: b\nddf: containment", "ddf"),
        ("model: y ~ g\nrandom: b ~ c", "no `~`"),
    ];
    for (keys, want) in cases {
        let errors = random_errors(keys);
        assert!(
            errors.iter().any(|e| e.contains(want)),
            "{keys:?}: expected an error containing {want:?}, got {errors:?}"
        );
    }
}
