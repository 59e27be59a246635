//! The dose-response tests of a one-factor block (linear-extensions
//! specification E): the doses put in order, each procedure run against
//! the control in the stated direction, and the NOEC and LOEC read from
//! its decisions. Dunnett's comparisons, when the block asks for them, are
//! read for the NOEC beside the others.

use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::block::AnovaSpec;
use crate::doc::block_dose::{DoseProcedure, DoseSpec};
use crate::outcome::dose::{
    DoseDetail, DoseLevel, DoseMethod, DoseStep, DoseTest, PSource, Reversal,
};
use crate::outcome::linear::{Comparison, LevelSummary};
use crate::stats::dist::t_cdf;
use crate::stats::dose::Finding;

/// The most doses the tests accept. Williams' critical values for unequal
/// replication cost about k² recursion steps per evaluation: 60 doses take
/// 3 s and 150 doses 50 s in a debug build, so the limit keeps a build to
/// seconds; test guidelines use five to eight doses.
const MAX_DOSES: usize = 50;

/// What the tests read from the one-factor analysis.
pub(crate) struct DoseInput<'a> {
    pub factor: &'a str,
    pub levels: &'a [LevelSummary],
    /// Each level's observations (offsets from a common origin, which the
    /// rank tests do not see); `None` for summary input.
    pub observations: Option<&'a [Vec<f64>]>,
    pub mse: f64,
    pub df: f64,
    /// Dunnett's comparisons with the control, when the block asked for them.
    pub dunnett: Option<&'a Comparison>,
}

/// The control and the doses in increasing order, as level indexes.
struct Order {
    control: usize,
    doses: Vec<(usize, f64)>,
    from_names: bool,
}

fn error(doc: &Document, d: &DoseSpec, message: String, hint: &str) -> Diagnostic {
    doc.error_at(d.line, Some(d.column), message)
        .hint(hint.to_string())
}

/// Each level's dose: from `doses`, or read from the level names.
fn order(
    doc: &Document,
    spec: &AnovaSpec,
    d: &DoseSpec,
    levels: &[LevelSummary],
) -> Result<Order, Diagnostic> {
    let names: Vec<&str> = levels.iter().map(|l| l.name.as_str()).collect();
    let Some(c) = spec.control.as_ref() else {
        return Err(error(
            doc,
            d,
            "dose-response tests need `control`".into(),
            "add `control: <level>`",
        ));
    };
    let Some(control) = names.iter().position(|n| *n == c.value) else {
        let e = doc.error_at(
            c.line,
            Some(c.column),
            format!("the control `{}` is not a level with data", c.value),
        );
        return Err(e.hint(format!("the levels are {}", names.join(", "))));
    };
    let mut doses = Vec::new();
    for (i, name) in names.iter().enumerate().filter(|(i, _)| *i != control) {
        let dose = match &d.doses {
            Some(given) => given.value.iter().find(|(l, _)| l == name).map(|g| g.1).ok_or_else(|| {
                doc.error_at(given.line, Some(given.column), format!("`doses` gives no dose for the level `{name}`"))
                    .hint("give every level but the control its dose")
            })?,
            None => crate::data::decimal::parse_number(name).map(|n| n.to_f64()).ok_or_else(|| {
                error(
                    doc,
                    d,
                    format!("the level `{name}` is not a number, so the tests need its dose"),
                    "give each level but the control its dose: `doses: low 10, mid 30, high 100`",
                )
            })?,
        };
        doses.push((i, dose));
    }
    if let Some(given) = &d.doses
        && let Some((l, _)) = given
            .value
            .iter()
            .find(|(l, _)| !names.contains(&l.as_str()) || *l == c.value)
    {
        let why = match *l == c.value {
            true => format!("`{l}` is the control, which needs no dose"),
            false => format!("`{l}` is not a level with data"),
        };
        return Err(doc
            .error_at(given.line, Some(given.column), why)
            .hint(format!("the levels are {}", names.join(", "))));
    }
    doses.sort_by(|a, b| a.1.total_cmp(&b.1));
    if let Some(w) = doses.windows(2).find(|w| w[0].1 == w[1].1) {
        return Err(error(
            doc,
            d,
            format!(
                "the levels `{}` and `{}` have the same dose",
                names[w[0].0], names[w[1].0]
            ),
            "each dose must be a distinct value",
        ));
    }
    if doses.len() > MAX_DOSES {
        return Err(error(
            doc,
            d,
            format!(
                "the factor has {} doses besides the control; dose-response tests are offered for up to {MAX_DOSES}",
                doses.len()
            ),
            "a dose-response factor has a handful of tested doses; check that `model` names the dose factor",
        ));
    }
    if doses.is_empty() {
        return Err(error(
            doc,
            d,
            "there is no dose besides the control".into(),
            "the factor needs a control and at least one dose",
        ));
    }
    Ok(Order {
        control,
        doses,
        from_names: d.doses.is_none(),
    })
}

/// What every procedure reads: the request, the doses in order, the data
/// and α.
struct Run<'a> {
    doc: &'a Document,
    d: &'a DoseSpec,
    order: &'a Order,
    input: &'a DoseInput<'a>,
    alpha: f64,
}

/// The block's dose-response tests, or `None` when it asks for none.
pub(crate) fn dose_response(
    doc: &Document,
    spec: &AnovaSpec,
    alpha: f64,
    input: &DoseInput<'_>,
) -> Result<Option<DoseDetail>, Diagnostic> {
    let Some(d) = &spec.dose else {
        return Ok(None);
    };
    let order = order(doc, spec, d, input.levels)?;
    let run = Run {
        doc,
        d,
        order: &order,
        input,
        alpha,
    };
    let lv = input.levels;
    let mut tests = Vec::new();
    for p in &d.procedures {
        tests.push(match p {
            DoseProcedure::Williams => run.williams()?,
            DoseProcedure::Jonckheere | DoseProcedure::Ordinal => run.step_down(*p)?,
            DoseProcedure::Steel => run.steel()?,
        });
    }
    if let Some(c) = input.dunnett {
        tests.push(dunnett(c, &order));
    }
    // Report order: Williams, the trend tests, then the many-to-one tests.
    tests.sort_by_key(|t| t.method as usize);
    Ok(Some(DoseDetail {
        factor: input.factor.to_string(),
        control: lv[order.control].name.clone(),
        control_n: lv[order.control].n,
        control_mean: lv[order.control].mean,
        direction: d.direction,
        alpha,
        doses_from: if order.from_names { "names" } else { "given" }.into(),
        doses: order
            .doses
            .iter()
            .map(|&(i, dose)| DoseLevel {
                level: lv[i].name.clone(),
                dose,
                n: lv[i].n,
                mean: lv[i].mean,
            })
            .collect(),
        tests,
        reversals: reversals(d, &order, input, alpha),
        mse: input.mse,
        df: input.df,
    }))
}

/// Doses whose mean moved against the tested direction, one-sided p < α.
fn reversals(d: &DoseSpec, order: &Order, input: &DoseInput<'_>, alpha: f64) -> Vec<Reversal> {
    let c = &input.levels[order.control];
    order
        .doses
        .iter()
        .enumerate()
        .filter_map(|(k, &(i, _))| {
            let l = &input.levels[i];
            let t = (l.mean - c.mean) / (input.mse * (1.0 / l.n as f64 + 1.0 / c.n as f64)).sqrt();
            let p = t_cdf(d.direction.sign() * t, input.df);
            (p < alpha).then_some(Reversal {
                dose: k,
                t,
                df: input.df,
                p,
            })
        })
        .collect()
}

fn loec(significant: &[bool], steps_down: bool) -> Option<usize> {
    let finding = match steps_down {
        true => Finding::step_down(significant),
        false => Finding::many_to_one(significant),
    };
    match finding {
        Finding::NoEffect => None,
        Finding::Effect { loec, .. } => Some(loec),
    }
}

fn test(method: DoseMethod, steps: Vec<DoseStep>, approximation: Option<String>) -> DoseTest {
    let significant: Vec<bool> = steps.iter().map(|s| s.tested && s.significant).collect();
    DoseTest {
        loec: loec(&significant, method.steps_down()),
        method,
        steps,
        approximation,
        unequal_replication: false,
    }
}

impl<'a> Run<'a> {
    fn williams(&self) -> Result<DoseTest, Diagnostic> {
        let Run {
            doc,
            d,
            order,
            input,
            alpha,
        } = *self;
        use crate::stats::williams::{WilliamsInput, williams};
        let lv = input.levels;
        let means: Vec<f64> = order.doses.iter().map(|&(i, _)| lv[i].mean).collect();
        let ns: Vec<usize> = order.doses.iter().map(|&(i, _)| lv[i].n).collect();
        let w = williams(&WilliamsInput {
            control_mean: lv[order.control].mean,
            control_n: lv[order.control].n,
            dose_means: &means,
            dose_ns: &ns,
            mse: input.mse,
            df: input.df,
            direction: d.direction,
            alpha,
        })
        .map_err(|e| {
            error(
                doc,
                d,
                format!("Williams' test cannot be computed: {e}"),
                "check the replication of the control and the doses",
            )
        })?;
        let steps = w
            .steps
            .iter()
            .enumerate()
            .map(|(k, s)| DoseStep {
                dose: k,
                statistic: s.statistic,
                z: None,
                restricted_mean: Some(s.restricted_mean),
                critical: Some(s.critical),
                df: Some(input.df),
                p: s.p,
                p_source: PSource::T,
                tested: s.tested,
                significant: s.significant,
            })
            .collect();
        let mut t = test(DoseMethod::Williams, steps, None);
        t.unequal_replication = w.unequal_replication;
        Ok(t)
    }

    /// The observations in test order: the control, then the doses upwards.
    fn groups(&self) -> Result<Vec<&'a [f64]>, Diagnostic> {
        let Run {
            doc,
            d,
            order,
            input,
            ..
        } = *self;
        let Some(obs) = input.observations else {
            return Err(error(
                doc,
                d,
                "this procedure needs the observations, not summaries".into(),
                "give the raw data, or use `noec: williams`",
            ));
        };
        Ok(std::iter::once(order.control)
            .chain(order.doses.iter().map(|&(i, _)| i))
            .map(|i| obs[i].as_slice())
            .collect())
    }

    fn step_down(&self, p: DoseProcedure) -> Result<DoseTest, Diagnostic> {
        let Run { doc, d, alpha, .. } = *self;
        use crate::stats::step_down::{TrendTest, step_down};
        let groups = self.groups()?;
        let (kind, method) = match p {
            DoseProcedure::Jonckheere => (TrendTest::Jonckheere, DoseMethod::Jonckheere),
            _ => (TrendTest::OrdinalContrast, DoseMethod::Ordinal),
        };
        let s = step_down(&groups, kind, d.direction, alpha).ok_or_else(|| {
            error(
                doc,
                d,
                format!("the {} cannot be computed on these data", method.title()),
                "every group needs observations, and some must differ",
            )
        })?;
        let approximate =
            s.steps.iter().any(|x| x.tested && !x.exact) && method == DoseMethod::Jonckheere;
        let steps = s
            .steps
            .iter()
            .enumerate()
            .map(|(k, x)| DoseStep {
                dose: k,
                statistic: x.statistic,
                z: x.z,
                restricted_mean: None,
                critical: None,
                df: x.df,
                p: x.p,
                p_source: match (method, x.exact) {
                    (DoseMethod::Ordinal, _) => PSource::T,
                    (_, true) => PSource::Exact,
                    (_, false) => PSource::Normal,
                },
                tested: x.tested,
                significant: x.significant,
            })
            .collect();
        let note = approximate.then(|| "Where observations tie between groups the exact distribution does not apply: those p-values use the normal approximation with the tie-corrected variance.".to_string());
        Ok(test(method, steps, note))
    }

    fn steel(&self) -> Result<DoseTest, Diagnostic> {
        let Run { doc, d, alpha, .. } = *self;
        let groups = self.groups()?;
        let s = crate::stats::steel::steel(groups[0], &groups[1..], d.direction, alpha)
            .ok_or_else(|| {
                error(
                    doc,
                    d,
                    "Steel's test cannot be computed on these data".into(),
                    "every group needs observations",
                )
            })?;
        let steps = s
            .pairs
            .iter()
            .enumerate()
            .map(|(k, x)| {
                let (p, source) = match x.p_exact {
                    Some(p) => (p, PSource::Exact),
                    None => (x.p_normal, PSource::Normal),
                };
                DoseStep {
                    dose: k,
                    statistic: x.u,
                    z: Some(x.z),
                    restricted_mean: None,
                    critical: None,
                    df: None,
                    p,
                    p_source: source,
                    tested: true,
                    significant: p < alpha,
                }
            })
            .collect();
        // Tied observations between a dose and the control rule the exact
        // distribution out; a dose beyond the work limit is named by the table.
        let tied = groups[1..]
            .iter()
            .any(|g| g.iter().any(|x| groups[0].contains(x)));
        let note = tied.then(|| "Observations tie between a dose and the control, so the exact distribution (for continuous data) does not apply.".to_string());
        Ok(test(DoseMethod::Steel, steps, note))
    }
}

/// Dunnett's one-sided comparisons, read dose by dose.
fn dunnett(c: &Comparison, order: &Order) -> DoseTest {
    let steps = order
        .doses
        .iter()
        .enumerate()
        .filter_map(|(k, &(i, _))| {
            let x = c
                .contrasts
                .iter()
                .find(|x| x.a == i && x.b == order.control)?;
            Some(DoseStep {
                dose: k,
                statistic: x.statistic,
                z: None,
                restricted_mean: None,
                critical: c.critical.is_finite().then_some(c.critical),
                df: Some(x.df),
                p: x.p_adj,
                p_source: PSource::T,
                tested: true,
                significant: x.significant,
            })
        })
        .collect();
    test(DoseMethod::Dunnett, steps, None)
}
