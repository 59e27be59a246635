//! `sheaf watch`: rebuild when the document or a data file it reads changes,
//! and with `--serve` show the report on 127.0.0.1, reloading the open page
//! after each rebuild. The report files themselves stay script-free: the
//! reload snippet is added only to pages as they are served.

mod inputs;
pub mod server;

use crate::compile::{Built, CACHE_DIR, build_file};
use crate::diag::Diagnostic;
use crate::output::write_outputs;
use crate::render::Format;
use inputs::Inputs;
use notify::{RecursiveMode, Watcher};
use std::path::PathBuf;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

/// The default port of `sheaf watch --serve` (our own choice, in the
/// unassigned range).
pub const DEFAULT_PORT: u16 = 7357;

/// Editors save in several steps: a rebuild waits until no event has come
/// for this long, but never longer than `MAX_SETTLE` in all.
const SETTLE: Duration = Duration::from_millis(150);
const MAX_SETTLE: Duration = Duration::from_secs(2);

/// What to watch and where to serve.
pub struct WatchOptions {
    pub document: PathBuf,
    pub out: PathBuf,
    pub format: Format,
    /// The port for `--serve` (0: any free port); `None` serves nothing.
    pub serve: Option<u16>,
    pub short_errors: bool,
    pub confine: bool,
}

/// One build and write; prints a one-line status. Returns what to follow
/// next: what the build read, with the content it read.
fn rebuild(opts: &WatchOptions, version: &AtomicU64, before: &Inputs) -> Inputs {
    let start = Instant::now();
    let cache = opts.out.join(CACHE_DIR);
    let outcome = build_file(&opts.document, opts.format, Some(&cache), opts.confine)
        .and_then(|b| write_outputs(&opts.out, &b).map(|_| b));
    match outcome {
        Ok(b) => {
            let n = version.fetch_add(1, Ordering::SeqCst) + 1;
            eprintln!("[{n}] {}", status_line(opts, &b, start.elapsed()));
            Inputs::after_build(&opts.document, Some(&b), None, before)
        }
        Err(d) => {
            if opts.short_errors {
                eprintln!("{}", d.short());
            } else {
                eprint!("{d}");
            }
            eprintln!("waiting for a change; the last good report stays in place");
            let file = d.place.as_ref().map(|p| PathBuf::from(&p.file));
            Inputs::after_build(&opts.document, None, file.as_deref(), before)
        }
    }
}

fn status_line(opts: &WatchOptions, b: &Built, took: Duration) -> String {
    let warnings = match b.warnings.len() {
        0 => String::new(),
        1 => " (1 warning)".to_string(),
        n => format!(" ({n} warnings)"),
    };
    format!(
        "rebuilt {} in {:.2} s ({} of {} blocks computed){warnings}",
        opts.out.join(&b.report_name).display(),
        took.as_secs_f64(),
        b.recomputed,
        b.blocks,
    )
}

/// The report's file name, served at `/`.
fn report_name(opts: &WatchOptions) -> String {
    let stem = opts
        .document
        .file_stem()
        .map_or_else(|| "report".into(), |s| s.to_string_lossy().into_owned());
    format!("{stem}.{}", opts.format.extension())
}

/// Adds a watch on every folder of `inputs` not watched yet.
fn watch_folders(inputs: &Inputs, watcher: &mut impl Watcher, watched: &mut Vec<PathBuf>) {
    for folder in inputs.folders() {
        if !watched.contains(&folder) && watcher.watch(&folder, RecursiveMode::NonRecursive).is_ok()
        {
            watched.push(folder);
        }
    }
}

/// Watches and rebuilds until the process is stopped.
pub fn run(opts: WatchOptions) -> Result<(), Diagnostic> {
    let version = Arc::new(AtomicU64::new(0));
    let mut inputs = rebuild(&opts, &version, &Inputs::default());
    if let Some(port) = opts.serve {
        let site = server::Site {
            out: opts.out.clone(),
            report: report_name(&opts),
            version: Arc::clone(&version),
        };
        let port = server::start(port, site)?;
        eprintln!("serving on http://127.0.0.1:{port}/");
    }
    let (tx, rx) = mpsc::channel();
    let mut watcher = notify::recommended_watcher(tx)
        .map_err(|e| Diagnostic::new(format!("cannot watch files: {e}")))?;
    let mut watched: Vec<PathBuf> = Vec::new();
    watch_folders(&inputs, &mut watcher, &mut watched);
    loop {
        let Ok(event) = rx.recv() else { return Ok(()) };
        let mut touched = inputs.touched_by(&event);
        if touched.is_empty() {
            continue;
        }
        let settle_until = Instant::now() + MAX_SETTLE;
        while Instant::now() < settle_until {
            match rx.recv_timeout(SETTLE) {
                Ok(event) => touched.extend(inputs.touched_by(&event)),
                Err(_) => break,
            }
        }
        if !inputs.content_changed(&touched) {
            continue;
        }
        inputs = rebuild(&opts, &version, &inputs);
        watch_folders(&inputs, &mut watcher, &mut watched);
    }
}
