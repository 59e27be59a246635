//! The dose-response tables of a block: one per procedure (each dose's
//! statistic, critical value or p, and decision) and a summary of the NOEC
//! and LOEC each procedure gives, with the standing cautions.

use super::keys::Keys;
use super::{cell, col, text};
use crate::format::capitalised;
use crate::format::{alpha_text, df_text, fixed, p_value, significant};
use crate::outcome::dose::{DoseDetail, DoseMethod, DoseStep, DoseTest, Noec, PSource};
use crate::outcome::linear::LinearOutcome;
use crate::render::view::{Cell, TableView};
use crate::stats::dose::Direction;

/// The most doses Williams' published tables cover (Williams 1971, 1972;
/// from memory).
const PUBLISHED_DOSES: usize = 10;

/// The caution printed with every NOEC (OECD 2006; from memory).
pub const NOEC_CAUTION: &str = "NOEC and LOEC depend on the tested doses and the replication: the NOEC is a tested dose, not an estimate of a threshold, and a regression-based ECx is generally preferred (OECD 2006).";

fn direction_word(d: Direction) -> &'static str {
    match d {
        Direction::Decrease => "a decrease",
        Direction::Increase => "an increase",
    }
}

/// A dose as the tables name it: the level, with its dose when the name is not it.
pub fn dose_label(d: &DoseDetail, i: usize) -> String {
    let l = &d.doses[i];
    match d.doses_from.as_str() {
        "given" => format!("{} ({})", l.level, significant(l.dose, 6)),
        _ => l.level.clone(),
    }
}

fn decision(t: &DoseTest, s: &DoseStep) -> &'static str {
    match (s.tested, s.significant, t.method.steps_down()) {
        (false, _, _) => "not tested",
        (true, true, _) => "effect",
        (true, false, true) => "no effect: stop",
        (true, false, false) => "no effect",
    }
}

fn p_label(t: &DoseTest) -> String {
    let exact = t.steps.iter().any(|s| s.p_source == PSource::Exact);
    let normal = t.steps.iter().any(|s| s.p_source == PSource::Normal);
    let adjusted = if t.method.steps_down() {
        "p"
    } else {
        "Adjusted p"
    };
    match (exact, normal) {
        (true, false) => format!("{adjusted} (exact)"),
        (false, true) => format!("{adjusted} (normal)"),
        _ => adjusted.to_string(),
    }
}

/// The table of one procedure.
pub fn dose_table(
    o: &LinearOutcome,
    d: &DoseDetail,
    t: &DoseTest,
    keys: &Keys,
    number: usize,
) -> TableView {
    let dec = o.presentation.decimals;
    let key = |s: &DoseStep, q: &str| {
        keys.field(&format!(
            "dose_response.tests.{}.steps.{}.{q}",
            t.method.key(),
            d.doses[s.dose].level
        ))
    };
    let level_key =
        |i: usize, q: &str| keys.field(&format!("dose_response.doses.{}.{q}", d.doses[i].level));
    let trend = matches!(t.method, DoseMethod::Jonckheere | DoseMethod::Ordinal);
    let mut columns = vec![col(if trend { "Doses in the test" } else { "Dose" }, false)];
    if !trend {
        columns.extend([col("n", true), col("Mean", true)]);
    }
    let rows: Vec<Vec<Cell>> = t
        .steps
        .iter()
        .map(|s| {
            let mut row = vec![text(match trend {
                true => format!("{} to {}", d.control, dose_label(d, s.dose)),
                false => dose_label(d, s.dose),
            })];
            if !trend {
                row.push(cell(d.doses[s.dose].n.to_string(), level_key(s.dose, "n")));
                row.push(cell(
                    fixed(d.doses[s.dose].mean, dec),
                    level_key(s.dose, "mean"),
                ));
            }
            match t.method {
                DoseMethod::Williams => {
                    row.push(cell(
                        fixed(s.restricted_mean.unwrap_or(f64::NAN), dec),
                        key(s, "restricted_mean"),
                    ));
                    row.push(cell(fixed(s.statistic, 3), key(s, "statistic")));
                    row.push(cell(
                        fixed(s.critical.unwrap_or(f64::NAN), 3),
                        key(s, "critical"),
                    ));
                }
                DoseMethod::Ordinal | DoseMethod::Dunnett => {
                    row.push(cell(fixed(s.statistic, 3), key(s, "statistic")));
                    row.push(cell(df_text(s.df.unwrap_or(f64::NAN)), key(s, "df")));
                }
                DoseMethod::Jonckheere | DoseMethod::Steel => {
                    row.push(cell(pair_count(s.statistic), key(s, "statistic")));
                    row.push(cell(fixed(s.z.unwrap_or(f64::NAN), 3), key(s, "z")));
                }
            }
            row.push(cell(p_value(s.p), key(s, "p")));
            row.push(text(decision(t, s)));
            row
        })
        .collect();
    match t.method {
        DoseMethod::Williams => columns.extend([
            col("Restricted mean", true),
            col("t̄", true),
            col(format!("Critical t̄ ({})", alpha_text(d.alpha)), true),
        ]),
        DoseMethod::Ordinal | DoseMethod::Dunnett => {
            columns.extend([col("t", true), col("df", true)])
        }
        DoseMethod::Jonckheere => columns.extend([col("J", true), col("z", true)]),
        DoseMethod::Steel => columns.extend([col("U", true), col("z", true)]),
    }
    columns.extend([col(p_label(t), true), col("Decision", false)]);
    TableView {
        id: format!("{}-dose-{}", o.id, t.method.key()),
        caption: format!(
            "Table {number}. {} for {} in {} with {} (one-sided, α = {}; control {}, n = {}, mean {}).",
            capitalised(t.method.title()),
            direction_word(d.direction),
            super::measure(o),
            o.presentation.plots.display(&d.factor),
            alpha_text(d.alpha),
            d.control,
            d.control_n,
            fixed(d.control_mean, dec),
        ),
        number,
        columns,
        rows,
        footnotes: footnotes(d, t),
    }
}

/// A count of pairs, whole or with a half for ties: 36, 20.5.
fn pair_count(x: f64) -> String {
    match x.fract() == 0.0 {
        true => fixed(x, 0),
        false => fixed(x, 1),
    }
}

/// What the procedure does, in a sentence or two, and its approximations.
fn footnotes(d: &DoseDetail, t: &DoseTest) -> Vec<String> {
    let mut notes = vec![match t.method {
        DoseMethod::Williams => format!(
            "Williams (1971, 1972): the dose means are made monotone by amalgamation (restricted means; the control is not pooled) and compared with the control's mean using the ANOVA's error mean square ({} on {} df), from the highest dose down; testing stops at the first dose without an effect. Critical values are computed from the exact null distribution{}.",
            significant(d.mse, 4),
            df_text(d.df),
            match (t.unequal_replication, d.doses.len() > PUBLISHED_DOSES) {
                (true, _) => " for the doses' unequal replication, which no published table covers",
                (false, true) => "; no published table covers more than 10 doses",
                (false, false) => "",
            }
        ),
        DoseMethod::Jonckheere => format!(
            "Jonckheere-Terpstra trend test on the control and the doses up to the one named, from all doses down; testing stops at the first test without a trend (Tukey, Ciminera & Heyse 1985). Reading a trend among the lowest doses as an effect of the highest of them rests on a monotone response. J counts the pairs of observations in which the one at the higher dose is larger (ties count one half), so {}; z has no continuity correction.",
            match d.direction {
                Direction::Decrease => "a decrease gives a small J and a negative z",
                Direction::Increase => "an increase gives a large J and a positive z",
            }
        ),
        DoseMethod::Ordinal => "Linear contrast with ordinal scores 0, 1, 2, … on the control and the doses up to the one named, weighted by replication, with the pooled variance of the groups in that test; from all doses down, stopping at the first test without a trend (Tukey, Ciminera & Heyse 1985).".to_string(),
        DoseMethod::Steel => format!(
            "Steel (1959): each dose is ranked with the control alone; U counts the pairs (dose, control) in which the dose's observation is the larger (ties count one half), so {} gives a {} U. The p-values are adjusted jointly for the comparisons with the one control.",
            direction_word(d.direction),
            match d.direction {
                Direction::Decrease => "small",
                Direction::Increase => "large",
            }
        ),
        DoseMethod::Dunnett => "Dunnett's one-sided comparisons with the control.".to_string(),
    }];
    if let Some(a) = &t.approximation {
        notes.push(a.clone());
    }
    let normal: Vec<String> = t
        .steps
        .iter()
        .filter(|s| s.p_source == PSource::Normal)
        .map(|s| dose_label(d, s.dose))
        .collect();
    if t.method == DoseMethod::Steel && !normal.is_empty() {
        notes.push(format!(
            "{} {}: the normal approximation (the exact joint computation was {}), which is anti-conservative with few replicates; the other p-values are exact.",
            if normal.len() == 1 { "The p-value at" } else { "The p-values at" },
            normal.join(", "),
            if t.approximation.is_some() { "not possible for them" } else { "beyond its work limit" }
        ));
    }
    notes
}

/// The NOEC and LOEC each procedure gives, with the cautions.
pub fn noec_table(o: &LinearOutcome, d: &DoseDetail, keys: &Keys, number: usize) -> TableView {
    let rows = d
        .tests
        .iter()
        .map(|t| {
            let k = |q: &str| keys.field(&format!("dose_response.tests.{}.{q}", t.method.key()));
            let loec = t.loec.map_or("none".to_string(), |i| dose_label(d, i));
            let noec = match t.noec() {
                Noec::Dose(i) => dose_label(d, i),
                Noec::BelowLowest => "below the lowest dose".into(),
                Noec::AtLeastHighest => format!("≥ {}", dose_label(d, d.doses.len() - 1)),
            };
            vec![
                text(capitalised(t.method.title())),
                cell(noec, k("noec")),
                cell(loec, k("loec")),
            ]
        })
        .collect();
    let mut footnotes = Vec::new();
    if d.disagree() {
        footnotes.push("The procedures disagree. They answer different questions: Williams' test and the trend tests use the order of the doses and assume a monotone response; Dunnett's and Steel's tests compare each dose with the control on its own. Name the procedure with the NOEC you report, chosen before the data were seen.".to_string());
    }
    for r in &d.reversals {
        footnotes.push(format!(
            "At {} the mean moved against the direction tested (one-sided t = {}, p = {} on {} df): the step-down tests assume a monotone response, which this contradicts; compare with Dunnett's or Steel's test.",
            dose_label(d, r.dose),
            fixed(r.t, 2),
            p_value(r.p),
            df_text(r.df)
        ));
    }
    footnotes.push(NOEC_CAUTION.to_string());
    TableView {
        id: format!("{}-noec", o.id),
        caption: format!(
            "Table {number}. NOEC and LOEC of {} by procedure ({} looked for, one-sided α = {}).",
            o.presentation.plots.display(&d.factor),
            direction_word(d.direction),
            alpha_text(d.alpha)
        ),
        number,
        columns: vec![
            col("Procedure", false),
            col("NOEC", false),
            col("LOEC", false),
        ],
        rows,
        footnotes,
    }
}
