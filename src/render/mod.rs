//! Rendering stage: view models laid out by templates (embedded at compile
//! time from `templates/`), prose from pulldown-cmark. HTML escaping happens
//! in minijinja's HTML auto-escape, pulldown-cmark's writer and `html_escape`
//! (for the `code_spans` filter); Markdown escaping in `markdown_escape`;
//! LaTeX escaping in `latex_escape` and its siblings, called by `tex`;
//! Office Open XML escaping in `ooxml_escape`, called by `docx`.
//! Nowhere else.

mod docx;
mod html;
pub mod inline;
mod links;
mod markdown;
pub mod report;
mod tables;
mod templates;
mod tex;
pub mod view;
pub mod writer;

pub use writer::{FORMATS, Format, Writer, Written};

use crate::diag::Diagnostic;
use crate::outcome::BlockResult;
use crate::outcome::linear::LinearOutcome;
use report::Report;

/// The standing cautions printed at the end of every report.
pub const CAUTIONS: [&str; 5] = [
    "Statistical significance is not practical importance: judge each difference and its confidence interval against the smallest difference that matters in your setting.",
    "A difference that is not significant does not show that levels are equivalent; equivalence needs its own test.",
    "An analysis of variance assumes independent observations, normally distributed errors and equal variances across levels. The checks in this report test the last two, but a check that passes does not prove an assumption holds, and independence comes from the design, which no test can confirm.",
    "Results must be reviewed by a qualified statistician or responsible scientist before they inform decisions or submissions.",
    "Applicable regulatory guidance and local standard operating procedures take precedence over this tool's defaults.",
];

/// Replaces the second standing caution when a block declares equivalence
/// margins: the method, and what its outcomes do not mean.
pub const EQUIVALENCE_CAUTION: &str = "Equivalence was tested by two one-sided tests against margins the author declared. The margins are the author's choice: they must be justified on scientific or regulatory grounds and fixed before the data are seen. A level not shown equivalent is not thereby different (with few observations neither may be shown), and a significant difference and equivalence can both hold when the difference is smaller than the margin. Elsewhere, a difference that is not significant does not show that levels are equivalent.";

/// Printed after the standing cautions when a block has random terms.
pub const RANDOM_TERMS_CAUTION: &str = "A random term treats its units (blocks, whole plots, animals, sites) as a sample from a larger population, with independent, normally distributed effects of one variance; with fewer than about five units that variance is poorly known. Which terms are random follows from the design, from how treatments were randomised to units, not from which model fits the data better.";

/// Printed after the second standing caution when a block runs Friedman's
/// test.
pub const FRIEDMAN_CAUTION: &str = "Friedman's test ranks the observations within each block, so it discards how large the differences are: a level every block ranks first wins by a hair or by a mile alike. Kendall's W is the agreement among the blocks in how they order the levels, not a measure of practical importance: read the medians and the data themselves for that.";

/// Printed after the second standing caution when a block has several
/// responses.
pub const TRAITS_CAUTION: &str = "A block with several responses tests each trait on its own: the more traits, the more tests, and the more likely one of them is significant by chance. No adjustment across traits is customary, and none is made; weigh a single significant trait among many accordingly, and name the traits of primary interest before the trial.";

/// Printed before the review caution when a block finds a NOEC.
pub const NOEC_CAUTION: &str = "A NOEC is one of the tested doses, not an estimate of a threshold: it depends on the doses chosen and on the replication, and a regression-based ECx is generally preferred where the response allows it (OECD 2006). Dose-response procedures can disagree; choose and name the one you report before the data are seen.";

/// Renders the report of what `sources` holds (see `Report::of`) in
/// `format`.
pub fn render_report(sources: Report<'_>, format: Format) -> Result<Vec<u8>, Diagnostic> {
    let writer = format.writer();
    let report = sources.assembled(writer)?;
    Ok(match writer.write(&report)? {
        Written::Text(mut text) => {
            if !text.ends_with('\n') {
                text.push('\n');
            }
            text.into_bytes()
        }
        Written::Binary(bytes) => bytes,
    })
}

/// The analysis choices in effect for one block, as one line for the
/// provenance note: what a reviewer needs to repeat the analysis.
fn choices_of(r: &BlockResult) -> String {
    match (r, r.linear()) {
        (_, Some(o)) => linear_choices(o),
        (BlockResult::Traits(t), None) => t
            .traits
            .iter()
            .map(|x| linear_choices(&x.outcome))
            .collect::<Vec<_>>()
            .join(" "),
        (BlockResult::Power(p), None) => format!(
            "`{}` (line {}): power of the one-way F test; α = {}.",
            p.id, p.line, p.alpha
        ),
        (_, None) => String::new(),
    }
}

/// The choices of a linear block: the model (or omnibus test), the
/// comparisons, α and the observations used.
fn linear_choices(o: &LinearOutcome) -> String {
    use crate::doc::block::Omnibus;
    use crate::stats::linear::SsType;
    let compared = o.families.iter().find_map(|f| f.comparison.as_ref());
    let (model, compare) = match (o.ss_type, o.friedman.as_deref()) {
        (_, Some(d)) => (
            format!(
                "Friedman's test of {} within {}",
                o.factors[d.factor].name, o.factors[d.block].name
            ),
            compared.map(|c| format!("{} pairs on rank sums", c.method.title())),
        ),
        (None, None) => (
            match o.method {
                Omnibus::Anova => "one-way ANOVA".to_string(),
                Omnibus::Welch => "Welch's ANOVA".to_string(),
                Omnibus::Ranks => "Kruskal-Wallis".to_string(),
            },
            compared.map(|c| format!("{} pairs", c.method.title())),
        ),
        (Some(ss), None) => {
            let ss = match ss {
                SsType::I => "Type I",
                SsType::II => "Type II",
                SsType::III => "Type III",
            };
            let factors: Vec<&str> = o.factors.iter().map(|f| f.name.as_str()).collect();
            (
                format!(
                    "linear model of {} with {ss} sums of squares (sum-to-zero coding)",
                    factors.join(", ")
                ),
                compared.map(|c| format!("{} on marginal means", c.method.title())),
            )
        }
    };
    let scale = o.transform.as_deref().map_or(String::new(), |d| {
        use crate::outcome::transform::Wording;
        match (d.applied(), &d.box_cox) {
            (Some(t), _) => format!(" of {}", t.label(&o.response)),
            (None, Some(_)) => " (Box-Cox profile consulted, not applied)".into(),
            (None, None) => String::new(),
        }
    });
    let doses = o.dose.as_deref().map_or(String::new(), |d| {
        let names: Vec<&str> = d.tests.iter().map(|t| t.method.title()).collect();
        format!(
            "; NOEC and LOEC by {} (one-sided, {})",
            names.join(", "),
            d.direction.key()
        )
    });
    let equivalence = o.equivalence.as_deref().map_or(String::new(), |d| {
        let claim = match (d.rows.len(), d.claim) {
            (0 | 1, _) => "one comparison".to_string(),
            (m, crate::doc::block_equivalence::Claim::Each) => {
                format!("a claim per level, Bonferroni over {m}")
            }
            (_, crate::doc::block_equivalence::Claim::All) => "one claim for all levels".into(),
        };
        format!(
            "; equivalence with {} within {} by two one-sided tests ({claim}{}, each at α = {})",
            d.control,
            d.margin_words(),
            if d.welch { ", Welch" } else { "" },
            crate::outcome::equivalence::alpha_words(d.comparison_alpha)
        )
    });
    format!(
        "`{}` (line {}): {model}{scale}; {}{doses}{equivalence}; α = {}; {}.",
        o.id,
        o.line,
        compare.unwrap_or_else(|| "no pairwise comparisons".to_string()),
        o.alpha,
        observations_used(o)
    )
}

/// How many observations a block used and where they came from: rows of
/// the data file, or summaries of them.
fn observations_used(o: &LinearOutcome) -> String {
    use crate::outcome::linear::InputForm;
    let used = crate::format::counted(o.n, "observation", "observations");
    match &o.input {
        InputForm::Observations => format!(
            "{used} used, {} left out",
            crate::format::counted(o.exclusions.len(), "row", "rows")
        ),
        InputForm::Summaries => format!("{used}, given as published means and spreads"),
        InputForm::ExactSums { origin } => {
            format!("{used}, given as exact sums about the origin {origin}")
        }
    }
}

#[cfg(test)]
mod tests;
