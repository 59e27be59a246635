//! The dose-response keys (linear-extensions specification E): `noec`
//! names the step-down and many-to-one procedures that find the NOEC and
//! LOEC against the block's `control`, in the direction `sides` states;
//! `doses` gives each level's dose when the level names are not numbers.
//! The control needs no dose: it is the comparison for every dose.

use super::block::{Located, SpecError, bad, list};
use super::block_keys::AnovaDraft;
use super::formula::Formula;
use super::keyvalue::Entry;
use crate::stats::dose::Direction;
use crate::stats::dunnett::Sides;

/// A procedure that reads the NOEC and LOEC from the data.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum DoseProcedure {
    /// Williams' step-down test on restricted means (Williams 1971, 1972).
    Williams,
    /// The step-down Jonckheere-Terpstra trend test (Tukey, Ciminera & Heyse 1985).
    Jonckheere,
    /// The step-down linear contrast with ordinal scores.
    Ordinal,
    /// Steel's many-to-one rank test (Steel 1959).
    Steel,
}

/// Every procedure with the names `noec` accepts for it, in report order.
const PROCEDURES: [(DoseProcedure, &[&str]); 4] = [
    (DoseProcedure::Williams, &["williams"]),
    (
        DoseProcedure::Jonckheere,
        &["jonckheere", "jonckheere-terpstra"],
    ),
    (DoseProcedure::Ordinal, &["ordinal", "ordinal-trend"]),
    (DoseProcedure::Steel, &["steel"]),
];

impl DoseProcedure {
    /// The name used in keys and the results file.
    pub fn key(self) -> &'static str {
        match self {
            DoseProcedure::Williams => "williams",
            DoseProcedure::Jonckheere => "jonckheere",
            DoseProcedure::Ordinal => "ordinal",
            DoseProcedure::Steel => "steel",
        }
    }

    /// Whether the procedure needs the observations, which summary input
    /// does not hold: the rank tests, and the ordinal contrast's variance
    /// pooled over a subset of the groups.
    pub fn needs_observations(self) -> bool {
        self != DoseProcedure::Williams
    }
}

/// The dose-response request of a block.
#[derive(Debug, Clone, PartialEq)]
pub struct DoseSpec {
    pub procedures: Vec<DoseProcedure>,
    pub direction: Direction,
    /// (level, dose) as `doses` gives them; `None` to read the level names.
    pub doses: Option<Located<Vec<(String, f64)>>>,
    pub line: usize,
    pub column: usize,
}

const HINT: &str = "write for example `noec: williams, jonckheere`; the procedures are williams, jonckheere, ordinal and steel";
const DOSES_HINT: &str =
    "give each level but the control its dose: `doses: low 10, mid 30, high 100`";

pub(super) fn read_noec(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let mut procedures = Vec::new();
    for name in list(&e.value) {
        let lower = name.to_ascii_lowercase();
        let Some((p, _)) = PROCEDURES
            .iter()
            .find(|(_, names)| names.contains(&lower.as_str()))
        else {
            return Err(bad(e, format!("unknown NOEC procedure `{name}`"), HINT));
        };
        if procedures.contains(p) {
            return Err(bad(e, format!("`{name}` is named twice"), HINT));
        }
        procedures.push(*p);
    }
    if procedures.is_empty() {
        return Err(bad(e, "`noec` names no procedure".into(), HINT));
    }
    procedures.sort_by_key(|p| PROCEDURES.iter().position(|(q, _)| q == p));
    d.noec = Some((e.clone(), procedures));
    Ok(())
}

pub(super) fn read_doses(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let mut doses: Vec<(String, f64)> = Vec::new();
    for item in list(&e.value) {
        let parsed = item
            .rsplit_once(char::is_whitespace)
            .and_then(|(level, v)| {
                let v = crate::data::decimal::parse_number(v.trim())?.to_f64();
                v.is_finite().then(|| (level.trim().to_string(), v))
            });
        let Some((level, dose)) = parsed else {
            return Err(bad(
                e,
                format!("`{item}` is not a level followed by its dose"),
                DOSES_HINT,
            ));
        };
        if dose < 0.0 {
            return Err(bad(
                e,
                format!("the dose of `{level}` is negative"),
                DOSES_HINT,
            ));
        }
        if doses.iter().any(|(l, _)| *l == level) {
            return Err(bad(e, format!("`{level}` is given two doses"), DOSES_HINT));
        }
        doses.push((level, dose));
    }
    if doses.is_empty() {
        return Err(bad(e, "`doses` gives no dose".into(), DOSES_HINT));
    }
    d.doses = Some(Located {
        value: doses,
        line: e.line,
        column: e.value_column,
    });
    Ok(())
}

/// What the dose-response keys cannot be combined with, each with the key
/// present and the reason.
fn refusals(d: &AnovaDraft) -> Vec<(Option<&Entry>, &'static str)> {
    vec![
        (
            d.random.as_ref().map(|(e, _)| e),
            "dose-response tests with random terms are not offered in this version",
        ),
        (
            d.subject.as_ref().map(|(e, _)| e),
            "dose-response tests on repeated measures are not offered in this version",
        ),
        (
            d.covariates.as_ref().map(|(e, _)| e),
            "dose-response tests with covariates are not offered in this version",
        ),
        (
            d.transform.as_ref().map(|(e, _)| e),
            "dose-response tests on a transformed response are not offered in this version",
        ),
    ]
}

/// The dose-response keys checked against each other and the model.
pub(super) fn dose_keys(d: &AnovaDraft, model: &Formula) -> Vec<SpecError> {
    let Some((e, procedures)) = &d.noec else {
        let doses = d.doses.as_ref().map(|l| SpecError {
            line: l.line,
            column: l.column,
            message: "`doses` applies only with `noec`".into(),
            hint: Some("add `noec: williams` (or another procedure), or remove `doses`".into()),
        });
        let plot = d
            .plot
            .as_ref()
            .filter(|_| d.plots.kinds.contains(&super::block::PlotKind::Doses))
            .map(|e| {
                bad(
                    e,
                    "`plot: doses` draws the tests that `noec` asks for".into(),
                    HINT,
                )
            });
        return doses.into_iter().chain(plot).collect();
    };
    let mut errors: Vec<SpecError> = refusals(d)
        .into_iter()
        .filter_map(|(given, why)| {
            given.map(|_| {
                bad(
                    e,
                    why.into(),
                    "state the dose-response tests in a block of their own",
                )
            })
        })
        .collect();
    if model.several() || model.terms.len() != 1 || model.terms[0].factors.len() != 1 {
        errors.push(bad(
            e,
            "dose-response tests need a model with one factor, the dose".into(),
            "write `model: <response> ~ <dose factor>`",
        ));
    }
    if d.control.is_none() {
        errors.push(bad(
            e,
            "dose-response tests compare every dose with a control".into(),
            "add `control: <level>`, the untreated level",
        ));
    }
    if !matches!(d.sides, Some((_, Sides::Less | Sides::Greater))) {
        errors.push(bad(
            e,
            "dose-response tests look for an effect in one direction, stated before the data are seen".into(),
            "add `sides: less` (the response falls with dose) or `sides: greater` (it rises)",
        ));
    }
    if matches!(d.input, Some((_, true))) && procedures.iter().any(|p| p.needs_observations()) {
        errors.push(bad(
            e,
            "the trend and rank tests need the observations, which summary input does not hold"
                .into(),
            "use `noec: williams` with summary input, or give the raw data",
        ));
    }
    errors
}

/// The checked request, once `dose_keys` found nothing wrong.
pub(super) fn dose_spec(d: &mut AnovaDraft) -> Option<DoseSpec> {
    let (e, procedures) = d.noec.take()?;
    let direction = match d.sides {
        Some((_, Sides::Greater)) => Direction::Increase,
        _ => Direction::Decrease,
    };
    Some(DoseSpec {
        procedures,
        direction,
        doses: d.doses.take(),
        line: e.line,
        column: e.value_column,
    })
}
