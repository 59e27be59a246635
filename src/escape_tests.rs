use super::*;

#[test]
fn latex_escapes_every_special_character() {
    assert_eq!(
        latex_escape(r"a\b{c}$d&e%f#g_h~i^j"),
        r"a\textbackslash{}b\{c\}\$d\&e\%f\#g\_h\textasciitilde{}i\textasciicircum{}j"
    );
    assert_eq!(
        latex_escape("[x] <y> |z|"),
        r"{[}x{]} \textless{}y\textgreater{} \textbar{}z\textbar{}"
    );
    assert_eq!(
        latex_escape("\"q\" `b`"),
        r"\textquotedbl{}q\textquotedbl{} \textasciigrave{}b\textasciigrave{}"
    );
}

#[test]
fn latex_breaks_the_ligatures_tex_fonts_would_form() {
    assert_eq!(latex_escape("a--b"), "a-{}-b");
    assert_eq!(latex_escape("a---b"), "a-{}-{}-b");
    assert_eq!(latex_escape("''x,,"), "'{}'x,{},");
    assert_eq!(latex_escape("<<"), r"\textless{}\textless{}");
    // A single hyphen, quote or comma stays as written.
    assert_eq!(latex_escape("peat-perlite, don't"), "peat-perlite, don't");
}

#[test]
fn latex_keeps_latin_letters_and_spells_out_the_rest() {
    assert_eq!(latex_escape("Größe café Łódź"), "Größe café Łódź");
    assert_eq!(latex_escape("α = 0.05"), r"\ensuremath{\alpha} = 0.05");
    assert_eq!(
        latex_escape("η² ≤ 1"),
        r"\ensuremath{\eta}² \ensuremath{\leq} 1"
    );
    assert_eq!(latex_escape("ΔΑ"), r"\ensuremath{\Delta}A");
    assert_eq!(latex_escape("−3 ± 1 × 2"), r"\ensuremath{-}3 ± 1 × 2");
    assert_eq!(
        latex_escape("m⁻¹ H₂O"),
        r"m\textsuperscript{\ensuremath{-}}¹ H\textsubscript{2}O"
    );
    assert_eq!(
        latex_escape("1/nᵢ + 1/nⱼ"),
        r"1/n\textsubscript{i} + 1/n\textsubscript{j}"
    );
    assert_eq!(
        latex_escape("xⁿ⁺¹"),
        r"x\textsuperscript{n}\textsuperscript{+}¹"
    );
    assert_eq!(latex_escape("中"), "{[}U+4E2D{]}");
    assert_eq!(latex_escape("a\nb\tc\u{7}"), "a b c ");
}

#[test]
fn latex_code_allows_breaks_in_long_names() {
    assert_eq!(latex_code("fresh_weight"), r"fresh\_\allowbreak{}weight");
    assert_eq!(latex_code("a/b"), r"a/\allowbreak{}b");
}

#[test]
fn latex_urls_keep_their_address() {
    assert_eq!(
        latex_url("https://example.org/a_b%20c?x=1&y=~z#top"),
        r"https://example.org/a_b\%20c?x=1&y=~z\#top"
    );
    assert_eq!(latex_url("a b{c}\\é"), r"a\%20b\%7Bc\%7D\%5C\%C3\%A9");
}

#[test]
fn latex_labels_are_safe_and_distinct() {
    assert_eq!(latex_label("tab:", "fresh-anova"), "tab:fresh-anova");
    assert_eq!(latex_label("tab:", "a_b"), "tab:a_b");
    assert_eq!(latex_label("tab:", "a b"), "tab:a+20b");
    assert_ne!(latex_label("tab:", "a b"), latex_label("tab:", "a_b"));
    assert_eq!(latex_label("fig:", "x}\\"), "fig:x+7D+5C");
}

/// Reads escaped LaTeX as TeX would at the top level: every special
/// character must come as a control symbol (`\%`) or inside a command's
/// empty or one-group argument we wrote, braces must balance, and no
/// character outside ASCII may be one the fonts lack.
fn inert(latex: &str) -> Result<(), String> {
    let mut depth = 0i32;
    let mut chars = latex.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' => {
                // A control word, or a control symbol of one character.
                match chars.next() {
                    Some(n) if n.is_ascii_alphabetic() => {
                        while chars.peek().is_some_and(|n| n.is_ascii_alphabetic()) {
                            chars.next();
                        }
                    }
                    Some(_) => {}
                    None => return Err("a trailing backslash".into()),
                }
            }
            '{' => depth += 1,
            '}' => {
                depth -= 1;
                if depth < 0 {
                    return Err("a closing brace without its opening one".into());
                }
            }
            // (`~` stays: it is written for a no-break space.)
            '$' | '&' | '%' | '#' | '_' | '^' => return Err(format!("a bare `{c}`")),
            c if !typeset(c) => return Err(format!("`{c}` reached the output")),
            _ => {}
        }
    }
    if depth != 0 {
        return Err("unbalanced braces".into());
    }
    Ok(())
}

/// Whether pdflatex with UTF-8 input and T1 fonts sets `c` as written.
fn typeset(c: char) -> bool {
    c.is_ascii()
        || ('\u{A1}'..='\u{17F}').contains(&c)
        || "\u{2010}\u{2011}–—‘’‚“”„†‡•…‰‱‹›⁄€™№℃←→".contains(c)
}

proptest::proptest! {
    #[test]
    fn any_text_escapes_to_inert_latex(text in "\\PC*") {
        let escaped = latex_escape(&text);
        proptest::prop_assert!(inert(&escaped).is_ok(), "{text:?} -> {escaped:?}: {:?}", inert(&escaped));
        let code = latex_code(&text);
        proptest::prop_assert!(inert(&code).is_ok(), "{text:?} -> {code:?}: {:?}", inert(&code));
    }

    #[test]
    fn specials_escape_to_inert_latex(text in "[\\\\{}$&%#_~^\\[\\]<>|\"`'\\-,a α中\u{A0}\n]*") {
        let escaped = latex_escape(&text);
        proptest::prop_assert!(inert(&escaped).is_ok(), "{text:?} -> {escaped:?}: {:?}", inert(&escaped));
    }
}

#[test]
fn the_inertness_check_rejects_raw_text() {
    for raw in [
        "50%", "a_b", "{", "}{", "x^2", "$", "a & b", "#1", "\\", "中",
    ] {
        assert!(inert(raw).is_err(), "{raw:?} passed");
    }
    assert!(inert(r"50\% a\_b \{x\} \textasciicircum{}").is_ok());
}

#[test]
fn ooxml_escapes_the_specials_and_drops_what_xml_forbids() {
    assert_eq!(
        ooxml_escape("a & b < c > d \"e\" 'f'"),
        "a &amp; b &lt; c &gt; d &quot;e&quot; &apos;f&apos;"
    );
    // XML 1.0 (Fifth Edition) section 2.2: Char excludes C0 controls other
    // than tab, LF and CR, and U+FFFE and U+FFFF.
    assert_eq!(
        ooxml_escape("x\u{0}\u{1}\u{b}\u{1f}\u{fffe}\u{ffff}y"),
        "xy"
    );
    assert_eq!(ooxml_escape("tab\there\nand\r"), "tab\there\nand\r");
    assert_eq!(ooxml_escape("Größe α − β 中"), "Größe α − β 中");
}

#[test]
fn svg_text_drops_what_xml_forbids() {
    // A level name read from a data file with a stray control character:
    // the figure file must stay well-formed XML (XML 1.0, section 2.2).
    assert_eq!(xml_escape("A\u{1}B & <c>"), "AB &amp; &lt;c&gt;");
    assert_eq!(xml_escape("tab\tok"), "tab\tok");
}
