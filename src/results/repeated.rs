//! The results-file record of a repeated-measures block (`subject`): the
//! factors' classification, the subjects used, and the univariate
//! within-subject tests with their sphericity test and corrected p-values.

use super::finite;
use crate::outcome::repeated::{RepeatedDetail, WithinTest};
use serde::Serialize;

#[derive(Serialize)]
pub struct RepeatedRecord {
    /// The column naming the subjects.
    pub subject: String,
    /// Factors that vary within subjects, and those constant within each.
    pub within: Vec<String>,
    pub between: Vec<String>,
    /// Subjects with data; those complete at every occasion (the
    /// univariate analysis uses only these); the others (at most 100
    /// listed) and how many.
    pub subjects: usize,
    pub complete_subjects: usize,
    pub incomplete: Vec<String>,
    pub incomplete_count: usize,
    /// The within-subject tests; null when the univariate analysis was not
    /// possible, with the reason in `univariate_not_computed`.
    pub univariate: Option<Vec<WithinRecord>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub univariate_not_computed: Option<String>,
}

#[derive(Serialize)]
pub struct WithinRecord {
    pub term: String,
    pub df: f64,
    pub df_den: f64,
    pub f: Option<f64>,
    pub p: Option<f64>,
    /// p with both df multiplied by the Greenhouse-Geisser, Huynh-Feldt
    /// (Lecoutre's form, capped at 1) and lower-bound epsilons.
    pub p_gg: Option<f64>,
    pub p_hf: Option<f64>,
    pub p_lower_bound: Option<f64>,
    pub sphericity: SphericityRecord,
}

/// Mauchly's test and the epsilons; for an effect with one df the test
/// fields are null (sphericity holds trivially) and the epsilons 1.
#[derive(Serialize)]
pub struct SphericityRecord {
    pub mauchly_w: Option<f64>,
    pub chi_sq: Option<f64>,
    pub df: Option<usize>,
    pub p: Option<f64>,
    pub gg_epsilon: Option<f64>,
    pub hf_epsilon: Option<f64>,
    /// Huynh-Feldt's epsilon before the cap at 1.
    pub hf_epsilon_uncapped: Option<f64>,
}

pub fn repeated_record(r: &RepeatedDetail) -> RepeatedRecord {
    RepeatedRecord {
        subject: r.subject.clone(),
        within: r.within.clone(),
        between: r.between.clone(),
        subjects: r.subjects,
        complete_subjects: r.complete_subjects,
        incomplete: r.incomplete.clone(),
        incomplete_count: r.incomplete_count,
        univariate: r
            .univariate
            .as_ref()
            .ok()
            .map(|tests| tests.iter().map(within_record).collect()),
        univariate_not_computed: r.univariate.as_ref().err().cloned(),
    }
}

fn within_record(t: &WithinTest) -> WithinRecord {
    let m = t.sphericity.as_ref();
    WithinRecord {
        term: t.term.clone(),
        df: t.df,
        df_den: t.df_den,
        f: finite(t.f),
        p: finite(t.p),
        p_gg: finite(t.p_gg),
        p_hf: finite(t.p_hf),
        p_lower_bound: finite(t.p_lower_bound),
        sphericity: SphericityRecord {
            mauchly_w: m.and_then(|m| finite(m.w)),
            chi_sq: m.and_then(|m| finite(m.chi_sq)),
            df: m.map(|m| m.df),
            p: m.and_then(|m| finite(m.p)),
            gg_epsilon: finite(t.gg_epsilon),
            hf_epsilon: finite(t.hf_epsilon),
            hf_epsilon_uncapped: finite(t.hf_epsilon_uncapped),
        },
    }
}
