//! The table of terms: sums of squares of the chosen type, each term's F
//! test against the residual, and its effect sizes.

use super::fit::Fitted;
use super::model::{Errors, Model};
use crate::diag::Diagnostic;
use crate::outcome::linear::{TermEffect, TermTest};
use crate::stats::dist::{f_isf, f_sf};
use crate::stats::effect::noncentrality_interval;
use crate::stats::linear::{SsTable, SsType, sums_of_squares};

/// The sums of squares of the type the document chose.
pub(super) struct Chosen {
    pub ss_type: SsType,
    pub table: SsTable,
    /// Every computable type gives the same sums (balanced data).
    pub types_agree: bool,
}

pub(super) fn ss_name(t: SsType) -> &'static str {
    match t {
        SsType::I => "Type I (sequential)",
        SsType::II => "Type II",
        SsType::III => "Type III",
    }
}

/// Computes every estimable type of sums of squares, and picks the one
/// asked for (unless `ss:` says otherwise Type III, or Type II with
/// covariates: each term adjusted for the others, the usual table of an
/// analysis of covariance).
pub(super) fn choose(
    fitted: &Fitted,
    model: &Model,
    empty: &[String],
    errors: &Errors<'_>,
) -> Result<Chosen, Diagnostic> {
    let spec = errors.spec;
    let default = match model.covariate_names.is_empty() {
        true => SsType::III,
        false => SsType::II,
    };
    let ss_type = spec.ss_type.as_ref().map_or(default, |l| l.value);
    if fitted.rank_deficient && ss_type == SsType::III {
        return Err(type_iii_not_estimable(empty, errors));
    }
    let tables: Vec<(SsType, SsTable)> = [SsType::I, SsType::II, SsType::III]
        .into_iter()
        .filter(|t| !(fitted.rank_deficient && *t == SsType::III))
        .map(|t| {
            let mut table = sums_of_squares(
                &fitted.design,
                &fitted.cell_y,
                &model.terms,
                &fitted.ranges,
                t,
            );
            table.rss += fitted.within_cells;
            (t, table)
        })
        .collect();
    let table = tables
        .iter()
        .find(|(t, _)| *t == ss_type)
        .map(|(_, s)| s.clone())
        .unwrap_or_else(|| tables[0].1.clone());
    let types_agree = tables.iter().all(|(_, t)| {
        t.terms.iter().zip(&table.terms).all(|(a, b)| {
            (a.ss - b.ss).abs() <= 1e-9 * b.ss.abs().max(1e-300) || (a.ss - b.ss).abs() < 1e-12
        })
    });
    if let Some(i) = table.terms.iter().position(|t| t.df == 0) {
        return Err(errors.model(
            format!(
                "the term `{}` is not estimable: every one of its columns is determined by earlier terms",
                model.term_names[i]
            ),
            "check that the factors really cross (each combination of levels occurs), or remove the term",
        ));
    }
    Ok(Chosen {
        ss_type,
        table,
        types_agree,
    })
}

fn type_iii_not_estimable(empty: &[String], errors: &Errors<'_>) -> Diagnostic {
    let spec = errors.spec;
    let at = spec.ss_type.as_ref().map_or(spec.model.line, |l| l.line);
    let why = if empty.is_empty() {
        "some of the model's contrasts are aliased with others (the design confounds part of a term)".to_string()
    } else {
        let cells = if empty.len() == 1 {
            "cell has"
        } else {
            "cells have"
        };
        format!("{} {cells} no data ({})", empty.len(), empty.join("; "))
    };
    errors.explain(errors
        .doc
        .error_at(at, None, format!("Type III sums of squares are not estimable: {why}"))
        .hint("use `ss: 2` (each term adjusted for the terms that do not contain it), or drop the interaction from the model"))
}

/// One row per term: blocks carry their sums of squares only, the other
/// terms an F test with its partial η² (and interval) and ω².
pub(super) fn term_rows(
    chosen: &SsTable,
    model: &Model,
    fitted: &Fitted,
    alpha: f64,
    n: usize,
) -> Vec<TermTest> {
    let mse = fitted.mse();
    let rss = fitted.full.rss;
    let nu = fitted.residual_df as f64;
    chosen
        .terms
        .iter()
        .enumerate()
        .map(|(i, t)| {
            let factors = &model.terms[i];
            let df = t.df as f64;
            let ms = t.ss / df;
            let is_block = factors.len() == 1 && model.is_block(factors[0]);
            let row = TermTest {
                name: model.term_names[i].clone(),
                // A covariate's row (its slope) has no factors.
                factors: factors
                    .iter()
                    .copied()
                    .filter(|&f| !model.is_covariate(f))
                    .collect(),
                df: t.df,
                ss: t.ss,
                ms,
                f: f64::NAN,
                p: f64::NAN,
                critical_f: f64::NAN,
                stratum: Some(0),
                denominator_df: nu,
                tested: !is_block,
                // The results file keeps a block's effect fields, as nulls.
                effect: Some(TermEffect {
                    eta_sq: None,
                    partial_eta_sq: f64::NAN,
                    omega_sq: f64::NAN,
                    cohens_f: f64::NAN,
                    partial_eta_sq_ci: (f64::NAN, f64::NAN),
                    ci_level: 1.0 - alpha,
                }),
            };
            if is_block {
                return row;
            }
            let f = ms / mse;
            let (lo, hi) = noncentrality_interval(f, df, nu, 1.0 - alpha);
            let to_eta = |lambda: f64| lambda / (lambda + df + nu + 1.0);
            let partial_eta_sq = t.ss / (t.ss + rss);
            TermTest {
                f,
                p: f_sf(f, df, nu),
                critical_f: f_isf(alpha, df, nu),
                effect: Some(TermEffect {
                    eta_sq: None,
                    partial_eta_sq,
                    omega_sq: df * (ms - mse) / (df * ms + (n as f64 - df) * mse),
                    cohens_f: (partial_eta_sq / (1.0 - partial_eta_sq)).sqrt(),
                    partial_eta_sq_ci: (to_eta(lo), to_eta(hi)),
                    ci_level: 1.0 - alpha,
                }),
                ..row
            }
        })
        .collect()
}
