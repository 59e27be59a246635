//! The driver: document → plan → data → engines → outcome → projections
//! (tables, prose, results file, figures) → the finished files, in memory.
//! Nothing is written here; `output` writes the finished files.

mod computation;
mod placement;

pub use crate::cache::{CACHE_DIR, CachedDisk};
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::outcome::BlockResult;
use crate::plan::plan;
use crate::render::report::Report;
use crate::render::{Format, render_report};
use crate::results::results_json;
pub use crate::world::{
    Confined, DiskWorld, MAX_WHOLE_FILE, World, civil_date, open_regular, read_regular,
};
use computation::Computation;
use placement::{Placement, place_figures};
use std::path::{Path, PathBuf};

/// The finished outputs of a build.
#[derive(Debug, Clone, Default)]
pub struct Built {
    pub report_name: String,
    pub report: Vec<u8>,
    pub results_name: String,
    pub results: Vec<u8>,
    /// Further files beside the report (figures in Markdown output).
    pub files: Vec<(String, Vec<u8>)>,
    /// Blocks computed afresh; the others came from the cache.
    pub recomputed: usize,
    /// Results of the blocks computed afresh, to store in the cache once the
    /// build has been written (a failed build writes nothing, cache included).
    pub cache_entries: Vec<(String, Vec<u8>)>,
    /// The cache key of every cacheable block of this build (from the cache
    /// or computed); the writer drops all other entries.
    pub cache_keys: Vec<String>,
    /// Every file the build read, which no output may replace: `compile`
    /// lists data paths relative to the document's folder, `build_file`
    /// turns them into paths on disk and adds the document.
    pub sources: Vec<PathBuf>,
    /// The document's folder when built under `--confine`: outputs must
    /// then stay inside it too.
    pub confined_to: Option<PathBuf>,
    pub blocks: usize,
    /// Warnings to show on the terminal (they are in the report too).
    pub warnings: Vec<String>,
}

/// The document's file name and the stem its outputs are named after
/// (`report.md` → `report`, giving `report.html`, `report.results.json`).
pub fn names_of(document: &Path) -> (String, String) {
    let file_name = document.file_name().map_or_else(
        || "report.md".to_string(),
        |n| n.to_string_lossy().into_owned(),
    );
    let stem = file_name
        .strip_suffix(".md")
        .or_else(|| file_name.strip_suffix(".markdown"))
        .unwrap_or(&file_name)
        .to_string();
    (file_name, stem)
}

/// Compiles a document. `doc_display` names the document in messages;
/// only its file name appears in the outputs. A document with errors stops
/// at the plan, before any data are read, with every error reported.
pub fn compile(
    doc_display: &str,
    doc_bytes: &[u8],
    world: &dyn World,
    format: Format,
) -> Result<Built, Diagnostic> {
    let (file_name, stem) = names_of(Path::new(doc_display));
    let doc = plan(doc_display, doc_bytes, world)?;
    let computed = Computation::run(&doc, world)?;
    let Placement { placed, files } =
        place_figures(&computed.results, format, doc.front.figures, &stem)?;
    let results_name = format!("{stem}.results.json");
    let sources = Report::of(
        &doc,
        &computed.results,
        &placed,
        &computed.inputs,
        (&file_name, doc_bytes),
        &results_name,
    );
    let report = render_report(sources, format)?;
    let results = results_json(
        &file_name,
        doc_bytes,
        format.name(),
        &computed.inputs,
        &computed.results,
        &placed,
    );
    Ok(Built {
        report_name: format!("{stem}.{}", format.extension()),
        report,
        results_name,
        results,
        files,
        recomputed: computed.recomputed,
        warnings: terminal_warnings(&doc, &computed.results),
        cache_entries: computed.cache_entries,
        cache_keys: computed.cache_keys,
        sources: computed
            .inputs
            .iter()
            .map(|i| PathBuf::from(&i.path))
            .collect(),
        confined_to: None,
        blocks: doc.blocks.len(),
    })
}

/// The blocks' warnings as the terminal shows them, each with its place.
fn terminal_warnings(doc: &Document, results: &[BlockResult]) -> Vec<String> {
    let name = doc.name.as_str();
    results
        .iter()
        .flat_map(|r| {
            r.warnings()
                .iter()
                .map(move |w| format!("{name}:{} (block `{}`): {w}", r.line(), r.id()))
        })
        .collect()
}

/// Reads a document from disk and compiles it: with `cache`, unchanged blocks
/// come from that folder; with `confine`, data are read only from inside the
/// document's folder. The one entry point the commands share.
pub fn build_file(
    document: &Path,
    format: Format,
    cache: Option<&Path>,
    confine: bool,
) -> Result<Built, Diagnostic> {
    let display = document.display().to_string();
    let bytes = read_regular(document, MAX_WHOLE_FILE).map_err(|e| {
        Diagnostic::new(format!("cannot read {display}: {e}"))
            .hint("give the path of a Markdown document")
    })?;
    let base = document.parent().map(PathBuf::from).unwrap_or_default();
    let disk = DiskWorld { base: base.clone() };
    let mut built = match (cache, confine) {
        (Some(dir), false) => compile(
            &display,
            &bytes,
            &CachedDisk {
                disk,
                cache: dir.to_path_buf(),
            },
            format,
        ),
        // Confined builds read no cache (see `Confined::cache_get`).
        (_, true) => compile(
            &display,
            &bytes,
            &Confined {
                inner: disk,
                base: base.clone(),
            },
            format,
        ),
        (None, false) => compile(&display, &bytes, &disk, format),
    }?;
    let data = std::mem::take(&mut built.sources);
    built.sources = std::iter::once(document.to_path_buf())
        .chain(data.iter().map(|p| base.join(p)))
        .collect();
    built.confined_to = confine.then_some(base);
    Ok(built)
}

#[cfg(test)]
mod tests {
    #[test]
    fn civil_dates() {
        // Reference dates (common practice): the Unix epoch, the start of
        // 2000 (946684800) and 2024-02-29 (1709164800).
        assert_eq!(super::civil_date(0), "1970-01-01");
        assert_eq!(super::civil_date(946_684_800), "2000-01-01");
        assert_eq!(super::civil_date(1_709_164_800), "2024-02-29");
    }
}
