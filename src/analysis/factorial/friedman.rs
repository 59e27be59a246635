//! Friedman's test for a block with `method: ranks` and one `block:`
//! factor: the model checked (one treatment factor, one blocking factor,
//! no interaction), the complete table of blocks by levels read from the
//! observations (every block with exactly one observation of every level),
//! the test, and the post hoc family on the ranks.

use super::model::{Errors, Model};
use crate::analysis::compare::{Declared, comparison_result, letters, protect};
use crate::analysis::notes::Note;
use crate::data::FactorialData;
use crate::diag::Diagnostic;
use crate::outcome::friedman::{FriedmanDetail, RankedLevel};
use crate::outcome::linear::Comparison;
use crate::outcome::procedure_note::ProcedureNote;
use crate::stats::assumptions::median;
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;
use crate::stats::friedman::{FriedmanError, conover, friedman, nemenyi};

/// Problem blocks named in a message before the rest are counted.
const NAMED: usize = 5;

/// The treatment and blocking factors of a model Friedman's test fits, or
/// the reason it does not.
pub(super) fn factors(errors: &Errors<'_>, model: &Model) -> Result<(usize, usize), Diagnostic> {
    let example = "write the model as `score ~ product + panellist` with `block: panellist`";
    if !model.covariate_names.is_empty() {
        return Err(errors.model(
            "Friedman's test (`method: ranks` with `block:`) has no version with covariates".into(),
            "remove `covariate`, or remove `method` for the analysis of covariance",
        ));
    }
    let treatments = model.treatment_factors();
    if treatments.len() != 1 {
        return Err(errors.model(
            format!(
                "Friedman's test compares the levels of one treatment factor; this model has {}",
                crate::format::counted(treatments.len(), "treatment factor", "treatment factors")
            ),
            "for several treatment factors use the ANOVA (remove `method`); or cross them into one factor column of their combinations",
        ));
    }
    if model.blocks.len() != 1 {
        return Err(errors.model(
            format!(
                "Friedman's test ranks within one blocking factor; `block` names {}",
                model.blocks.len()
            ),
            "a Latin square's two blocking factors are beyond Friedman's test: use the ANOVA (remove `method`)",
        ));
    }
    if model.terms.iter().any(|t| t.len() != 1) {
        return Err(errors.model(
            "Friedman's test has no interaction terms: the treatment is ranked within each block"
                .into(),
            example,
        ));
    }
    Ok((treatments[0], model.blocks[0]))
}

/// The observations as a table `[block][level]` of offsets from the data's
/// origin (ranks within a block do not depend on the shift), or an error
/// naming the blocks that miss levels or repeat them.
pub(super) fn complete_table(
    errors: &Errors<'_>,
    data: &FactorialData,
    (treatment, block): (usize, usize),
) -> Result<Vec<Vec<f64>>, Diagnostic> {
    let Some(observed) = data.observed() else {
        return Err(errors.model(
            "internal error: Friedman's test reached without the observations".into(),
            "ranks need one row per observation",
        ));
    };
    let (k, b) = (
        data.layout.levels[treatment].len(),
        data.layout.levels[block].len(),
    );
    let mut cells: Vec<Vec<Vec<usize>>> = vec![vec![Vec::new(); k]; b];
    for i in 0..observed.offsets.len() {
        let row = observed.row(i);
        cells[row[block]][row[treatment]].push(i);
    }
    let level = |t: usize| data.layout.levels[treatment][t].as_str();
    let block_name = |j: usize| data.layout.levels[block][j].as_str();
    let incomplete: Vec<String> = (0..b)
        .filter_map(|j| {
            let missing: Vec<String> = (0..k)
                .filter(|&t| cells[j][t].is_empty())
                .map(|t| format!("`{}`", level(t)))
                .collect();
            (!missing.is_empty())
                .then(|| format!("`{}` lacks {}", block_name(j), missing.join(", ")))
        })
        .collect();
    if !incomplete.is_empty() {
        return Err(errors.model(
            format!(
                "Friedman's test needs every block to hold every level; {}",
                named(&incomplete, "block")
            ),
            "leave out the incomplete blocks with `where` or `exclude`, or use the ANOVA (remove `method`), which accepts missing cells",
        ));
    }
    let repeated: Vec<String> = (0..b)
        .flat_map(|j| (0..k).map(move |t| (j, t)))
        .filter(|&(j, t)| cells[j][t].len() > 1)
        .map(|(j, t)| {
            let lines: Vec<String> = cells[j][t]
                .iter()
                .map(|&i| observed.lines[i].to_string())
                .collect();
            format!(
                "`{}` has {} observations of `{}` (lines {})",
                block_name(j),
                cells[j][t].len(),
                level(t),
                lines.join(", ")
            )
        })
        .collect();
    if !repeated.is_empty() {
        return Err(errors.model(
            format!(
                "Friedman's test takes one observation per block and level; {}",
                named(&repeated, "cell")
            ),
            "average the replicates within each block and level first (one row per block and level), or use the ANOVA (remove `method`)",
        ));
    }
    Ok(cells
        .iter()
        .map(|row| row.iter().map(|c| observed.offsets[c[0]]).collect())
        .collect())
}

/// The first few problems, then how many more.
fn named(problems: &[String], noun: &str) -> String {
    let shown = problems[..problems.len().min(NAMED)].join("; ");
    match problems.len().saturating_sub(NAMED) {
        0 => shown,
        more => format!(
            "{shown}; and {} more",
            crate::format::counted(more, noun, &format!("{noun}s"))
        ),
    }
}

/// Friedman's test on the table, with each level's ranks and median.
pub(super) fn test(
    errors: &Errors<'_>,
    data: &FactorialData,
    table: &[Vec<f64>],
    (treatment, block): (usize, usize),
) -> Result<FriedmanDetail, Diagnostic> {
    let f = friedman(table).map_err(|e| match e {
        FriedmanError::AllTied => errors.model(
            "Friedman's test is undefined: every block holds the same value for every level".into(),
            "ranks cannot separate levels that no block tells apart",
        ),
        FriedmanError::TooFewBlocks(n) => errors.model(
            format!(
                "Friedman's test needs two or more blocks; the data have {}",
                crate::format::counted(n, "block", "blocks")
            ),
            "check the block column and the missing-value markers",
        ),
        FriedmanError::TooFewLevels(_) | FriedmanError::Ragged(_) => errors.model(
            "internal error: an incomplete table reached Friedman's test".into(),
            "please report this",
        ),
    })?;
    let levels = (0..f.levels())
        .map(|t| {
            let column: Vec<f64> = table.iter().map(|row| data.origin + row[t]).collect();
            RankedLevel {
                name: data.layout.levels[treatment][t].clone(),
                blocks: table.len(),
                rank_sum: f.rank_sums[t],
                mean_rank: f.mean_ranks[t],
                median: median(&column),
            }
        })
        .collect();
    Ok(FriedmanDetail {
        factor: treatment,
        block,
        test: f,
        levels,
    })
}

/// The post hoc family `compare:` names, on the ranks, with letters that
/// order the levels by mean rank; `None` when Conover's procedure has no
/// spread to work with (said in a note).
pub(super) fn comparison(
    detail: &FriedmanDetail,
    method: Method,
    alpha: f64,
    notes: &mut Vec<Note>,
) -> Option<Comparison> {
    let f = &detail.test;
    let df = (f.blocks as f64 - 1.0) * (f.levels() as f64 - 1.0);
    let (mut family, note) = match method {
        Method::ConoverFriedman => {
            let Some(family) = conover(f, alpha) else {
                notes.push(Note::other("Conover's comparisons need ranks that vary beyond the levels' order: every block ranks the levels alike, so none are reported (Nemenyi's procedure, `compare: nemenyi`, applies)."));
                return None;
            };
            let rejected = f.p < alpha;
            (family, ProcedureNote::ConoverFriedman { rejected, alpha })
        }
        _ => (nemenyi(f, alpha), ProcedureNote::Nemenyi),
    };
    let withheld = method == Method::ConoverFriedman && protect(&mut family.pairs, f.p, alpha);
    let declared = Declared {
        letters: letters(&family.pairs, &f.mean_ranks),
        withheld,
        notes: vec![note],
    };
    let df = match method {
        Method::ConoverFriedman => df,
        _ => f64::INFINITY,
    };
    Some(comparison_result(
        method,
        family,
        (alpha, df),
        declared,
        None,
        Sides::Two,
    ))
}
