//! Cutting a source into chunks of whole records, and the threads that
//! parse them.

use super::*;
use twox_hash::XxHash3_64;

/// A run of whole records: borrowed from memory, or read from a stream.
pub(super) enum Chunk<'a> {
    Borrowed(&'a [u8]),
    Owned(Vec<u8>),
}

impl Chunk<'_> {
    pub(super) fn bytes(&self) -> &[u8] {
        match self {
            Chunk::Borrowed(b) => b,
            Chunk::Owned(v) => v,
        }
    }
}

/// A chunk and where it sits in the file.
pub(super) struct Job<'a> {
    /// Bytes of the chunk already read (the header, in the first chunk).
    pub(super) start: usize,
    /// The line on which `chunk[start..]` begins; 0 when `relative`.
    pub(super) line: usize,
    /// Lines are counted from the chunk's start; the merge adds its line.
    pub(super) relative: bool,
    pub(super) chunk: Chunk<'a>,
}

/// Cuts a source into chunks of whole records. A chunk is the first
/// `chunk_bytes` of what is left, cut back to the last record end; a record
/// longer than that doubles the window until it fits. The same bytes give
/// the same chunks whether they are in memory or streamed.
pub(super) struct Chunker<'a> {
    pub(super) source: Source<'a>,
    pub(super) chunk_bytes: usize,
    /// Memory: the offset of the next chunk.
    pub(super) offset: usize,
    /// Stream: bytes read past the last chunk.
    pub(super) carry: Vec<u8>,
    pub(super) eof: bool,
    pub(super) hasher: Option<Sha256>,
    /// A fast 64-bit fingerprint of the same bytes, which later passes
    /// compare instead of hashing again with SHA-256.
    pub(super) fingerprint: Option<XxHash3_64>,
    pub(super) bytes_read: u64,
}

impl<'a> Chunker<'a> {
    pub(super) fn new(source: Source<'a>, chunk_bytes: usize) -> Self {
        let stream = matches!(source, Source::Stream(_));
        let (hasher, fingerprint) = (stream.then(Sha256::new), stream.then(XxHash3_64::new));
        Chunker {
            source,
            chunk_bytes,
            offset: 0,
            carry: Vec::new(),
            eof: false,
            hasher,
            fingerprint,
            bytes_read: 0,
        }
    }

    pub(super) fn at_end(&self) -> bool {
        match &self.source {
            Source::Memory(b) => self.offset >= b.len(),
            Source::Stream(_) => self.eof && self.carry.is_empty(),
        }
    }

    pub(super) fn digest(&mut self) -> Option<String> {
        self.hasher.take().map(|h| {
            h.finalize()
                .iter()
                .map(|b| format!("{b:02x}"))
                .collect::<String>()
        })
    }

    pub(super) fn fingerprint(&mut self) -> Option<u64> {
        self.fingerprint.take().map(|f| f.finish())
    }

    pub(super) fn next_chunk(&mut self) -> std::io::Result<Option<Chunk<'a>>> {
        let chunk = match &mut self.source {
            Source::Memory(bytes) => {
                let bytes: &'a [u8] = bytes;
                let rest = &bytes[self.offset..];
                if rest.is_empty() {
                    return Ok(None);
                }
                let mut window = self.chunk_bytes;
                let end = loop {
                    if window >= rest.len() {
                        break rest.len();
                    }
                    if let Some(end) = record_end(&rest[..window]) {
                        break end;
                    }
                    window *= 2;
                };
                self.offset += end;
                self.bytes_read += end as u64;
                Chunk::Borrowed(&rest[..end])
            }
            Source::Stream(reader) => {
                let mut buf = std::mem::take(&mut self.carry);
                let mut window = self.chunk_bytes;
                let end = loop {
                    while buf.len() < window && !self.eof {
                        // read_to_end fills spare capacity without zeroing it.
                        let have = buf.len();
                        buf.reserve(window - have);
                        let n = (&mut *reader)
                            .take((window - have) as u64)
                            .read_to_end(&mut buf)?;
                        if n == 0 {
                            self.eof = true;
                        }
                        if let Some(h) = &mut self.hasher {
                            h.update(&buf[have..]);
                        }
                        if let Some(f) = &mut self.fingerprint {
                            f.write(&buf[have..]);
                        }
                        self.bytes_read += n as u64;
                    }
                    if buf.is_empty() {
                        return Ok(None);
                    }
                    if buf.len() < window {
                        // The end of the file closes the last record.
                        break buf.len();
                    }
                    if let Some(end) = record_end(&buf[..window]) {
                        break end;
                    }
                    window *= 2;
                };
                let mut rest = Vec::with_capacity(self.chunk_bytes);
                rest.extend_from_slice(&buf[end..]);
                buf.truncate(end);
                self.carry = rest;
                Chunk::Owned(buf)
            }
        };
        Ok(Some(chunk))
    }
}

/// Just past the last line feed in `bytes` that is outside quotes (`bytes`
/// starts outside quotes, at a record's start); `None` if there is none.
pub(super) fn record_end(bytes: &[u8]) -> Option<usize> {
    if memchr::memchr(b'"', bytes).is_none() {
        return memchr::memrchr(b'\n', bytes).map(|i| i + 1);
    }
    // A doubled quote toggles twice, so parity says whether we are inside.
    let mut inside = false;
    let mut end = None;
    for i in memchr::memchr2_iter(b'"', b'\n', bytes) {
        if bytes[i] == b'"' {
            inside = !inside;
        } else if !inside {
            end = Some(i + 1);
        }
    }
    end
}

/// A producer thread feeds `threads` workers; this thread merges in order.
pub(super) fn parallel<'a>(
    jobs: impl Iterator<Item = std::io::Result<Job<'a>>> + Send,
    plan: &RowPlan,
    threads: usize,
    merged: &mut Merged<'_>,
) -> Result<(), DataError> {
    type Outcome = (Result<ChunkResult, DataError>, bool);
    let stop = AtomicBool::new(false);
    // A short queue bounds the bytes in flight: queued + one per worker.
    let (job_tx, job_rx) = mpsc::sync_channel::<(usize, std::io::Result<Job<'a>>)>(2);
    let (out_tx, out_rx) = mpsc::channel::<(usize, Outcome)>();
    // Chunks not yet merged, whether queued, parsing or parsed, are at most
    // `window`: a chunk takes a token before it is queued and gives it back
    // once merged. Without it a slow merge (a later pass that does more per
    // value) or a worker held up by a busy machine would let parsed chunks
    // pile up.
    let window = threads + 2;
    let (token_tx, token_rx) = mpsc::sync_channel::<()>(window);
    for _ in 0..window {
        let _ = token_tx.send(());
    }
    let job_rx = Mutex::new(job_rx);
    std::thread::scope(|scope| {
        let stop = &stop;
        scope.spawn(move || {
            for (i, job) in jobs.enumerate() {
                if stop.load(Ordering::Relaxed)
                    || token_rx.recv().is_err()
                    || job_tx.send((i, job)).is_err()
                {
                    break;
                }
            }
        });
        for _ in 0..threads {
            let out_tx = out_tx.clone();
            let job_rx = &job_rx;
            scope.spawn(move || {
                loop {
                    let next = match job_rx.lock() {
                        Ok(rx) => rx.recv(),
                        Err(_) => break,
                    };
                    let Ok((i, job)) = next else { break };
                    if stop.load(Ordering::Relaxed) {
                        break;
                    }
                    let outcome = match job {
                        Ok(job) => (parse_chunk(&job, plan), job.relative),
                        Err(e) => (Err(io_error(e)), false),
                    };
                    if out_tx.send((i, outcome)).is_err() {
                        break;
                    }
                }
            });
        }
        drop(out_tx);
        let mut waiting: BTreeMap<usize, Outcome> = BTreeMap::new();
        let mut next = 0;
        let result = (|| {
            for (i, outcome) in out_rx.iter() {
                waiting.insert(i, outcome);
                while let Some((outcome, relative)) = waiting.remove(&next) {
                    merged.add(outcome, relative)?;
                    next += 1;
                    let _ = token_tx.send(());
                }
            }
            Ok(())
        })();
        if result.is_err() {
            // Nothing more is needed: stop the workers, and take queued jobs
            // until the producer sees the flag and hangs up.
            stop.store(true, Ordering::Relaxed);
            drop(out_rx);
            drop(token_tx);
            if let Ok(rx) = job_rx.lock() {
                while rx.recv().is_ok() {}
            }
        }
        result
    })
}
