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
