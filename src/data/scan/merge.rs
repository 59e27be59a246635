//! Chunk results merged in file order.

use super::*;

/// The chunks merged so far, in file order.
pub(super) struct Merged {
    pub(super) keep_values: bool,
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

impl Merged {
    pub(super) fn new(keep_values: bool) -> Self {
        Merged {
            keep_values,
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
                None => {
                    self.index.insert(name.as_str().into(), self.levels.len());
                    self.levels.push(ScannedLevel {
                        name,
                        summary: GroupSummary {
                            n: 0,
                            mean: f64::NAN,
                            ss: f64::NAN,
                        },
                        offsets: Vec::new(),
                        lines: Vec::new(),
                    });
                    self.levels.len() - 1
                }
            };
            let level = &mut self.levels[g];
            level.summary = level.summary.merge(&chunk.summaries[local]);
            if self.keep_values {
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
            bytes,
        })
    }
}
