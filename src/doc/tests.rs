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

/// LF, CRLF, lone CR and a mix: the same blocks, lines and expressions.
#[test]
fn every_line_end_finds_the_same_blocks() {
    let lf = "---\ntitle: T\n---\n# R\n\n```anova\nid: a\ndata: x.csv\nmodel: y ~ g\n```\n\nF = {{ a.f }}.\n";
    let variants = [
        lf.to_string(),
        lf.replace('\n', "\r\n"),
        lf.replace('\n', "\r"),
        lf.replacen('\n', "\r", 3).replacen('\n', "\r\n", 4),
    ];
    for v in variants {
        let d = parse_document("r.md", v.clone()).expect("parses");
        assert_eq!(d.front.title.as_deref(), Some("T"), "{v:?}");
        assert_eq!(d.blocks.len(), 1, "{v:?}");
        assert_eq!(d.blocks[0].line, 6, "{v:?}");
        assert_eq!(d.expressions.len(), 1, "{v:?}");
        assert_eq!(d.lines.line(d.expressions[0].range.start), 12, "{v:?}");
    }
    let err = parse_document("r.md", "a\rb\r```anova\rid: a\rbad line\r```\r".into()).unwrap_err();
    assert_eq!(err.place.and_then(|p| p.line), Some(5));
}

#[test]
fn an_unclosed_block_says_where_it_opened() {
    let src = "Intro\n\n```anova\ndata: x.csv\nmodel: y ~ g\n\nThe results follow.\n";
    let err = parse_document("r.md", src.to_string()).unwrap_err();
    assert_eq!(err.place.as_ref().and_then(|p| p.line), Some(3));
    assert!(err.message.contains("never closed"), "{}", err.message);
    assert!(err.hints[0].contains("```"), "{:?}", err.hints);
}
