//! `sheaf watch`: rebuild when the document or a data file it reads changes,
//! and with `--serve` show the report on 127.0.0.1, reloading the open page
//! after each rebuild. The report files themselves stay script-free: the
//! reload snippet is added only to pages as they are served.

use crate::compile::{Built, CACHE_DIR, build_file};
use crate::diag::Diagnostic;
use crate::output::write_outputs;
use crate::render::Format;
use notify::{RecursiveMode, Watcher};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

/// The default port of `sheaf watch --serve` (our own choice, in the
/// unassigned range).
pub const DEFAULT_PORT: u16 = 7357;

/// What to watch and where to serve.
pub struct WatchOptions {
    pub document: PathBuf,
    pub out: PathBuf,
    pub format: Format,
    pub serve: Option<u16>,
    pub short_errors: bool,
    pub confine: bool,
}

/// The files a build read: the document and every data file it names.
fn inputs_of(document: &Path, built: Option<&Built>) -> Vec<PathBuf> {
    let mut files = vec![document.to_path_buf()];
    if let Some(b) = built {
        let base = document.parent().map(PathBuf::from).unwrap_or_default();
        if let Ok(v) = serde_json::from_slice::<serde_json::Value>(&b.results) {
            for i in v["inputs"].as_array().into_iter().flatten() {
                if let Some(p) = i["path"].as_str() {
                    files.push(base.join(p));
                }
            }
        }
    }
    files
}

/// One build and write; prints a one-line status. Returns what it read.
fn rebuild(opts: &WatchOptions, version: &AtomicU64) -> Vec<PathBuf> {
    let start = Instant::now();
    match build_file(
        &opts.document,
        opts.format,
        Some(&opts.out.join(CACHE_DIR)),
        opts.confine,
    )
    .and_then(|b| write_outputs(&opts.out, &b).map(|_| b))
    {
        Ok(b) => {
            let n = version.fetch_add(1, Ordering::SeqCst) + 1;
            eprintln!(
                "[{n}] rebuilt {} in {:.2} s ({} of {} block(s) computed){}",
                opts.out.join(&b.report_name).display(),
                start.elapsed().as_secs_f64(),
                b.recomputed,
                b.blocks,
                if b.warnings.is_empty() {
                    String::new()
                } else {
                    format!(" ({} warning(s))", b.warnings.len())
                }
            );
            inputs_of(&opts.document, Some(&b))
        }
        Err(d) => {
            if opts.short_errors {
                eprintln!("{}", d.short());
            } else {
                eprint!("{d}");
            }
            eprintln!("waiting for a change; the last good report stays in place");
            inputs_of(&opts.document, None)
        }
    }
}

/// Watches and rebuilds until the process is stopped.
pub fn run(opts: WatchOptions) -> Result<(), Diagnostic> {
    let version = Arc::new(AtomicU64::new(0));
    let mut watched = rebuild(&opts, &version);
    if let Some(port) = opts.serve {
        let server = tiny_http::Server::http(("127.0.0.1", port)).map_err(|e| {
            Diagnostic::new(format!("cannot serve on 127.0.0.1:{port}: {e}"))
                .hint("choose another port with --port")
        })?;
        let out = opts.out.clone();
        let report = format!(
            "{}.{}",
            opts.document
                .file_stem()
                .map_or_else(|| "report".into(), |s| s.to_string_lossy().into_owned()),
            opts.format.extension()
        );
        let v = Arc::clone(&version);
        std::thread::spawn(move || serve(server, &out, &report, &v));
        eprintln!("serving on http://127.0.0.1:{port}/");
    }
    let (tx, rx) = mpsc::channel();
    let mut watcher = notify::recommended_watcher(tx)
        .map_err(|e| Diagnostic::new(format!("cannot watch files: {e}")))?;
    let mut dirs: Vec<PathBuf> = Vec::new();
    let mut watch_dirs = |files: &[PathBuf], watcher: &mut notify::RecommendedWatcher| {
        for f in files {
            let dir = f
                .parent()
                .filter(|d| !d.as_os_str().is_empty())
                .map_or_else(|| PathBuf::from("."), Path::to_path_buf);
            if !dirs.contains(&dir) && watcher.watch(&dir, RecursiveMode::NonRecursive).is_ok() {
                dirs.push(dir);
            }
        }
    };
    watch_dirs(&watched, &mut watcher);
    let same = |a: &Path, b: &Path| {
        a.file_name() == b.file_name() && a.canonicalize().ok() == b.canonicalize().ok()
    };
    loop {
        let Ok(event) = rx.recv() else { return Ok(()) };
        let relevant = |e: &notify::Result<notify::Event>| {
            e.as_ref().is_ok_and(|ev| {
                ev.paths.iter().any(|p| {
                    watched
                        .iter()
                        .any(|w| same(p, w) || p.file_name() == w.file_name())
                })
            })
        };
        if !relevant(&event) {
            continue;
        }
        // Editors write in several steps: wait for the burst to settle.
        while rx.recv_timeout(Duration::from_millis(150)).is_ok() {}
        watched = rebuild(&opts, &version);
        watch_dirs(&watched, &mut watcher);
    }
}

const RELOAD: &str = "<script>/* added by sheaf watch --serve; not part of the report */(function(){var v=null;setInterval(function(){fetch('/__sheaf/version').then(function(r){return r.text()}).then(function(t){if(v===null){v=t}else if(t!==v){location.reload()}}).catch(function(){})},700)})();</script>";

fn content_type(name: &str) -> &'static str {
    match name.rsplit('.').next() {
        Some("html") => "text/html; charset=utf-8",
        Some("svg") => "image/svg+xml",
        Some("png") => "image/png",
        Some("json") => "application/json",
        Some("md") => "text/markdown; charset=utf-8",
        _ => "application/octet-stream",
    }
}

fn respond(request: tiny_http::Request, status: u16, body: Vec<u8>, kind: &str) {
    let mut response = tiny_http::Response::from_data(body).with_status_code(status);
    if let Ok(h) = tiny_http::Header::from_bytes(&b"Content-Type"[..], kind.as_bytes()) {
        response = response.with_header(h);
    }
    if let Ok(h) = tiny_http::Header::from_bytes(&b"Cache-Control"[..], &b"no-store"[..]) {
        response = response.with_header(h);
    }
    let _ = request.respond(response);
}

/// Serves the output folder; only plain file names inside it are served.
fn serve(server: tiny_http::Server, out: &Path, report: &str, version: &AtomicU64) {
    for request in server.incoming_requests() {
        let url = request
            .url()
            .split('?')
            .next()
            .unwrap_or("/")
            .trim_start_matches('/')
            .to_string();
        if url == "__sheaf/version" {
            respond(
                request,
                200,
                version.load(Ordering::SeqCst).to_string().into_bytes(),
                "text/plain",
            );
            continue;
        }
        let name = if url.is_empty() {
            report.to_string()
        } else {
            url
        };
        if name.contains('/') || name.contains('\\') || name.starts_with('.') {
            respond(request, 404, b"not found".to_vec(), "text/plain");
            continue;
        }
        match std::fs::read(out.join(&name)) {
            Ok(mut bytes) => {
                if name.ends_with(".html") {
                    let text = String::from_utf8_lossy(&bytes).replacen(
                        "</body>",
                        &format!("{RELOAD}\n</body>"),
                        1,
                    );
                    bytes = text.into_bytes();
                }
                respond(request, 200, bytes, content_type(&name));
            }
            Err(_) => respond(request, 404, b"not found".to_vec(), "text/plain"),
        }
    }
}
