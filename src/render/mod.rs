//! Rendering stage: view models laid out by templates (embedded at compile
//! time from `templates/`), prose from pulldown-cmark. HTML escaping happens
//! in minijinja's HTML auto-escape, pulldown-cmark's writer and `html_escape`
//! (for the `code_spans` filter); Markdown escaping in `markdown_escape`.
//! Nowhere else.

mod html;
pub mod inline;
mod links;
mod markdown;
pub mod report;
mod templates;
pub mod view;
pub mod writer;

pub use writer::{FORMATS, Format, Writer};

use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::figure::PlacedFigure;
use crate::outcome::BlockResult;
use crate::provenance::Input;
use report::Report;

/// The standing cautions printed at the end of every report.
pub const CAUTIONS: [&str; 5] = [
    "Statistical significance is not practical importance: judge each difference and its confidence interval against the smallest difference that matters in your setting.",
    "A difference that is not significant does not show that levels are equivalent; equivalence needs its own test.",
    "An analysis of variance assumes independent observations, normally distributed errors and equal variances across levels. The checks in this report test the last two, but a check that passes does not prove an assumption holds, and independence comes from the design, which no test can confirm.",
    "Results must be reviewed by a qualified statistician or responsible scientist before they inform decisions or submissions.",
    "Applicable regulatory guidance and local standard operating procedures take precedence over this tool's defaults.",
];

/// Renders the report. The document's name and bytes (as read, for its
/// hash) and the results file's name appear in the provenance note.
pub fn render_report(
    doc: &Document,
    results: &[BlockResult],
    figures: &[Vec<PlacedFigure>],
    inputs: &[Input],
    format: Format,
    document: (&str, &[u8]),
    results_name: &str,
) -> Result<String, Diagnostic> {
    let writer = format.writer();
    let report = Report::assemble(
        doc,
        results,
        figures,
        inputs,
        document,
        results_name,
        writer.figures_inline(),
    )?;
    let mut text = writer.write(&report)?;
    if !text.ends_with('\n') {
        text.push('\n');
    }
    Ok(text)
}

/// The analysis choices in effect for one block, as one line for the
/// provenance note: what a reviewer needs to repeat the analysis.
fn choices_of(r: &BlockResult) -> String {
    use crate::doc::block::Omnibus;
    match r {
        BlockResult::Anova(a) => {
            let method = match a.method {
                Omnibus::Anova => "one-way ANOVA",
                Omnibus::Welch => "Welch's ANOVA",
                Omnibus::Ranks => "Kruskal-Wallis",
            };
            let compare = a
                .comparison
                .as_ref()
                .map_or("no pairwise comparisons".to_string(), |c| {
                    format!("{} pairs", c.method.title())
                });
            format!(
                "`{}` (line {}): {method}; {compare}; α = {}; {} used, {} left out.",
                a.id,
                a.line,
                a.alpha,
                crate::format::counted(a.n, "observation", "observations"),
                crate::format::counted(a.exclusions.len(), "row", "rows")
            )
        }
        BlockResult::Factorial(f) => {
            let ss = match f.ss_type {
                crate::stats::linear::SsType::I => "Type I",
                crate::stats::linear::SsType::II => "Type II",
                crate::stats::linear::SsType::III => "Type III",
            };
            let compare = f
                .families
                .first()
                .map_or("no pairwise comparisons".to_string(), |c| {
                    format!("{} on marginal means", c.comparison.method.title())
                });
            format!(
                "`{}` (line {}): linear model of {} with {ss} sums of squares (sum-to-zero coding); {compare}; α = {}; {} used, {} left out.",
                f.id,
                f.line,
                f.factors.join(", "),
                f.alpha,
                crate::format::counted(f.n, "observation", "observations"),
                crate::format::counted(f.exclusions.len(), "row", "rows")
            )
        }
        BlockResult::Power(p) => format!(
            "`{}` (line {}): power of the one-way F test; α = {}.",
            p.id, p.line, p.alpha
        ),
    }
}

#[cfg(test)]
mod tests;
