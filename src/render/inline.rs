//! Prose expressions: `{{ growth.f | round(2) }}` evaluated by minijinja in
//! strict mode against the blocks' results, with sheaf's own filters.

use super::to_value;
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::markdown::Expression;
use crate::format::{df_text, f_statement, fixed, p_phrase, p_value, significant};
use crate::outcome::{AnovaResult, BlockResult, PowerResult};
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

#[derive(Serialize)]
struct TermContext {
    df: usize,
    df1: usize,
    df2: usize,
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
}

impl TermContext {
    #[allow(clippy::too_many_arguments)]
    fn new(
        (df, df2): (usize, usize),
        ss: f64,
        ms: f64,
        f: f64,
        p: f64,
        critical_f: f64,
        effect: Option<EffectContext>,
    ) -> Self {
        TermContext {
            df,
            df1: df,
            df2,
            ss,
            ms,
            f: Some(f),
            p: Some(p),
            critical_f: Some(critical_f),
            not_tested: None,
            effect,
            statement: Some(f_statement(df as f64, df2 as f64, f, p)),
        }
    }

    /// A blocking factor: its sums of squares, no test (blocks are not
    /// randomized, so their F is not a valid test).
    fn untested(df: usize, df2: usize, ss: f64, ms: f64) -> Self {
        TermContext {
            df,
            df1: df,
            df2,
            ss,
            ms,
            f: None,
            p: None,
            critical_f: None,
            not_tested: Some("a blocking factor is reported but not tested"),
            effect: None,
            statement: None,
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
struct WelchContext {
    f: f64,
    df1: f64,
    df2: f64,
    p: f64,
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
    df: usize,
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

#[derive(Serialize)]
struct GroupContext {
    n: usize,
    mean: f64,
    sd: f64,
    se: f64,
    ci_lower: f64,
    ci_upper: f64,
    median: f64,
    q1: f64,
    q3: f64,
    letters: Option<String>,
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
}

#[derive(Serialize)]
struct BlockContext {
    f: f64,
    p: f64,
    df1: usize,
    df2: usize,
    critical_f: f64,
    r_squared: f64,
    n: usize,
    n_excluded: usize,
    alpha: f64,
    response: String,
    factor: String,
    method: &'static str,
    compare: Option<&'static str>,
    /// The declared omnibus test as a sentence fragment.
    statement: String,
    welch: Option<WelchContext>,
    kruskal: Option<KruskalContext>,
    checks: ChecksContext,
    terms: BTreeMap<String, TermContext>,
    residual: SumsContext,
    groups: BTreeMap<String, GroupContext>,
    letters: BTreeMap<String, String>,
    pairs: Vec<PairContext>,
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

fn block_context(r: &AnovaResult) -> BlockContext {
    let t = &r.table;
    let mut terms = BTreeMap::new();
    terms.insert(
        r.factor.clone(),
        TermContext::new(
            (t.df_between, t.df_within),
            t.ss_between,
            t.ms_between,
            t.f,
            t.p,
            t.f_crit,
            r.effect.map(|e| EffectContext {
                eta_sq: e.eta_sq,
                partial_eta_sq: e.partial_eta_sq,
                omega_sq: e.omega_sq,
                cohens_f: e.cohens_f,
                ci_lower: e.partial_eta_sq_ci.0,
                ci_upper: e.partial_eta_sq_ci.1,
            }),
        ),
    );
    let letters_of = |i: usize| {
        r.comparison
            .as_ref()
            .and_then(|c| c.letters.get(i).cloned())
    };
    BlockContext {
        f: t.f,
        p: t.p,
        df1: t.df_between,
        df2: t.df_within,
        critical_f: t.f_crit,
        r_squared: t.r_squared,
        n: t.n,
        n_excluded: r.exclusions.len(),
        alpha: r.alpha,
        response: r.response.clone(),
        factor: r.factor.clone(),
        method: r.method.key(),
        compare: r.comparison.as_ref().map(|c| c.method.key()),
        statement: super::view::omnibus_statement(r),
        welch: r.welch.map(|w| WelchContext {
            f: w.f,
            df1: w.df1,
            df2: w.df2,
            p: w.p,
            statement: format!("Welch's {}", f_statement(w.df1, w.df2, w.f, w.p)),
        }),
        kruskal: r.kruskal.as_ref().map(|k| KruskalContext {
            h: k.h,
            df: k.df,
            p: k.p,
            statement: format!(
                "H({}) = {}, {}",
                df_text(k.df),
                fixed(k.h, 2),
                p_phrase(k.p)
            ),
        }),
        checks: checks_context(&r.checks),
        terms,
        residual: SumsContext {
            df: t.df_within,
            ss: t.ss_within,
            ms: Some(t.ms_within),
        },
        groups: r
            .levels
            .iter()
            .enumerate()
            .map(|(i, l)| {
                let g = GroupContext {
                    n: l.n,
                    mean: l.mean,
                    sd: l.sd,
                    se: l.se,
                    ci_lower: l.ci_lower,
                    ci_upper: l.ci_upper,
                    median: l.median,
                    q1: l.q1,
                    q3: l.q3,
                    letters: letters_of(i),
                };
                (l.name.clone(), g)
            })
            .collect(),
        letters: r
            .levels
            .iter()
            .enumerate()
            .filter_map(|(i, l)| letters_of(i).map(|s| (l.name.clone(), s)))
            .collect(),
        pairs: r
            .comparison
            .iter()
            .flat_map(|c| c.pairs.iter())
            .map(|p| PairContext {
                a: r.levels[p.a].name.clone(),
                b: r.levels[p.b].name.clone(),
                diff: p.diff,
                se: p.se,
                lower: p.lower,
                upper: p.upper,
                p: p.p_adj,
                significant: p.significant,
            })
            .collect(),
    }
}

#[derive(Serialize)]
struct EmmContext {
    n: usize,
    mean: f64,
    se: f64,
    ci_lower: f64,
    ci_upper: f64,
    letters: String,
}

#[derive(Serialize)]
struct FactorialContext {
    n: usize,
    n_excluded: usize,
    alpha: f64,
    response: String,
    ss_type: u8,
    r_squared: f64,
    terms: BTreeMap<String, TermContext>,
    residual: SumsContext,
    total: SumsContext,
    /// means.<factor>.<level> for main-effect families; means.cells.<label>.
    means: BTreeMap<String, BTreeMap<String, EmmContext>>,
    checks: ChecksContext,
}

fn factorial_context(r: &crate::outcome::FactorialResult) -> FactorialContext {
    let terms = r
        .terms
        .iter()
        .map(|t| {
            let context = if t.is_block {
                TermContext::untested(t.df, r.residual_df, t.ss, t.ms)
            } else {
                TermContext::new(
                    (t.df, r.residual_df),
                    t.ss,
                    t.ms,
                    t.f,
                    t.p,
                    t.critical_f,
                    Some(EffectContext {
                        eta_sq: t.partial_eta_sq,
                        partial_eta_sq: t.partial_eta_sq,
                        omega_sq: t.partial_omega_sq,
                        cohens_f: (t.partial_eta_sq / (1.0 - t.partial_eta_sq)).sqrt(),
                        ci_lower: t.partial_eta_sq_ci.0,
                        ci_upper: t.partial_eta_sq_ci.1,
                    }),
                )
            };
            (t.name.clone(), context)
        })
        .collect();
    let mut means = BTreeMap::new();
    for fam in &r.families {
        let key = match &fam.within {
            Some(w) => format!("{}@{w}", fam.term),
            None => fam.term.clone(),
        };
        let entries = fam
            .means
            .iter()
            .enumerate()
            .map(|(i, m)| {
                let e = EmmContext {
                    n: m.n,
                    mean: m.mean,
                    se: m.se,
                    ci_lower: m.ci_lower,
                    ci_upper: m.ci_upper,
                    letters: fam.comparison.letters[i].clone(),
                };
                (m.label.clone(), e)
            })
            .collect();
        means.insert(key, entries);
    }
    FactorialContext {
        n: r.n,
        n_excluded: r.exclusions.len(),
        alpha: r.alpha,
        response: r.response.clone(),
        ss_type: match r.ss_type {
            crate::stats::linear::SsType::I => 1,
            crate::stats::linear::SsType::II => 2,
            crate::stats::linear::SsType::III => 3,
        },
        r_squared: r.r_squared,
        terms,
        residual: SumsContext {
            df: r.residual_df,
            ss: r.residual_ss,
            ms: Some(r.mse),
        },
        total: SumsContext {
            df: r.n.saturating_sub(1),
            ss: r.total_ss,
            ms: None,
        },
        means,
        checks: checks_context(&r.checks),
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
    let terms = v.get_attr("terms").unwrap_or_default();
    let why = if !terms.is_undefined() && !terms.is_none() {
        "a factorial block has one test per term: write `id.terms.<term> | statement`"
    } else {
        "`statement` prints a test: a one-factor block, a term (`id.terms.<term>`), \
         `id.welch`, `id.kruskal` or a check (`id.checks.levene`, `brown_forsythe`, \
         `bartlett`, `shapiro_wilk`)"
    };
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
    let ctx: BTreeMap<String, Value> = results
        .iter()
        .map(|r| match r {
            BlockResult::Anova(a) => (a.id.clone(), to_value(block_context(a))),
            BlockResult::Factorial(f) => (f.id.clone(), to_value(factorial_context(f))),
            BlockResult::Power(p) => (p.id.clone(), to_value(power_context(p))),
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
        let fail = |err: minijinja::Error| expression_error(doc, results, e, at(), err);
        env.set_fuel(Some(EXPRESSION_FUEL.min(remaining)));
        // Compiled alone first, so a syntax error is reported in the author's
        // own expression; then with the probe that measures its work.
        env.compile_expression(&e.source).map_err(fail)?;
        let probed = format!("({}) | {FUEL_PROBE}", e.source);
        let expr = env.compile_expression(&probed).map_err(fail)?;
        let value = expr.eval(&ctx_value).map_err(fail)?;
        remaining = remaining.saturating_sub(fuel_used.load(Ordering::Relaxed));
        if value.is_undefined() {
            return Err(unknown_name_error(doc, results, e, at()));
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
    results: &[BlockResult],
    e: &Expression,
    (line, col): (usize, usize),
    err: minijinja::Error,
) -> Diagnostic {
    if err.kind() == ErrorKind::UndefinedError {
        return unknown_name_error(doc, results, e, (line, col));
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
fn unknown_name_error(
    doc: &Document,
    results: &[BlockResult],
    e: &Expression,
    (line, col): (usize, usize),
) -> Diagnostic {
    let ids: Vec<&str> = results.iter().map(|r| r.id()).collect();
    let head: String = e
        .source
        .chars()
        .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
        .collect();
    if !head.is_empty() && !ids.contains(&head.as_str()) {
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
    d.hint(
        "a block has f, p, df1, df2, critical_f, r_squared, n, n_excluded, alpha, response, factor, method, \
         statement, terms.<factor>.<f|p|df|df1|df2|ss|ms|critical_f|statement>, residual.<df|ss|ms>, \
         groups.<level>.<n|mean|sd|se|ci_lower|ci_upper|letters>, letters.<level> and pairs",
    )
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
