//! Unit tests for `doc::markdown`.

use super::*;

#[test]
fn finds_blocks_and_leaves_other_code_alone() {
    let text = "# T\n\n```anova\nid: a\n```\n\n```python\nx = 1\n```\n\nSee `{{ a.f }}`.\n";
    let s = scan(text, 0, |k| k == "anova");
    assert_eq!(s.blocks.len(), 1);
    assert_eq!(s.blocks[0].body, "id: a\n");
    assert_eq!(
        &text[s.blocks[0].body_start..s.blocks[0].body_start + 5],
        "id: a"
    );
    assert_eq!(s.code.len(), 3);
    let exprs = find_expressions(text, 0, &s.code).expect("closed");
    assert!(exprs.is_empty());
}

#[test]
fn expressions_in_prose() {
    let text = "F was {{ g.f | round(2) }} and p {{g.p}}.";
    let e = find_expressions(text, 0, &[]).expect("closed");
    assert_eq!(e.len(), 2);
    assert_eq!(e[0].source, "g.f | round(2)");
    assert_eq!(&text[e[1].range.clone()], "{{g.p}}");
    assert_eq!(
        find_expressions("a {{ b", 0, &[]),
        Err(UnclosedExpression { offset: 2 })
    );
}

#[test]
fn nested_blocks_are_flagged() {
    let text = "- item\n\n  ```anova\n  id: a\n  ```\n";
    let s = scan(text, 0, |k| k == "anova");
    assert!(s.blocks[0].nested);
}

#[test]
fn unclosed_fences_are_found() {
    let text = "Intro\n\n```anova\nid: a\n\nSome prose.\n";
    let s = scan(text, 0, |k| k == "anova");
    assert_eq!(
        s.unclosed,
        Some(UnclosedFence {
            offset: 7,
            kind: "anova".into()
        })
    );
    let closed = "```anova\nid: a\n```\n\n~~~~\ncode\n~~~~~\n\n- x\n  ```\n  y\n- z\n";
    assert_eq!(scan(closed, 0, |k| k == "anova").unclosed, None);
    let short = "````anova\nid: a\n```\n";
    assert!(scan(short, 0, |k| k == "anova").unclosed.is_some());
}

/// A paragraph of many expressions and code spans: every one found, in
/// order (the scan is linear, so this stays quick at any size).
#[test]
fn long_paragraphs_of_expressions() {
    let n = 40_000;
    let text: String = (0..n)
        .map(|i| format!("{{{{ a.f }}}} `{{{{ {i} }}}}` "))
        .collect();
    let s = scan(&text, 0, |_| false);
    assert_eq!(s.code.len(), n);
    let e = find_expressions(&text, 0, &s.code).expect("closed");
    assert_eq!(e.len(), n);
    assert!(e.windows(2).all(|w| w[0].range.end <= w[1].range.start));
    assert!(e.iter().all(|x| x.source == "a.f"));
}
