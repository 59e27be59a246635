//! Which link targets may stay live in a report.

/// Whether a link target may stay live: relative URLs, `#fragment`, and the
/// schemes http, https and mailto. Checked as a browser reads it (tabs and
/// newlines dropped, surrounding spaces and control characters trimmed) and
/// also after percent-decoding, so that no spelling of another scheme
/// (`javascript:`, `data:`, `vbscript:`, any case) passes; entities were
/// already decoded by the Markdown parser.
pub(crate) fn safe_url(url: &str) -> bool {
    let cleaned: String = url
        .chars()
        .filter(|c| !matches!(c, '\t' | '\n' | '\r'))
        .collect();
    let trim = |s: &str| {
        s.trim_matches(|c: char| c.is_whitespace() || c.is_control())
            .to_string()
    };
    [trim(&cleaned), trim(&percent_decode(&cleaned))]
        .iter()
        .all(|u| match u.find([':', '/', '?', '#']) {
            Some(i) if u[i..].starts_with(':') => matches!(
                u[..i].to_ascii_lowercase().as_str(),
                "http" | "https" | "mailto"
            ),
            _ => true,
        })
}

/// `%XX` sequences decoded (invalid ones left as they are).
fn percent_decode(text: &str) -> String {
    let bytes = text.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        let hex = bytes
            .get(i + 1..i + 3)
            .and_then(|h| std::str::from_utf8(h).ok())
            .and_then(|h| u8::from_str_radix(h, 16).ok());
        match (bytes[i], hex) {
            (b'%', Some(b)) => {
                out.push(b);
                i += 3;
            }
            (b, _) => {
                out.push(b);
                i += 1;
            }
        }
    }
    String::from_utf8_lossy(&out).into_owned()
}
