//! The tables of a repeated-measures block (`subject`): the within-subject
//! tests of the univariate analysis with their Greenhouse-Geisser and
//! Huynh-Feldt corrections side by side, and Mauchly's test of sphericity
//! for each within-subject effect.

use super::keys::Keys;
use super::{cell, col, measure, shown_term, text};
use crate::doc::block_covariance::CovarianceStructure;
use crate::format::{f_stat, fixed, p_value};
use crate::outcome::linear::LinearOutcome;
use crate::outcome::repeated::{RepeatedDetail, WithinTest};
use crate::render::view::TableView;

/// GG ε above which the Huynh-Feldt p is commonly read instead (Huynh &
/// Feldt 1976; common practice), below which Greenhouse-Geisser's.
const HF_ABOVE: f64 = 0.75;

/// Within-subject terms: df, F, p uncorrected and corrected.
pub fn within_table(
    o: &LinearOutcome,
    r: &RepeatedDetail,
    tests: &[WithinTest],
    keys: &Keys,
    number: usize,
) -> TableView {
    let names = &o.presentation.plots;
    let rows = tests
        .iter()
        .map(|t| {
            let k = |q: &str| keys.field(&format!("repeated.univariate.{}.{q}", t.term));
            let s = |q: &str| k(&format!("sphericity.{q}"));
            vec![
                text(shown_term(names, &t.term)),
                cell(format!("{}, {}", t.df, t.df_den), k("df")),
                cell(f_stat(t.f), k("f")),
                cell(p_value(t.p), k("p")),
                cell(fixed(t.gg_epsilon, 3), s("gg_epsilon")),
                cell(p_value(t.p_gg), k("p_gg")),
                cell(fixed(t.hf_epsilon, 3), s("hf_epsilon")),
                cell(p_value(t.p_hf), k("p_hf")),
            ]
        })
        .collect();
    TableView {
        number,
        id: format!("{}-within", o.id),
        caption: format!(
            "Table {number}. Within-subject tests of {}: univariate analysis of the {} complete subjects, with sphericity corrections.",
            measure(o),
            r.complete_subjects
        ),
        columns: vec![
            col("Term", false),
            col("df", true),
            col("F", true),
            col("p", true),
            col("ε (GG)", true),
            col("p (GG)", true),
            col("ε (HF)", true),
            col("p (HF)", true),
        ],
        rows,
        footnotes: within_notes(o, r, tests),
    }
}

/// The classification, the subjects used, and which p to read.
fn within_notes(o: &LinearOutcome, r: &RepeatedDetail, tests: &[WithinTest]) -> Vec<String> {
    let plots = &o.presentation.plots;
    let list = |v: &[String]| {
        if v.is_empty() {
            "none".to_string()
        } else {
            v.iter()
                .map(|f| plots.display(f).to_string())
                .collect::<Vec<_>>()
                .join(", ")
        }
    };
    let mut notes = vec![format!(
        "Subjects: {} ({}). Within-subject factors: {}; between-subject factors: {}.",
        r.subjects,
        plots.display(&r.subject),
        list(&r.within),
        list(&r.between)
    )];
    if r.incomplete_count > 0 {
        let (lack, have) = if r.incomplete_count == 1 {
            ("lacks", "has")
        } else {
            ("lack", "have")
        };
        notes.push(format!(
            "{} of {} subjects {lack} an observation at some occasion (or {have} two) and {} left out of this table (listed in the results file); the mixed model above uses every observation.",
            r.incomplete_count,
            r.subjects,
            if r.incomplete_count == 1 { "is" } else { "are" }
        ));
    }
    if !r.equal_groups {
        notes.push("The between-subject groups have unequal numbers of complete subjects. Here a within-subject main effect is tested on the mean over all subjects, each subject weighted equally; the mixed model's Type III test above weights each group equally, so the two F values for that effect differ (the interactions do not). Report the one that matches the question: the average over the subjects studied, or over the groups as designed.".to_string());
    }
    notes.push(format!(
        "The uncorrected F assumes sphericity (equal variances of the differences between occasions); the corrected p-values multiply both df by ε. Read the Greenhouse-Geisser p, or the Huynh-Feldt p (Lecoutre's form, capped at 1) when ε (GG) is above {HF_ABOVE}; Mauchly's test has little power with few subjects and should not decide the choice. Terms with 1 df need no correction."
    ));
    if let Some(t) = tests.iter().find(|t| t.gg_epsilon < HF_ABOVE) {
        let mixed = match r.covariance.as_ref().map(|c| c.structure) {
            None | Some(CovarianceStructure::CompoundSymmetry) => {
                ", and so are the mixed model's tests of the within-subject terms, which assume the same correlation between any two occasions (compound symmetry); `covariance: compare` fits structures that do not"
            }
            Some(_) => {
                "; the mixed model's tests above use a covariance structure that does not assume sphericity"
            }
        };
        notes.push(format!(
            "Sphericity is doubtful for {} (ε (GG) = {}): read its corrected p; the uncorrected one is too optimistic{mixed}.",
            shown_term(plots, &t.term),
            fixed(t.gg_epsilon, 3)
        ));
    }
    notes
}

/// Mauchly's test for each within-subject effect with two or more df.
pub fn sphericity_table(
    o: &LinearOutcome,
    tests: &[WithinTest],
    keys: &Keys,
    number: usize,
) -> Option<TableView> {
    let rows: Vec<_> = tests
        .iter()
        .filter_map(|t| t.sphericity.as_ref().map(|m| (t, m)))
        // One row per within effect: its interactions with between terms
        // share its contrasts and its test.
        .filter(|(t, _)| t.term == t.effect)
        .map(|(t, m)| {
            let k = |q: &str| keys.field(&format!("repeated.univariate.{}.sphericity.{q}", t.term));
            vec![
                text(shown_term(&o.presentation.plots, &t.term)),
                cell(crate::format::significant(m.w, 4), k("mauchly_w")),
                cell(fixed(m.chi_sq, 2), k("chi_sq")),
                cell(m.df.to_string(), k("df")),
                cell(p_value(m.p), k("p")),
            ]
        })
        .collect();
    if rows.is_empty() {
        return None;
    }
    Some(TableView {
        number,
        id: format!("{}-sphericity", o.id),
        caption: format!("Table {number}. Mauchly's test of sphericity for {}.", measure(o)),
        columns: vec![
            col("Term", false),
            col("W", true),
            col("χ²", true),
            col("df", true),
            col("p", true),
        ],
        rows,
        footnotes: vec![
            "Mauchly (1940), first-order p. A small p is evidence against sphericity; a large one is not evidence for it when subjects are few.".to_string(),
        ],
    })
}
