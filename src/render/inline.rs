//! Prose expressions: `{{ growth.f | round(2) }}` evaluated by minijinja in
//! strict mode against the blocks' results, with sheaf's own filters.

use super::format::{f_statement, fixed, p_phrase, p_value, significant};
use super::to_value;
use crate::analysis::{AnovaResult, BlockResult, PowerResult};
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::markdown::Expression;
use minijinja::value::Value;
use minijinja::{Environment, ErrorKind, UndefinedBehavior};
use serde::Serialize;
use std::collections::BTreeMap;

/// Names of sheaf's own filters, for the README and error hints.
pub const FILTERS: [&str; 6] = ["pvalue", "ptext", "fixed", "sig", "ftest", "htest"];

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

#[derive(Serialize)]
struct TestContext {
    statistic: f64,
    df1: f64,
    df2: f64,
    f: f64,
    p: f64,
}

#[derive(Serialize)]
struct ChecksContext {
    brown_forsythe: Option<TestContext>,
    levene: Option<TestContext>,
    bartlett: Option<BTreeMap<&'static str, f64>>,
    shapiro_wilk: Option<BTreeMap<&'static str, f64>>,
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
    welch: Option<BTreeMap<&'static str, f64>>,
    kruskal: Option<BTreeMap<&'static str, f64>>,
    checks: ChecksContext,
    terms: BTreeMap<String, TermContext>,
    residual: BTreeMap<&'static str, f64>,
    groups: BTreeMap<String, GroupContext>,
    letters: BTreeMap<String, String>,
    pairs: Vec<PairContext>,
}

/// The assumption checks of a one-factor or factorial block.
fn checks_context(c: &crate::analysis::Checks) -> ChecksContext {
    let ftest = |t: &crate::stats::assumptions::FTest| TestContext {
        statistic: t.statistic,
        df1: t.df1,
        df2: t.df2,
        f: t.statistic,
        p: t.p,
    };
    ChecksContext {
        brown_forsythe: c.brown_forsythe.as_ref().map(ftest),
        levene: c.levene.as_ref().map(ftest),
        bartlett: c.bartlett.map(|b| {
            [("statistic", b.statistic), ("df", b.df), ("p", b.p)]
                .into_iter()
                .collect()
        }),
        shapiro_wilk: c.shapiro_wilk.ok().map(|s| {
            [("w", s.w), ("p", s.p), ("n", s.n as f64)]
                .into_iter()
                .collect()
        }),
        skewness: c.skewness,
        excess_kurtosis: c.excess_kurtosis,
        outliers: c.outliers.len(),
    }
}

fn block_context(r: &AnovaResult) -> BlockContext {
    let t = &r.table;
    let mut terms = BTreeMap::new();
    terms.insert(
        r.factor.clone(),
        TermContext {
            df: t.df_between,
            df1: t.df_between,
            df2: t.df_within,
            ss: t.ss_between,
            ms: t.ms_between,
            f: Some(t.f),
            p: Some(t.p),
            critical_f: Some(t.f_crit),
            not_tested: None,
            effect: r.effect.map(|e| EffectContext {
                eta_sq: e.eta_sq,
                partial_eta_sq: e.partial_eta_sq,
                omega_sq: e.omega_sq,
                cohens_f: e.cohens_f,
                ci_lower: e.partial_eta_sq_ci.0,
                ci_upper: e.partial_eta_sq_ci.1,
            }),
        },
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
        welch: r.welch.map(|w| {
            [("f", w.f), ("df1", w.df1), ("df2", w.df2), ("p", w.p)]
                .into_iter()
                .collect()
        }),
        kruskal: r
            .kruskal
            .as_ref()
            .map(|k| [("h", k.h), ("df", k.df), ("p", k.p)].into_iter().collect()),
        checks: checks_context(&r.checks),
        terms,
        residual: [
            ("df", t.df_within as f64),
            ("ss", t.ss_within),
            ("ms", t.ms_within),
        ]
        .into_iter()
        .collect(),
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
    checks: ChecksContext,
    terms: BTreeMap<String, TermContext>,
    residual: BTreeMap<&'static str, f64>,
    total: BTreeMap<&'static str, f64>,
    /// means.<factor>.<level> for main-effect families; means.cells.<label>.
    means: BTreeMap<String, BTreeMap<String, EmmContext>>,
}

fn factorial_context(r: &crate::analysis::factorial::FactorialResult) -> FactorialContext {
    let terms = r
        .terms
        .iter()
        .map(|t| {
            (
                t.name.clone(),
                TermContext {
                    df: t.df,
                    df1: t.df,
                    df2: r.residual_df,
                    ss: t.ss,
                    ms: t.ms,
                    f: (!t.is_block).then_some(t.f),
                    p: (!t.is_block).then_some(t.p),
                    critical_f: (!t.is_block).then_some(t.critical_f),
                    not_tested: t
                        .is_block
                        .then_some("a blocking factor is reported but not tested"),
                    effect: (!t.is_block).then(|| EffectContext {
                        eta_sq: t.partial_eta_sq,
                        partial_eta_sq: t.partial_eta_sq,
                        omega_sq: t.partial_omega_sq,
                        cohens_f: (t.partial_eta_sq / (1.0 - t.partial_eta_sq)).sqrt(),
                        ci_lower: t.partial_eta_sq_ci.0,
                        ci_upper: t.partial_eta_sq_ci.1,
                    }),
                },
            )
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
        checks: checks_context(&r.checks),
        terms,
        residual: [
            ("df", r.residual_df as f64),
            ("ss", r.residual_ss),
            ("ms", r.mse),
        ]
        .into_iter()
        .collect(),
        total: [("df", (r.n - 1) as f64), ("ss", r.total_ss)]
            .into_iter()
            .collect(),
        means,
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

fn attr(v: &Value, name: &str) -> Result<f64, minijinja::Error> {
    let a = v.get_attr(name)?;
    if a.is_undefined() {
        return Err(minijinja::Error::new(
            ErrorKind::InvalidOperation,
            format!(
                "`ftest` needs a block or a term (with df1, df2, f and p); `{name}` is missing"
            ),
        ));
    }
    number(&a, "ftest")
}

/// The expression environment: strict undefined names and sheaf's filters.
fn environment() -> Environment<'static> {
    let mut env = Environment::new();
    env.set_undefined_behavior(UndefinedBehavior::Strict);
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
    env.add_filter("htest", |v: Value| -> Result<String, minijinja::Error> {
        let (h, df, p) = (attr(&v, "h")?, attr(&v, "df")?, attr(&v, "p")?);
        Ok(format!(
            "H({}) = {}, {}",
            super::format::df_text(df),
            fixed(h, 2),
            p_phrase(p)
        ))
    });
    env.add_filter("ftest", |v: Value| -> Result<String, minijinja::Error> {
        Ok(f_statement(
            attr(&v, "df1")?,
            attr(&v, "df2")?,
            attr(&v, "f")?,
            attr(&v, "p")?,
        ))
    });
    env
}

/// Evaluates every expression; returns the text for each, in order.
pub fn evaluate(
    doc: &Document,
    results: &[BlockResult],
    expressions: &[Expression],
    numbers: &[(String, String)],
) -> Result<Vec<String>, Diagnostic> {
    let mut env = environment();
    // `table("growth-anova")` and `figure("growth-box")` print "Table 1", "Figure 2".
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
    let ctx: BTreeMap<String, Value> = results
        .iter()
        .map(|r| match r {
            BlockResult::Anova(a) => (a.id.clone(), to_value(block_context(a))),
            BlockResult::Factorial(f) => (f.id.clone(), to_value(factorial_context(f))),
            BlockResult::Power(p) => (p.id.clone(), to_value(power_context(p))),
        })
        .collect();
    let ctx_value = to_value(&ctx);
    let mut out = Vec::with_capacity(expressions.len());
    for e in expressions {
        let (line, col) = doc.lines.line_col(&doc.source, e.range.start);
        let fail = |err: minijinja::Error| expression_error(doc, results, e, line, col, err);
        let expr = env.compile_expression(&e.source).map_err(fail)?;
        let value = expr.eval(&ctx_value).map_err(fail)?;
        if value.is_undefined() {
            return Err(unknown_name_error(doc, results, e, line, col));
        }
        if value.is_none() {
            return Err(doc
                .error_at(line, Some(col), format!("`{}` has no value", e.source))
                .hint("quote a number such as `{{ id.f }}` or `{{ id.p | pvalue }}`"));
        }
        out.push(display(&value));
    }
    Ok(out)
}

/// Floats print in shortest round-trip form, everything else as minijinja shows it.
fn display(v: &Value) -> String {
    v.to_string()
}

fn expression_error(
    doc: &Document,
    results: &[BlockResult],
    e: &Expression,
    line: usize,
    col: usize,
    err: minijinja::Error,
) -> Diagnostic {
    if err.kind() == ErrorKind::UndefinedError {
        return unknown_name_error(doc, results, e, line, col);
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
    line: usize,
    col: usize,
) -> Diagnostic {
    let ids: Vec<&str> = results.iter().map(|r| r.id()).collect();
    let head: String = e
        .source
        .chars()
        .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
        .collect();
    if !head.is_empty() && !ids.contains(&head.as_str()) {
        let d = doc.error_at(
            line,
            Some(col),
            format!("`{head}` is not the id of an analysis block"),
        );
        return match crate::diag::nearest(&head, ids.iter().copied()) {
            Some(n) => d.hint(format!("did you mean `{n}`?")),
            None if ids.is_empty() => d.hint("this document has no analysis blocks to quote"),
            None => d.hint(format!(
                "the blocks in this document are {}",
                ids.join(", ")
            )),
        };
    }
    doc.error_at(line, Some(col), format!("`{}` names something the block `{head}` does not have", e.source)).hint(
        "a block has f, p, df1, df2, critical_f, r_squared, n, n_excluded, alpha, response, factor, method, \
         terms.<factor>.<f|p|df|df1|df2|ss|ms|critical_f>, residual.<df|ss|ms>, \
         groups.<level>.<n|mean|sd|se|ci_lower|ci_upper|letters>, letters.<level> and pairs",
    )
}
