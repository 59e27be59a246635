//! Escaping of every string from a document or a data file for the format it
//! is written into: HTML, Markdown, CSS and SVG.

/// Escapes text for inline Markdown: punctuation that could start markup is
/// backslash-escaped; `<` only where it could open a tag.
pub fn markdown_escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' | '`' | '*' | '_' | '[' | ']' | '|' | '~' | '#' | '!' => {
                out.push('\\');
                out.push(c);
            }
            '<' if chars
                .peek()
                .is_some_and(|n| n.is_ascii_alphabetic() || matches!(n, '/' | '!' | '?')) =>
            {
                out.push_str("\\<")
            }
            '&' if chars
                .peek()
                .is_some_and(|n| n.is_ascii_alphanumeric() || *n == '#') =>
            {
                out.push_str("\\&")
            }
            '\n' | '\r' => out.push(' '),
            _ => out.push(c),
        }
    }
    out
}

/// A quoted CSS string for the page header: quotes, backslashes, line
/// breaks and `<` (which could end the `<style>` element) as CSS escapes.
pub fn css_string(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 2);
    out.push('"');
    for c in text.chars() {
        match c {
            '"' | '\\' => {
                out.push('\\');
                out.push(c);
            }
            '<' => out.push_str("\\3c "),
            '>' => out.push_str("\\3e "),
            '&' => out.push_str("\\26 "),
            c if c.is_control() => out.push(' '),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// Escapes text for HTML element content and attribute values.
pub fn html_escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#x27;"),
            _ => out.push(c),
        }
    }
    out
}

/// Escapes text for SVG (XML) content and attributes.
pub fn xml_escape(text: &str) -> String {
    html_escape(text)
}
