//! A block's dose-response tests in prose: `dose_response.<procedure>`
//! (`williams`, `jonckheere`, `ordinal`, `dunnett`, `steel`) with `noec`,
//! `loec` (level names; null when there is none) and `statement`, and
//! `dose_response.statement`, the first procedure's sentence.

use crate::format::capitalised;
use crate::outcome::dose::{DoseDetail, DoseTest, Noec};
use crate::outcome::linear::LinearOutcome;
use crate::stats::dose::Direction;
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Serialize)]
pub(super) struct ProcedureContext {
    noec: Option<String>,
    loec: Option<String>,
    statement: String,
}

#[derive(Serialize)]
pub(super) struct DoseContext {
    #[serde(flatten)]
    procedures: BTreeMap<&'static str, ProcedureContext>,
    statement: String,
    agree: bool,
}

/// "Growth decreased with concentration (Williams' test, one-sided α =
/// 0.05): NOEC = 64, LOEC = 128."
pub(crate) fn statement(o: &LinearOutcome, d: &DoseDetail, t: &DoseTest) -> String {
    let plots = &o.presentation.plots;
    let measure = plots
        .label
        .clone()
        .unwrap_or_else(|| plots.display(&o.response).to_string());
    let display = plots.display(&d.factor);
    // "Concentration (mg/L)" reads "with concentration" and gives the unit.
    let (name, unit) = match display.rsplit_once(" (") {
        Some((name, unit)) if display.ends_with(')') => {
            (name, format!(" {}", &unit[..unit.len() - 1]))
        }
        _ => (display, String::new()),
    };
    let factor = lower_first(name);
    let how = format!(
        "{}, one-sided α = {}",
        t.method.title(),
        crate::format::alpha_text(d.alpha)
    );
    let level = |i: usize| format!("{}{unit}", d.doses[i].level);
    let moved = match d.direction {
        Direction::Decrease => "decreased",
        Direction::Increase => "increased",
    };
    let highest = level(d.doses.len() - 1);
    match (t.loec, t.noec()) {
        (None, _) => format!(
            "No dose changed {} in the direction tested ({how}): no LOEC, NOEC ≥ {highest}.",
            lower_first(&measure)
        ),
        (Some(l), Noec::Dose(n)) => format!(
            "{} {moved} with {factor} ({how}): NOEC = {}, LOEC = {}.",
            capitalised(&measure),
            level(n),
            level(l)
        ),
        (Some(l), _) => format!(
            "{} {moved} with {factor} ({how}): LOEC = {} (the lowest dose tested), so the NOEC lies below the tested doses.",
            capitalised(&measure),
            level(l)
        ),
    }
}

/// "Concentration" → "concentration"; "pH" and "DNA dose" stay as written.
fn lower_first(s: &str) -> String {
    let mut c = s.chars();
    match (c.next(), c.next()) {
        (Some(f), Some(g)) if f.is_uppercase() && g.is_lowercase() => {
            f.to_lowercase().chain(s.chars().skip(1)).collect()
        }
        _ => s.to_string(),
    }
}

pub(super) fn dose_context(o: &LinearOutcome) -> Option<DoseContext> {
    let d = o.dose.as_deref()?;
    let level = |i: usize| d.doses[i].level.clone();
    let procedures = d
        .tests
        .iter()
        .map(|t| {
            let noec = match t.noec() {
                Noec::Dose(i) => Some(level(i)),
                _ => None,
            };
            let context = ProcedureContext {
                noec,
                loec: t.loec.map(level),
                statement: statement(o, d, t),
            };
            (t.method.key(), context)
        })
        .collect();
    Some(DoseContext {
        procedures,
        statement: d
            .tests
            .first()
            .map(|t| statement(o, d, t))
            .unwrap_or_default(),
        agree: !d.disagree(),
    })
}
