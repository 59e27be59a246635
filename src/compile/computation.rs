//! The data and engine steps of a build: each block's data read (or
//! streamed past), hashed, looked up in the cache, and computed by its engine.

use crate::analysis::{
    Data, Request, block_columns, data_error, presentation, reads_csv_rows, represent, run_linear,
    run_power, run_traits,
};
use crate::diag::Diagnostic;
use crate::doc::block::AnovaSpec;
use crate::doc::{Block, BlockSpec, Document};
use crate::outcome::BlockResult;
use crate::plan::unreadable;
use crate::provenance::{Input, sha256_hex};
use crate::world::World;
use std::io::Read;

/// Inputs above this size (bytes) get progress messages on a terminal.
const LARGE_INPUT: u64 = 20_000_000;

/// One-factor CSV files from this size (bytes) are streamed past rather than
/// read into memory (see `data::scan`); the numbers are the same either way.
const STREAM_FROM: u64 = 32 << 20;

/// Every block's result, with the inputs read and what the cache gave.
#[derive(Default)]
pub struct Computation {
    pub results: Vec<BlockResult>,
    /// Every data file read (or streamed past), with its hash.
    pub inputs: Vec<Input>,
    /// Blocks computed afresh; the others came from the cache.
    pub recomputed: usize,
    /// Results computed afresh, to store in the cache once the build is written.
    pub cache_entries: Vec<(String, Vec<u8>)>,
    /// The cache key of every cacheable block.
    pub cache_keys: Vec<String>,
}

impl Computation {
    /// Computes every block of a planned document, in document order. A
    /// block whose data or analysis fails does not stop the others: every
    /// failure is reported, once each (blocks sharing an unreadable file
    /// give one message), in document order.
    pub fn run(doc: &Document, world: &dyn World) -> Result<Computation, Diagnostic> {
        let mut c = Computation {
            results: Vec::with_capacity(doc.blocks.len()),
            ..Computation::default()
        };
        let mut errors: Vec<Diagnostic> = Vec::new();
        for block in &doc.blocks {
            if let Err(d) = c
                .block(doc, world, block)
                .and_then(|()| c.record_query(doc, world, block))
            {
                for e in d.each() {
                    if !errors.contains(&e) {
                        errors.push(e);
                    }
                }
            }
        }
        match Diagnostic::several(errors) {
            Some(d) => Err(d),
            None => Ok(c),
        }
    }

    fn block(
        &mut self,
        doc: &Document,
        world: &dyn World,
        block: &Block,
    ) -> Result<(), Diagnostic> {
        let input_hash = match &block.spec {
            BlockSpec::Anova(spec) => {
                // Several responses read the file once, whole, for every trait.
                if !spec.model.value.several() && self.streamed_past(doc, world, block, spec)? {
                    return Ok(());
                }
                self.load(doc, world, spec)?
            }
            BlockSpec::Power(_) => String::new(),
        };
        let key = cache_key(doc, block, &input_hash);
        self.cache_keys.push(key.clone());
        if let Some(mut cached) = world
            .cache_get(&key)
            .and_then(|entry| crate::cache::open::<BlockResult>(&key, &entry))
        {
            cached.set_line(block.line);
            // The key leaves out presentation-only keys: apply them as the
            // block now reads.
            match (&mut cached, &block.spec) {
                (BlockResult::Linear(o), BlockSpec::Anova(spec)) => {
                    o.presentation = presentation(spec, o.presentation.decimals);
                }
                (BlockResult::Traits(o), BlockSpec::Anova(spec)) => represent(o, spec),
                _ => {}
            }
            self.results.push(cached);
            return Ok(());
        }
        if self.inputs.iter().any(|i| i.size > LARGE_INPUT) {
            world.progress(&format!(
                "computing block `{}` (line {})",
                block.id, block.line
            ));
        }
        let result = match &block.spec {
            BlockSpec::Power(spec) => BlockResult::Power(run_power(doc, block, spec)),
            BlockSpec::Anova(spec) => {
                let path = &spec.data.value;
                let input = self
                    .inputs
                    .iter()
                    .find(|i| &i.path == path)
                    .ok_or_else(|| Diagnostic::new("internal error: input vanished"))?;
                if spec.model.value.several() {
                    let traits = run_traits(doc, block, spec, input, &world.display(path))?;
                    BlockResult::Traits(Box::new(traits))
                } else {
                    let data = Data::Loaded(input);
                    run_engine(doc, block, spec, data, &world.display(path))?.0
                }
            }
        };
        self.recomputed += 1;
        if let Some(entry) = crate::cache::seal(&key, &result) {
            self.cache_entries.push((key, entry));
        }
        self.results.push(result);
        Ok(())
    }

    /// A block's `query` file: hashed and listed with the inputs, and
    /// compared with the query `sheaf sql` prints for the block now (after
    /// the cache, so that the warning always reflects the file as it is).
    fn record_query(
        &mut self,
        doc: &Document,
        world: &dyn World,
        block: &Block,
    ) -> Result<(), Diagnostic> {
        let BlockSpec::Anova(spec) = &block.spec else {
            return Ok(());
        };
        let Some(q) = &spec.query else {
            return Ok(());
        };
        let bytes = world
            .read(&q.value)
            .map_err(|e| unreadable(doc, world, e, &q.value, (q.line, q.column)))?;
        let text = String::from_utf8_lossy(&bytes).into_owned();
        remember(&mut self.inputs, Input::loaded(&q.value, bytes));
        if let Some(warning) = crate::query::staleness(doc, block, &q.value, &text)
            && let Some(result) = self.results.last_mut()
        {
            result.warnings_mut().push(warning);
        }
        Ok(())
    }

    fn loaded(&self, path: &str) -> bool {
        self.inputs
            .iter()
            .any(|i| i.path == path && i.bytes.is_some())
    }

    /// The streaming policy: a large CSV file in long layout is read once,
    /// in chunks, as it is hashed, and its block computed on the way. Such a
    /// block is not cached: the cache key needs the hash, which costs the
    /// same pass. A smaller file is read whole from the handle already open.
    /// True when the block was computed here.
    fn streamed_past(
        &mut self,
        doc: &Document,
        world: &dyn World,
        block: &Block,
        spec: &AnovaSpec,
    ) -> Result<bool, Diagnostic> {
        let path = &spec.data.value;
        if !reads_csv_rows(spec) || self.loaded(path) {
            return Ok(false);
        }
        let at = (spec.data.line, spec.data.column);
        let (mut reader, size) = world
            .open(path)
            .map_err(|e| unreadable(doc, world, e, path, at))?;
        if size < STREAM_FROM {
            let mut bytes = Vec::with_capacity(size as usize);
            reader
                .read_to_end(&mut bytes)
                .map_err(|e| unreadable(doc, world, e, path, at))?;
            remember(&mut self.inputs, Input::loaded(path, bytes));
            return Ok(false);
        }
        world.progress(&format!(
            "reading {} ({} MB) for block `{}` (line {})",
            path,
            size / 1_000_000,
            block.id,
            block.line
        ));
        let (result, input) = if crate::data::parquet::is_parquet(path) {
            stream_parquet(doc, world, block, spec, reader)?
        } else {
            // Checks that need more than one pass open the file again.
            let reopen = || world.open(path).map(|(reader, _)| reader);
            let data = Data::Stream {
                path,
                reader,
                reopen: &reopen,
            };
            run_engine(doc, block, spec, data, &world.display(path))?
        };
        if let Some(input) = input
            && !self.inputs.iter().any(|i| i.path == input.path)
        {
            self.inputs.push(input);
        }
        self.results.push(result);
        self.recomputed += 1;
        Ok(true)
    }

    /// Reads a block's data file whole unless it is already held; returns
    /// its hash.
    fn load(
        &mut self,
        doc: &Document,
        world: &dyn World,
        spec: &AnovaSpec,
    ) -> Result<String, Diagnostic> {
        let path = &spec.data.value;
        if !self.loaded(path) {
            let bytes = world
                .read(path)
                .map_err(|e| unreadable(doc, world, e, path, (spec.data.line, spec.data.column)))?;
            remember(&mut self.inputs, Input::loaded(path, bytes));
        }
        Ok(self
            .inputs
            .iter()
            .find(|i| &i.path == path)
            .map_or_else(String::new, |i| i.sha256.clone()))
    }
}

/// A large Parquet file: the block's columns are decoded from the file
/// (read out of order, see `data::parquet`) while another thread hashes
/// the file's own bytes from `raw`, so the input recorded is the file
/// itself, not the text it was read as.
fn stream_parquet(
    doc: &Document,
    world: &dyn World,
    block: &Block,
    spec: &AnovaSpec,
    raw: Box<dyn Read + Send>,
) -> Result<(BlockResult, Option<Input>), Diagnostic> {
    let path = &spec.data.value;
    let display = world.display(path);
    let rows = crate::data::parquet::rows_in_world(world, path, &block_columns(spec))
        .map_err(|e| data_error(doc, block, spec.data.line, &display, e))?;
    std::thread::scope(|scope| {
        let hashing = scope.spawn(move || crate::provenance::sha256_of_reader(raw));
        // Later passes decode the file again (see `binding::Again`).
        let reopen = || {
            crate::data::parquet::rows_in_world(world, path, &block_columns(spec))
                .map_err(|e| std::io::Error::other(e.message))
        };
        let data = Data::Stream {
            path,
            reader: rows,
            reopen: &reopen,
        };
        let outcome = run_engine(doc, block, spec, data, &display);
        let hashed = hashing
            .join()
            .unwrap_or_else(|_| Err(std::io::Error::other("the thread hashing the file stopped")));
        let (result, input) = outcome?;
        let (sha256, size) = hashed
            .map_err(|e| unreadable(doc, world, e, path, (spec.data.line, spec.data.column)))?;
        Ok((result, input.map(|i| Input { sha256, size, ..i })))
    })
}

/// Records a file read into memory, replacing the record of an earlier
/// streamed pass over the same path.
fn remember(inputs: &mut Vec<Input>, input: Input) {
    match inputs.iter_mut().find(|i| i.path == input.path) {
        Some(earlier) => *earlier = input,
        None => inputs.push(input),
    }
}

/// Keys of an analysis block that change how its results are shown, never
/// what is computed: an edit to them (a caption, a display name) reuses the
/// cached outcome, whose presentation is rebuilt from the block as it reads
/// now. `decimals` stays in the key: it is derived with the data.
const PRESENTATION_KEYS: [&str; 7] = [
    "caption",
    "order",
    "show",
    "label",
    "unit",
    "reference",
    "names",
];

/// A block's result depends only on its settings, its id, its data and the
/// document-wide defaults, so those (and sheaf's version) key the cache.
fn cache_key(doc: &Document, block: &Block, input_hash: &str) -> String {
    sha256_hex(
        format!(
            "sheaf {}\0{}\0{}\0{}\0{:?}\0{:?}\0{:?}",
            crate::VERSION,
            block.id,
            computed_settings(doc, block),
            input_hash,
            doc.front.alpha,
            doc.front.decimals,
            doc.front.compare.map(|m| m.key())
        )
        .as_bytes(),
    )
}

/// The block's settings that enter the computation, one `key\0value` per
/// line in document order (comments and spacing dropped); the block's
/// text itself when it does not parse as settings.
fn computed_settings(doc: &Document, block: &Block) -> String {
    let text = &doc.source[block.range.clone()];
    let body: String = text.lines().skip(1).collect::<Vec<_>>().join("\n");
    let body = body.trim_end().trim_end_matches(['`', '~']);
    let anova = matches!(block.spec, BlockSpec::Anova(_));
    match crate::doc::keyvalue::parse_entries(body, block.line + 1) {
        Ok(entries) if anova => entries
            .iter()
            .filter(|e| !PRESENTATION_KEYS.contains(&e.key.as_str()))
            .map(|e| format!("{}\0{}\n", e.key, e.value))
            .collect(),
        _ => text.to_string(),
    }
}

/// The block's linear engine, its outcome boxed as a block result.
fn run_engine(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    data: Data<'_>,
    display_path: &str,
) -> Result<(BlockResult, Option<Input>), Diagnostic> {
    let (r, input) = run_linear(Request {
        doc,
        block,
        spec,
        data,
        display_path,
    })?;
    Ok((BlockResult::Linear(Box::new(r)), input))
}
