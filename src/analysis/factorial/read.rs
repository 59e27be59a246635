//! Reading a factorial block's rows: one response and one level per factor
//! for each observation, with the document's labels.

use super::covariates::Centred;
use super::model::Errors;
use super::model::Model;
use crate::analysis::binding::{
    Again, Data, FirstPass, apply_labels, check_labels, data_error, read_rows, reads_csv_rows,
    scan_csv,
};
use crate::data::covariates::split_covariates;
use crate::data::scan::{ScanSpec, scan_table};
use crate::data::summary_cells::summary_cells;
use crate::data::transform::transform_factorial;
use crate::data::{
    CellLayout, FactorialData, FactorialRows, factorial_cells_from_scan, factorial_from_scan,
    factorial_response,
};
use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, CheckSet, Omnibus};
use crate::doc::{Block, Document};
use crate::outcome::linear::InputForm;
use crate::provenance::Input;

/// A factorial block's observations as read: on the analysis scale, with
/// the covariates centred at their grand means.
pub(crate) struct Observations<'a> {
    pub data: FactorialData,
    pub streamed: Option<Input>,
    pub centred: Option<Centred>,
    /// With `transform`: per factor and level, the arithmetic mean on the
    /// data's scale.
    pub arithmetic: Vec<Vec<f64>>,
    /// Observations, published summaries, or exact sums.
    pub input: InputForm,
    /// Fitted from the cells' sums as the reader summed them, and checked
    /// in passes over the observations (see `read_cells`).
    pub from_cells: bool,
    /// Where those passes read the observations again, when they were
    /// not kept.
    pub rereading: Option<Rereading<'a>>,
}

/// What reading a block's CSV data again needs: where the bytes are, what
/// the first pass saw, and each scanned level's full cell.
pub(crate) struct Rereading<'a> {
    pub again: Again<'a>,
    pub first: FirstPass,
    pub cells: Vec<Option<usize>>,
}

/// Whether a block is fitted from its cells' sums and checked in passes:
/// observations of factors only, on the data's scale (no covariates, no
/// transformation, no ranks); the other models need every row at once.
fn from_cells(spec: &AnovaSpec, model: &Model) -> bool {
    spec.summary.is_none()
        && model.covariate_names.is_empty()
        && spec.transform.is_none()
        && !spec.box_cox
        && spec.method != Omnibus::Ranks
}

/// Reads the observations of the model's factors and covariates, and
/// applies the block's transformation.
pub(crate) fn read_with_covariates<'a>(
    errors: &Errors<'_>,
    block: &Block,
    (data, display_path): (Data<'a>, &str),
    model: &Model,
) -> Result<Observations<'a>, Diagnostic> {
    let spec = errors.spec;
    if let Some(columns) = &spec.summary {
        return read_summaries(errors, block, (data, display_path), model, columns);
    }
    if from_cells(spec, model) {
        return read_cells(errors, block, (data, display_path), model);
    }
    let (mut data, streamed, centred) =
        read_covariates(errors, block, (data, display_path), model)?;
    let arithmetic = match &spec.transform {
        Some(t) => transform_factorial(&mut data, &t.value, &spec.model.value.response)
            .map_err(|e| data_error(errors.doc, block, spec.data.line, display_path, e))?,
        None => Vec::new(),
    };
    Ok(Observations {
        data: FactorialData::from_rows(data),
        streamed,
        centred,
        arithmetic,
        input: InputForm::Observations,
        from_cells: false,
        rereading: None,
    })
}

/// Reads the cells' sums, and the observations only when something needs
/// them all at once (figures) or the data cannot be read again (a table
/// from a spreadsheet): the checks read a CSV file again instead, so memory
/// follows the number of cells, not of rows.
fn read_cells<'a>(
    errors: &Errors<'_>,
    block: &Block,
    (data, display_path): (Data<'a>, &str),
    model: &Model,
) -> Result<Observations<'a>, Diagnostic> {
    let (doc, spec) = (errors.doc, errors.spec);
    let response = &spec.model.value.response;
    let factors: Vec<&str> = model.factor_names.iter().map(String::as_str).collect();
    let fail = |e| data_error(doc, block, spec.data.line, display_path, e);
    let keep = !spec.plots.kinds.is_empty();
    let again = data.again();
    let (scanned, ruled_out, streamed) = match data {
        data if reads_csv_rows(spec) => {
            let scan_spec = ScanSpec {
                response,
                factors: &factors,
                format: &spec.csv,
                filters: &spec.rows.filters,
                exclude: &spec.rows.exclude,
                keep_values: keep,
            };
            let (scanned, input) = scan_csv(data, &scan_spec).map_err(fail)?;
            (scanned, Vec::new(), input)
        }
        Data::Loaded(input) => {
            let (table, ruled_out) = read_rows(doc, block, spec, input, display_path)?;
            let scanned = scan_table(&table, response, &factors, &spec.csv).map_err(fail)?;
            (scanned, ruled_out, None)
        }
        Data::Stream { .. } => {
            return Err(errors.internal(block, "a table layout reached the streaming reader"));
        }
    };
    let first = FirstPass::of(&scanned);
    let (mut data, cells) = factorial_cells_from_scan(scanned, factors.len());
    data.excluded.extend(ruled_out);
    data.excluded.sort_by_key(|e| e.line);
    relabel(doc, spec, &mut data.layout)?;
    let rereads = data.observations.is_none() && spec.checks != CheckSet::Summary;
    Ok(Observations {
        data,
        streamed,
        centred: None,
        arithmetic: Vec::new(),
        input: InputForm::Observations,
        from_cells: true,
        rereading: rereads.then_some(Rereading {
            again,
            first,
            cells,
        }),
    })
}

/// Reads a summary table, one row per cell: published summaries or exact
/// sums (see `data::summary_cells`).
fn read_summaries<'a>(
    errors: &Errors<'_>,
    block: &Block,
    (data, display_path): (Data<'a>, &str),
    model: &Model,
    columns: &crate::data::SummaryColumns,
) -> Result<Observations<'a>, Diagnostic> {
    let (doc, spec) = (errors.doc, errors.spec);
    let Data::Loaded(input) = data else {
        return Err(errors.internal(block, "a summary table reached the streaming reader"));
    };
    let (table, ruled_out) = read_rows(doc, block, spec, input, display_path)?;
    let factors: Vec<&str> = model.factor_names.iter().map(String::as_str).collect();
    let read = summary_cells(&table, &factors, columns, &spec.csv)
        .map_err(|e| data_error(doc, block, spec.data.line, display_path, e))?;
    let input = match &read.exact_origin {
        Some(origin) => InputForm::ExactSums {
            origin: origin.clone(),
        },
        None => InputForm::Summaries,
    };
    let mut data = FactorialData::from_summaries(read, factors.len());
    data.excluded = ruled_out;
    data.excluded.sort_by_key(|e| e.line);
    relabel(doc, spec, &mut data.layout)?;
    Ok(Observations {
        data,
        streamed: None,
        centred: None,
        arithmetic: Vec::new(),
        input,
        from_cells: false,
        rereading: None,
    })
}

fn read_covariates(
    errors: &Errors<'_>,
    block: &Block,
    (data, display_path): (Data<'_>, &str),
    model: &Model,
) -> Result<(FactorialRows, Option<Input>, Option<Centred>), Diagnostic> {
    read_columns_and_covariates(errors, block, (data, display_path), model, &[])
}

/// Reads the model's factors, then the `others` columns (those only random
/// terms name), then the covariates, which are split off and centred.
pub(crate) fn read_columns_and_covariates(
    errors: &Errors<'_>,
    block: &Block,
    (data, display_path): (Data<'_>, &str),
    model: &Model,
    others: &[String],
) -> Result<(FactorialRows, Option<Input>, Option<Centred>), Diagnostic> {
    let names: Vec<&str> = model
        .factor_names
        .iter()
        .chain(others)
        .chain(&model.covariate_names)
        .map(String::as_str)
        .collect();
    let (data, streamed) = read_observations(errors, block, data, &names, display_path)?;
    if model.covariate_names.is_empty() {
        return Ok((data, streamed, None));
    }
    let spec = errors.spec;
    let covariates: Vec<&str> = model.covariate_names.iter().map(String::as_str).collect();
    let (data, read) = split_covariates(data, &covariates, spec.csv.decimal_comma)
        .map_err(|e| data_error(errors.doc, block, spec.data.line, display_path, e))?;
    Ok((data, streamed, Some(Centred::new(&read))))
}

/// Reads the observations; a streamed file comes back as the `Input` that
/// records it.
pub(crate) fn read_observations(
    errors: &Errors<'_>,
    block: &Block,
    data: Data<'_>,
    factors: &[&str],
    display_path: &str,
) -> Result<(FactorialRows, Option<Input>), Diagnostic> {
    let (doc, spec) = (errors.doc, errors.spec);
    let response = &spec.model.value.response;
    let fail = |e| data_error(doc, block, spec.data.line, display_path, e);
    let (mut data, streamed) = match data {
        // CSV in long layout: the chunked reader, keeping one number and one
        // line per observation instead of a table of strings.
        data if reads_csv_rows(spec) => {
            let scan_spec = ScanSpec {
                response,
                factors,
                format: &spec.csv,
                filters: &spec.rows.filters,
                exclude: &spec.rows.exclude,
                keep_values: true,
            };
            let (scanned, input) = scan_csv(data, &scan_spec).map_err(fail)?;
            (factorial_from_scan(scanned, factors.len()), input)
        }
        Data::Loaded(input) => {
            let (table, ruled_out) = read_rows(doc, block, spec, input, display_path)?;
            let mut data =
                factorial_response(&table, response, factors, &spec.csv).map_err(fail)?;
            data.excluded.extend(ruled_out);
            (data, None)
        }
        Data::Stream { .. } => {
            return Err(errors.internal(block, "a table layout reached the streaming reader"));
        }
    };
    data.excluded.sort_by_key(|e| e.line);
    relabel(doc, spec, &mut data.layout)?;
    Ok((data, streamed))
}

/// Checks that every level `labels` renames is in the data, then renames.
fn relabel(doc: &Document, spec: &AnovaSpec, layout: &mut CellLayout) -> Result<(), Diagnostic> {
    let all_levels: Vec<&str> = layout.levels.iter().flatten().map(String::as_str).collect();
    check_labels(doc, spec, &all_levels)?;
    for lv in layout.levels.iter_mut() {
        apply_labels(lv, &spec.labels);
    }
    Ok(())
}
