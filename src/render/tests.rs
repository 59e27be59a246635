//! Unit tests for `render`.

use super::*;

#[test]
fn markdown_escape_keeps_numbers_readable() {
    assert_eq!(markdown_escape("< 0.001"), "< 0.001");
    assert_eq!(markdown_escape("<script>"), "\\<script>");
    assert_eq!(markdown_escape("a|b *c*"), "a\\|b \\*c\\*");
}

#[test]
fn raw_html_in_prose_is_text() {
    let (html, _) = prose_html("Hello <script>alert(1)</script>\n", &[], false);
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
