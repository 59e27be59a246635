//! The SQL that computes a block's cell summaries on an existing engine, in
//! the part of SQL that DuckDB, Apache DataFusion and Apache Spark SQL all
//! run unchanged (only the FROM clause of a Parquet path differs).
//!
//! The query keeps the exact-origin treatment of sheaf's own reading (see
//! `data::decimal`): the response is cast to an exact decimal, a decimal
//! origin is subtracted, and the differences and their squares are summed
//! as decimals, so no digit is lost however large the values or the table.
//! Its output is the exact-sums form of `input: summary`.

pub mod dialect;
mod filter;
mod header;
mod request;

use crate::diag::Diagnostic;
use crate::doc::block::AnovaSpec;
use crate::doc::{Block, BlockSpec, Document};
use crate::world::World;
pub use dialect::{Engine, Source};
pub use header::read_options;
pub use request::QueryRequest;

/// Digits the response is cast to: DECIMAL(17, s) keeps every value below
/// 10^(17−s) exactly and its differences fit DECIMAL(18, s). A square is
/// DECIMAL(19, s) × DECIMAL(18, s): DuckDB multiplies two 18-digit decimals
/// in 64 bits (an overflow error), and Spark cuts the scale of a product
/// past 38 digits (19 + 18 + 1 = 38 stays whole).
pub const CAST_DIGITS: u32 = 17;

/// Most digits after the point: squares then keep 2s ≤ 32 of the 38 digits.
pub const MAX_SCALE: u32 = 16;

/// Columns of the summary file besides the factors.
const SUMMARY_COLUMNS: [&str; 5] = ["n", "origin", "sum", "squares", "rounded"];

/// How a query is asked for: the block, where the raw rows are, how many
/// digits after the point the response keeps, and the origin.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct QueryOptions {
    pub block: String,
    pub source: Source,
    pub scale: u32,
    /// An exact decimal; `None` for the smallest kept response.
    pub origin: Option<String>,
}

/// The analysis block with id `id` (or the document's only `anova` block
/// when `id` is `None`).
pub fn find_block<'a>(doc: &'a Document, id: Option<&str>) -> Result<&'a Block, Diagnostic> {
    let anova: Vec<&Block> = doc
        .blocks
        .iter()
        .filter(|b| matches!(b.spec, BlockSpec::Anova(_)))
        .collect();
    let ids = anova
        .iter()
        .map(|b| format!("`{}`", b.id))
        .collect::<Vec<_>>()
        .join(", ");
    match id {
        Some(id) => anova.into_iter().find(|b| b.id == id).ok_or_else(|| {
            Diagnostic::new(format!("{} has no anova block `{id}`", doc.name))
                .hint(format!("its anova blocks are {ids}"))
        }),
        None if anova.len() == 1 => Ok(anova[0]),
        None => Err(Diagnostic::new(format!(
            "{} has {} anova blocks: say which with `--block`",
            doc.name,
            anova.len()
        ))
        .hint(format!("the anova blocks are {ids}"))),
    }
}

fn anova(block: &Block) -> Result<&AnovaSpec, Diagnostic> {
    match &block.spec {
        BlockSpec::Anova(spec) => Ok(spec),
        BlockSpec::Power(_) => Err(Diagnostic::new(format!(
            "block `{}` is a power block, which reads no data",
            block.id
        ))),
    }
}

/// Refuses what cell summaries cannot carry: several responses, random
/// terms, subjects, covariates, transformations, rank tests, wide layout
/// and exclusions by line number (the engine's rows have no lines).
fn refuse_unsupported(doc: &Document, spec: &AnovaSpec) -> Result<(), Diagnostic> {
    let model = &spec.model;
    // Each: where the block asks for it (None when it does not), what it is,
    // and what to do instead. `subject` comes before `random` because it
    // implies a random term of its own.
    let refused = [
        (
            model.value.several().then_some((model.line, model.column)),
            "several responses",
            "write one block per response for the query",
        ),
        (
            spec.subject.as_ref().map(|s| (s.line, s.column)),
            "a `subject`",
            "repeated measures need every observation: run them on the raw rows",
        ),
        (
            spec.random.as_ref().map(|r| (r.line, r.column)),
            "random terms",
            "a mixed model needs every observation: run it on the raw rows",
        ),
        (
            spec.covariates.as_ref().map(|c| (c.line, c.column)),
            "covariates",
            "a covariate's slope needs the observations: run the block on the raw rows",
        ),
        (
            spec.transform.as_ref().map(|t| (t.line, t.column)),
            "a transformation",
            "transform the response in the engine and name the new column in `model`, or run the block on the raw rows",
        ),
    ];
    let first = refused
        .iter()
        .find_map(|&(at, what, hint)| at.map(|at| (at, what, hint)));
    if let Some(((line, column), what, hint)) = first {
        return Err(doc
            .error_at(
                line,
                Some(column),
                format!("cell summaries cannot carry {what}"),
            )
            .hint(hint.to_string()));
    }
    if spec.method == crate::doc::block::Omnibus::Ranks {
        return Err(doc
            .error_at(
                spec.model.line,
                None,
                "cell summaries cannot carry rank tests (`method: ranks`)",
            )
            .hint("rank tests need every observation: run the block on the raw rows"));
    }
    refuse_row_rules(doc, spec)
}

fn refuse_row_rules(doc: &Document, spec: &AnovaSpec) -> Result<(), Diagnostic> {
    if spec.rows.wide.is_some() {
        return Err(doc
            .error_at(spec.data.line, None, "the query reads long tables only (one row per observation), not `layout: wide`")
            .hint("turn the table long in the engine (one column for the level, one for the response)"));
    }
    if let Some((line, _)) = spec.rows.exclude.first() {
        return Err(Diagnostic::new(format!(
            "`exclude` names data line {line}, and an engine's rows have no line numbers"
        ))
        .hint("leave the rows out in the engine (a view, or a column to test with `where`), then remove `exclude`"));
    }
    for f in spec.model.value.factors() {
        if SUMMARY_COLUMNS.contains(&f) {
            return Err(doc
                .error_at(
                    spec.model.line,
                    Some(spec.model.column),
                    format!("the factor `{f}` has the name of a summary column"),
                )
                .hint("rename the factor column (the summary columns are n, origin, sum, squares and rounded)"));
        }
    }
    Ok(())
}

/// Checks an origin given on the command line: a plain decimal with at
/// most `scale` digits after the point.
fn origin_literal(origin: &str, scale: u32) -> Result<String, Diagnostic> {
    match crate::data::decimal::parse_number(origin) {
        Some(crate::data::decimal::Number::Exact(d)) if d.scale <= scale => Ok(origin.to_string()),
        _ => Err(Diagnostic::new(format!(
            "the origin `{origin}` is not a decimal with at most {scale} digits after the point"
        ))
        .hint("give a plain decimal such as 1000000000000.2, or leave the origin out to use the smallest value")),
    }
}

/// The query for a block, with its header comment.
pub fn cell_query(doc: &Document, options: &QueryOptions) -> Result<String, Diagnostic> {
    let block = find_block(doc, Some(&options.block))?;
    let spec = anova(block)?;
    refuse_unsupported(doc, spec)?;
    if options.scale > MAX_SCALE {
        return Err(Diagnostic::new(format!(
            "a scale of {} digits after the point is more than the query keeps ({MAX_SCALE})",
            options.scale
        ))
        .hint("rescale the response in the engine (other units)"));
    }
    let origin = match &options.origin {
        Some(o) => Some(origin_literal(o, options.scale)?),
        None => None,
    };
    let factors: Vec<&str> = spec.model.value.factors();
    let mut text = header_comment(block, spec, options);
    text.push_str(&body(spec, &factors, options, origin.as_deref())?);
    Ok(text)
}

fn header_comment(block: &Block, spec: &AnovaSpec, o: &QueryOptions) -> String {
    let s = o.scale;
    let model = format!(
        "{} ~ {}",
        spec.model.value.response,
        spec.model
            .value
            .terms
            .iter()
            .map(|t| t.to_string())
            .collect::<Vec<_>>()
            .join(" + ")
    );
    let from = match o.source {
        Source::Table(_) => "every line runs unchanged",
        Source::Parquet { .. } => {
            "only the FROM clause (a Parquet path) is the engine's own;\n-- every other line runs unchanged"
        }
    };
    format!(
        "-- Cell summaries for block `{id}` ({model}), printed by `sheaf sql`.\n\
         {options}\n\
         --\n\
         -- One row per cell: n, and the sums of y - origin and of (y - origin)^2 as\n\
         -- exact decimals, with the same decimal origin on every row. Save the result\n\
         -- as CSV with a header row and the column names as they are, and read it\n\
         -- with `input: summary`.\n\
         -- Dialect: {from} on DuckDB, Apache DataFusion and\n\
         -- Apache Spark SQL, in the part of SQL they share: names in backticks,\n\
         -- text in single quotes, CAST to STRING, DOUBLE and DECIMAL(p, s), WITH,\n\
         -- CROSS JOIN, CASE, TRIM, COALESCE, COUNT, SUM and MIN.\n\
         -- Exactness: the response is cast to DECIMAL({CAST_DIGITS}, {s}) (values below 1e{int})\n\
         -- and stays decimal. `rounded` counts values that had more than {s}\n\
         -- digits after the point (sheaf refuses a count above 0). A value the cast\n\
         -- cannot hold, or a sum past DECIMAL(38, {s2}), makes `sum` or `squares`\n\
         -- empty (null), which sheaf refuses: never a wrong number.\n\
         -- Missing values must be NULL in the table; rows with a NULL response or\n\
         -- factor, or an empty factor, are left out, as sheaf leaves them out.\n",
        id = block.id,
        options = header::options_line(o),
        int = CAST_DIGITS - s,
        s2 = 2 * s,
    )
}

/// The query itself: `kept` holds the rows sheaf would analyse, `low` the
/// origin, `shifted` each value less the origin, and the outer SELECT one
/// row per cell. (DataFusion names an aggregate by its expression without
/// casts, so the float and decimal sums of squares read different columns.)
fn body(
    spec: &AnovaSpec,
    factors: &[&str],
    o: &QueryOptions,
    origin: Option<&str>,
) -> Result<String, Diagnostic> {
    let s = o.scale;
    let y = format!("t.{}", dialect::identifier(&spec.model.value.response)?);
    let mut kept = Vec::new();
    let mut conditions = vec![format!("{y} IS NOT NULL")];
    for (i, f) in factors.iter().enumerate() {
        let column = format!("t.{}", dialect::identifier(f)?);
        kept.push(format!("    TRIM(CAST({column} AS STRING)) AS f{i},"));
        conditions.push(format!("{column} IS NOT NULL"));
        conditions.push(format!("TRIM(CAST({column} AS STRING)) <> ''"));
    }
    for f in &spec.rows.filters {
        conditions.push(filter::condition(f)?);
    }
    kept.push(format!(
        "    CAST({y} AS DECIMAL({CAST_DIGITS}, {s})) AS y,"
    ));
    kept.push(format!("    CAST({y} AS DOUBLE) AS y_read"));
    let low = match origin {
        Some(o) => format!("  SELECT CAST('{o}' AS DECIMAL({CAST_DIGITS}, {s})) AS origin"),
        None => "  SELECT MIN(y) AS origin FROM kept".to_string(),
    };
    let cells: Vec<String> = (0..factors.len()).map(|i| format!("f{i}")).collect();
    let mut select = Vec::new();
    for (i, f) in factors.iter().enumerate() {
        select.push(format!("  f{i} AS {},", dialect::identifier(f)?));
    }
    // 0.9 of the largest DECIMAL(38, 2s): a float estimate of the squares
    // this far below the limit cannot hide an overflow of the exact sum
    // (DataFusion wraps around silently there).
    let limit = format!("9e{}", 37 - 2 * s);
    select.extend([
        "  COUNT(*) AS `n`,".to_string(),
        "  origin AS `origin`,".to_string(),
        format!("  CASE WHEN COUNT(d) = COUNT(*)\n    THEN CAST(SUM(d) AS DECIMAL(38, {s})) END AS `sum`,"),
        format!(
            "  CASE WHEN COUNT(d) = COUNT(*) AND SUM(d_float * d_float) < {limit}\n    THEN CAST(SUM(CAST(d AS DECIMAL(19, {s})) * CAST(d AS DECIMAL(18, {s})))\n      AS DECIMAL(38, {})) END AS `squares`,",
            2 * s
        ),
        "  SUM(changed) AS `rounded`".to_string(),
    ]);
    Ok(format!(
        "WITH kept AS (\n  SELECT\n{kept}\n  FROM {from}\n  WHERE {conditions}\n),\n\
         low AS (\n{low}\n),\n\
         shifted AS (\n  SELECT\n{carried}\n    l.origin AS origin,\n    k.y - l.origin AS d,\n    CAST(k.y - l.origin AS DOUBLE) AS d_float,\n    CASE WHEN CAST(k.y AS DOUBLE) = k.y_read THEN 0 ELSE 1 END AS changed\n  FROM kept AS k\n  CROSS JOIN low AS l\n)\n\
         SELECT\n{select}\nFROM shifted\nGROUP BY {cells}, origin\nORDER BY {cells}\n",
        kept = kept.join("\n"),
        from = o.source.from_clause()?,
        conditions = conditions.join("\n    AND "),
        carried = cells
            .iter()
            .map(|c| format!("    k.{c} AS {c},"))
            .collect::<Vec<_>>()
            .join("\n"),
        select = select.join("\n"),
        cells = cells.join(", "),
    ))
}

/// The scale a block's local raw data show: the most digits after the
/// point among its response values. `None` when the block reads a summary
/// or its file cannot be read here.
pub fn local_scale(spec: &AnovaSpec, world: &dyn World) -> Option<u32> {
    if spec.summary.is_some() {
        return None;
    }
    let path = &spec.data.value;
    let bytes = world.read(path).ok()?;
    let table = crate::data::read_table(
        path,
        &bytes,
        &spec.csv,
        spec.sheet.as_deref(),
        spec.range.as_deref(),
    )
    .ok()?;
    let (table, _) = crate::data::prepare(table, &spec.rows).ok()?;
    let factors = spec.model.value.factors();
    crate::data::scan::scan_table(&table, &spec.model.value.response, &factors, &spec.csv)
        .ok()
        .map(|s| s.decimals)
}

/// Whether a query file is what `sheaf sql` prints now for `block`, with
/// the options its header records; the warning to give when not.
pub fn staleness(doc: &Document, block: &Block, path: &str, text: &str) -> Option<String> {
    let Some(options) = read_options(text) else {
        return Some(format!(
            "the query file {path} has no `-- sheaf-query:` line, so sheaf cannot tell whether it is the block's current query; print it again with `sheaf sql`"
        ));
    };
    if options.block != block.id {
        return Some(format!(
            "the query file {path} was printed for block `{}`, not `{}`",
            options.block, block.id
        ));
    }
    let normalize = |s: &str| {
        s.lines()
            .map(str::trim_end)
            .collect::<Vec<_>>()
            .join("\n")
            .trim_end()
            .to_string()
    };
    match cell_query(doc, &options) {
        Ok(now) if normalize(&now) == normalize(text) => None,
        Ok(_) => Some(format!(
            "the query in {path} is stale: `sheaf sql` now prints a different query for this block (its model, `where` or the query's form changed); print it again, rerun it and replace the summary file"
        )),
        Err(e) => Some(format!(
            "the query in {path} cannot be printed again for this block: {}",
            e.message
        )),
    }
}

#[cfg(test)]
mod tests;
