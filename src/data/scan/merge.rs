//! Chunk results merged in file order.

use super::*;

/// Where a later pass hands each chunk's values: the level (in the first
/// pass's order), a run of its offsets in file order, and their lines.
pub type Visit<'v> = &'v mut dyn FnMut(usize, &[f64], &[usize]);

/// The chunks merged so far, in file order.
pub(super) struct Merged<'v> {
    pub(super) keep_values: bool,
    /// A later pass: values are handed on, not kept, and every level must
    /// be one the first pass found.
    pub(super) visit: Option<Visit<'v>>,
    pub(super) index: LevelMap,
    pub(super) levels: Vec<ScannedLevel>,
    pub(super) origin: Option<(Number, f64)>,
    pub(super) decimals: u32,
    pub(super) excluded: Vec<Exclusion>,
    pub(super) exclude_hits: Vec<usize>,
    pub(super) last_line: usize,
    /// The line the next chunk starts on.
    pub(super) next_line: usize,
}

impl<'v> Merged<'v> {
    pub(super) fn new(keep_values: bool) -> Self {
        Merged {
            keep_values,
            visit: None,
            index: LevelMap::default(),
            levels: Vec::new(),
            origin: None,
            decimals: 0,
            excluded: Vec::new(),
            exclude_hits: Vec::new(),
            last_line: 0,
            next_line: 1,
        }
    }

    /// A later pass over the levels `known` (the first pass's, in its order).
    pub(super) fn again(known: &[String], visit: Visit<'v>) -> Self {
        let mut merged = Merged::new(false);
        merged.visit = Some(visit);
        for name in known {
            merged
                .index
                .insert(name.as_str().into(), merged.levels.len());
            merged.levels.push(ScannedLevel::empty(name.clone()));
        }
        merged
    }

    /// Adds the next chunk's outcome. A chunk with `relative` lines gets
    /// the line it starts on; an error is returned with its absolute line.
    /// Every chunk's offsets are from the file's origin: `scan_file` reads
    /// chunks one by one until the first value fixes it.
    pub(super) fn add(
        &mut self,
        outcome: Result<ChunkResult, DataError>,
        relative: bool,
    ) -> Result<(), DataError> {
        let base = if relative { self.next_line } else { 0 };
        let mut chunk = outcome.map_err(|mut e| {
            if let Some(line) = &mut e.line {
                *line += base;
            }
            e
        })?;
        if relative {
            for e in &mut chunk.excluded {
                e.line += base;
            }
            for lines in &mut chunk.lines {
                for line in lines.iter_mut() {
                    *line += base;
                }
            }
            for line in chunk.first_lines.iter_mut().filter(|l| **l != usize::MAX) {
                *line += base;
            }
            chunk.last_line += base;
            self.next_line += chunk.end_line;
        } else {
            self.next_line = chunk.end_line;
        }
        if self.origin.is_none() {
            self.origin = chunk.origin.map(|o| (o, o.to_f64()));
        }
        for (local, name) in chunk.names.into_iter().enumerate() {
            let g = match self.index.get(name.as_str()) {
                Some(&g) => g,
                None if self.visit.is_some() => return Err(changed_error()),
                None => {
                    self.index.insert(name.as_str().into(), self.levels.len());
                    self.levels.push(ScannedLevel::empty(name));
                    self.levels.len() - 1
                }
            };
            let level = &mut self.levels[g];
            level.summary = level.summary.merge(&chunk.summaries[local]);
            // Chunks come in file order: the first chunk with a value has
            // the level's first.
            if level.first_line.is_none() && chunk.first_lines[local] != usize::MAX {
                level.first_line = Some(chunk.first_lines[local]);
            }
            if let Some(visit) = &mut self.visit {
                visit(g, &chunk.offsets[local], &chunk.lines[local]);
            } else if self.keep_values {
                level.offsets.extend_from_slice(&chunk.offsets[local]);
                level.lines.extend_from_slice(&chunk.lines[local]);
            }
        }
        self.decimals = self.decimals.max(chunk.decimals);
        self.excluded.extend(chunk.excluded);
        self.exclude_hits.extend(chunk.exclude_hits);
        self.last_line = self.last_line.max(chunk.last_line);
        Ok(())
    }

    pub(super) fn finish(
        self,
        plan: &RowPlan,
        spec: &ScanSpec<'_>,
        sha256: Option<String>,
        bytes: u64,
    ) -> Result<Scanned, DataError> {
        for (line, _) in spec.exclude {
            if !self.exclude_hits.contains(line) {
                return Err(crate::data::exclude_error(
                    *line,
                    plan.header_line,
                    self.last_line,
                ));
            }
        }
        Ok(Scanned {
            levels: self.levels,
            origin: self.origin.map_or(0.0, |o| o.1),
            decimals: self.decimals,
            excluded: self.excluded,
            sha256,
            fingerprint: None,
            bytes,
        })
    }
}

/// A later pass found what the first did not: the bytes changed between.
pub fn changed_error() -> DataError {
    DataError {
        line: None,
        column: None,
        message: "the file changed while it was being read (a later pass over it found other data than the first)".into(),
        hint: Some("build again once nothing writes to the file; copy a file that is still being written and read the copy".into()),
    }
}
