//! Unit tests for `figure::linear`: a means plot draws the numbers its
//! caption names, read from the outcome.

use super::*;
use crate::outcome::linear::LinearOutcome;

/// Invented: an unbalanced 2 × 3 layout, so that the observed means of `a`
/// (6.35 and 40.3 / 6) differ from its estimated marginal means.
const CSV: &str = "a,b,y\nA1,B1,5.0\nA1,B1,5.4\nA1,B2,6.1\nA1,B3,7.2\nA1,B3,7.0\nA1,B3,7.4\n\
A2,B1,5.8\nA2,B1,6.0\nA2,B1,6.2\nA2,B2,6.9\nA2,B2,7.1\nA2,B3,8.3\n";

/// The observed means of `a`, by hand: (5.0 + 5.4 + 6.1 + 7.2 + 7.0 + 7.4) / 6
/// and (5.8 + 6.0 + 6.2 + 6.9 + 7.1 + 8.3) / 6.
const OBSERVED: [f64; 2] = [38.1 / 6.0, 40.3 / 6.0];

fn fitted(compare: &str) -> LinearOutcome {
    let text = format!(
        "```anova\nid: f\ndata: d.csv\nmodel: y ~ a + b\nplot: means\ncompare: {compare}\n```\n"
    );
    let doc = crate::doc::parse_document("report.md", text).expect("document");
    let block = &doc.blocks[0];
    let crate::doc::BlockSpec::Anova(spec) = &block.spec else {
        panic!("an anova block")
    };
    let data = crate::analysis::Data::Stream {
        path: "d.csv",
        reader: Box::new(CSV.as_bytes()),
        reopen: &|| Ok(Box::new(CSV.as_bytes())),
    };
    let request = crate::analysis::Request {
        doc: &doc,
        block,
        spec,
        data,
        display_path: "d.csv",
    };
    let (r, _) = crate::analysis::run_linear(request).expect("model fits");
    r
}

/// The values at the centres of the means plot's markers, read back through
/// the y axis's tick labels (a tick label sits 4 px below its grid line).
fn plotted_means(svg: &str) -> Vec<f64> {
    let attr = |line: &str, name: &str| -> f64 {
        let start = line.find(&format!(" {name}=\"")).expect(name) + name.len() + 3;
        let end = start + line[start..].find('"').expect("closing quote");
        line[start..end].parse().expect("number")
    };
    let ticks: Vec<(f64, f64)> = svg
        .lines()
        .filter(|l| l.contains("class=\"ytick\""))
        .map(|l| {
            let label = &l[l.find('>').expect("tag") + 1..l.rfind("</").expect("end")];
            let value: f64 = label.replace('\u{2212}', "-").parse().expect("tick");
            (value, attr(l, "y") - 4.0)
        })
        .collect();
    let ((v0, y0), (v1, y1)) = (ticks[0], ticks[ticks.len() - 1]);
    svg.lines()
        .filter(|l| l.contains("class=\"mean\""))
        .map(|l| v0 + (attr(l, "cy") - y0) * (v1 - v0) / (y1 - y0))
        .collect()
}

/// Coordinates are written to 0.01 px; the read-back value may be off by
/// half of that over the axis's pixels per unit.
fn assert_plotted(svg: &str, expected: &[f64]) {
    let got = plotted_means(svg);
    assert_eq!(got.len(), expected.len(), "{svg}");
    for (g, e) in got.iter().zip(expected) {
        assert!((g - e).abs() < 2e-4, "plotted {g}, expected {e}");
    }
}

fn assert_caption(fig: &Figure, words: &str) {
    assert!(fig.caption.contains(words), "{}", fig.caption);
}

/// The means plot of `a`: the block's first (`f-means`).
fn means_figure(o: &LinearOutcome) -> Figure {
    let mut number = 1;
    let figures = linear_figures(o, &mut number);
    assert_eq!(number, figures.len() + 1);
    figures
        .into_iter()
        .find(|f| f.id == "f-means")
        .expect("a means plot")
}

/// The estimated marginal means of `a` in `y ~ a + b`, by ordinary least
/// squares in exact rational arithmetic (normal equations solved with
/// Python's fractions, outside this crate): 14501/2355 and 6659/942.
const MARGINAL: [f64; 2] = [14501.0 / 2355.0, 6659.0 / 942.0];

#[test]
fn without_comparisons_the_means_plot_draws_the_engines_marginal_means() {
    let o = fitted("none");
    let family = o.main_family("a").expect("estimates without a comparison");
    assert!(family.comparison.is_none());
    for (got, e) in family.estimates.iter().zip(MARGINAL) {
        // Exact rationals against a QR fit: agreement to rounding.
        assert!((got.mean - e).abs() < 1e-12, "{} against {e}", got.mean);
    }
    let fig = means_figure(&o);
    assert_caption(&fig, "marginal means");
    assert!(!fig.caption.contains("Observed"), "{}", fig.caption);
    assert_plotted(&fig.svg, &MARGINAL);
}

/// Where the engine has no estimates for a factor (empty cells with an
/// interaction leave them inestimable), the plot draws observed means and
/// says so.
#[test]
fn without_a_family_the_means_plot_draws_observed_means_and_says_so() {
    let mut o = fitted("none");
    o.families.retain(|f| f.term != "a");
    assert!(o.main_family("a").is_none());
    let values = values_by_level(&o, 0);
    let (groups, source) = factor_groups(&o, 0, &values);
    assert_eq!(source, MeansSource::Observed);
    for (g, e) in groups.iter().zip(OBSERVED) {
        assert!((g.mean - e).abs() < 1e-12, "{} against {e}", g.mean);
        assert!(g.ci.0.is_nan() && g.ci.1.is_nan(), "no interval");
    }
    let fig = means_figure(&o);
    assert_caption(&fig, "Observed means of y by a, without intervals");
    assert!(!fig.caption.contains("marginal"), "{}", fig.caption);
    assert!(
        !fig.svg.contains("stroke-width=\"1.50\""),
        "no interval bars"
    );
    assert_plotted(&fig.svg, &OBSERVED);
}

#[test]
fn a_compared_factor_plots_its_estimated_marginal_means() {
    let o = fitted("tukey");
    let emm: Vec<f64> = o
        .main_family("a")
        .expect("a compared")
        .estimates
        .iter()
        .map(|e| e.mean)
        .collect();
    // The layout is unbalanced enough that the two kinds of mean differ
    // by far more than the plot's reading tolerance.
    assert!((emm[0] - OBSERVED[0]).abs() > 0.05, "{emm:?}");
    let fig = means_figure(&o);
    assert_caption(
        &fig,
        "Estimated marginal means of y by a with 95% confidence intervals",
    );
    assert_plotted(&fig.svg, &emm);
}

#[test]
fn an_estimates_only_family_gives_marginal_means_without_a_comparison() {
    // What the factorial engine is to produce under `compare: none`: the main
    // effect's estimates, with no comparison.
    let mut o = fitted("none");
    let mut family = fitted("tukey").main_family("a").expect("a").clone();
    family.comparison = None;
    let emm: Vec<f64> = family.estimates.iter().map(|e| e.mean).collect();
    let ci: Vec<(f64, f64)> = family
        .estimates
        .iter()
        .map(|e| (e.ci_lower, e.ci_upper))
        .collect();
    o.families.push(family);
    let values = values_by_level(&o, 0);
    let (groups, source) = factor_groups(&o, 0, &values);
    assert_eq!(source, MeansSource::Marginal);
    assert_eq!(groups.iter().map(|g| g.ci).collect::<Vec<_>>(), ci);
    assert!(
        groups.iter().all(|g| g.letters.is_none()),
        "nothing compared"
    );
    let fig = means_figure(&o);
    assert_caption(&fig, "Estimated marginal means of y by a");
    assert!(!fig.caption.contains("sharing a letter"), "{}", fig.caption);
    assert_plotted(&fig.svg, &emm);
}
