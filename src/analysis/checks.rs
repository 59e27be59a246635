//! The checks on a model's assumptions, built the same way by every engine
//! (from summaries, from groups of values, from residuals), and the advice
//! they give in plain language.

use super::notes::{Note, NoteKind};
use crate::doc::block::Omnibus;
use crate::outcome::{Checks, OUTLIERS_LISTED, OutlierRow, most_extreme};
use crate::stats::assumptions::{
    Center, OUTLIER_THRESHOLD, ShapiroWilkSkip, bartlett, levene, shapiro_wilk, skewness_kurtosis,
};
use crate::stats::oneway::GroupSummary;

/// Largest over smallest group SD (NaN when a group has none or no spread).
fn sd_ratio(summaries: &[GroupSummary]) -> f64 {
    let sds: Vec<f64> = summaries
        .iter()
        .map(|s| s.variance().sqrt())
        .filter(|v| v.is_finite())
        .collect();
    match (
        sds.iter().copied().fold(f64::NAN, f64::max),
        sds.iter().copied().fold(f64::NAN, f64::min),
    ) {
        (hi, lo) if lo > 0.0 => hi / lo,
        _ => f64::NAN,
    }
}

/// Checks possible from group summaries alone: Bartlett and the SD ratio.
pub(crate) fn summary_checks(summaries: &[GroupSummary], shown: bool) -> Checks {
    Checks {
        shown,
        brown_forsythe: None,
        levene: None,
        bartlett: bartlett(summaries),
        shapiro_wilk: Err(ShapiroWilkSkip::Summary),
        skewness: f64::NAN,
        excess_kurtosis: f64::NAN,
        sd_ratio: sd_ratio(summaries),
        balanced: summaries.iter().all(|s| s.n == summaries[0].n),
        outlier_count: 0,
        outliers: Vec::new(),
        from_summary: true,
        by_request: false,
        residuals: crate::outcome::ResidualKind::Ordinary,
    }
}

/// Adds the tests of equal spread on groups of values (Brown-Forsythe,
/// Levene; Bartlett from the groups' summaries).
pub(crate) fn with_spread_tests(
    checks: Checks,
    groups: &[&[f64]],
    summaries: &[GroupSummary],
) -> Checks {
    Checks {
        from_summary: false,
        brown_forsythe: levene(groups, Center::Median),
        levene: levene(groups, Center::Mean),
        bartlett: bartlett(summaries),
        ..checks
    }
}

/// Adds what the residuals tell: their shape (Shapiro-Wilk, skewness,
/// kurtosis) and the observations flagged as outliers.
pub(crate) fn with_residuals(
    checks: Checks,
    residuals: &[f64],
    outlier_count: usize,
    outliers: Vec<OutlierRow>,
) -> Checks {
    let (skewness, excess_kurtosis) = skewness_kurtosis(residuals);
    Checks {
        shapiro_wilk: shapiro_wilk(residuals),
        skewness,
        excess_kurtosis,
        outlier_count,
        outliers,
        ..checks
    }
}

/// What the advice may offer when a check fails: the one-factor engine has
/// other methods (Welch's ANOVA, ranks); models with several factors are
/// offered a transformation of the response. The declared method is never
/// changed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Remedies {
    OneFactor(Omnibus),
    Linear,
    /// Friedman's test in complete blocks: it assumes neither normal errors
    /// nor equal variances, so only outliers are worth a note.
    BlockRanks,
}

impl Remedies {
    /// The wording that differs between the engines: what differs when
    /// Brown-Forsythe rejects and what to do about it, what to do when only
    /// the mean-centred Levene test rejects, and when the residuals are not
    /// normal (that last one completes a sentence).
    fn wording(self) -> (&'static str, &'static str, &'static str, &'static str) {
        match self {
            Remedies::OneFactor(_) => (
                "The level variances",
                "The F test and pooled comparisons assume equal variances; consider `method: welch` (Welch's ANOVA with Games-Howell comparisons).",
                "If in doubt, `method: welch` gives Welch's ANOVA with Games-Howell comparisons.",
                ". Look at how they depart; consider a transformation of the response, or `method: ranks` (Kruskal-Wallis with Dunn's comparisons).",
            ),
            Remedies::Linear | Remedies::BlockRanks => (
                "The variances",
                "F tests in factorial designs tolerate this best with equal cell sizes; consider a variance-stabilizing transformation of the response (logarithm or square root for counts and yields).",
                "F tests in factorial designs are robust to moderate differences when the cells are of equal size; with unequal cells, or if the spread grows with the mean, consider a variance-stabilizing transformation of the response.",
                "; look at how they depart and consider a transformation of the response.",
            ),
        }
    }
}

/// Plain-language advice for every check that fails at α, naming what to
/// do about it. `decimals` is the data's own precision, for quoting values.
pub(crate) fn advice(checks: &Checks, remedies: Remedies, alpha: f64, decimals: u32) -> Vec<Note> {
    let mut out: Vec<Note> = variance_advice(checks, remedies, alpha)
        .map(|t| Note::new(NoteKind::Variances, t))
        .into_iter()
        .collect();
    out.extend(normality_advice(checks, remedies, alpha));
    out.extend(outlier_advice(checks, decimals));
    out
}

/// Advice on unequal spread, for the methods that assume equal variances.
fn variance_advice(checks: &Checks, remedies: Remedies, alpha: f64) -> Option<String> {
    if matches!(remedies, Remedies::OneFactor(m) if m != Omnibus::Anova)
        || remedies == Remedies::BlockRanks
    {
        return None;
    }
    if let Some(bf) = checks.brown_forsythe.filter(|t| t.p < alpha) {
        let (what, remedy, _, _) = remedies.wording();
        return Some(format!(
            "{what} differ (Brown-Forsythe {}). {remedy}",
            crate::format::p_phrase(bf.p)
        ));
    }
    if let Some(text) = levene_only_note(checks, alpha) {
        return Some(format!("{text} {}", remedies.wording().2));
    }
    // A large SD ratio with unequal groups, where no test has said so.
    (remedies != Remedies::Linear && checks.sd_ratio > 2.0 && !checks.balanced).then(|| {
        format!(
            "The largest level SD is {} times the smallest, with unequal group sizes; the F test can mislead there. Consider `method: welch`.",
            crate::format::fixed(checks.sd_ratio, 1)
        )
    })
}

/// Advice on the residuals' distribution (not for rank methods, which do
/// not assume it).
fn normality_advice(checks: &Checks, remedies: Remedies, alpha: f64) -> Vec<Note> {
    let mut out = Vec::new();
    if remedies != Remedies::OneFactor(Omnibus::Ranks)
        && remedies != Remedies::BlockRanks
        && let Ok(sw) = checks.shapiro_wilk.as_ref()
        && sw.p < alpha
    {
        out.push(Note::new(
            NoteKind::Normality,
            format!(
                "The residuals depart from a normal distribution (Shapiro-Wilk W = {}, {}){}",
                crate::format::fixed(sw.w, 3),
                crate::format::p_phrase(sw.p),
                remedies.wording().3
            ),
        ));
    }
    if matches!(remedies, Remedies::OneFactor(_))
        && let Err(ShapiroWilkSkip::TooMany) = checks.shapiro_wilk
    {
        out.push(Note::new(NoteKind::Normality, "Shapiro-Wilk is not computed above 5,000 residuals (outside the range of Royston's approximation); judge normality from skewness, kurtosis and a Q-Q plot."));
    }
    out
}

/// When only the mean-centred Levene test rejects equal variances: say so,
/// with both p-values, and what that means for the F tests.
fn levene_only_note(checks: &Checks, alpha: f64) -> Option<String> {
    let p3 = crate::format::p_phrase;
    let levene = checks.levene.filter(|t| t.p < alpha)?;
    let bf = checks.brown_forsythe.filter(|t| t.p >= alpha)?;
    Some(format!(
        "Levene's mean-centred test finds unequal variances ({}), but the median-centred Brown-Forsythe test, which is less swayed by skewed or heavy-tailed data, does not ({}): the evidence against equal variances is weak. Compare the spread of the groups before relying on the pooled error mean square.",
        p3(levene.p),
        p3(bf.p)
    ))
}

/// One note per flagged observation when there are few; otherwise one
/// note with the count and the most extreme few, so that the advice
/// (printed on the terminal and boxed in the report) never grows with
/// the number of rows.
fn outlier_advice(checks: &Checks, decimals: u32) -> Vec<Note> {
    let kind = checks.residuals.flagged();
    let describe = |o: &OutlierRow| {
        format!(
            "line {} (level `{}`, value {}, {kind} {})",
            o.line,
            o.level,
            crate::format::fixed(o.value, decimals),
            crate::format::fixed(o.studentized_residual, 2)
        )
    };
    let note = |text: String| Note::new(NoteKind::Outliers, text);
    if checks.outlier_count <= OUTLIERS_LISTED {
        return checks
            .outliers
            .iter()
            .map(|o| {
                note(format!(
                    "The observation on {} is beyond ±{OUTLIER_THRESHOLD}; check it against the records. Flagging excludes nothing.",
                    describe(o)
                ))
            })
            .collect();
    }
    let worst: Vec<String> = most_extreme(&checks.outliers, OUTLIERS_LISTED)
        .into_iter()
        .map(describe)
        .collect();
    vec![note(format!(
        "{} observations have a {kind} beyond ±{OUTLIER_THRESHOLD}; the {OUTLIERS_LISTED} most extreme are on {}. Check them against the records; the results file lists the {} most extreme. Flagging excludes nothing; with this many, look at the distribution of the residuals (a transformation of the response, or `method: ranks`) rather than at single observations.",
        crate::format::count(checks.outlier_count),
        worst.join("; "),
        checks.outliers.len()
    ))]
}
