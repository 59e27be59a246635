//! `sheaf sql`: a document, a block and a source in, the block's cell query out.

use super::{Engine, QueryOptions, Source, cell_query, find_block, local_scale, read_options};
use crate::diag::Diagnostic;
use crate::doc::{BlockSpec, parse_document};
use crate::world::{DiskWorld, MAX_WHOLE_FILE, read_regular};
use std::path::{Path, PathBuf};

/// What the command line asks for.
#[derive(Debug, Clone)]
pub struct QueryRequest {
    pub document: PathBuf,
    pub block: Option<String>,
    pub table: Option<String>,
    pub parquet: Option<String>,
    pub engine: Option<Engine>,
    pub scale: Option<u32>,
    pub origin: Option<String>,
}

impl QueryRequest {
    /// The query text, or why it cannot be printed.
    pub fn run(&self) -> Result<String, Diagnostic> {
        let display = self.document.display().to_string();
        let bytes = read_regular(&self.document, MAX_WHOLE_FILE).map_err(|e| {
            Diagnostic::new(format!("cannot read {display}: {e}"))
                .hint("give the path of a Markdown document")
        })?;
        let text = String::from_utf8(bytes)
            .map_err(|_| Diagnostic::new(format!("{display} is not UTF-8 text")))?;
        let doc = parse_document(&display, text)?;
        let block = find_block(&doc, self.block.as_deref())?;
        let base = self
            .document
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default();
        let scale = match self.scale {
            Some(s) => s,
            None => self.scale_from_files(&doc, block, &base)?,
        };
        cell_query(
            &doc,
            &QueryOptions {
                block: block.id.clone(),
                source: self.source()?,
                scale,
                origin: self.origin.clone(),
            },
        )
    }

    fn source(&self) -> Result<Source, Diagnostic> {
        match (&self.table, &self.parquet, self.engine) {
            (Some(t), None, None) => Ok(Source::Table(t.clone())),
            (None, Some(p), Some(engine)) => Ok(Source::Parquet {
                path: p.clone(),
                engine,
            }),
            (None, Some(_), None) => Err(Diagnostic::new(
                "a Parquet path is read differently by each engine: add `--engine`",
            )
            .hint("`--engine duckdb`, `--engine datafusion` or `--engine spark` (only the FROM clause changes)")),
            (Some(_), None, Some(_)) => Err(Diagnostic::new(
                "`--engine` applies only to `--parquet`: a table name reads the same on every engine",
            )),
            (Some(_), Some(_), _) => Err(Diagnostic::new(
                "give either `--table` or `--parquet`, not both",
            )),
            (None, None, _) => Err(Diagnostic::new("say where the raw rows are")
                .hint("`--table NAME` for a table or view the engine knows, or `--parquet PATH --engine NAME`")),
        }
    }

    /// The scale when `--scale` is not given: what the block's local raw
    /// file shows, else what its existing query file records.
    fn scale_from_files(
        &self,
        doc: &crate::doc::Document,
        block: &crate::doc::Block,
        base: &Path,
    ) -> Result<u32, Diagnostic> {
        let BlockSpec::Anova(spec) = &block.spec else {
            return Err(Diagnostic::new("not an anova block"));
        };
        let world = DiskWorld {
            base: base.to_path_buf(),
        };
        if let Some(s) = local_scale(spec, &world) {
            return Ok(s);
        }
        let recorded = spec
            .query
            .as_ref()
            .and_then(|q| std::fs::read_to_string(base.join(&q.value)).ok())
            .and_then(|text| read_options(&text));
        match recorded {
            Some(o) => Ok(o.scale),
            None => Err(Diagnostic::new(format!(
                "no local raw data for block `{}` show how many digits after the point the response has",
                block.id
            ))
            .hint(format!(
                "give `--scale` (digits after the point, e.g. `--scale 2` for 12.25) for the response of {}",
                doc.name
            ))),
        }
    }
}
