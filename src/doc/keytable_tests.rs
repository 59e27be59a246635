//! The key tables are what the parsers accept and what the hints list.

use crate::doc::block::ANOVA;
use crate::doc::power::POWER;
use crate::doc::{FRONT_MATTER, parse_document};

/// A value each front-matter key accepts.
const FRONT_SAMPLES: &[(&str, &str)] = &[
    ("title", "title: Trial"),
    ("author", "author: A. Grower"),
    ("date", "date: 2026-05-01"),
    ("alpha", "alpha: 0.1"),
    ("decimals", "decimals: 3"),
    ("compare", "compare: lsd"),
    ("figures", "figures: png"),
    ("dpi", "figures: png\ndpi: 300"),
    ("paper", "paper: letter"),
    ("contents", "contents: yes"),
    ("tex", "tex: body"),
];

/// Lines with which each `anova` key is accepted (with what it needs).
const ANOVA_SAMPLES: &[(&str, &str)] = &[
    ("id", "id: growth"),
    ("data", "data: d.csv"),
    ("model", "model: y ~ g"),
    ("compare", "compare: lsd"),
    ("alpha", "alpha: 0.01"),
    ("levels", "levels: a, b"),
    ("caption", "caption: Yield by group"),
    ("decimals", "decimals: 2"),
    ("delimiter", "delimiter: semicolon"),
    ("decimal", "decimal: comma\ndelimiter: semicolon"),
    ("missing", "missing: NA, -"),
    ("protected", "compare: lsd\nprotected: no"),
    ("order", "order: levels"),
    ("show", "show: means, pairs"),
    ("method", "method: welch"),
    ("checks", "checks: summary"),
    ("control", "compare: dunnett\ncontrol: a"),
    ("sides", "compare: dunnett\ncontrol: a\nsides: 1"),
    ("adjust", "method: ranks\nadjust: bonferroni"),
    ("input", "input: summary"),
    (
        "columns",
        "input: summary\ncolumns: n = k, mean = m, se = s",
    ),
    ("ss", "model: y ~ g * h\nss: 2"),
    ("compare_term", "model: y ~ g * h\ncompare_term: g"),
    ("within", "model: y ~ g * h\nwithin: h"),
    ("cells", "model: y ~ g * h\ncells: yes"),
    ("block", "model: y ~ g + b\nblock: b"),
    ("covariate", "model: y ~ g\ncovariate: x"),
    (
        "contrast",
        "contrast: a vs b = a 1, b -1\ncontrast: a vs c = a 1, c -1",
    ),
    (
        "contrast_adjust",
        "contrast: a vs b = a 1, b -1\ncontrast_adjust: holm",
    ),
    ("trend", "trend: g = a 0, b 10, c 40"),
    ("transform", "transform: log"),
    ("offset", "transform: sqrt\noffset: 0.375"),
    ("noec", "control: a\nsides: less\nnoec: williams, steel"),
    (
        "doses",
        "control: a\nsides: greater\nnoec: jonckheere\ndoses: b 10, c 40",
    ),
    ("margin", "control: a\nmargin: -1.5, 2"),
    ("claim", "control: a\nmargin: 3%\nclaim: all"),
    ("random", "model: y ~ g\nrandom: b + b:g"),
    ("ddf", "random: b\nddf: satterthwaite"),
    ("subject", "model: y ~ week\nsubject: animal"),
    (
        "covariance",
        "model: y ~ week\nsubject: animal\ncovariance: autoregressive, compare",
    ),
    ("plot", "plot: box, means"),
    ("label", "label: Yield"),
    ("unit", "unit: kg"),
    ("reference", "reference: 0"),
    ("layout", "layout: wide"),
    ("where", "where: g != c"),
    ("exclude", "exclude: 3: spilled"),
    ("labels", "labels: a = Control"),
    ("sheet", "data: book.xlsx\nsheet: Trial"),
    ("range", "data: book.xlsx\nrange: A1:C20"),
    ("query", "input: summary\nquery: cells.sql"),
    ("acknowledge", "acknowledge: missing"),
    ("names", "names: y = Yield"),
    ("x_axis", "model: y ~ g * h\nx_axis: h"),
];

/// Lines with which each `power` key is accepted.
const POWER_SAMPLES: &[(&str, &str)] = &[
    ("id", "id: plan"),
    ("groups", "groups: 3"),
    ("effect", "effect: f = 0.4"),
    ("alpha", "alpha: 0.01"),
    ("power", "power: 0.9"),
    ("n", "n: 12"),
    ("caption", "caption: Plan"),
];

fn sorted(mut keys: Vec<&str>) -> Vec<&str> {
    keys.sort_unstable();
    keys
}

#[test]
fn every_table_has_a_sample_for_each_key() {
    let keys = |s: &[(&'static str, &str)]| sorted(s.iter().map(|(k, _)| *k).collect());
    assert_eq!(keys(FRONT_SAMPLES), sorted(FRONT_MATTER.names()));
    assert_eq!(keys(ANOVA_SAMPLES), sorted(ANOVA.names()));
    assert_eq!(keys(POWER_SAMPLES), sorted(POWER.names()));
}

#[test]
fn every_front_matter_key_is_accepted() {
    for (key, lines) in FRONT_SAMPLES {
        let doc = format!("---\n{lines}\n---\n# R\n");
        let parsed = parse_document("r.md", doc);
        assert!(parsed.is_ok(), "`{key}`: {parsed:?}");
    }
}

#[test]
fn every_anova_key_is_accepted() {
    for (key, lines) in ANOVA_SAMPLES {
        let mut body = lines.to_string();
        for (needed, line) in [("data", "data: d.csv"), ("model", "model: y ~ g")] {
            if !body.lines().any(|l| l.starts_with(&format!("{needed}:"))) {
                body.push('\n');
                body.push_str(line);
            }
        }
        let parsed = parse_document("r.md", format!("```anova\n{body}\n```\n"));
        assert!(parsed.is_ok(), "`{key}`: {parsed:?}");
    }
}

#[test]
fn every_power_key_is_accepted() {
    for (key, lines) in POWER_SAMPLES {
        let mut body = lines.to_string();
        for (needed, line) in [
            ("groups", "groups: 3"),
            ("effect", "effect: f = 0.4"),
            ("power", "power: 0.8"),
        ] {
            let given = body.lines().any(|l| l.starts_with(&format!("{needed}:")));
            // `n` is the other goal: `power` is then left out.
            let other_goal = needed == "power" && *key == "n";
            if !given && !other_goal {
                body.push('\n');
                body.push_str(line);
            }
        }
        let parsed = parse_document("r.md", format!("```power\n{body}\n```\n"));
        assert!(parsed.is_ok(), "`{key}`: {parsed:?}");
    }
}

/// The hint for a key far from every known one lists the whole table.
fn listed_hint(doc: &str) -> String {
    let err = parse_document("r.md", doc.to_string()).expect_err("an unknown key");
    assert_eq!(err.count(), 1, "{err}");
    err.hints.join(" ")
}

#[test]
fn the_front_matter_hint_lists_every_key_figures_and_dpi_included() {
    let hint = listed_hint("---\nwatermark_colour: grey\n---\n");
    assert!(hint.starts_with("the front matter takes "), "{hint}");
    for key in FRONT_MATTER.names() {
        assert!(
            hint.contains(&format!(" {key},")) || hint.ends_with(&format!(" {key}")),
            "`{key}` missing from: {hint}"
        );
    }
    assert!(hint.contains("figures") && hint.contains("dpi"), "{hint}");
}

#[test]
fn block_hints_list_every_key() {
    let anova = listed_hint("```anova\ndata: d.csv\nmodel: y ~ g\nwatermark_colour: grey\n```\n");
    let power = listed_hint(
        "```power\ngroups: 3\neffect: f = 0.4\npower: 0.8\nwatermark_colour: grey\n```\n",
    );
    for (hint, names) in [(anova, ANOVA.names()), (power, POWER.names())] {
        let listed: Vec<&str> = hint
            .split_once(" takes ")
            .map(|(_, keys)| keys.split(", ").collect())
            .unwrap_or_default();
        assert_eq!(listed, names, "{hint}");
    }
}
