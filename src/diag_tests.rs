//! Unit tests for `diag`.

use super::*;

#[test]
fn suggests_close_names_only() {
    let keys = ["compare", "caption", "alpha"];
    assert_eq!(nearest("compar", keys), Some("compare"));
    assert_eq!(nearest("aplha", keys), Some("alpha"));
    assert_eq!(nearest("zzz", keys), None);
}

#[test]
fn renders_place_snippet_and_hint() {
    let d = Diagnostic::new("unknown key `compar`")
        .at("trial/report.md", Some(14), Some(1))
        .snippet("compar: tukey")
        .hint("did you mean `compare`?");
    let text = d.to_string();
    assert!(text.contains("--> trial/report.md:14:1"), "{text}");
    assert!(text.contains("14 | compar: tukey"));
    assert!(text.contains("= hint: did you mean `compare`?"));
    assert_eq!(
        d.short(),
        "trial/report.md:14:1: error: unknown key `compar`"
    );
}
