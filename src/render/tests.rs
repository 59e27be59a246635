//! Unit tests for `render`.

use super::html::prose_html;
use super::links::safe_url;
use super::markdown::inert_links_markdown;
use crate::escape::{css_string, markdown_escape};

#[test]
fn markdown_escape_keeps_numbers_readable() {
    assert_eq!(markdown_escape("< 0.001"), "< 0.001");
    assert_eq!(markdown_escape("<script>"), "\\<script>");
    assert_eq!(markdown_escape("a|b *c*"), "a\\|b \\*c\\*");
}

#[test]
fn raw_html_in_prose_is_text() {
    let (html, _) = prose_html("Hello <script>alert(1)</script>\n", &[], &[], false);
    assert!(html.contains("&lt;script&gt;"), "{html}");
    assert!(!html.contains("<script>"));
}

#[test]
fn css_strings_cannot_end_the_style_element() {
    assert_eq!(
        css_string("a\"b\\c</style>"),
        "\"a\\\"b\\\\c\\3c /style\\3e \""
    );
}

/// Every CommonMark link form, each with a target that runs script (plain,
/// entity- and percent-encoded, with spaces, tabs and control characters,
/// any case): none may leave a live `href` or `src` behind.
#[test]
fn links_that_could_run_script_become_text() {
    let targets = [
        "javascript:alert(1)",
        "JaVaScRiPt:alert(1)",
        "&#106;avascript:alert(1)",
        "&#x6A;avascript&#58;alert(1)",
        "javascript&colon;alert(1)",
        "jav%61script:alert(1)",
        "javascript%3Aalert(1)",
        "<java\tscript:alert(1)>",
        "<\u{1}javascript:alert(1)>",
        "data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==",
        "DATA:text/html,<script>alert(1)</script>",
        "vbscript:msgbox(1)",
        "file:///etc/passwd",
        "<javascript:alert(1)>",
        "java\\:script:alert(1)",
    ];
    for t in targets {
        let forms = [
            format!("[click]({t})\n"),
            format!("[click]({t} \"title\")\n"),
            format!("![pic]({t})\n"),
            format!("[click][r]\n\n[r]: {t}\n"),
            format!("[r]\n\n[r]: {t}\n"),
            format!("[click][]\n\n[click]: {t}\n"),
            format!("![pic][r]\n\n[r]: {t}\n"),
            format!("<{}>\n", t.trim_matches(['<', '>'])),
        ];
        for md in forms {
            let html = prose_html(&md, &[], &[], false).0;
            let lower = html.to_ascii_lowercase();
            assert!(
                !lower.contains("href=") && !lower.contains("src="),
                "{md:?} gave {html}"
            );
            let out = inert_links_markdown(&md);
            let reparsed = prose_html(&out, &[], &[], false).0.to_ascii_lowercase();
            assert!(
                !reparsed.contains("href=") && !reparsed.contains("src="),
                "Markdown output of {md:?} is {out:?}"
            );
        }
    }
}

#[test]
fn safe_links_stay_live() {
    for (md, want) in [
        (
            "[a](https://example.org/x)",
            "href=\"https://example.org/x\"",
        ),
        ("[a](HTTP://example.org)", "href=\"HTTP://example.org\""),
        (
            "[a](mailto:lab@example.org)",
            "href=\"mailto:lab@example.org\"",
        ),
        ("<lab@example.org>", "href=\"mailto:lab@example.org\""),
        ("<https://example.org>", "href=\"https://example.org\""),
        ("[a](#methods)", "href=\"#methods\""),
        ("[a](data/plants.csv)", "href=\"data/plants.csv\""),
        ("[a](../notes.html?x=1:2)", "href=\"../notes.html?x=1:2\""),
        ("![fig](figs/box.svg)", "src=\"figs/box.svg\""),
    ] {
        let html = prose_html(&format!("{md}\n"), &[], &[], false).0;
        assert!(html.contains(want), "{md}: {html}");
        assert_eq!(inert_links_markdown(md), md);
    }
    let html = prose_html("[see *this*](javascript:x)\n", &[], &[], false).0;
    assert!(html.contains("see <em>this</em>"), "{html}");
}

#[test]
fn url_schemes_are_read_as_a_browser_reads_them() {
    assert!(safe_url("https://x"));
    assert!(safe_url("a/b:c"));
    assert!(safe_url("?q=javascript:x"));
    assert!(!safe_url(" \u{7f}javascript:x"));
    assert!(!safe_url("java\nscript:x"));
    assert!(!safe_url("%6Aavascript:x"));
    assert!(!safe_url("blob:https://x"));
}

#[test]
fn block_markers_written_in_prose_are_text() {
    let fragments = vec!["<table>T</table>".to_string()];
    // The document forges the marker; sheaf put its own at offset 40.
    let body = "Prose <!-- sheaf-block-0 --> inline.\n\n<!-- sheaf-block-0 -->\n\n<!-- sheaf-block-0 -->\n";
    let ours = body.rfind("<!--").expect("marker");
    let html = prose_html(body, &fragments, &[(ours, 0)], false).0;
    assert_eq!(html.matches("<table>").count(), 1, "{html}");
    assert_eq!(
        html.matches("&lt;!-- sheaf-block-0 --&gt;").count(),
        2,
        "{html}"
    );
}
