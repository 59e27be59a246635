//! Prose expressions: `{{ growth.f | round(2) }}` evaluated by minijinja in
//! strict mode against the blocks' results, with sheaf's own filters.

use super::templates::to_value;
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::block::Omnibus;
use crate::doc::markdown::Expression;
use crate::format::{df_text, f_statement, fixed, p_phrase, p_value, significant};
use crate::outcome::linear::{Estimate, Family, LevelSummary, LinearOutcome, TermTest};
use crate::outcome::{BlockResult, PowerResult};
use f_test::FTestContext;
use minijinja::value::{Value, ValueKind};
use minijinja::{Environment, ErrorKind, UndefinedBehavior};
use serde::Serialize;
use std::collections::BTreeMap;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};

/// Names of sheaf's own filters, for the README and error hints.
pub const FILTERS: [&str; 5] = ["pvalue", "ptext", "fixed", "sig", "statement"];

/// The work one expression may do, in the template engine's fuel: one unit
/// per instruction, per item visited or per 64 bytes of data created. A
/// quotation needs a few dozen; this allows a few megabytes and well under
/// a second, and stops `"x" * 10**9`, joins of huge lists and long sorts.
pub const EXPRESSION_FUEL: u64 = 200_000;

/// The work all expressions of one document may do together.
pub const DOCUMENT_FUEL: u64 = 20_000_000;

/// The longest text one expression may put into a report, in bytes.
pub const MAX_EXPRESSION_OUTPUT: usize = 10_000;

/// The filter appended to every expression to learn the fuel it used.
const FUEL_PROBE: &str = "sheaf_fuel_probe";

mod contrasts;
mod covariance;
mod covariates;
mod dose;
mod equivalence;
mod f_test;
mod friedman;
mod names;
mod traits;
mod transform;
mod trend;

/// Degrees of freedom as prose reads them: whole numbers stay integers, a
/// real-valued denominator df (an approximation) stays real.
#[derive(Serialize, Clone, Copy)]
#[serde(untagged)]
enum Df {
    Whole(usize),
    Real(f64),
}

impl Df {
    fn of(x: f64) -> Self {
        if crate::format::is_whole_df(x) && (0.0..9.0e15).contains(&x) {
            Df::Whole(x.round() as usize)
        } else {
            Df::Real(x)
        }
    }
}

#[derive(Serialize)]
struct TermContext {
    df: usize,
    df1: usize,
    df2: Df,
    ss: f64,
    ms: f64,
    /// None for a blocking factor, which is reported but not tested.
    f: Option<f64>,
    p: Option<f64>,
    critical_f: Option<f64>,
    not_tested: Option<&'static str>,
    effect: Option<EffectContext>,
    /// "F(2, 27) = 4.85, p = 0.016" (none for a blocking factor).
    statement: Option<String>,
    /// Models with random terms: the denominator df and the error.
    #[serde(skip_serializing_if = "Option::is_none")]
    df_den: Option<Df>,
    #[serde(skip_serializing_if = "Option::is_none")]
    error: Option<String>,
}

impl TermContext {
    fn new(o: &LinearOutcome, t: &TermTest) -> Self {
        let mixed = o.mixed.is_some();
        let tested = |x: f64| t.tested.then_some(x);
        TermContext {
            df: t.df,
            df1: t.df,
            df2: Df::of(t.denominator_df),
            ss: t.ss,
            ms: t.ms,
            f: tested(t.f),
            p: tested(t.p),
            critical_f: tested(t.critical_f),
            not_tested: (!t.tested).then_some("a blocking factor is reported but not tested"),
            effect: t.effect.filter(|_| t.tested).map(|e| EffectContext {
                // Several factors: η² is read as the partial one.
                eta_sq: e.eta_sq.unwrap_or(e.partial_eta_sq),
                partial_eta_sq: e.partial_eta_sq,
                omega_sq: e.omega_sq,
                cohens_f: e.cohens_f,
                ci_lower: e.partial_eta_sq_ci.0,
                ci_upper: e.partial_eta_sq_ci.1,
            }),
            statement: t
                .tested
                .then(|| f_statement(t.df as f64, t.denominator_df, t.f, t.p)),
            df_den: mixed.then(|| Df::of(t.denominator_df)),
            error: mixed.then(|| {
                t.stratum
                    .and_then(|s| o.strata.get(s))
                    .map_or_else(|| "combined".to_string(), |s| s.name.clone())
            }),
        }
    }
}

#[derive(Serialize)]
struct EffectContext {
    eta_sq: f64,
    partial_eta_sq: f64,
    omega_sq: f64,
    cohens_f: f64,
    ci_lower: f64,
    ci_upper: f64,
}

/// An F test among the checks (Levene, Brown-Forsythe).
#[derive(Serialize)]
struct TestContext {
    statistic: f64,
    df1: f64,
    df2: f64,
    f: f64,
    p: f64,
    statement: String,
}

#[derive(Serialize)]
struct BartlettContext {
    statistic: f64,
    df: f64,
    p: f64,
    statement: String,
}

#[derive(Serialize)]
struct ShapiroContext {
    w: f64,
    p: f64,
    n: usize,
    statement: String,
}

#[derive(Serialize)]
struct KruskalContext {
    h: f64,
    df: f64,
    p: f64,
    statement: String,
}

/// The error term and the total: whole degrees of freedom stay integers.
#[derive(Serialize)]
struct SumsContext {
    df: Df,
    ss: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    ms: Option<f64>,
}

#[derive(Serialize)]
struct ChecksContext {
    brown_forsythe: Option<TestContext>,
    levene: Option<TestContext>,
    bartlett: Option<BartlettContext>,
    shapiro_wilk: Option<ShapiroContext>,
    skewness: f64,
    excess_kurtosis: f64,
    outliers: usize,
}

/// The assumption checks as prose sees them (one-factor and factorial blocks).
fn checks_context(c: &crate::outcome::Checks) -> ChecksContext {
    let check_test = |t: &crate::stats::assumptions::FTest| TestContext {
        statistic: t.statistic,
        df1: t.df1,
        df2: t.df2,
        f: t.statistic,
        p: t.p,
        statement: f_statement(t.df1, t.df2, t.statistic, t.p),
    };
    ChecksContext {
        brown_forsythe: c.brown_forsythe.as_ref().map(check_test),
        levene: c.levene.as_ref().map(check_test),
        bartlett: c.bartlett.map(|b| BartlettContext {
            statistic: b.statistic,
            df: b.df,
            p: b.p,
            statement: format!(
                "χ²({}) = {}, {}",
                df_text(b.df),
                fixed(b.statistic, 2),
                p_phrase(b.p)
            ),
        }),
        shapiro_wilk: c.shapiro_wilk.ok().map(|s| ShapiroContext {
            w: s.w,
            p: s.p,
            n: s.n,
            statement: format!("W = {}, {}", fixed(s.w, 3), p_phrase(s.p)),
        }),
        skewness: c.skewness,
        excess_kurtosis: c.excess_kurtosis,
        outliers: c.outlier_count,
    }
}

/// A level of the block's factor: its own statistics for one factor, its
/// estimated marginal mean for several (no SD or quartiles there).
#[derive(Serialize)]
struct GroupContext {
    #[serde(flatten)]
    estimate: EmmContext,
    #[serde(skip_serializing_if = "Option::is_none")]
    sd: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    median: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    q1: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    q3: Option<f64>,
}

#[derive(Serialize)]
struct PairContext {
    a: String,
    b: String,
    diff: f64,
    se: f64,
    lower: f64,
    upper: f64,
    p: f64,
    significant: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    ratio: Option<transform::RatioContext>,
}

/// An estimate of a comparison family (`means.<family>.<level>`).
#[derive(Serialize)]
struct EmmContext {
    n: usize,
    mean: f64,
    se: f64,
    ci_lower: f64,
    ci_upper: f64,
    letters: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    arithmetic_mean: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    back: Option<transform::BackContext>,
}

impl EmmContext {
    /// Estimate `i` of a family (`fam`, when there is one, gives the
    /// letters and the arithmetic mean).
    fn new(o: &LinearOutcome, fam: Option<&Family>, m: &Estimate, i: usize) -> EmmContext {
        EmmContext {
            n: m.n,
            mean: m.mean,
            se: m.se,
            ci_lower: m.ci_lower,
            ci_upper: m.ci_upper,
            letters: fam.and_then(|f| letters_of(f, i)),
            arithmetic_mean: transform::arithmetic(o, fam, i),
            back: transform::back(o, m),
        }
    }
}

/// The namespace of every linear block, one-factor or factorial. The
/// block's own test names (`f`, `p`, `df1`, `df2`, `critical_f`, `factor`,
/// `statement`) and `groups`, `letters` and `pairs` refer to its primary
/// term (see `primary_term`); `terms` and `means` hold all of them.
#[derive(Serialize)]
struct BlockContext {
    f: Option<f64>,
    p: Option<f64>,
    df1: Option<usize>,
    df2: Option<Df>,
    critical_f: Option<f64>,
    r_squared: f64,
    /// CV% of the residual error (models without random terms).
    cv: Option<f64>,
    /// The primary family's SED and LSD: one value under equal
    /// replication (else null), and their `[smallest, largest]`.
    sed: Option<f64>,
    lsd: Option<f64>,
    sed_range: Option<[f64; 2]>,
    lsd_range: Option<[f64; 2]>,
    n: usize,
    n_excluded: usize,
    alpha: f64,
    response: String,
    factor: Option<String>,
    method: &'static str,
    compare: Option<&'static str>,
    /// The declared omnibus test as a sentence fragment.
    statement: Option<String>,
    /// Factorial designs only: 1, 2 or 3.
    #[serde(skip_serializing_if = "Option::is_none")]
    ss_type: Option<u8>,
    /// One factor only: the alternative tests (none unless computed).
    #[serde(skip_serializing_if = "Option::is_none")]
    welch: Option<Option<FTestContext>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    kruskal: Option<Option<KruskalContext>>,
    checks: ChecksContext,
    terms: BTreeMap<String, TermContext>,
    residual: SumsContext,
    total: SumsContext,
    groups: BTreeMap<String, GroupContext>,
    letters: BTreeMap<String, String>,
    pairs: Vec<PairContext>,
    /// means.<factor>.<level> for main-effect families, means["<factor>@<slice>"]
    /// for simple effects, means.cells.<label> for all cells.
    means: BTreeMap<String, BTreeMap<String, EmmContext>>,
    /// Models with random terms: variance.<term> and sd.<term> (the
    /// residual as `residual`), and the fit.
    #[serde(skip_serializing_if = "Option::is_none")]
    variance: Option<BTreeMap<String, f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    sd: Option<BTreeMap<String, f64>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    fit: Option<FitContext>,
    /// Repeated-measures blocks: within.<term> with the univariate test,
    /// its corrected p-values and the sphericity test.
    #[serde(skip_serializing_if = "Option::is_none")]
    within: Option<BTreeMap<String, WithinContext>>,
    /// With `covariance`: the structure, its parameters and criteria.
    #[serde(skip_serializing_if = "Option::is_none")]
    covariance: Option<covariance::CovarianceContext>,
    /// Blocks with covariates: `covariates`, `slopes`, `observed`.
    #[serde(flatten)]
    adjustment: Option<covariates::CovariatesContext>,
    /// Blocks with planned contrasts: `contrasts`, `contrast_set`.
    #[serde(flatten)]
    planned: Option<contrasts::ContrastsContext>,
    /// Blocks with `trend`.
    #[serde(skip_serializing_if = "Option::is_none")]
    trend: Option<trend::TrendContext>,
    /// Blocks with `transform`.
    #[serde(skip_serializing_if = "Option::is_none")]
    transform: Option<transform::TransformContext>,
    /// Blocks with `noec`.
    #[serde(skip_serializing_if = "Option::is_none")]
    dose_response: Option<dose::DoseContext>,
    /// Friedman's test (`method: ranks` with `block:`).
    #[serde(skip_serializing_if = "Option::is_none")]
    friedman: Option<friedman::FriedmanContext>,
    /// Blocks with `margin`: the equivalence tests.
    #[serde(skip_serializing_if = "Option::is_none")]
    equivalence: Option<equivalence::EquivalenceContext>,
}

#[derive(Serialize)]
struct WithinContext {
    f: f64,
    df: f64,
    df_den: f64,
    p: f64,
    p_gg: f64,
    p_hf: f64,
    gg_epsilon: f64,
    hf_epsilon: f64,
    mauchly_w: Option<f64>,
    mauchly_p: Option<f64>,
}

/// The univariate within-subject tests by term, when there are any.
fn within_context(o: &LinearOutcome) -> Option<BTreeMap<String, WithinContext>> {
    let tests = o.repeated.as_ref()?.univariate.as_ref().ok()?;
    Some(
        tests
            .iter()
            .map(|t| {
                (
                    t.term.clone(),
                    WithinContext {
                        f: t.f,
                        df: t.df,
                        df_den: t.df_den,
                        p: t.p,
                        p_gg: t.p_gg,
                        p_hf: t.p_hf,
                        gg_epsilon: t.gg_epsilon,
                        hf_epsilon: t.hf_epsilon,
                        mauchly_w: t.sphericity.as_ref().map(|m| m.w),
                        mauchly_p: t.sphericity.as_ref().map(|m| m.p),
                    },
                )
            })
            .collect(),
    )
}

#[derive(Serialize)]
struct FitContext {
    log_likelihood: f64,
    aic: f64,
    bic: f64,
    iterations: usize,
}

/// The term a block's own names refer to: one factor's only term; for
/// several factors the first factor whose levels are compared (as a main
/// effect or within slices), else the first tested term in model order.
fn primary_term(o: &LinearOutcome) -> Option<&TermTest> {
    let tested = |name: &str| o.terms.iter().find(|t| t.tested && t.name == name);
    o.families
        .iter()
        .filter(|f| f.comparison.is_some())
        .find_map(|f| tested(&f.term).filter(|t| t.factors.len() == 1))
        .or_else(|| o.terms.iter().find(|t| t.tested))
}

/// The block's declared omnibus test as text: Welch's or the rank test
/// when the block declared it, else the primary term's F test.
fn block_statement(o: &LinearOutcome, alternatives: &AlternativesContext) -> Option<String> {
    if let Some(d) = o.friedman.as_deref() {
        return Some(friedman::statement(d));
    }
    match (o.method, &alternatives.0, &alternatives.1) {
        (Omnibus::Welch, Some(w), _) => Some(w.statement.clone()),
        (Omnibus::Ranks, _, Some(k)) => Some(k.statement.clone()),
        _ => primary_term(o).and_then(|t| TermContext::new(o, t).statement),
    }
}

/// Welch's test and the rank test of a one-factor block.
struct AlternativesContext(Option<FTestContext>, Option<KruskalContext>);

fn alternatives_context(o: &LinearOutcome) -> AlternativesContext {
    let welch = o
        .alternatives
        .welch
        .map(|w| FTestContext::new(w.df1, w.df2, w.f, w.p).named("Welch's"));
    let kruskal = o.alternatives.kruskal.as_ref().map(|k| KruskalContext {
        h: k.h,
        df: k.df,
        p: k.p,
        statement: format!(
            "H({}) = {}, {}",
            df_text(k.df),
            fixed(k.h, 2),
            p_phrase(k.p)
        ),
    });
    AlternativesContext(welch, kruskal)
}

/// `means`: every family's estimates with their letters.
fn means_context(o: &LinearOutcome) -> BTreeMap<String, BTreeMap<String, EmmContext>> {
    o.families
        .iter()
        .map(|fam| {
            let key = match &fam.within {
                Some(w) => format!("{}@{w}", fam.term),
                None => fam.term.clone(),
            };
            let entries = fam
                .estimates
                .iter()
                .enumerate()
                .map(|(i, m)| (m.label.clone(), EmmContext::new(o, Some(fam), m, i)))
                .collect();
            (key, entries)
        })
        .collect()
}

fn letters_of(fam: &Family, i: usize) -> Option<String> {
    fam.comparison
        .as_ref()
        .and_then(|c| c.letters.get(i).cloned())
}

/// `groups`: one factor's levels, or the primary factor's marginal means.
fn groups_context(o: &LinearOutcome, fam: Option<&Family>) -> BTreeMap<String, GroupContext> {
    let group = |m: &Estimate, i: usize| GroupContext {
        estimate: EmmContext::new(o, fam, m, i),
        sd: None,
        median: None,
        q1: None,
        q3: None,
    };
    if !o.is_one_factor() {
        let estimates = fam.map_or(&[][..], |f| &f.estimates[..]);
        return estimates
            .iter()
            .enumerate()
            .map(|(i, m)| (m.label.clone(), group(m, i)))
            .collect();
    }
    let level = |(i, l): (usize, &LevelSummary)| GroupContext {
        sd: Some(l.sd),
        median: Some(l.median),
        q1: Some(l.q1),
        q3: Some(l.q3),
        ..group(&l.estimate(), i)
    };
    o.levels
        .iter()
        .enumerate()
        .map(|(i, l)| (l.name.clone(), level((i, l))))
        .collect()
}

/// `pairs`: the primary family's contrasts, in table order.
fn pairs_context(o: &LinearOutcome, fam: Option<&Family>) -> Vec<PairContext> {
    let Some(fam) = fam else {
        return Vec::new();
    };
    let label = |i: usize| fam.estimates[i].label.clone();
    fam.comparison
        .iter()
        .flat_map(|c| c.contrasts.iter())
        .map(|p| PairContext {
            a: label(p.a),
            b: label(p.b),
            diff: p.estimate,
            se: p.se,
            lower: p.lower,
            upper: p.upper,
            p: p.p_adj,
            significant: p.significant,
            ratio: transform::ratio(o, p),
        })
        .collect()
}

fn block_context(o: &LinearOutcome) -> BlockContext {
    let primary = primary_term(o);
    let head = primary.map(|t| TermContext::new(o, t));
    let factor = primary.map(|t| t.name.clone());
    let family = factor.as_deref().and_then(|f| o.main_family(f));
    let alternatives = alternatives_context(o);
    let one_factor = o.is_one_factor();
    let residual = o.residual();
    let precision = family
        .and_then(|f| f.comparison.as_ref())
        .and_then(crate::outcome::precision::sed)
        .filter(|_| o.mixed.is_none());
    BlockContext {
        f: head.as_ref().and_then(|t| t.f),
        p: head.as_ref().and_then(|t| t.p),
        df1: head.as_ref().map(|t| t.df1),
        df2: head.as_ref().map(|t| t.df2),
        critical_f: head.as_ref().and_then(|t| t.critical_f),
        r_squared: o.r_squared,
        cv: o.cv_percent(),
        sed: precision.filter(|s| s.single()).map(|s| s.min),
        lsd: precision.filter(|s| s.single()).map(|s| s.lsd_min),
        sed_range: precision.map(|s| [s.min, s.max]),
        lsd_range: precision.map(|s| [s.lsd_min, s.lsd_max]),
        n: o.n,
        n_excluded: o.exclusions.len(),
        alpha: o.alpha,
        response: o.response.clone(),
        factor,
        method: o.method.key(),
        compare: o
            .families
            .iter()
            .find_map(|f| f.comparison.as_ref())
            .map(|c| c.method.key()),
        statement: block_statement(o, &alternatives),
        ss_type: o.ss_type_number(),
        welch: one_factor.then_some(alternatives.0),
        kruskal: one_factor.then_some(alternatives.1),
        checks: checks_context(&o.checks),
        terms: o
            .terms
            .iter()
            .map(|t| (t.name.clone(), TermContext::new(o, t)))
            .collect(),
        residual: SumsContext {
            df: Df::of(residual.df),
            ss: residual.ss,
            ms: Some(residual.ms),
        },
        total: SumsContext {
            df: Df::Whole(o.total_df),
            ss: o.total_ss,
            ms: None,
        },
        groups: groups_context(o, family),
        letters: family
            .map(|fam| {
                (0..fam.estimates.len())
                    .filter_map(|i| Some((fam.estimates[i].label.clone(), letters_of(fam, i)?)))
                    .collect()
            })
            .unwrap_or_default(),
        pairs: pairs_context(o, family),
        means: means_context(o),
        variance: o.mixed.as_ref().map(|m| {
            m.components
                .iter()
                .map(|c| (c.term.clone(), c.variance))
                .collect()
        }),
        sd: o.mixed.as_ref().map(|m| {
            m.components
                .iter()
                .map(|c| (c.term.clone(), c.sd))
                .collect()
        }),
        fit: o.mixed.as_ref().map(|m| FitContext {
            log_likelihood: m.fit.log_likelihood,
            aic: m.fit.aic,
            bic: m.fit.bic,
            iterations: m.fit.iterations,
        }),
        within: within_context(o),
        covariance: covariance::covariance_context(o),
        adjustment: covariates::covariates_context(o),
        planned: contrasts::contrasts_context(o),
        trend: trend::trend_context(o),
        transform: transform::transform_context(o),
        dose_response: dose::dose_context(o),
        friedman: friedman::friedman_context(o),
        equivalence: equivalence::equivalence_context(o),
    }
}
#[derive(Serialize)]
struct PowerContext {
    groups: usize,
    f: f64,
    alpha: f64,
    n: Option<usize>,
    n_total: Option<usize>,
    power: f64,
    target: Option<f64>,
}

fn power_context(r: &PowerResult) -> PowerContext {
    PowerContext {
        groups: r.groups,
        f: r.cohens_f,
        alpha: r.alpha,
        n: r.n_per_group,
        n_total: r.n_per_group.map(|n| n * r.groups),
        power: r.power,
        target: r.target,
    }
}

fn number(v: &Value, what: &str) -> Result<f64, minijinja::Error> {
    f64::try_from(v.clone()).map_err(|_| {
        minijinja::Error::new(
            ErrorKind::InvalidOperation,
            format!("`{what}` expects a number, got {}", v.kind()),
        )
    })
}

/// The `statement` filter: any test's statement, as the test's context
/// spells it ("F(2, 27) = 4.85, p = 0.016", "Welch's F(…)", "H(2) = …").
fn statement(v: Value) -> Result<String, minijinja::Error> {
    let text = v.get_attr("statement").unwrap_or_default();
    if let Some(text) = text.as_str() {
        return Ok(text.to_string());
    }
    let why = "`statement` prints a test: a block, a term (`id.terms.<term>`), `id.welch`, \
               `id.kruskal`, `id.friedman`, a check (`id.checks.levene`, `brown_forsythe`, `bartlett`, \
               `shapiro_wilk`), `id.slopes`, a covariate's `balance`, a contrast \
               (`id.contrasts.<name>`) or `id.contrast_set` (with two or more contrasts)";
    Err(minijinja::Error::new(ErrorKind::InvalidOperation, why))
}

/// The expression environment: strict undefined names, sheaf's filters, a
/// fuel budget per expression, and a probe that reports the fuel used.
fn environment(fuel_used: Arc<AtomicU64>) -> Environment<'static> {
    let mut env = Environment::new();
    env.set_undefined_behavior(UndefinedBehavior::Strict);
    env.set_fuel(Some(EXPRESSION_FUEL));
    env.add_filter("pvalue", |v: Value| -> Result<String, minijinja::Error> {
        Ok(p_value(number(&v, "pvalue")?))
    });
    env.add_filter("ptext", |v: Value| -> Result<String, minijinja::Error> {
        Ok(p_phrase(number(&v, "ptext")?))
    });
    env.add_filter(
        "fixed",
        |v: Value, d: u32| -> Result<String, minijinja::Error> {
            Ok(fixed(number(&v, "fixed")?, d.min(12)))
        },
    );
    env.add_filter(
        "sig",
        |v: Value, d: Option<u32>| -> Result<String, minijinja::Error> {
            Ok(significant(number(&v, "sig")?, d.unwrap_or(3).clamp(1, 15)))
        },
    );
    // `round` follows the report's one rounding rule (render::format), not
    // the template engine's binary rounding: 410.95 | round(1) is 411.0.
    env.add_filter(
        "round",
        |v: Value, d: Option<u32>| -> Result<Value, minijinja::Error> {
            let text = fixed(number(&v, "round")?, d.unwrap_or(0).min(12));
            Ok(Value::from(text.parse::<f64>().unwrap_or(f64::NAN)))
        },
    );
    env.add_filter("statement", statement);
    env.add_filter(
        FUEL_PROBE,
        move |state: &minijinja::State, v: Value| -> Value {
            let used = state.fuel_levels().map_or(0, |(used, _)| used);
            fuel_used.store(used, Ordering::Relaxed);
            v
        },
    );
    env
}

/// Adds `table("growth-anova")` and `figure("growth-box")`, which print
/// "Table 1", "Figure 2".
fn add_numbering(env: &mut Environment<'static>, numbers: &[(String, String)]) {
    for (name, prefix) in [("table", "Table"), ("figure", "Figure")] {
        let known: Vec<(String, String)> = numbers
            .iter()
            .filter(|(_, n)| n.starts_with(prefix))
            .cloned()
            .collect();
        env.add_function(
            name,
            move |id: String| -> Result<String, minijinja::Error> {
                match known.iter().find(|(k, _)| *k == id) {
                    Some((_, n)) => Ok(n.clone()),
                    None => {
                        let ids: Vec<&str> = known.iter().map(|(k, _)| k.as_str()).collect();
                        let near = crate::diag::nearest(&id, ids.iter().copied())
                            .map_or(String::new(), |n| format!("; did you mean `{n}`?"));
                        Err(minijinja::Error::new(
                            ErrorKind::InvalidOperation,
                            format!(
                                "no {name} with the id `{id}`{near} (known: {})",
                                ids.join(", ")
                            ),
                        ))
                    }
                }
            },
        );
    }
}

/// The blocks' results as the expressions see them: one entry per block id.
fn context(results: &[BlockResult]) -> Value {
    let linear = |o: &LinearOutcome| to_value(block_context(o));
    let ctx: BTreeMap<String, Value> = results
        .iter()
        .map(|r| match r {
            BlockResult::Linear(o) => (o.id.clone(), linear(o)),
            BlockResult::Power(p) => (p.id.clone(), to_value(power_context(p))),
            BlockResult::Traits(t) => (t.id.clone(), traits::traits_context(t, linear)),
        })
        .collect();
    to_value(&ctx)
}

/// Evaluates every expression; returns the text for each, in order. Each
/// expression is bounded in work (`EXPRESSION_FUEL`), all of them together
/// too (`DOCUMENT_FUEL`), and each result in length (`MAX_EXPRESSION_OUTPUT`).
pub fn evaluate(
    doc: &Document,
    results: &[BlockResult],
    expressions: &[Expression],
    numbers: &[(String, String)],
) -> Result<Vec<String>, Diagnostic> {
    let fuel_used = Arc::new(AtomicU64::new(0));
    let mut env = environment(fuel_used.clone());
    add_numbering(&mut env, numbers);
    let ctx_value = context(results);
    let mut remaining = DOCUMENT_FUEL;
    let mut out = Vec::with_capacity(expressions.len());
    for e in expressions {
        // Positions are found only for a message: counting columns for every
        // expression of a long line would be quadratic.
        let at = || doc.lines.line_col(&doc.source, e.range.start);
        let fail = |err: minijinja::Error| expression_error(doc, &ctx_value, results, e, at(), err);
        env.set_fuel(Some(EXPRESSION_FUEL.min(remaining)));
        // Compiled alone first, so a syntax error is reported in the author's
        // own expression; then with the probe that measures its work.
        env.compile_expression(&e.source).map_err(fail)?;
        let probed = format!("({}) | {FUEL_PROBE}", e.source);
        let expr = env.compile_expression(&probed).map_err(fail)?;
        let value = expr.eval(&ctx_value).map_err(fail)?;
        remaining = remaining.saturating_sub(fuel_used.load(Ordering::Relaxed));
        if value.is_undefined() {
            return Err(unknown_name_error(doc, &ctx_value, results, e, at()));
        }
        if value.is_none() {
            let (line, col) = at();
            return Err(doc
                .error_at(line, Some(col), format!("`{}` has no value", e.source))
                .hint("quote a number such as `{{ id.f }}` or `{{ id.p | pvalue }}`"));
        }
        let text = display(&value);
        if text.len() > MAX_EXPRESSION_OUTPUT {
            let (line, col) = at();
            return Err(doc
                .error_at(
                    line,
                    Some(col),
                    format!(
                        "`{}` gives {} bytes of text; an expression may give at most {MAX_EXPRESSION_OUTPUT}",
                        e.source,
                        text.len()
                    ),
                )
                .hint("quote single numbers or statements, not whole tables or lists"));
        }
        out.push(text);
    }
    Ok(out)
}

/// How a value reads in prose: whole numbers as integers (`25`, never
/// `25.0`), booleans as `yes`/`no`, everything else as the engine shows it.
pub(crate) fn display(v: &Value) -> String {
    match v.kind() {
        ValueKind::Bool => if v.is_true() { "yes" } else { "no" }.to_string(),
        ValueKind::Number => match f64::try_from(v.clone()) {
            // Below 2^53 every whole f64 is an exact integer.
            Ok(x) if x.is_finite() && x.fract() == 0.0 && x.abs() < 9.0e15 => {
                format!("{}", x as i64)
            }
            _ => v.to_string(),
        },
        _ => v.to_string(),
    }
}

fn expression_error(
    doc: &Document,
    ctx: &Value,
    results: &[BlockResult],
    e: &Expression,
    (line, col): (usize, usize),
    err: minijinja::Error,
) -> Diagnostic {
    if err.kind() == ErrorKind::UndefinedError {
        return unknown_name_error(doc, ctx, results, e, (line, col));
    }
    if err.kind() == ErrorKind::OutOfFuel {
        return doc
            .error_at(
                line,
                Some(col),
                format!(
                    "`{}` needs more work than prose expressions may do",
                    e.source
                ),
            )
            .hint(format!(
                "an expression may take {EXPRESSION_FUEL} steps and a document {DOCUMENT_FUEL}; \
                 quote results rather than computing with long lists or strings"
            ));
    }
    if let (ErrorKind::SyntaxError, Some(hint)) = (err.kind(), bracket_hint(&e.source)) {
        return doc
            .error_at(line, Some(col), format!("cannot read `{}`", e.source))
            .hint(hint);
    }
    let detail = err
        .detail()
        .map(str::to_string)
        .unwrap_or_else(|| err.to_string());
    doc.error_at(
        line,
        Some(col),
        format!("cannot evaluate `{}`: {detail}", e.source),
    )
    .hint(format!(
        "expressions look like `{{{{ id.f | round(2) }}}}`; sheaf's filters are {}",
        FILTERS.join(", ")
    ))
}

/// An expression that names a block or a quantity that does not exist.
/// The hint lists the names the block's namespace holds where the
/// expression's path stops, read from `ctx` itself.
fn unknown_name_error(
    doc: &Document,
    ctx: &Value,
    results: &[BlockResult],
    e: &Expression,
    (line, col): (usize, usize),
) -> Diagnostic {
    let ids: Vec<&str> = results.iter().map(|r| r.id()).collect();
    let identifier = |c: char| c.is_ascii_alphanumeric() || c == '_';
    let mut head: String = e.source.chars().take_while(|&c| identifier(c)).collect();
    if head.is_empty() {
        // `(a.x - a.y) | fixed(2)`: the first block the expression names.
        head = e
            .source
            .split(|c: char| !identifier(c))
            .find(|w| ids.contains(w))
            .unwrap_or_default()
            .to_string();
    }
    if head.is_empty() {
        let d = doc.error_at(
            line,
            Some(col),
            format!("`{}` names no analysis block", e.source),
        );
        return if ids.is_empty() {
            d.hint("this document has no analysis blocks to quote")
        } else {
            d.hint(format!(
                "the blocks in this document are {}",
                ids.join(", ")
            ))
        };
    }
    if !ids.contains(&head.as_str()) {
        return doc.not_a_block_id(&head, &ids, (line, col));
    }
    let d = doc.error_at(
        line,
        Some(col),
        format!(
            "`{}` names something the block `{head}` does not have",
            e.source
        ),
    );
    if let Some(hint) = bracket_hint(&e.source) {
        return d.hint(hint);
    }
    let block = ctx.get_attr(&head).unwrap_or_default();
    d.hint(names::hint(&block, &head, &e.source))
}

/// For a dotted name with a part holding spaces or symbols (a level such as
/// `peat moss` or `peat-perlite`), the same name in the bracket form.
fn bracket_hint(source: &str) -> Option<String> {
    let path = source.split('|').next()?.trim();
    let mut parts = path.split('.');
    let head = parts.next()?.trim();
    let rest: Vec<&str> = parts.map(str::trim).collect();
    let plain = |p: &str| p.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    let wordy = |p: &str| {
        !p.is_empty()
            && p.chars()
                .all(|c| c.is_alphanumeric() || matches!(c, '_' | '-' | ' ' | '+'))
    };
    if !plain(head)
        || rest.is_empty()
        || rest.iter().all(|p| plain(p))
        || !rest.iter().all(|p| wordy(p))
    {
        return None;
    }
    let mut fixed = head.to_string();
    for p in rest {
        if plain(p) {
            fixed.push('.');
            fixed.push_str(p);
        } else {
            fixed.push_str(&format!("[\"{p}\"]"));
        }
    }
    Some(format!(
        "a name with spaces or symbols goes in brackets and quotes: `{{{{ {fixed} }}}}`"
    ))
}
