use super::*;

fn check(area: Area, name: &str, value: f64, reference: f64) -> Check {
    Check::new(
        area,
        name,
        "a reference",
        value,
        reference,
        Bar::MinLre { lre: 9.0 },
    )
}

/// Three areas, one failing check, a name that needs escaping.
fn sample() -> Validation {
    Validation {
        sheaf: "0.0.0".into(),
        revision: "abc".into(),
        platform: "test".into(),
        date: Some("2023-11-14".into()),
        checks: vec![
            check(Area::NistAnova, "SmLs01: F", 21.0, 21.0),
            check(Area::NistAnova, "SmLs01: SS", 1.68, 1.68 * (1.0 + 1e-11)),
            check(Area::StudentizedRange, "q < 3", 0.5, 0.5),
            check(Area::StudentizedRange, "q = 4", 0.9, 0.9 * (1.0 + 1e-10)),
            check(Area::StudentizedRange, "q = 5", 0.99, 0.98),
            check(Area::Power, "n, k = 4", 45.0, 45.0),
        ],
    }
}

#[test]
fn the_summary_counts_each_area() {
    let s = sample().summary();
    let areas: Vec<Area> = s.iter().map(|a| a.area).collect();
    assert_eq!(
        areas,
        [Area::NistAnova, Area::StudentizedRange, Area::Power]
    );
    assert_eq!((s[0].checks, s[0].passed), (2, 2));
    assert_eq!((s[1].checks, s[1].passed), (3, 2));
    assert_eq!((s[2].checks, s[2].passed), (1, 1));
    // Worst LRE: the lowest. −log10(1e-11) = 11; |0.99 − 0.98| / 0.98 gives
    // −log10(0.0102…) = 1.99…; equal values count as 15.
    assert!((s[0].worst_lre - 11.0).abs() < 1e-3, "{}", s[0].worst_lre);
    assert!((s[1].worst_lre - 1.991).abs() < 1e-3, "{}", s[1].worst_lre);
    assert_eq!(s[2].worst_lre, 15.0);
}

/// The rows between two markers of the page.
fn rows_between(html: &str, start: &str, end: &str) -> usize {
    let from = html.find(start).expect("start");
    let to = from + html[from..].find(end).expect("end");
    html[from..to].matches("<tr").count()
}

#[test]
fn the_page_opens_with_the_summary_and_its_counts_match_the_tables() {
    let v = sample();
    let html = report::html(&v);
    let summary_at = html.find("Summary by area").expect("summary");
    let first_section = html.find("<section").expect("sections");
    assert!(summary_at < first_section, "the summary comes first");
    assert!(html.contains("run on 2023-11-14"));
    assert!(html.contains("5 of 6 checks passed, 1 failed"));
    for s in v.summary() {
        let section = format!("<section id=\"{}\">", s.area.key());
        // One header row, then one row per check.
        assert_eq!(rows_between(&html, &section, "</section>") - 1, s.checks);
        let row = format!(
            "<tr data-area=\"{key}\"><td><a href=\"#{key}\">{}</a></td><td class=\"num\">{}</td><td class=\"num\">{}</td>",
            crate::escape::html_escape(s.area.title()),
            s.checks,
            s.passed,
            key = s.area.key(),
        );
        assert!(html.contains(&row), "{row}");
    }
    assert!(
        html.contains("<td class=\"num\">6</td><td class=\"num\">5</td><td class=\"num\">1</td>")
    );
    assert!(html.contains("q &lt; 3") && !html.contains("q < 3"));
    assert_eq!(html.matches("class=\"fail\">FAIL").count(), 1);
}

#[test]
fn the_terminal_text_ends_with_the_summary_and_totals() {
    let text = report::text(&sample());
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.last(), Some(&"5 passed, 1 failed"));
    assert!(text.contains("run on 2023-11-14"));
    let range = lines
        .iter()
        .find(|l| l.starts_with("Studentized range distribution"))
        .expect("area line");
    let numbers: Vec<&str> = range.split_whitespace().rev().take(4).collect();
    assert_eq!(numbers, ["2.0", "1", "2", "3"]);
    // The details start in one column, after the longest name.
    let column = "pass  ".len() + "SmLs01: SS".len() + 2;
    for line in &lines[..6] {
        assert!(
            line[..column].ends_with("  ") && !line[column..].starts_with(' '),
            "{line}"
        );
    }
}

/// How many entries a fixture lists at `path` in each case named `names`.
fn listed(fixture: &str, names: &[&str], path: &[&str]) -> usize {
    let fx: Value = serde_json::from_str(fixture).expect("fixture");
    let cases = fx["cases"].as_array().expect("cases");
    names
        .iter()
        .map(|name| {
            let case = cases.iter().find(|c| c["name"] == *name).expect("case");
            let at = path.iter().fold(case, |v, key| &v[*key]);
            at.as_array().map_or(0, Vec::len)
        })
        .sum()
}

#[test]
fn every_engine_case_yields_its_checks_and_passes() {
    // The ANOVA cases run whole blocks through the engines; a block that
    // failed to run would drop its checks without a word, so the counts are
    // taken from the fixtures and the NIST list.
    let v = run();
    let count = |area: Area| v.checks.iter().filter(|c| c.area == area).count();
    assert_eq!(count(Area::NistAnova), NIST.len() * 5);
    let pairs = ["tukey", "lsd", "holm"]
        .iter()
        .map(|key| listed(ONEWAY, &["plant_growth"], &["comparisons", key]))
        .sum::<usize>();
    assert_eq!(count(Area::OneWayComparisons), 2 + pairs);
    assert_eq!(count(Area::AssumptionsAndRobust), 2 * 3);
    let tables = ["1", "2", "3"]
        .iter()
        .map(|key| {
            listed(
                FACTORIAL,
                &["warpbreaks", "warp_unbalanced"],
                &["tables", key],
            )
        })
        .sum::<usize>();
    assert_eq!(count(Area::Factorial), tables);
    // Mixed models: 12 F, df, SE and component checks; per dataset (oats,
    // Machines) Shapiro-Wilk W and p of the conditional residuals, three
    // residuals, W and p of each of two random terms' predicted effects;
    // and Machines' one flagged unit (worker 6 on machine B, standardised
    // effect −3.13 in the reference), its effect and standardised effect.
    assert_eq!(count(Area::MixedModels), 12 + 2 * (2 + 3 + 2 * 2) + 2);
    // Repeated measures: sleepstudy 11, anorexia 7, the three structures
    // (criterion, parameters 2, 2, 3, Wald F and df) and Hotelling 3.
    assert_eq!(
        count(Area::RepeatedMeasures),
        11 + 7 + (3 * 3 + 2 + 2 + 3) + 3
    );
    let failed: Vec<String> = v
        .checks
        .iter()
        .filter(|c| !c.pass)
        .map(|c| format!("{}: {}", c.name, c.detail()))
        .collect();
    assert!(failed.is_empty(), "{failed:?}");
}
