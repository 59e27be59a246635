//! Unit tests for `doc`.

use super::*;

#[test]
fn front_matter_blocks_and_expressions() {
    let src = "---\ntitle: Trial\nalpha: 0.1\n---\n# Results\n\n```anova\ndata: a.csv\nmodel: y ~ g\n```\n\nF = {{ block1.f }}.\n";
    let d = parse_document("r.md", src.to_string()).expect("parses");
    assert_eq!(d.front.title.as_deref(), Some("Trial"));
    assert_eq!(d.front.alpha, 0.1);
    assert_eq!(d.blocks.len(), 1);
    assert_eq!(d.blocks[0].id, "block1");
    assert_eq!(d.blocks[0].line, 7);
    assert_eq!(d.expressions.len(), 1);
}

#[test]
fn duplicate_ids_are_refused_at_the_second() {
    let src = "```anova\nid: a\ndata: x.csv\nmodel: y ~ g\n```\n\n```anova\nid: a\ndata: x.csv\nmodel: y ~ g\n```\n";
    let err = parse_document("r.md", src.to_string()).unwrap_err();
    assert_eq!(err.place.and_then(|p| p.line), Some(8));
}

#[test]
fn errors_in_block_bodies_carry_document_lines() {
    let src = "Intro\n\n```anova\ndata: x.csv\nmodel: y ~ g\naplha: 0.05\n```\n";
    let err = parse_document("r.md", src.to_string()).unwrap_err();
    assert_eq!(err.place.as_ref().and_then(|p| p.line), Some(6));
    assert_eq!(err.hints, vec!["did you mean `alpha`?"]);
}
