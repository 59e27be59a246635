//! The validation report: an HTML page that opens with the run's identity
//! and a summary by area, then one table per area; and the same summary as
//! terminal text. The checks themselves are in `validate.rs`.

use super::{AreaSummary, Check, Validation};
use crate::escape::html_escape as e;

/// Styles added to the report stylesheet: a wider page, tables that scroll
/// inside their own box on a narrow screen, and a check column that wraps
/// instead of pushing the numbers off the page.
const STYLE: &str = "\
main.validation { max-width: 68rem; }
.scroll { overflow-x: auto; }
table.checks { font-size: 0.85rem; }
table.checks td.check { min-width: 14rem; overflow-wrap: anywhere; }
table.checks td.source { min-width: 9rem; }
table.summary tr.total td { font-weight: 600; }
td.fail { color: #b00020; font-weight: 600; }
";

fn checks_word(n: usize) -> &'static str {
    if n == 1 { "check" } else { "checks" }
}

/// The run's identity and totals, in one sentence.
fn opening(v: &Validation) -> String {
    let date = v.date.as_deref().unwrap_or("an unrecorded date");
    format!(
        "<p>sheaf {} (revision <code>{}</code>) on {}, run on {}: {} of {} {} passed, {} failed. \
Each check compares a value computed by this installation with a certified or reference value \
from the named outside source; LRE is the log relative error, −log<sub>10</sub>|value − \
reference| / |reference|, shown as 15 when they are equal.</p>\n",
        e(&v.sheaf),
        e(&v.revision),
        e(&v.platform),
        e(date),
        v.passed(),
        v.checks.len(),
        checks_word(v.checks.len()),
        v.failed()
    )
}

fn summary_table(summary: &[AreaSummary]) -> String {
    let mut html = String::from(
        "<figure class=\"table\"><figcaption>Summary by area</figcaption>\n<div class=\"scroll\"><table class=\"summary\">\n\
<thead><tr><th>Area</th><th class=\"num\">Checks</th><th class=\"num\">Passed</th><th class=\"num\">Failed</th><th class=\"num\">Worst LRE</th></tr></thead>\n<tbody>\n",
    );
    for s in summary {
        html.push_str(&format!(
            "<tr data-area=\"{}\"><td><a href=\"#{}\">{}</a></td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\"{}>{}</td><td class=\"num\">{:.1}</td></tr>\n",
            s.area.key(),
            s.area.key(),
            e(s.area.title()),
            s.checks,
            s.passed,
            if s.passed < s.checks { " class=\"fail\"" } else { "" },
            s.checks - s.passed,
            s.worst_lre
        ));
    }
    let checks: usize = summary.iter().map(|s| s.checks).sum();
    let passed: usize = summary.iter().map(|s| s.passed).sum();
    let worst = summary
        .iter()
        .map(|s| s.worst_lre)
        .fold(f64::INFINITY, f64::min);
    html.push_str(&format!(
        "<tr class=\"total\"><td>All areas</td><td class=\"num\">{checks}</td><td class=\"num\">{passed}</td><td class=\"num\">{}</td><td class=\"num\">{worst:.1}</td></tr>\n</tbody>\n</table></div>\n",
        checks - passed
    ));
    html.push_str("<p class=\"note\">Worst LRE is the lowest in the area. A check judged by an absolute bar (|Δ| ≤ …) can pass with a low LRE when its reference is close to zero, as far-tail probabilities are.</p>\n</figure>\n");
    html
}

fn check_row(c: &Check) -> String {
    format!(
        "<tr><td class=\"check\">{}</td><td class=\"source\">{}</td><td class=\"num\">{:.12e}</td><td class=\"num\">{:.12e}</td><td class=\"num\">{:.1}</td><td>{}</td><td{}>{}</td></tr>\n",
        e(&c.name),
        e(&c.source),
        c.value,
        c.reference,
        c.lre,
        e(&c.bar_text()),
        if c.pass { "" } else { " class=\"fail\"" },
        if c.pass { "pass" } else { "FAIL" }
    )
}

/// One area's section: heading, its sources, and its table.
fn area_section(v: &Validation, s: &AreaSummary) -> String {
    let checks: Vec<&Check> = v.checks.iter().filter(|c| c.area == s.area).collect();
    let mut sources: Vec<&str> = Vec::new();
    for c in &checks {
        if !sources.contains(&c.source.as_str()) {
            sources.push(&c.source);
        }
    }
    let mut html = format!(
        "<section id=\"{}\">\n<h2>{}</h2>\n<p>{} {}, {} passed. Sources: {}.</p>\n<div class=\"scroll\"><table class=\"checks\">\n\
<thead><tr><th>Check</th><th>Source</th><th class=\"num\">Value</th><th class=\"num\">Reference</th><th class=\"num\">LRE</th><th>Bar</th><th>Result</th></tr></thead>\n<tbody>\n",
        s.area.key(),
        e(s.area.title()),
        s.checks,
        checks_word(s.checks),
        s.passed,
        e(&sources.join("; "))
    );
    for c in checks {
        html.push_str(&check_row(c));
    }
    html.push_str("</tbody>\n</table></div>\n</section>\n");
    html
}

/// The whole HTML page.
pub fn html(v: &Validation) -> String {
    let summary = v.summary();
    let mut html = String::from(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>sheaf validation</title>\n<style>\n",
    );
    html.push_str(include_str!("../../templates/report.css"));
    html.push('\n');
    html.push_str(STYLE);
    html.push_str("</style>\n</head>\n<body>\n<main class=\"validation\">\n<h1 class=\"title\">sheaf validation report</h1>\n");
    html.push_str(&opening(v));
    html.push_str(&summary_table(&summary));
    for s in &summary {
        html.push_str(&area_section(v, s));
    }
    html.push_str("<p>This report is generated by <code>sheaf validate</code>; it is evidence that this installation reproduces published and reference values. It does not by itself make any use of the software compliant with regulations: that depends on the intended use, the procedures around it and a qualified review.</p>\n</main>\n</body>\n</html>\n");
    html
}

/// The terminal report: each check, the summary by area, the totals.
pub fn text(v: &Validation) -> String {
    let width = v
        .checks
        .iter()
        .map(|c| c.name.chars().count())
        .max()
        .unwrap_or(0);
    let mut out = String::new();
    for c in &v.checks {
        let mark = if c.pass { "pass" } else { "FAIL" };
        out.push_str(&format!("{mark}  {:<width$}  {}\n", c.name, c.detail()));
    }
    let summary = v.summary();
    let title_width = summary
        .iter()
        .map(|s| s.area.title().chars().count())
        .max()
        .unwrap_or(0);
    out.push_str(&format!(
        "\n{:<title_width$}  {:>6}  {:>6}  {:>6}  {:>9}\n",
        "area", "checks", "passed", "failed", "worst LRE"
    ));
    for s in &summary {
        out.push_str(&format!(
            "{:<title_width$}  {:>6}  {:>6}  {:>6}  {:>9.1}\n",
            s.area.title(),
            s.checks,
            s.passed,
            s.checks - s.passed,
            s.worst_lre
        ));
    }
    let date = v.date.as_deref().unwrap_or("an unrecorded date");
    out.push_str(&format!(
        "\nsheaf {} ({}), {}, run on {date}\n",
        v.sheaf, v.revision, v.platform
    ));
    out.push_str(&format!("{} passed, {} failed\n", v.passed(), v.failed()));
    out
}
