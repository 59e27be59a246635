//! Which link targets may stay live in a report.

use pulldown_cmark::LinkType;

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

/// Where a link of the prose goes in a report, or `None` when its target
/// may not stay live (see `safe_url`; an e-mail address is always live):
/// an e-mail address gets its `mailto:`.
pub(crate) fn live_target(link_type: LinkType, dest_url: &str) -> Option<String> {
    let email = link_type == LinkType::Email;
    if !email && !safe_url(dest_url) {
        return None;
    }
    let mut url = dest_url.to_string();
    if email && !url.starts_with("mailto:") {
        url.insert_str(0, "mailto:");
    }
    Some(url)
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
