//! An `anova` block's keys checked against each other and against its model,
//! once each has been read: the draft becomes the block's specification.

use super::block::{
    AnovaSpec, CheckSet, DdfMethod, Defaults, Located, Omnibus, Order, Show, SpecError, bad, list,
};
use super::block_keys::AnovaDraft;
use super::block_rows::default_summary_columns;
use super::formula::Formula;
use super::keyvalue::Entry;
use crate::data::DEFAULT_MISSING;
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;

/// A required key that is missing, pointed at the block's opening fence.
fn missing(fence_line: usize, key: &str, example: &str) -> SpecError {
    SpecError {
        line: fence_line,
        column: 1,
        message: format!("this anova block has no `{key}`"),
        hint: Some(format!("add a line such as `{example}`")),
    }
}

/// The comparison procedure: as written (if it fits the omnibus test), or the
/// test's own, or the document's default. With `method: ranks` a `block:`
/// factor makes the test Friedman's, whose procedures compare ranks within
/// blocks; without one it is Kruskal-Wallis, with Dunn's.
fn compare_of(
    d: &AnovaDraft,
    method: Omnibus,
    defaults: Defaults,
) -> Result<Option<Method>, SpecError> {
    let blocked = d.blocks.is_some();
    let Some((e, chosen)) = &d.compare else {
        return Ok(match method {
            Omnibus::Welch => Some(Method::GamesHowell),
            Omnibus::Ranks if blocked => Some(Method::Nemenyi),
            Omnibus::Ranks => Some(Method::Dunn),
            Omnibus::Anova => defaults.compare,
        });
    };
    let fits = match (method, chosen) {
        (_, None) => true,
        (Omnibus::Welch, Some(m)) => *m == Method::GamesHowell,
        (Omnibus::Ranks, Some(m)) if blocked => {
            matches!(m, Method::Nemenyi | Method::ConoverFriedman)
        }
        (Omnibus::Ranks, Some(m)) => *m == Method::Dunn,
        (Omnibus::Anova, Some(m)) => !matches!(
            m,
            Method::GamesHowell | Method::Dunn | Method::Nemenyi | Method::ConoverFriedman
        ),
    };
    if fits {
        return Ok(*chosen);
    }
    // Each omnibus test has the comparison procedures that share its assumptions.
    let hint = match method {
        Omnibus::Welch => "with `method: welch` use `compare: games-howell` (or none)",
        Omnibus::Ranks if blocked => {
            "with `method: ranks` and a `block:` factor (Friedman's test) use `compare: nemenyi` or `compare: conover` (or none); Dunn goes with Kruskal-Wallis, in one-factor models"
        }
        Omnibus::Ranks if matches!(chosen, Some(Method::Nemenyi | Method::ConoverFriedman)) => {
            "Nemenyi and Conover compare ranks within complete blocks: add `block:` and the block to the model (Friedman's test), or use `compare: dunn`"
        }
        Omnibus::Ranks => "with `method: ranks` use `compare: dunn` (or none)",
        Omnibus::Anova => {
            "Games-Howell goes with `method: welch`, Dunn with `method: ranks`, Nemenyi and Conover with `method: ranks` and a `block:` factor"
        }
    };
    Err(bad(
        e,
        format!(
            "`compare: {}` does not fit `method: {}`",
            e.value,
            method.key()
        ),
        hint,
    ))
}

/// Keys that apply only under one comparison procedure.
fn procedure_keys(d: &AnovaDraft, compare: Option<Method>, fence_line: usize) -> Vec<SpecError> {
    let mut errors = Vec::new();
    if compare == Some(Method::Dunnett) && d.control.is_none() {
        let line = d.compare.as_ref().map_or(fence_line, |(e, _)| e.line);
        errors.push(SpecError {
            line,
            column: 1,
            message: "Dunnett's comparisons need a control level".into(),
            hint: Some("add `control: <level>`, the level every treatment is compared with".into()),
        });
    }
    let only = |e: Option<&Entry>, wanted: Method, key: &str, hint: &str| {
        e.filter(|_| compare != Some(wanted)).map(|e| {
            bad(
                e,
                format!("`{key}` applies only to `compare: {}`", wanted.key()),
                hint,
            )
        })
    };
    // The dose-response and equivalence tests read `control` too.
    let doses = d.noec.is_some();
    if d.margin.is_none() {
        errors.extend(only(
            d.control.as_ref().filter(|_| !doses),
            Method::Dunnett,
            "control",
            "remove it, choose `compare: dunnett`, or declare an equivalence `margin`",
        ));
    }
    errors.extend(only(
        d.sides.as_ref().map(|(e, _)| e).filter(|_| !doses),
        Method::Dunnett,
        "sides",
        "the other procedures are two-sided",
    ));
    errors.extend(only(
        d.adjust.as_ref().map(|(e, _)| e),
        Method::Dunn,
        "adjust",
        "the other procedures carry their own adjustment",
    ));
    errors.extend(only(
        d.protected.as_ref().map(|(e, _)| e),
        Method::Lsd,
        "protected",
        "remove it, or choose `compare: lsd`",
    ));
    errors
}

/// Keys that Friedman's test (`method: ranks` with a `block:` factor)
/// cannot honour: it ranks the observations within each block, so it has
/// no adjusted means, slices, cells or covariates.
fn friedman_keys(d: &AnovaDraft) -> Vec<SpecError> {
    if d.method != Some(Omnibus::Ranks) || d.blocks.is_none() {
        return Vec::new();
    }
    let mut errors = Vec::new();
    if let Some((e, _)) = &d.covariates {
        errors.push(bad(
            e,
            "Friedman's test (`method: ranks` with `block:`) has no version with covariates".into(),
            "remove `covariate`, or remove `method` for the analysis of covariance",
        ));
    }
    for e in d.multi_factor.iter().filter(|e| e.key != "ss") {
        errors.push(bad(
            e,
            format!(
                "`{}` does not apply to Friedman's test (`method: ranks` with `block:`)",
                e.key
            ),
            "Friedman's test compares the levels of one treatment factor within complete blocks; remove the key, or remove `method` for the ANOVA",
        ));
    }
    if let Some(e) = &d.plot
        && d.plots.kinds.contains(&super::block::PlotKind::Means)
    {
        errors.push(bad(
            e,
            "`plot: means` draws means with intervals, which Friedman's test does not estimate".into(),
            "use `plot: box` or `plot: strip` (the observations by level, with the letters of the rank comparison)",
        ));
    }
    errors
}

/// Keys of the data file's reading that depend on each other.
fn reading_keys(d: &AnovaDraft, data: &Entry) -> Vec<SpecError> {
    let mut errors = Vec::new();
    if let Some(e) = &d.decimal
        && d.csv.decimal_comma
        && d.csv.delimiter == b','
    {
        errors.push(bad(
            e,
            "a decimal comma needs another field delimiter".into(),
            "add `delimiter: semicolon` (or tab)",
        ));
    }
    let summary = d.input.as_ref().is_some_and(|(_, s)| *s);
    if let (Some((e, _)), false) = (&d.columns, summary) {
        errors.push(bad(
            e,
            "`columns` applies only to `input: summary`".into(),
            "add `input: summary`, or remove `columns`",
        ));
    }
    if let (Some(e), false) = (&d.query, summary) {
        errors.push(bad(
            e,
            "`query` names the SQL that computed a summary file, so it needs `input: summary`"
                .into(),
            "add `input: summary` (the data file then holds the query's output), or remove `query`",
        ));
    }
    // Keys that belong to another data format than the file's.
    for (key, reader) in crate::data::reader::foreign_keys(&data.value) {
        let given = match key {
            "sheet" => &d.sheet,
            "range" => &d.range,
            _ => &None,
        };
        if let Some(e) = given {
            errors.push(bad(
                e,
                format!(
                    "`{key}` applies to {} data (.xlsx, .xls, .ods)",
                    reader.name()
                ),
                "remove it, or point `data` at the workbook",
            ));
        }
    }
    errors
}

/// Keys that name the model's factors or need several of them.
fn model_keys(d: &mut AnovaDraft, formula: &Formula) -> Vec<SpecError> {
    let mut errors = Vec::new();
    let several = formula.factors().len() >= 2;
    if !several {
        for e in &d.multi_factor {
            errors.push(bad(
                e,
                format!("`{}` applies to models with two or more factors", e.key),
                "write the model as `y ~ A * B` (or `y ~ treatment + block`), or remove the key",
            ));
        }
    }
    if let Some(e) = &d.plot
        && d.plots.kinds.contains(&super::block::PlotKind::Interaction)
        && !several
    {
        errors.push(bad(
            e,
            "`plot: interaction` needs a model with two or more factors".into(),
            "use box, means or strip for one factor",
        ));
    }
    if let Some(e) = &d.plot
        && d.subject.is_none()
        && let Some(k) = d.plots.kinds.iter().find(|k| {
            matches!(
                k,
                super::block::PlotKind::Profile | super::block::PlotKind::Subjects
            )
        })
    {
        errors.push(bad(
            e,
            format!("`plot: {}` draws repeated measures", k.key()),
            "add `subject: <column>` naming the animal, plot or panellist measured repeatedly, or use means or interaction",
        ));
    }
    if let Some((e, true)) = &d.layout {
        if formula.terms.len() != 1 || formula.terms[0].factors.len() != 1 {
            errors.push(bad(
                e,
                "`layout: wide` reads one factor: one column per level".into(),
                "write the model as `response ~ factor`",
            ));
        } else {
            d.rows.wide = Some((
                formula.terms[0].factors[0].clone(),
                formula.response.clone(),
            ));
        }
    }
    if let Some(e) = &d.names {
        let random: Vec<&str> = d
            .random
            .iter()
            .flat_map(|(_, terms)| terms.iter().flat_map(|t| t.factors.iter()))
            .chain(d.subject.iter().flat_map(|(_, t)| t.factors.iter()))
            .map(String::as_str)
            .collect();
        match display_names(e, formula, &random) {
            Ok(names) => d.plots.names = names,
            Err(x) => errors.push(x),
        }
    }
    if let Some(e) = &d.x_axis {
        if !several || !formula.factors().contains(&e.value.as_str()) {
            errors.push(bad(
                e,
                format!(
                    "`x_axis` must name a factor of a model with two or more factors, found `{}`",
                    e.value
                ),
                format!("the factors are {}", formula.factors().join(", ")),
            ));
        } else {
            d.plots.x_axis = Some(e.value.clone());
        }
    }
    errors
}

/// Reads `names: column = display name, …`; each column must be the
/// response, a factor of the model, or a factor of a random term.
fn display_names(
    e: &Entry,
    formula: &Formula,
    random: &[&str],
) -> Result<Vec<(String, String)>, SpecError> {
    let mut names = Vec::new();
    for part in list(&e.value) {
        let Some((from, to)) = part.split_once('=') else {
            return Err(bad(
                e,
                format!("expected `column = display name`, found `{part}`"),
                "for example `names: n_rate = Nitrogen rate, variety = Variety`",
            ));
        };
        let from = from.trim();
        let columns: Vec<&str> = formula
            .responses
            .iter()
            .map(String::as_str)
            .chain(formula.factors())
            .chain(random.iter().copied())
            .collect();
        if !columns.contains(&from) {
            return Err(bad(
                e,
                format!("`{from}` is neither the response nor a factor of the model"),
                format!("name columns of the model: {}", columns.join(", ")),
            ));
        }
        names.push((from.to_string(), to.trim().to_string()));
    }
    Ok(names)
}

/// The keys of the analyses beyond the omnibus test, each checked against
/// the others and the model (which `covariate` may extend).
fn analysis_keys(
    d: &mut AnovaDraft,
    model: &mut Located<Formula>,
    method: Omnibus,
    fence_line: usize,
) -> Vec<SpecError> {
    let mut errors = Vec::new();
    errors.extend(super::block_covariates::covariate_keys(d, &mut model.value));
    errors.extend(super::block_contrasts::contrast_keys(d));
    errors.extend(super::block_trend::trend_keys(d));
    errors.extend(super::block_dose::dose_keys(d, &model.value));
    errors.extend(super::block_transform::transform_keys(d));
    errors.extend(super::block_equivalence::equivalence_keys(
        d,
        &model.value,
        fence_line,
    ));
    errors.extend(model_keys(d, &model.value));
    errors.extend(super::block_covariance::covariance_keys(d));
    errors.extend(super::block_random::subject_as_random(d));
    errors.extend(super::block_random::random_keys(d, &model.value, method));
    errors.extend(super::block_traits::traits_keys(d, model));
    errors
}

/// Checks the draft's keys against each other and builds the specification;
/// every problem found is returned.
pub(super) fn resolve(
    mut d: AnovaDraft,
    fence_line: usize,
    defaults: Defaults,
) -> Result<AnovaSpec, Vec<SpecError>> {
    if d.data.is_none() || d.model.is_none() {
        let mut errors = Vec::new();
        if d.data.is_none() {
            errors.push(missing(fence_line, "data", "data: plants.csv"));
        }
        if d.model.is_none() {
            errors.push(missing(fence_line, "model", "model: weight ~ group"));
        }
        return Err(errors);
    }
    let (Some(data), Some(mut model)) = (d.data.clone(), d.model.take()) else {
        return Err(Vec::new());
    };
    let method = d.method.unwrap_or(Omnibus::Anova);
    let mut errors = Vec::new();
    let compare = compare_of(&d, method, defaults).unwrap_or_else(|e| {
        errors.push(e);
        None
    });
    if errors.is_empty() {
        errors.extend(procedure_keys(&d, compare, fence_line));
    }
    errors.extend(reading_keys(&d, &data));
    errors.extend(friedman_keys(&d));
    errors.extend(analysis_keys(&mut d, &mut model, method, fence_line));
    if !errors.is_empty() {
        return Err(errors);
    }
    if !d.missing_given {
        d.csv.missing = DEFAULT_MISSING.iter().map(|s| s.to_string()).collect();
    }
    let summary = match &d.input {
        Some((_, true)) => Some(
            d.columns
                .take()
                .map_or_else(default_summary_columns, |(_, c)| c),
        ),
        _ => None,
    };
    let random = super::block_random::located_terms(&d);
    let covariance = super::block_covariance::located_covariance(&d);
    let covariates = super::block_covariates::located_covariates(&d);
    let dose = super::block_dose::dose_spec(&mut d);
    // Dose-response blocks read their tables in level order.
    let default_order = if dose.is_some() {
        Order::Levels
    } else {
        Order::Mean
    };
    Ok(AnovaSpec {
        transform: super::block_transform::declared(&d),
        box_cox: super::block_transform::box_cox(&d),
        equivalence: super::block_equivalence::located_equivalence(&d),
        covariates,
        contrasts: d.contrasts,
        trend: d.trend,
        dose,
        contrast_adjust: d.contrast_adjust.map(|c| c.value).unwrap_or_default(),
        acknowledge: d.acknowledge,
        sheet: d.sheet.map(|e| e.value),
        range: d.range.map(|e| e.value),
        rows: d.rows,
        labels: d.labels,
        labels_at: d.labels_at,
        plots: d.plots,
        ss_type: d.ss_type,
        compare_terms: d.compare_terms,
        within: d.within,
        cells: d.cells,
        random,
        covariance,
        subject: d.subject.map(|(e, t)| super::block::Located {
            value: t.factors[0].clone(),
            line: e.line,
            column: e.value_column,
        }),
        ddf: d.ddf.map_or(DdfMethod::KenwardRoger, |(_, m)| m),
        blocks: d.blocks,
        summary,
        query: d.query.as_ref().map(super::block_keys::located),
        method,
        checks: d.checks.unwrap_or(CheckSet::All),
        control: d.control.as_ref().map(super::block_keys::located),
        sides: d.sides.map_or(Sides::Two, |(_, s)| s),
        adjust: d.adjust.map_or(Method::Holm, |(_, m)| m),
        id: d.id,
        data: super::block_keys::located(&data),
        model,
        compare,
        alpha: d.alpha,
        levels: d.levels,
        caption: d.caption,
        decimals: d.decimals,
        csv: d.csv,
        protected: d.protected.is_none_or(|(_, p)| p),
        order: d.order.unwrap_or(default_order),
        show: d.show.unwrap_or(Show {
            anova: true,
            means: true,
            pairs: true,
        }),
    })
}
