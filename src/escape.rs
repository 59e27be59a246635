//! Escaping of every string from a document or a data file for the format it
//! is written into: HTML, Markdown, CSS, SVG and LaTeX.

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
    markup_escape(text, "&#x27;", |_| true)
}

/// The five markup specials as entities (the apostrophe as `apostrophe`),
/// keeping only the other characters `keep` allows.
fn markup_escape(text: &str, apostrophe: &str, keep: impl Fn(char) -> bool) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str(apostrophe),
            c if keep(c) => out.push(c),
            _ => {}
        }
    }
    out
}

/// Escapes text for SVG (XML) content and attributes; a character XML 1.0
/// forbids (a control character from a data file) is dropped, so that a
/// figure written beside the report stays a well-formed file.
pub fn xml_escape(text: &str) -> String {
    markup_escape(text, "&#x27;", xml_allows)
}

/// Whether XML 1.0 allows `c` in a document.
fn xml_allows(c: char) -> bool {
    !matches!(c, '\u{0}'..='\u{8}' | '\u{b}' | '\u{c}' | '\u{e}'..='\u{1f}' | '\u{fffe}' | '\u{ffff}')
}

/// Escapes text for an Office Open XML part (element content and attribute
/// values alike): the five XML specials as entities, and characters XML 1.0
/// forbids (control characters other than tab, line feed and carriage
/// return; U+FFFE and U+FFFF) dropped, since no entity can stand for them.
pub fn ooxml_escape(text: &str) -> String {
    markup_escape(text, "&apos;", xml_allows)
}

/// Escapes text for LaTeX (UTF-8 input, T1 font encoding): the ten special
/// characters, brackets (which could start an optional argument), pairs that
/// TeX fonts join into other glyphs (`--`, `\'\'`, `,,`, `<<`), and characters
/// outside the fonts' reach. Greek letters and mathematical signs become
/// their LaTeX commands; any other character pdflatex cannot typeset is
/// written as `[U+XXXX]`, so every text compiles. Line breaks become spaces.
pub fn latex_escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 8);
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        let next = chars.peek().copied();
        match c {
            '\\' => out.push_str("\\textbackslash{}"),
            '{' | '}' | '$' | '&' | '%' | '#' | '_' => {
                out.push('\\');
                out.push(c);
            }
            '~' => out.push_str("\\textasciitilde{}"),
            '^' => out.push_str("\\textasciicircum{}"),
            '[' => out.push_str("{[}"),
            ']' => out.push_str("{]}"),
            '<' => out.push_str("\\textless{}"),
            '>' => out.push_str("\\textgreater{}"),
            '|' => out.push_str("\\textbar{}"),
            '"' => out.push_str("\\textquotedbl{}"),
            '`' => out.push_str("\\textasciigrave{}"),
            '-' | '\'' | ',' if next == Some(c) => {
                out.push(c);
                out.push_str("{}");
            }
            '\n' | '\r' | '\t' => out.push(' '),
            c if c.is_ascii_control() => out.push(' '),
            c if c.is_ascii() => out.push(c),
            c => out.push_str(&latex_letter(c)),
        }
    }
    out
}

/// A character outside ASCII: as written where UTF-8 input with T1 fonts
/// typesets it (Latin letters, common punctuation), else its LaTeX command,
/// else `[U+XXXX]`.
fn latex_letter(c: char) -> String {
    // Latin-1 and Latin Extended-A letters pdflatex's T1 fonts lack.
    const MISSING_LATIN: &[char] = &[
        '\u{126}', '\u{127}', '\u{138}', '\u{13F}', '\u{140}', '\u{149}', '\u{166}', '\u{167}',
        '\u{17F}',
    ];
    // Punctuation and symbols LaTeX's UTF-8 input maps to its text fonts.
    const TEXT_SYMBOLS: &str = "\u{2010}\u{2011}–—‘’‚“”„†‡•…‰‱‹›⁄€™№℃←→";
    let typeset = ('\u{A1}'..='\u{17F}').contains(&c) && !MISSING_LATIN.contains(&c);
    if typeset || TEXT_SYMBOLS.contains(c) {
        return c.to_string();
    }
    if let Some(command) = latex_command(c) {
        return command.to_string();
    }
    // Superscript and subscript digits and letters, as raised or lowered
    // ordinary ones.
    const RAISED: [(&str, &str); 2] = [("⁰¹²³⁴⁵⁶⁷⁸⁹⁽⁾ⁿᵀᵗᵏ", "0123456789()nTtk"), ("⁺", "+")];
    const LOWERED: [(&str, &str); 2] = [
        ("₀₁₂₃₄₅₆₇₈₉₍₎", "0123456789()"),
        ("ₐₑₖₗₘₙₛᵢⱼ₊", "aeklmnsij+"),
    ];
    for (marks, command) in [(RAISED, "textsuperscript"), (LOWERED, "textsubscript")] {
        for (from, to) in marks {
            if let Some(k) = from.chars().position(|s| s == c) {
                let plain = to.chars().nth(k).unwrap_or(c);
                return format!("\\{command}{{{plain}}}");
            }
        }
    }
    if let Some(k) = GREEK_LOWER.chars().position(|g| g == c) {
        return format!("\\ensuremath{{\\{}}}", GREEK_NAMES[k]);
    }
    if let Some(k) = GREEK_UPPER.chars().position(|g| g == c) {
        let name = GREEK_NAMES[k];
        // Capitals that look like Latin ones have no command of their own.
        return match name {
            "gamma" | "delta" | "theta" | "lambda" | "xi" | "pi" | "sigma" | "upsilon" | "phi"
            | "psi" | "omega" => {
                let mut capital = name.to_string();
                capital[..1].make_ascii_uppercase();
                format!("\\ensuremath{{\\{capital}}}")
            }
            _ => GREEK_LATIN_CAPITALS[k].to_string(),
        };
    }
    format!("{{[}}U+{:04X}{{]}}", c as u32)
}

const GREEK_LOWER: &str = "αβγδεζηθικλμνξοπρστυφχψω";
const GREEK_UPPER: &str = "ΑΒΓΔΕΖΗΘΙΚΛΜΝΞΟΠΡΣΤΥΦΧΨΩ";
const GREEK_NAMES: [&str; 24] = [
    "alpha", "beta", "gamma", "delta", "epsilon", "zeta", "eta", "theta", "iota", "kappa",
    "lambda", "mu", "nu", "xi", "omicron", "pi", "rho", "sigma", "tau", "upsilon", "phi", "chi",
    "psi", "omega",
];
const GREEK_LATIN_CAPITALS: [&str; 24] = [
    "A", "B", "", "", "E", "Z", "H", "", "I", "K", "", "M", "N", "", "O", "", "P", "", "T", "", "",
    "X", "", "",
];

/// Signs with a LaTeX command (math mode where LaTeX has no text glyph).
fn latex_command(c: char) -> Option<&'static str> {
    Some(match c {
        '\u{A0}' => "~",
        '\u{2009}' | '\u{202F}' => "\\,",
        'ο' => "o",
        'ς' => "\\ensuremath{\\varsigma}",
        '−' => "\\ensuremath{-}",
        '≤' => "\\ensuremath{\\leq}",
        '≥' => "\\ensuremath{\\geq}",
        '≠' => "\\ensuremath{\\neq}",
        '≈' => "\\ensuremath{\\approx}",
        '∞' => "\\ensuremath{\\infty}",
        '√' => "\\ensuremath{\\surd}",
        '∑' => "\\ensuremath{\\sum}",
        '∈' => "\\ensuremath{\\in}",
        '⋅' | '∙' => "\\ensuremath{\\cdot}",
        '′' => "\\ensuremath{\\prime}",
        '″' => "\\ensuremath{\\prime\\prime}",
        '↑' => "\\ensuremath{\\uparrow}",
        '↓' => "\\ensuremath{\\downarrow}",
        '⇒' => "\\ensuremath{\\Rightarrow}",
        '⁻' => "\\textsuperscript{\\ensuremath{-}}",
        '₋' => "\\textsubscript{\\ensuremath{-}}",
        _ => return None,
    })
}

/// Text for a LaTeX code span: escaped, with a break allowed after the
/// separators of long names and paths, since typewriter text never hyphenates.
pub fn latex_code(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        let escaped = latex_escape(c.encode_utf8(&mut [0; 4]));
        out.push_str(&escaped);
        if matches!(c, '_' | '/' | '.' | '-' | '=' | ',') {
            out.push_str("\\allowbreak{}");
        }
    }
    out
}

/// A link target for hyperref's `\href`: `%` and `#` escaped as hyperref
/// reads them, and every character that LaTeX could take as markup
/// (backslash, braces, `$`, `^`, quotes, angle brackets, spaces) or that is
/// not ASCII percent-encoded, which leaves the address it names unchanged.
pub fn latex_url(url: &str) -> String {
    let mut out = String::with_capacity(url.len() + 8);
    for b in url.bytes() {
        match b {
            b'%' => out.push_str("\\%"),
            b'#' => out.push_str("\\#"),
            b'\\' | b'{' | b'}' | b'$' | b'^' | b'"' | b'<' | b'>' | b'|' | b'`' => {
                out.push_str(&format!("\\%{b:02X}"))
            }
            b if b <= b' ' || b >= 0x7F => out.push_str(&format!("\\%{b:02X}")),
            b => out.push(b as char),
        }
    }
    out
}

/// A `\label` key: ASCII letters, digits and `-.:_` kept, anything else as
/// `+XX` hex bytes, so distinct ids give distinct keys and none breaks LaTeX.
pub fn latex_label(prefix: &str, id: &str) -> String {
    let mut out = String::from(prefix);
    for b in id.bytes() {
        if b.is_ascii_alphanumeric() || matches!(b, b'-' | b'.' | b':' | b'_') {
            out.push(b as char);
        } else {
            out.push_str(&format!("+{b:02X}"));
        }
    }
    out
}

#[cfg(test)]
#[path = "escape_tests.rs"]
mod tests;
