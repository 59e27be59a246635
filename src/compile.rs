//! The driver: document → data → statistics → rendering → results, in memory.
//! Nothing is written here; `output` writes the finished files.

use crate::analysis::factorial::run_factorial;
use crate::analysis::{Data, reads_csv_rows, run_anova, run_power, streams};
pub use crate::cache::{CACHE_DIR, CachedDisk};
use crate::diag::Diagnostic;
use crate::doc::{BlockSpec, parse_document};
use crate::figure::PlacedFigure;
use crate::figure::draw_all;
use crate::outcome::BlockResult;
use crate::provenance::{Input, sha256_hex};
use crate::render::{Format, render_report};
use crate::results::results_json;
pub use crate::world::{
    Confined, DiskWorld, MAX_WHOLE_FILE, World, civil_date, open_regular, read_regular,
};
use std::io::Read;
use std::path::{Path, PathBuf};

/// Inputs above this size (bytes) get progress messages on a terminal.
const LARGE_INPUT: u64 = 20_000_000;

/// One-factor CSV files from this size (bytes) are streamed past rather than
/// read into memory (see `data::scan`); the numbers are the same either way.
const STREAM_FROM: u64 = 32 << 20;

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

/// Records a file read into memory, replacing the record of an earlier
/// streamed pass over the same path.
fn remember(inputs: &mut Vec<Input>, input: Input) {
    match inputs.iter_mut().find(|i| i.path == input.path) {
        Some(earlier) => *earlier = input,
        None => inputs.push(input),
    }
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
/// only its file name appears in the outputs.
pub fn compile(
    doc_display: &str,
    doc_bytes: &[u8],
    world: &dyn World,
    format: Format,
) -> Result<Built, Diagnostic> {
    let (file_name, stem) = names_of(Path::new(doc_display));
    let source = String::from_utf8(doc_bytes.to_vec()).map_err(|e| {
        // Line ends as the document stage counts them: LF, CRLF or a lone CR.
        let before = &doc_bytes[..e.utf8_error().valid_up_to()];
        let line = 1 + before
            .iter()
            .enumerate()
            .filter(|&(i, b)| *b == b'\n' || (*b == b'\r' && doc_bytes.get(i + 1) != Some(&b'\n')))
            .count();
        Diagnostic::new("the document is not valid UTF-8")
            .at(doc_display, Some(line), None)
            .hint("save the document as UTF-8")
    })?;
    // A byte-order mark is not part of the text (editors on some systems add one).
    let source = source
        .strip_prefix('\u{feff}')
        .map(str::to_string)
        .unwrap_or(source);
    let mut doc = parse_document(doc_display, source)?;
    if doc
        .front
        .date
        .as_deref()
        .is_some_and(|d| d.eq_ignore_ascii_case("today"))
    {
        doc.front.date = Some(world.today().ok_or_else(|| {
            Diagnostic::new("`date: today` needs a clock, and none is available here")
                .hint("write the date itself, or set SOURCE_DATE_EPOCH")
        })?);
    }

    let mut inputs: Vec<Input> = Vec::new();
    let mut results: Vec<BlockResult> = Vec::with_capacity(doc.blocks.len());
    let mut recomputed = 0;
    let mut cache_entries = Vec::new();
    let mut cache_keys = Vec::new();
    for block in &doc.blocks {
        let path = match &block.spec {
            BlockSpec::Anova(spec) => Some((&spec.data.value, spec.data.line, spec.data.column)),
            BlockSpec::Power(_) => None,
        };
        let read_error = |e: std::io::Error, path: &str, line: usize, column: usize| {
            let reason = match e.kind() {
                std::io::ErrorKind::NotFound => "no such file".to_string(),
                _ => e.to_string(),
            };
            doc.error_at(
                line,
                Some(column),
                format!("cannot read data file `{path}`: {reason}"),
            )
            .hint(format!(
                "paths are relative to the document's folder; looked for {}",
                world.display(path)
            ))
        };
        // A large CSV file in long layout is read once, in chunks, as it is
        // hashed. Its block is not cached: the cache key needs the hash,
        // which costs the same pass.
        if let BlockSpec::Anova(spec) = &block.spec
            && reads_csv_rows(spec)
            && !inputs
                .iter()
                .any(|i| i.path == spec.data.value && i.bytes.is_some())
        {
            let path = &spec.data.value;
            let (reader, size) = world
                .open(path)
                .map_err(|e| read_error(e, path, spec.data.line, spec.data.column))?;
            if size >= STREAM_FROM {
                world.progress(&format!(
                    "reading {} ({} MB) for block `{}` (line {})",
                    path,
                    size / 1_000_000,
                    block.id,
                    block.line
                ));
                let data = Data::Stream { path, reader };
                let display = world.display(path);
                let (result, input) = if streams(spec) {
                    let (r, i) = run_anova(&doc, block, spec, data, &display)?;
                    (BlockResult::Anova(Box::new(r)), i)
                } else {
                    let (r, i) = run_factorial(&doc, block, spec, data, &display)?;
                    (BlockResult::Factorial(Box::new(r)), i)
                };
                if let Some(input) = input
                    && !inputs.iter().any(|i| i.path == input.path)
                {
                    inputs.push(input);
                }
                results.push(result);
                recomputed += 1;
                continue;
            }
            // Small enough to hold: read it from the handle already open.
            let mut bytes = Vec::with_capacity(size as usize);
            let mut reader = reader;
            reader
                .read_to_end(&mut bytes)
                .map_err(|e| read_error(e, path, spec.data.line, spec.data.column))?;
            remember(&mut inputs, Input::loaded(path, bytes));
        }
        let mut input_hash = String::new();
        if let Some((path, line, column)) = path {
            if !inputs.iter().any(|i| &i.path == path && i.bytes.is_some()) {
                let bytes = world
                    .read(path)
                    .map_err(|e| read_error(e, path, line, column))?;
                remember(&mut inputs, Input::loaded(path, bytes));
            }
            input_hash = inputs
                .iter()
                .find(|i| &i.path == path)
                .map_or_else(String::new, |i| i.sha256.clone());
        }
        // A block's result depends only on its text, its id, its data and the
        // document-wide defaults, so those (and sheaf's version) key the cache.
        let key = sha256_hex(
            format!(
                "sheaf {}\0{}\0{}\0{}\0{:?}\0{:?}\0{:?}",
                crate::VERSION,
                block.id,
                &doc.source[block.range.clone()],
                input_hash,
                doc.front.alpha,
                doc.front.decimals,
                doc.front.compare.map(|m| m.key())
            )
            .as_bytes(),
        );
        cache_keys.push(key.clone());
        if let Some(mut cached) = world
            .cache_get(&key)
            .and_then(|entry| crate::cache::open::<BlockResult>(&key, &entry))
        {
            cached.set_line(block.line);
            results.push(cached);
            continue;
        }
        if inputs.iter().any(|i| i.size > LARGE_INPUT) {
            world.progress(&format!(
                "computing block `{}` (line {})",
                block.id, block.line
            ));
        }
        let result = match &block.spec {
            BlockSpec::Power(spec) => BlockResult::Power(run_power(&doc, block, spec)),
            BlockSpec::Anova(spec) => {
                let path = &spec.data.value;
                let input = inputs
                    .iter()
                    .find(|i| &i.path == path)
                    .ok_or_else(|| Diagnostic::new("internal error: input vanished"))?;
                let model = &spec.model.value;
                if model.terms.len() > 1 || model.terms.iter().any(|t| t.factors.len() > 1) {
                    BlockResult::Factorial(Box::new(
                        run_factorial(
                            &doc,
                            block,
                            spec,
                            Data::Loaded(input),
                            &world.display(path),
                        )?
                        .0,
                    ))
                } else {
                    BlockResult::Anova(Box::new(
                        run_anova(&doc, block, spec, Data::Loaded(input), &world.display(path))?.0,
                    ))
                }
            }
        };
        recomputed += 1;
        if let Some(entry) = crate::cache::seal(&key, &result) {
            cache_entries.push((key, entry));
        }
        results.push(result);
    }

    // Figures: inline SVG in HTML; files beside the report in Markdown.
    let mut files: Vec<(String, Vec<u8>)> = Vec::new();
    let mut placed: Vec<Vec<PlacedFigure>> = Vec::with_capacity(results.len());
    for figs in draw_all(&results) {
        let mut block = Vec::with_capacity(figs.len());
        for figure in figs {
            let file = match format
                .writer()
                .figure_file(&stem, &figure, doc.front.figures)
                .map_err(|e| {
                    Diagnostic::new(format!("internal error drawing {}: {e}", figure.id))
                })? {
                Some((name, bytes)) => {
                    files.push((name.clone(), bytes));
                    Some(name)
                }
                None => None,
            };
            block.push(PlacedFigure { figure, file });
        }
        placed.push(block);
    }

    let results_name = format!("{stem}.results.json");
    let report = render_report(
        &doc,
        &results,
        &placed,
        &inputs,
        format,
        (&file_name, doc_bytes),
        &results_name,
    )?;
    let name = doc.name.as_str();
    let warnings = results
        .iter()
        .flat_map(|r| {
            r.warnings()
                .iter()
                .map(move |w| format!("{name}:{} (block `{}`): {w}", r.line(), r.id()))
        })
        .collect();
    Ok(Built {
        report_name: format!("{stem}.{}", format.extension()),
        report: report.into_bytes(),
        results_name,
        results: results_json(
            &file_name,
            doc_bytes,
            format.extension(),
            &inputs,
            &results,
            &placed,
        ),
        files,
        recomputed,
        cache_entries,
        cache_keys,
        sources: inputs.iter().map(|i| PathBuf::from(&i.path)).collect(),
        confined_to: None,
        blocks: doc.blocks.len(),
        warnings,
    })
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
