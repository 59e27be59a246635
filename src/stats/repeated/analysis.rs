//! The driver: checks, the between-subject basis, then the between table and
//! one within-subject effect at a time.

use nalgebra::DMatrix;

use super::between_basis::BetweenBasis;
use super::contrast::{effect_contrasts, within_effects};
use super::error::RepeatedError;
use super::input::RepeatedInput;
use super::sphericity::{Epsilons, sphericity};
use super::sscp::{SscpSplit, scores, split};
use super::table::{
    BetweenTable, ErrorLine, RepeatedAnalysis, Sphericity, WithinEffect, WithinLine,
};
use crate::stats::sum::neumaier;

/// The univariate repeated-measures ANOVA of complete subjects with Mauchly's
/// test and the epsilon corrections for every within-subject effect.
pub fn analyse(input: &RepeatedInput) -> Result<RepeatedAnalysis, RepeatedError> {
    let occasions = input.validate()?;
    let subjects = input.subjects();
    // The full interaction has the most contrasts (each factor multiplies
    // them by its levels − 1 ≥ 1); every effect with p ≥ 2 needs ν > p and every
    // test ν ≥ 1. Checked before anything of the size of the design is built.
    let most: usize = input.within.iter().map(|l| l - 1).product();
    let needed = if most >= 2 { most } else { 0 };
    let too_few = |residual_df| RepeatedError::TooFewSubjects {
        subjects,
        residual_df,
        contrasts: needed,
    };
    if subjects <= needed + 1 {
        return Err(too_few(subjects.saturating_sub(1)));
    }
    let effects = within_effects(input.within.len());
    let basis = BetweenBasis::new(subjects, input.between)?;
    let residual_df = subjects - basis.rank();
    if residual_df == 0 || residual_df <= needed {
        return Err(too_few(residual_df));
    }
    let between = between_table(input, &basis, residual_df)?;
    let within = effects
        .into_iter()
        .map(|factors| {
            let p = factors.iter().map(|&f| input.within[f] - 1).product();
            within_effect(input, &basis, residual_df, factors, p)
        })
        .collect::<Result<Vec<_>, _>>()?;
    Ok(RepeatedAnalysis {
        subjects,
        occasions,
        residual_df,
        between,
        within,
    })
}

/// Tests of the between terms on the subjects' scores Σy/√k, whose SS are
/// those of the classical between-subjects stratum.
fn between_table(
    input: &RepeatedInput,
    basis: &BetweenBasis,
    residual_df: usize,
) -> Result<BetweenTable, RepeatedError> {
    let total = effect_contrasts(input.within, &[]);
    let parts = split(&scores(input.responses, &total, false), basis);
    let error = error_line(&parts, residual_df, "subjects within groups")?;
    let terms = parts
        .terms
        .iter()
        .zip(&basis.blocks)
        .map(|(h, block)| Ok(error.test(finite(h[(0, 0)])?, block.len())))
        .collect::<Result<Vec<_>, RepeatedError>>()?;
    Ok(BetweenTable { terms, error })
}

fn within_effect(
    input: &RepeatedInput,
    basis: &BetweenBasis,
    residual_df: usize,
    factors: Vec<usize>,
    p: usize,
) -> Result<WithinEffect, RepeatedError> {
    let contrasts = effect_contrasts(input.within, &factors);
    let parts = split(&scores(input.responses, &contrasts, true), basis);
    let name: Vec<String> = factors.iter().map(|f| (f + 1).to_string()).collect();
    let what = format!(
        "within effect {} × subjects within groups",
        name.join(" × ")
    );
    let error = error_line(&parts, residual_df, &what)?;
    let (sphericity, epsilons) = if p == 1 {
        (Sphericity::HoldsTrivially, Epsilons::one())
    } else {
        let (test, eps) =
            sphericity(&parts.error, residual_df, input.subjects()).ok_or_else(|| {
                RepeatedError::SingularCovariance {
                    effect: factors.clone(),
                }
            })?;
        (Sphericity::Tested(test), eps)
    };
    let line = |h: &DMatrix<f64>, df: usize| -> Result<WithinLine, RepeatedError> {
        let test = error.test(finite(trace(h))?, df * p);
        Ok(WithinLine::new(test, &error, &epsilons))
    };
    let effect = line(&parts.intercept, 1)?;
    let by_between = parts
        .terms
        .iter()
        .zip(&basis.blocks)
        .map(|(h, block)| line(h, block.len()))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(WithinEffect {
        factors,
        contrasts: p,
        effect,
        by_between,
        error,
        sphericity,
        epsilons,
    })
}

/// The residual line on ν·p df; refuses a zero or overflowed SS.
fn error_line(
    parts: &SscpSplit,
    residual_df: usize,
    what: &str,
) -> Result<ErrorLine, RepeatedError> {
    let ss = finite(trace(&parts.error))?;
    if ss <= 0.0 {
        return Err(RepeatedError::NoResidualVariation {
            what: what.to_string(),
        });
    }
    Ok(ErrorLine::new(ss, residual_df * parts.error.nrows()))
}

fn trace(m: &DMatrix<f64>) -> f64 {
    neumaier(m.diagonal().iter().copied())
}

fn finite(x: f64) -> Result<f64, RepeatedError> {
    if x.is_finite() {
        Ok(x)
    } else {
        Err(RepeatedError::Overflow)
    }
}
