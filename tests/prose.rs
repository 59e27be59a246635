//! Prose expressions end to end: how values read, the `statement` filter,
//! the bounds on an expression's work and text, and documents at scale.

use sheaf::compile::{World, compile};
use sheaf::render::Format;

/// Dried plant weights (Dobson 1983, as in tests/cases/plant-growth): three
/// levels of ten.
const PLANTS: &str = include_str!("cases/plant-growth/plants.csv");

/// Warp breaks by wool and tension (Tippett 1950, as in tests/cases/factorial):
/// a balanced 2 × 3 factorial with nine looms per cell.
const WARP: &str = include_str!("cases/factorial/warpbreaks.csv");

struct Memory;

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        match path {
            "plants.csv" => Ok(PLANTS.as_bytes().to_vec()),
            "warpbreaks.csv" => Ok(WARP.as_bytes().to_vec()),
            _ => Err(std::io::Error::new(std::io::ErrorKind::NotFound, path)),
        }
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

const BLOCKS: &str = "```anova\nid: g\ndata: plants.csv\nmodel: weight ~ group\n```\n\n\
```anova\nid: w\ndata: plants.csv\nmodel: weight ~ group\nmethod: welch\n```\n\n\
```anova\nid: k\ndata: plants.csv\nmodel: weight ~ group\nmethod: ranks\n```\n\n\
```power\nid: plan\ngroups: 3\neffect: f = 0.4\npower: 0.8\n```\n\n\
```anova\nid: warp\ndata: warpbreaks.csv\nmodel: breaks ~ wool * tension\ncompare: tukey\n\
compare_term: tension\n```\n\n";

/// The Markdown report of BLOCKS followed by `prose`.
fn prose(prose: &str) -> Result<String, Box<sheaf::diag::Diagnostic>> {
    let doc = format!("{BLOCKS}{prose}\n");
    let built =
        compile("report.md", doc.as_bytes(), &Memory, Format::Markdown).map_err(Box::new)?;
    Ok(String::from_utf8(built.report).expect("utf-8"))
}

fn error(text: &str) -> sheaf::diag::Diagnostic {
    *prose(text).expect_err("refused")
}

#[test]
fn whole_numbers_read_as_integers_and_booleans_as_yes_no() {
    // 30 plants in 3 groups: residual df 27 (common practice: N - k).
    let md = prose(
        "R{{ g.residual.df }} D{{ g.df2 }} T{{ g.df1 + 0.0 }} N{{ g.checks.shapiro_wilk.n }} \
         S{{ g.pairs[0].significant }} B{{ 1 > 2 }} H{{ g.f | round(2) }}",
    )
    .expect("builds");
    for want in ["R27 ", "D27 ", "T2 ", "N30 ", "Bno ", "H4.85"] {
        assert!(md.contains(want), "`{want}` in {md}");
    }
    // trt1 against trt2 is the one significant Tukey pair (METHODS 6.4);
    // the first pair in table order is ctrl against trt1, not significant.
    assert!(md.contains("Sno "), "{md}");
}

#[test]
fn statement_prints_every_test() {
    // Values as printed in the golden cases (plant-growth, robust-methods style).
    let md = prose(
        "A: {{ g | statement }}. B: {{ g.terms.group | statement }}. \
         C: {{ w | statement }}. D: {{ w.welch | statement }}. E: {{ k.kruskal | statement }}. \
         F: {{ k | statement }}. G: {{ g.checks.levene | statement }}. \
         H: {{ g.checks.bartlett | statement }}. I: {{ g.checks.shapiro_wilk | statement }}. \
         J: {{ g.terms.group.statement }}.",
    )
    .expect("builds");
    assert!(md.contains("A: F(2, 27) = 4.85, p = 0.016."), "{md}");
    assert!(md.contains("B: F(2, 27) = 4.85, p = 0.016."), "{md}");
    assert!(md.contains("C: Welch's F(2, "), "{md}");
    assert!(md.contains("D: Welch's F(2, "), "{md}");
    assert!(md.contains("E: H(2) = "), "{md}");
    assert!(md.contains("F: H(2) = "), "{md}");
    assert!(md.contains("G: F(2, 27) = "), "{md}");
    assert!(md.contains("H: χ²(2) = "), "{md}");
    assert!(md.contains("I: W = 0."), "{md}");
    assert!(md.contains("J: F(2, 27) = 4.85, p = 0.016."), "{md}");
    let e = error("{{ plan | statement }}");
    assert!(e.message.contains("`statement` prints a test"), "{e:?}");
    let e = error("{{ g.f | statement }}");
    assert!(e.message.contains("`statement` prints a test"), "{e:?}");
}

/// Expressions that would allocate or compute without bound are refused at
/// their line and column, whatever engine feature they use.
#[test]
fn unbounded_expressions_are_refused_at_their_place() {
    for expr in [
        r#""x" * 1000000000"#,
        r#""x" * 100000 * 100000"#,
        r#"range(100000) | join("abcdefgh" * 100)"#,
        r#""%999999999s" | format("a")"#,
        r#""%.999999999f" | format(1.5)"#,
        "range(100000) | sort(reverse=true) | sort | sort(reverse=true) | sort | sort(reverse=true) | list | length",
        "(range(100000) | list) * 100",
        r#""ab" | indent(999999999)"#,
    ] {
        let e = error(&format!("Intro line.\n\nSee {{{{ {expr} }}}} here."));
        let place = e.place.as_ref().expect("placed");
        // The third line after the blocks, fifth column.
        let line = BLOCKS.lines().count() + 3;
        assert_eq!(
            (place.line, place.column),
            (Some(line), Some(5)),
            "{expr}: {e:?}"
        );
    }
    let e = error(r#"Text {{ "ab" * 6000 }}"#);
    assert!(
        e.message
            .contains("gives 12000 bytes of text; an expression may give at most 10000"),
        "{e:?}"
    );
    let e = error(r#"{{ "x" * 1000000000 }}"#);
    assert!(
        e.message
            .contains("needs more work than prose expressions may do"),
        "{e:?}"
    );
}

/// Many expressions, each within its own bound, still meet the document's.
#[test]
fn the_document_has_one_budget_for_all_expressions() {
    // 6 MB of text each, at least 94,000 units (64 bytes a unit): within an
    // expression's 200,000, and 400 of them far beyond the document's.
    let heavy = r#"{{ ("x" * 6000000) | length }} "#;
    let e = error(&heavy.repeat(400));
    assert!(e.message.contains("needs more work"), "{e:?}");
    assert!(prose(&heavy.repeat(2)).is_ok());
}

/// A paragraph of 40,000 expressions: every one expanded, in order.
#[test]
fn forty_thousand_expressions_in_one_paragraph() {
    let para: String = (0..40_000)
        .map(|i| format!("<{i}:{{{{ g.df1 + {i} }}}}> "))
        .collect();
    let md = prose(&para).expect("builds");
    // Every expansion, in order (the escaped `<` of the Markdown output aside).
    let mut from = 0;
    for i in 0..40_000 {
        let want = format!("{i}:{}>", i + 2);
        let at = md[from..]
            .find(&want)
            .unwrap_or_else(|| panic!("{want} missing"));
        from += at + want.len();
    }
}

#[test]
fn level_names_with_spaces_get_the_bracket_form() {
    let e = error("{{ g.groups.peat moss.mean }}");
    assert!(
        e.hints
            .iter()
            .any(|h| h.contains(r#"g.groups["peat moss"].mean"#)),
        "{e:?}"
    );
    let e = error("{{ g.groups.peat-perlite.mean | fixed(2) }}");
    assert!(
        e.hints
            .iter()
            .any(|h| h.contains(r#"g.groups["peat-perlite"].mean"#)),
        "{e:?}"
    );
}

#[test]
fn round_and_fixed_follow_the_one_rounding_rule() {
    // 1643.8 / 4 is exactly 410.95; its double is 410.9499…. The report's
    // rule reads it as 410.95 and rounds half away from zero, in `fixed` and
    // in `round` alike (the template engine's own `round` would give 410.9).
    let md = prose(
        "A{{ (1643.8 / 4) | fixed(1) }} B{{ (1643.8 / 4) | round(1) }} C{{ 455.125 | round(2) }} \
         D{{ -2.5 | round }} E{{ 2.675 | fixed(2) }}",
    )
    .expect("builds");
    for want in ["A411.0 ", "B411 ", "C455.13 ", "D−3 ", "E2.68"] {
        assert!(md.contains(want), "`{want}` in {md}");
    }
}

/// The text between `[[` and `]]` in a report, with the Markdown escapes of
/// the output taken out.
fn marked(md: &str) -> String {
    let from = md.find("[[").expect("opening mark") + 2;
    let to = md[from..].find("]]").expect("closing mark") + from;
    md[from..to].replace('\\', "")
}

/// The names `expr` holds, walked by the template engine itself.
fn names_of(expr: &str) -> std::collections::BTreeSet<String> {
    let md = prose(&format!("[[{{{{ {expr} | list | join(\" \") }}}}]]")).expect("builds");
    marked(&md).split(' ').map(str::to_string).collect()
}

#[test]
fn a_factorial_block_has_the_block_level_names() {
    // R's `aov(breaks ~ wool * tension, warpbreaks)` (from memory): tension
    // F = 8.498 on 2 and 48 df, p = 0.00069. `compare_term: tension` makes
    // tension the block's own term.
    let md = prose(
        "A: {{ warp.statement }}. B: {{ warp | statement }}. C: {{ warp.f | round(2) }}. \
         D: {{ warp.df1 }}/{{ warp.df2 }}. E: {{ warp.factor }}. F: {{ warp.p | pvalue }}. \
         G: {{ warp.checks.levene.p }}. H: {{ warp.ss_type }}. I: {{ warp.total.df }}. \
         J: {{ warp.groups.L.n }}. K: {{ warp.pairs | length }}. L: {{ warp.compare }}.",
    )
    .expect("builds");
    assert!(md.contains("A: F(2, 48) = 8.50, p < 0.001."), "{md}");
    assert!(md.contains("B: F(2, 48) = 8.50, p < 0.001."), "{md}");
    assert!(md.contains("C: 8.5."), "{md}");
    assert!(md.contains("D: 2/48."), "{md}");
    assert!(md.contains("E: tension."), "{md}");
    assert!(md.contains("F: < 0.001."), "{md}");
    // 54 looms, 18 at each tension; three levels make three pairs.
    assert!(md.contains("I: 53."), "{md}");
    assert!(md.contains("J: 18."), "{md}");
    assert!(md.contains("K: 3."), "{md}");
    assert!(md.contains("L: tukey."), "{md}");
    // Type III is the default for several factors (README, factorial keys).
    assert!(md.contains("H: 3."), "{md}");
    // The Levene p prose quotes is the one the results file records.
    let doc = format!("{BLOCKS}{{{{ warp.checks.levene.p }}}}\n");
    let built = compile("report.md", doc.as_bytes(), &Memory, Format::Markdown).expect("builds");
    let results: serde_json::Value = serde_json::from_slice(&built.results).expect("json");
    let levene = &results["blocks"][4]["checks"]["levene"]["p"];
    let p = levene.as_f64().expect("a Levene p");
    assert!(md.contains(&format!("G: {p}.")), "{p} in {md}");
}

#[test]
fn one_factor_and_factorial_blocks_share_their_names() {
    let one = names_of("g");
    let several = names_of("warp");
    let only_one: Vec<&String> = one.difference(&several).collect();
    let only_several: Vec<&String> = several.difference(&one).collect();
    // README, "Numbers in prose": `welch` and `kruskal` are one-factor
    // only, `ss_type` factorial only; every other name is shared.
    assert_eq!(only_one, ["kruskal", "welch"]);
    assert_eq!(only_several, ["ss_type"]);
    assert!(one.len() > 20, "{one:?}");
    // One level deeper the shared names hold the same names again, save
    // a level's spread, which marginal means do not have (README).
    for (a, b) in [
        ("g.checks", "warp.checks"),
        ("g.terms.group", "warp.terms.tension"),
        ("g.terms.group.effect", "warp.terms.tension.effect"),
        ("g.residual", "warp.residual"),
        ("g.total", "warp.total"),
        ("g.pairs[0]", "warp.pairs[0]"),
        ("g.means.group.ctrl", "warp.means.tension.L"),
    ] {
        assert_eq!(names_of(a), names_of(b), "{a} against {b}");
    }
    let level: Vec<String> = names_of("g.groups.ctrl")
        .difference(&names_of("warp.groups.L"))
        .cloned()
        .collect();
    assert_eq!(level, ["median", "q1", "q3", "sd"]);
}

/// The hint of an unknown name, split into the names it lists.
fn hint_names(expr: &str) -> (String, Vec<String>) {
    let e = error(&format!("{{{{ {expr} }}}}"));
    let hint = e.hints.first().expect("a hint").clone();
    let (head, list) = hint.split_once("` has ").expect("a list of names");
    let names = list.split(", ").map(str::to_string).collect();
    (head.trim_start_matches('`').to_string(), names)
}

#[test]
fn the_unknown_name_hint_lists_only_names_that_resolve() {
    for (expr, at) in [
        ("g.fstat", "g"),
        ("warp.fstat", "warp"),
        ("warp.terms.nosuch.f", "warp.terms"),
        ("w.checks.levene.q", "w.checks.levene"),
    ] {
        let (head, names) = hint_names(expr);
        assert_eq!(head, at, "{expr}");
        // Every name listed, and every key a listed map shows, resolves.
        let mut probes = Vec::new();
        for name in &names {
            let (name, keys) = match name.split_once(".<") {
                Some((n, keys)) => (n, keys.trim_end_matches('>').split('|').collect()),
                None => (name.split(['[', ' ']).next().unwrap_or(name), Vec::new()),
            };
            probes.push(format!("{head}[\"{name}\"]"));
            for key in keys {
                probes.push(format!("{head}[\"{name}\"][\"{key}\"]"));
            }
        }
        let text: String = probes
            .iter()
            .map(|p| format!("{{{{ {p} is defined }}}} "))
            .collect();
        let md = prose(&format!("[[{text}]]")).expect("builds");
        let inside = marked(&md);
        let answers: Vec<&str> = inside.split_whitespace().collect();
        assert_eq!(answers.len(), probes.len(), "{md}");
        for (probe, answer) in probes.iter().zip(answers) {
            assert_eq!(answer, "yes", "{probe} is listed but does not resolve");
        }
        // And the listed names are all the names there are.
        let listed: std::collections::BTreeSet<String> = names
            .iter()
            .map(|n| n.split(['.', '[', ' ']).next().unwrap_or(n).to_string())
            .collect();
        assert_eq!(listed, names_of(&head), "{expr}");
    }
    let (_, names) = hint_names("warp.terms.nosuch.f");
    assert!(
        names.iter().any(|n| n.starts_with("wool:tension.<")),
        "{names:?}"
    );
}
