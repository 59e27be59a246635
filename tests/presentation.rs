//! How reports read: blocking factors reported but not tested, checks that
//! advise in plain words, acknowledged notes, display names, typographic
//! minus signs, one number of decimals per column, pluralised counts, the
//! one-sided Dunnett header, print settings and figures drawn per term.
//! Data here are invented.

use serde_json::Value;
use sheaf::compile::{Built, World, compile};
use sheaf::render::Format;

/// Files held in memory.
struct Memory(Vec<(&'static str, String)>);

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        self.0
            .iter()
            .find(|(p, _)| *p == path)
            .map(|(_, t)| t.as_bytes().to_vec())
            .ok_or_else(|| std::io::Error::from(std::io::ErrorKind::NotFound))
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

fn build(doc: &str, data: String, format: Format) -> Built {
    compile(
        "report.md",
        doc.as_bytes(),
        &Memory(vec![("d.csv", data)]),
        format,
    )
    .unwrap_or_else(|d| panic!("build failed:\n{d}"))
}

fn text(b: &Built) -> String {
    String::from_utf8(b.report.clone()).expect("utf-8")
}

/// A file written beside a Markdown report, as text.
fn file(b: &Built, name: &str) -> String {
    let (_, bytes) = b
        .files
        .iter()
        .find(|(n, _)| n == name)
        .unwrap_or_else(|| panic!("no file {name}"));
    String::from_utf8_lossy(bytes).into_owned()
}

fn results(b: &Built) -> Value {
    serde_json::from_slice(&b.results).expect("results parse")
}

/// Invented: three varieties in four blocks, one plot each.
fn blocked() -> String {
    let mut csv = String::from("variety,block,y\n");
    let yields = [
        [10.1, 11.3, 9.8, 10.9],
        [12.4, 13.0, 12.1, 13.5],
        [11.0, 11.9, 10.2, 11.6],
    ];
    for (v, row) in yields.iter().enumerate() {
        for (b, y) in row.iter().enumerate() {
            csv.push_str(&format!("V{},B{},{y}\n", v + 1, b + 1));
        }
    }
    csv
}

const BLOCKED: &str =
    "```anova\nid: t\ndata: d.csv\nmodel: y ~ variety + block\nblock: block\n```\n";

#[test]
fn a_blocking_factor_is_reported_but_not_tested() {
    let b = build(BLOCKED, blocked(), Format::Markdown);
    let report = text(&b);
    let block_row = report
        .lines()
        .find(|l| l.starts_with("| block (block)"))
        .expect("block row");
    assert!(block_row.contains("not tested"), "{block_row}");
    let r = results(&b);
    let term = &r["blocks"][0]["anova"]["terms"][1];
    assert_eq!(term["term"], "block");
    assert!(term["ss"].is_f64() && term["ms"].is_f64());
    assert!(term["f"].is_null() && term["p"].is_null() && term["critical_f"].is_null());
    assert!(
        term["not_tested"]
            .as_str()
            .is_some_and(|s| s.contains("blocking"))
    );
    // The treatment is still tested.
    let variety = &r["blocks"][0]["anova"]["terms"][0];
    assert!(variety["f"].is_f64() && variety.get("not_tested").is_none());
    // Prose: the block's F has no value, the treatment's does.
    let doc = format!("{BLOCKED}\nF = {{{{ t.terms.variety.f | fixed(2) }}}}.\n");
    assert!(text(&build(&doc, blocked(), Format::Markdown)).contains("F = "));
    let doc = format!("{BLOCKED}\nF = {{{{ t.terms.block.f | fixed(2) }}}}.\n");
    let Err(err) = compile(
        "report.md",
        doc.as_bytes(),
        &Memory(vec![("d.csv", blocked())]),
        Format::Markdown,
    ) else {
        panic!("a block's F cannot be quoted");
    };
    assert!(err.to_string().contains("t.terms.block.f"), "{err}");
}

#[test]
fn results_schema_two_names_the_critical_value_critical_f() {
    let b = build(BLOCKED, blocked(), Format::Markdown);
    let r = results(&b);
    assert_eq!(r["schema"], 2);
    let term = &r["blocks"][0]["anova"]["terms"][0];
    assert!(term["critical_f"].is_f64() && term.get("f_crit").is_none());
}

/// Invented: six cells; cell spreads chosen so that only the mean-centred
/// Levene test rejects equal variances.
fn levene_only() -> String {
    let mut csv = String::from("a,b,y\n");
    let cells: [[f64; 4]; 6] = [
        [10.0, 10.2, 9.9, 10.1],
        [12.0, 12.1, 11.9, 12.2],
        [11.0, 14.0, 11.2, 11.1],
        [10.5, 10.4, 10.6, 10.5],
        [13.0, 13.1, 12.9, 13.0],
        [11.5, 11.6, 15.0, 11.4],
    ];
    for (i, cell) in cells.iter().enumerate() {
        for y in cell {
            csv.push_str(&format!("A{},B{},{y}\n", i / 2 + 1, i % 2 + 1));
        }
    }
    csv
}

#[test]
fn factorial_checks_advise_in_plain_words_when_levene_alone_rejects() {
    let doc = "```anova\nid: f\ndata: d.csv\nmodel: y ~ a * b\n```\n";
    let b = build(doc, levene_only(), Format::Markdown);
    let r = results(&b);
    let checks = &r["blocks"][0]["checks"];
    let (lev, bf) = (
        checks["levene"]["p"].as_f64().expect("levene"),
        checks["brown_forsythe"]["p"].as_f64().expect("bf"),
    );
    assert!(
        lev < 0.05 && bf >= 0.05,
        "the data must split the tests: {lev} {bf}"
    );
    let warnings = r["blocks"][0]["warnings"].to_string();
    assert!(
        warnings.contains("Levene's mean-centred test"),
        "{warnings}"
    );
    assert!(warnings.contains("Brown-Forsythe"), "{warnings}");
    // Prose can quote the checks of a factorial block.
    let doc = format!("{doc}\nLevene {{{{ f.checks.levene.p | ptext }}}}.\n");
    assert!(text(&build(&doc, levene_only(), Format::Markdown)).contains("Levene p = "));
}

fn with_missing() -> String {
    "g,y\nA,1.0\nA,1.4\nA,1.1\nB,2.0\nB,NA\nB,2.2\nB,2.5\nC,3.1\nC,2.9\nC,3.3\n".to_string()
}

#[test]
fn acknowledged_notes_move_to_the_provenance_section() {
    let plain = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n";
    let b = build(plain, with_missing(), Format::Html);
    assert!(text(&b).contains("Check before use"));
    assert_eq!(
        results(&b)["blocks"][0]["acknowledged"],
        Value::Array(vec![])
    );

    let acked = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\nacknowledge: missing\n```\n";
    let b = build(acked, with_missing(), Format::Html);
    let html = text(&b);
    assert!(!html.contains("Check before use"), "no box left");
    let provenance = &html[html.find("class=\"provenance\"").expect("provenance")..];
    assert!(provenance.contains("left out because a value was missing"));
    let r = results(&b);
    assert_eq!(r["blocks"][0]["warnings"], Value::Array(vec![]));
    assert_eq!(
        r["blocks"][0]["acknowledged"].as_array().map(Vec::len),
        Some(1)
    );

    // A planned exclusion with its reason needs no acknowledgement.
    let planned = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\nexclude: 2: tray dropped\nacknowledge: missing\n```\n";
    let html = text(&build(planned, with_missing(), Format::Html));
    assert!(!html.contains("Check before use"));
    assert!(html.contains("tray dropped"));

    // An unknown kind is an error naming the kinds.
    let bad = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\nacknowledge: misssing\n```\n";
    let Err(err) = compile(
        "report.md",
        bad.as_bytes(),
        &Memory(vec![("d.csv", with_missing())]),
        Format::Html,
    ) else {
        panic!("unknown kind");
    };
    assert!(err.to_string().contains("missing"), "{err}");
}

#[test]
fn display_names_replace_column_names_in_tables_and_captions() {
    let doc = "```anova\nid: t\ndata: d.csv\nmodel: y ~ variety + block\nblock: block\nnames: variety = Wheat variety, y = Grain yield\nplot: box\n```\n";
    let b = build(doc, blocked(), Format::Markdown);
    let report = text(&b);
    assert!(report.contains("Analysis of variance of Grain yield by Wheat variety"));
    assert!(report.contains("| Wheat variety |"));
    // The results file keeps the column names.
    assert_eq!(results(&b)["blocks"][0]["factors"][0], "variety");
    // A name for a column the model does not use is an error.
    let bad = "```anova\nid: t\ndata: d.csv\nmodel: y ~ variety + block\nnames: varety = V\n```\n";
    let Err(err) = compile(
        "report.md",
        bad.as_bytes(),
        &Memory(vec![("d.csv", blocked())]),
        Format::Markdown,
    ) else {
        panic!("unknown column");
    };
    assert!(err.to_string().contains("varety"), "{err}");
}

#[test]
fn negative_numbers_use_the_minus_sign_in_reports_and_ascii_in_results() {
    let doc = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n\nDiff {{ t.pairs[0].diff | fixed(2) }}.\n";
    for format in [Format::Html, Format::Markdown] {
        let b = build(doc, with_missing(), format);
        let full = text(&b);
        // The report's text, without the style sheet.
        let report = full.split("</style>").last().unwrap_or("");
        // Pairs run from the first level: B − A is positive, A − C negative.
        assert!(report.contains('\u{2212}'), "no minus sign in {format:?}");
        for gap in ["| -", ">-", "(-", " -"] {
            for digit in '0'..='9' {
                let bad = format!("{gap}{digit}");
                assert!(
                    !report.contains(&bad),
                    "hyphen as minus: {bad} in {format:?}"
                );
            }
        }
        assert!(!String::from_utf8_lossy(&b.results).contains('\u{2212}'));
    }
    // Level names keep their hyphens.
    assert_eq!(
        sheaf::format::typographic_minus("peat-perlite −x -1.5 (-2) 3-4"),
        "peat-perlite −x \u{2212}1.5 (\u{2212}2) 3-4"
    );
}

#[test]
fn counts_are_written_out_and_columns_keep_one_rule() {
    let doc = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n";
    let report = text(&build(doc, with_missing(), Format::Markdown));
    assert!(
        report.contains("9 observations used, 1 row left out"),
        "{report}"
    );
    assert!(!report.contains("(s)"));
    // SS and MS columns share one number of decimals.
    let row = report
        .lines()
        .find(|l| l.starts_with("| g |"))
        .expect("anova row");
    let cells: Vec<&str> = row.split('|').map(str::trim).collect();
    let decimals = |s: &str| s.split('.').nth(1).map_or(0, str::len);
    assert_eq!(decimals(cells[3]), decimals(cells[4]), "{row}");
    // A factorial η² column never mixes two and three decimals.
    let report = text(&build(
        "```anova\nid: f\ndata: d.csv\nmodel: y ~ a * b\n```\n",
        levene_only(),
        Format::Markdown,
    ));
    let etas: Vec<usize> = report
        .lines()
        .filter(|l| l.starts_with("| a |") || l.starts_with("| b |") || l.starts_with("| a × b |"))
        .take(3) // the ANOVA table comes first
        .map(|l| {
            decimals(
                l.trim_end_matches('|')
                    .rsplit('|')
                    .next()
                    .unwrap_or("")
                    .trim(),
            )
        })
        .collect();
    assert_eq!(etas.len(), 3);
    assert!(etas.iter().all(|d| *d == etas[0]), "{etas:?}");
}

#[test]
fn a_one_sided_dunnett_bound_is_labelled_as_a_bound() {
    let doc =
        "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\ncompare: dunnett\ncontrol: A\nsides: 1\n```\n";
    let report = text(&build(doc, with_missing(), Format::Markdown));
    assert!(report.contains("| 95% lower bound |"), "{report}");
    assert!(!report.contains("| above"), "{report}");
}

#[test]
fn welch_statistic_is_labelled_as_welchs() {
    let doc = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\nmethod: welch\n```\n";
    let report = text(&build(doc, with_missing(), Format::Markdown));
    assert!(report.contains("| Welch's F |") && !report.contains("F\\*"));
}

#[test]
fn print_settings_come_from_the_front_matter() {
    let body = "## One\n\n```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n\n## Two\n\nText.\n";
    let html = text(&build(body, with_missing(), Format::Html));
    assert!(html.contains("size: A4;") && html.contains("counter(page)"));
    assert!(!html.contains("nav class=\"contents\""));
    let doc = format!(
        "---\ntitle: A \"quoted\" </style> title\npaper: letter\ncontents: yes\n---\n{body}"
    );
    let html = text(&build(&doc, with_missing(), Format::Html));
    assert!(html.contains("size: letter;"));
    assert!(
        html.contains(r#"content: "A \"quoted\" \3c /style\3e  title";"#),
        "title escaped for CSS"
    );
    assert!(html.contains("<a href=\"#section-1\">One</a>"));
    assert!(html.contains("<h2 id=\"section-2\">Two</h2>"));
    assert!(html.contains("<a href=\"#t-anova\">Table 1."));
    // Every table scrolls inside its own box.
    assert_eq!(
        html.matches("<table").count(),
        html.matches("<div class=\"table-scroll\"").count()
    );
}

/// Invented: a 2 × 3 layout with two observations per cell.
fn two_by_three() -> String {
    let mut csv = String::from("a,b,y\n");
    for (i, y) in [5.0, 5.4, 6.1, 6.3, 7.2, 7.0, 5.8, 6.0, 6.9, 7.1, 8.3, 8.0]
        .iter()
        .enumerate()
    {
        csv.push_str(&format!("A{},B{},{y}\n", i / 6 + 1, (i / 2) % 3 + 1));
    }
    csv
}

#[test]
fn factorial_figures_cover_each_compared_term_and_the_chosen_axis() {
    let doc = "```anova\nid: f\ndata: d.csv\nmodel: y ~ a + b\nplot: box, interaction\nx_axis: b\nnames: b = Spacing\n```\n";
    let b = build(doc, two_by_three(), Format::Markdown);
    let names: Vec<&str> = b.files.iter().map(|(n, _)| n.as_str()).collect();
    assert!(
        names.contains(&"report-f-box.svg") && names.contains(&"report-f-box-b.svg"),
        "{names:?}"
    );
    let svg = file(&b, "report-f-interaction.svg");
    assert!(
        svg.contains("Spacing on the axis, one line per level of a"),
        "x axis chosen"
    );
    assert!(svg.contains("class=\"legend-title\""), "legend has a title");
}

#[test]
fn twenty_levels_tilt_their_names_enough_to_clear_each_other() {
    // Invented: 20 levels of four observations; names wider than a slot.
    let mut csv = String::from("g,y\n");
    for i in 0..20 {
        for j in 0..4 {
            csv.push_str(&format!("line-{:02}x,{}\n", i + 1, 10 + i + (j * 7) % 5));
        }
    }
    let doc = "```anova\nid: m\ndata: d.csv\nmodel: y ~ g\nplot: box\n```\n";
    let b = build(doc, csv, Format::Markdown);
    let svg = file(&b, "report-m-box.svg");
    // 480 px for 20 slots of about 21 px: at 30° neighbouring 11 px labels
    // sit only about 10 px apart, so the names tilt to 45° (15 px apart).
    assert_eq!(
        svg.matches("class=\"xtick\" transform=\"rotate(-45.00")
            .count(),
        20,
        "{svg}"
    );
}

#[test]
fn numeric_first_columns_are_right_aligned_under_their_header() {
    let doc = "```power\nid: p\ngroups: 3\neffect: f = 0.4\npower: 0.8\n```\n";
    let html = text(&build(doc, String::new(), Format::Html));
    // The power table's "n per group" column: header and cells both right.
    assert!(html.contains("<th scope=\"col\" class=\"num\">n per group</th>"));
    assert!(
        html.contains("<th scope=\"row\" class=\"num\" data-key=\"p.curve.0.n_per_group\">"),
        "cells align with the header (and name their field)"
    );
}

#[test]
fn a_factorial_means_plot_without_comparisons_draws_marginal_means() {
    // Invented, unbalanced: the observed means of `a` are 38.1 / 6 = 6.35
    // and 40.3 / 6 = 6.72 (by hand); its estimated marginal means in
    // y ~ a + b are 14501/2355 = 6.16 and 6659/942 = 7.07 (least squares in
    // exact rational arithmetic, Python's fractions).
    let csv = "a,b,y\nA1,B1,5.0\nA1,B1,5.4\nA1,B2,6.1\nA1,B3,7.2\nA1,B3,7.0\nA1,B3,7.4\n\
A2,B1,5.8\nA2,B1,6.0\nA2,B1,6.2\nA2,B2,6.9\nA2,B2,7.1\nA2,B3,8.3\n";
    let doc = "```anova\nid: f\ndata: d.csv\nmodel: y ~ a + b\nplot: means\ncompare: none\n```\n";
    let b = build(doc, csv.to_string(), Format::Markdown);
    let svg = file(&b, "report-f-means.svg");
    assert!(svg.contains("marginal means of y by a"), "{svg}");
    assert!(!svg.contains("Observed means"), "{svg}");
    assert!(svg.contains("Levels A1, A2; means 6.16, 7.07."), "{svg}");
    let report = text(&b);
    assert!(report.contains("Figure 1. Estimated marginal means of y by a"));
}
