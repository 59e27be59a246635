//! The results-file record of a block's dose-response tests (`noec`).

use super::finite;
use crate::outcome::dose::{DoseDetail, DoseStep, DoseTest, Noec};
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub struct DoseRecord {
    pub factor: String,
    pub control: String,
    pub control_n: usize,
    pub control_mean: Option<f64>,
    /// "decrease" or "increase": the effect the tests look for.
    pub direction: &'static str,
    pub alpha: f64,
    /// "names" (the level names are the doses) or "given" (`doses`).
    pub doses_from: String,
    /// Increasing dose; the control is not among them.
    pub doses: Vec<DoseLevelRecord>,
    /// The one-way ANOVA's error mean square and df (Williams, ordinal).
    pub error_ms: Option<f64>,
    pub error_df: f64,
    /// One record per procedure, by its key: `williams`, `jonckheere`,
    /// `ordinal`, `dunnett`, `steel`.
    pub tests: BTreeMap<&'static str, TestRecord>,
    /// True when every procedure gives the same LOEC.
    pub agree: bool,
    /// Doses whose mean moved against the tested direction (one-sided
    /// p < alpha): the step-down tests assume a monotone response.
    pub reversals: Vec<ReversalRecord>,
}

#[derive(Serialize)]
pub struct DoseLevelRecord {
    pub level: String,
    pub dose: f64,
    pub n: usize,
    pub mean: Option<f64>,
}

#[derive(Serialize)]
pub struct TestRecord {
    /// The lowest dose with an effect, as a level; null when none has one.
    pub loec: Option<String>,
    /// The highest dose below the LOEC; null when the lowest dose already
    /// has an effect or (with `noec_reading` "at_least_highest") none has.
    pub noec: Option<String>,
    /// "dose", "below_lowest" or "at_least_highest".
    pub noec_reading: &'static str,
    /// "step-down" or "many-to-one".
    pub kind: &'static str,
    /// Why a p is approximate where an exact one exists; null otherwise.
    pub approximation: Option<String>,
    /// Williams: critical values for unequal dose replication.
    pub unequal_replication: bool,
    /// One per dose, lowest first.
    pub steps: Vec<StepRecord>,
}

#[derive(Serialize)]
pub struct StepRecord {
    /// The dose (for a step-down trend test, the highest dose in the test).
    pub level: String,
    pub statistic: Option<f64>,
    pub z: Option<f64>,
    pub restricted_mean: Option<f64>,
    pub critical: Option<f64>,
    pub df: Option<f64>,
    pub p: Option<f64>,
    /// "exact", "normal" or "t".
    pub p_source: &'static str,
    pub tested: bool,
    pub significant: bool,
}

#[derive(Serialize)]
pub struct ReversalRecord {
    pub level: String,
    pub t: Option<f64>,
    pub df: f64,
    pub p: Option<f64>,
}

fn step(d: &DoseDetail, s: &DoseStep) -> StepRecord {
    StepRecord {
        level: d.doses[s.dose].level.clone(),
        statistic: finite(s.statistic),
        z: s.z.and_then(finite),
        restricted_mean: s.restricted_mean.and_then(finite),
        critical: s.critical.and_then(finite),
        df: s.df,
        p: finite(s.p),
        p_source: s.p_source.key(),
        tested: s.tested,
        significant: s.significant,
    }
}

fn test(d: &DoseDetail, t: &DoseTest) -> TestRecord {
    let level = |i: usize| d.doses[i].level.clone();
    let (noec, noec_reading) = match t.noec() {
        Noec::Dose(i) => (Some(level(i)), "dose"),
        Noec::BelowLowest => (None, "below_lowest"),
        Noec::AtLeastHighest => (None, "at_least_highest"),
    };
    TestRecord {
        loec: t.loec.map(level),
        noec,
        noec_reading,
        kind: if t.method.steps_down() {
            "step-down"
        } else {
            "many-to-one"
        },
        approximation: t.approximation.clone(),
        unequal_replication: t.unequal_replication,
        steps: t.steps.iter().map(|s| step(d, s)).collect(),
    }
}

pub fn dose_record(d: &DoseDetail) -> DoseRecord {
    DoseRecord {
        factor: d.factor.clone(),
        control: d.control.clone(),
        control_n: d.control_n,
        control_mean: finite(d.control_mean),
        direction: d.direction.key(),
        alpha: d.alpha,
        doses_from: d.doses_from.clone(),
        doses: d
            .doses
            .iter()
            .map(|l| DoseLevelRecord {
                level: l.level.clone(),
                dose: l.dose,
                n: l.n,
                mean: finite(l.mean),
            })
            .collect(),
        error_ms: finite(d.mse),
        error_df: d.df,
        tests: d
            .tests
            .iter()
            .map(|t| (t.method.key(), test(d, t)))
            .collect(),
        agree: !d.disagree(),
        reversals: d
            .reversals
            .iter()
            .map(|r| ReversalRecord {
                level: d.doses[r.dose].level.clone(),
                t: finite(r.t),
                df: r.df,
                p: finite(r.p),
            })
            .collect(),
    }
}
