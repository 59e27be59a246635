//! Splitting a chunk into records and cells.

use super::*;

/// Parses one chunk. Plain chunks (no quotes, no lone CR) are split with
/// memchr; others go through the full RFC 4180 reader.
pub(super) fn parse_chunk(job: &Job<'_>, plan: &RowPlan) -> Result<ChunkResult, DataError> {
    let bytes = &job.chunk.bytes()[job.start..];
    let text = utf8_text(bytes, job.line).map_err(csv_error)?;
    let mut acc = RowAccumulator::new(plan);
    let end_line;
    let plain = memchr::memchr(b'"', bytes).is_none()
        && memchr::memchr_iter(b'\r', bytes).all(|i| bytes.get(i + 1) == Some(&b'\n'));
    if plain && plan.filters.is_empty() && plan.factors.len() == 1 {
        end_line = plain_cells(bytes, text, job.line, plan, &mut acc)?;
    } else if plain {
        let mut fields: Vec<&str> = Vec::with_capacity(plan.width);
        let mut line = job.line;
        let mut from = 0;
        // A plain loop beats a vectorised search here: fields are short.
        let delimiter = plan.delimiter;
        for (i, &b) in bytes.iter().enumerate() {
            if b != delimiter && b != b'\n' {
                continue;
            }
            if b == b'\n' {
                close_record(text, &mut fields, from..i, line, &mut acc)?;
                line += 1;
            } else {
                fields.push(&text[from..i]);
            }
            from = i + 1;
        }
        if from < bytes.len() || !fields.is_empty() {
            close_record(text, &mut fields, from..bytes.len(), line, &mut acc)?;
        }
        end_line = line;
    } else {
        let mut parser = RecordParser::new(text, plan.delimiter, job.line);
        for record in parser.by_ref() {
            let record = record.map_err(csv_error)?;
            let fields: Vec<&str> = record.fields.iter().map(String::as_str).collect();
            acc.row(&fields, record.line)?;
        }
        end_line = parser.line();
    }
    Ok(ChunkResult {
        end_line,
        ..acc.finish()
    })
}

/// The plain reader without `where` filters: picks out the factor and
/// response cells as it goes, without collecting fields. Returns the line
/// after the chunk.
pub(super) fn plain_cells(
    bytes: &[u8],
    text: &str,
    first_line: usize,
    plan: &RowPlan,
    acc: &mut RowAccumulator<'_>,
) -> Result<usize, DataError> {
    let (fi, yi) = (plan.factors[0].0, plan.response.0);
    let delimiter = plan.delimiter;
    let mut line = first_line;
    let (mut field, mut from) = (0, 0);
    let (mut g, mut y) = (0..0, 0..0);
    let mut end_record = |field: usize,
                          from: usize,
                          end: usize,
                          g: &mut std::ops::Range<usize>,
                          y: &mut std::ops::Range<usize>,
                          line: usize| {
        let end = if end > from && bytes[end - 1] == b'\r' {
            end - 1
        } else {
            end
        };
        if field == 0 && end == from {
            return Ok(()); // a blank line
        }
        if field == fi {
            *g = from..end;
        } else if field == yi {
            *y = from..end;
        }
        if acc.admit(field + 1, line)? {
            acc.cells(&[&text[g.clone()]], &text[y.clone()], line)?;
        }
        Ok::<(), DataError>(())
    };
    let mut step = |i: usize,
                    field: &mut usize,
                    from: &mut usize,
                    g: &mut std::ops::Range<usize>,
                    y: &mut std::ops::Range<usize>,
                    line: &mut usize| {
        if bytes[i] == delimiter {
            if *field == fi {
                *g = *from..i;
            } else if *field == yi {
                *y = *from..i;
            }
            *field += 1;
        } else {
            end_record(*field, *from, i, g, y, *line)?;
            *line += 1;
            *field = 0;
        }
        *from = i + 1;
        Ok::<(), DataError>(())
    };
    // Eight bytes at a time: a word's delimiters and line feeds as a bit
    // mask (exact zero-byte detection, Mycroft's trick without false hits).
    let words = bytes.chunks_exact(8);
    let tail = words.remainder().len();
    let spread = |b: u8| u64::from(b) * 0x0101_0101_0101_0101;
    let (delims, feeds) = (spread(delimiter), spread(b'\n'));
    let zero_bytes = |v: u64| {
        const LOW7: u64 = 0x7f7f_7f7f_7f7f_7f7f;
        !(((v & LOW7).wrapping_add(LOW7)) | v | LOW7)
    };
    for (k, word) in words.enumerate() {
        let w = u64::from_le_bytes(word.try_into().unwrap_or([0; 8]));
        let mut hits = zero_bytes(w ^ delims) | zero_bytes(w ^ feeds);
        while hits != 0 {
            let i = k * 8 + (hits.trailing_zeros() / 8) as usize;
            step(i, &mut field, &mut from, &mut g, &mut y, &mut line)?;
            hits &= hits - 1;
        }
    }
    let tail_start = bytes.len() - tail;
    for (i, &b) in bytes.iter().enumerate().skip(tail_start) {
        if b == delimiter || b == b'\n' {
            step(i, &mut field, &mut from, &mut g, &mut y, &mut line)?;
        }
    }
    if from < bytes.len() || field > 0 {
        end_record(field, from, bytes.len(), &mut g, &mut y, line)?;
    }
    Ok(line)
}

/// Ends a record of the plain reader at `last` (its last field); a blank
/// line is skipped.
pub(super) fn close_record<'t>(
    text: &'t str,
    fields: &mut Vec<&'t str>,
    last: std::ops::Range<usize>,
    line: usize,
    acc: &mut RowAccumulator<'_>,
) -> Result<(), DataError> {
    let end = match text[last.clone()].strip_suffix('\r') {
        Some(t) => last.start + t.len(),
        None => last.end,
    };
    if fields.is_empty() && end == last.start {
        return Ok(());
    }
    fields.push(&text[last.start..end]);
    let done = acc.row(fields, line);
    fields.clear();
    done
}
