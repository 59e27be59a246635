//! The preview server of `sheaf watch --serve`: the output folder, read-only,
//! on 127.0.0.1, one request per connection.
//!
//! - It answers only requests addressed to itself (`Host: 127.0.0.1:<port>`
//!   or `localhost:<port>`), so a web page whose site name is re-pointed at
//!   127.0.0.1 (DNS rebinding) cannot read reports through the browser.
//! - It serves only regular files whose resolved path lies inside the
//!   resolved output folder: no link leads out, and no FIFO or device is read.
//! - Each connection has its own thread, at most `MAX_CONNECTIONS` at once,
//!   with deadlines for reading the request and for writing the answer, so a
//!   client that asks for a large file and never reads holds up nobody else.

use crate::diag::Diagnostic;
use std::io::{Read, Write};
use std::net::{TcpListener, TcpStream};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// Connections served at once; more are answered 503 at once. A page, its
/// figures and the reload poll need a handful.
pub const MAX_CONNECTIONS: usize = 16;
/// Time a client has to send its whole request head.
const READ_DEADLINE: Duration = Duration::from_secs(5);
/// Time a client has to take the whole answer, and the longest it may leave
/// one write waiting.
const WRITE_DEADLINE: Duration = Duration::from_secs(60);
const WRITE_STALL: Duration = Duration::from_secs(10);
/// Longest request head read; a browser's is well under 2 KiB.
const MAX_HEAD: usize = 16 * 1024;

/// The page-reload snippet, added to HTML pages as they are served (never to
/// the report files).
const RELOAD: &str = "<script>/* added by sheaf watch --serve; not part of the report */(function(){var v=null;setInterval(function(){fetch('/__sheaf/version').then(function(r){return r.text()}).then(function(t){if(v===null){v=t}else if(t!==v){location.reload()}}).catch(function(){})},700)})();</script>";

/// What the server shows.
pub struct Site {
    /// The output folder.
    pub out: PathBuf,
    /// The report's file name, served at `/`.
    pub report: String,
    /// The rebuild counter, served at `/__sheaf/version`.
    pub version: Arc<AtomicU64>,
}

/// Binds 127.0.0.1:`port` (0 lets the system choose) and serves `site` from
/// a background thread. Returns the port bound.
pub fn start(port: u16, site: Site) -> Result<u16, Diagnostic> {
    let listener = TcpListener::bind(("127.0.0.1", port)).map_err(|e| {
        Diagnostic::new(format!("cannot serve on 127.0.0.1:{port}: {e}"))
            .hint("choose another port with --port")
    })?;
    let port = listener
        .local_addr()
        .map_err(|e| Diagnostic::new(format!("cannot serve on 127.0.0.1:{port}: {e}")))?
        .port();
    let site = Arc::new(site);
    std::thread::spawn(move || accept(listener, port, site));
    Ok(port)
}

/// Holds one of the `MAX_CONNECTIONS` places while a connection is served.
struct Place(Arc<AtomicUsize>);

impl Drop for Place {
    fn drop(&mut self) {
        self.0.fetch_sub(1, Ordering::SeqCst);
    }
}

fn accept(listener: TcpListener, port: u16, site: Arc<Site>) {
    let open = Arc::new(AtomicUsize::new(0));
    for stream in listener.incoming() {
        let Ok(stream) = stream else {
            // Out of file descriptors, say: give the others time to finish.
            std::thread::sleep(Duration::from_millis(50));
            continue;
        };
        if open.fetch_add(1, Ordering::SeqCst) >= MAX_CONNECTIONS {
            open.fetch_sub(1, Ordering::SeqCst);
            refuse_busy(stream);
            continue;
        }
        let place = Place(Arc::clone(&open));
        let site = Arc::clone(&site);
        // If the thread cannot be made, the closure and its place are dropped.
        let _ = std::thread::Builder::new()
            .name("sheaf-preview".into())
            .spawn(move || {
                let _place = place;
                serve_connection(stream, port, &site);
            });
    }
}

fn refuse_busy(mut stream: TcpStream) {
    let _ = stream.set_write_timeout(Some(Duration::from_secs(1)));
    let _ = write_head(&mut stream, 503, "text/plain; charset=utf-8", 5, &[]);
    let _ = stream.write_all(b"busy\n");
}

/// A parsed request head: what is asked for and whom it is addressed to.
#[derive(Debug, PartialEq, Eq)]
pub struct Request {
    pub method: String,
    pub target: String,
    pub host: Option<String>,
}

/// Parses a request head (request line and header lines); `Err` is the
/// status to answer with.
pub fn parse_head(head: &[u8]) -> Result<Request, u16> {
    let text = std::str::from_utf8(head).map_err(|_| 400u16)?;
    let mut lines = text.split('\n').map(|l| l.strip_suffix('\r').unwrap_or(l));
    let mut parts = lines.next().unwrap_or("").split(' ');
    let (Some(method), Some(target), Some(version), None) =
        (parts.next(), parts.next(), parts.next(), parts.next())
    else {
        return Err(400);
    };
    if method.is_empty() || !version.starts_with("HTTP/1.") {
        return Err(400);
    }
    let mut host = None;
    for line in lines.take_while(|l| !l.is_empty()) {
        let Some((name, value)) = line.split_once(':') else {
            return Err(400);
        };
        if name.eq_ignore_ascii_case("host") {
            // Two Host headers: which one the client meant is unknowable.
            if host.replace(value.trim().to_string()).is_some() {
                return Err(400);
            }
        }
    }
    Ok(Request {
        method: method.to_string(),
        target: target.to_string(),
        host,
    })
}

/// Whether a Host header names this server: `127.0.0.1:<port>` or
/// `localhost:<port>` (the port may be left out only when it is 80).
pub fn host_allowed(host: Option<&str>, port: u16) -> bool {
    let Some(host) = host else {
        return false;
    };
    ["127.0.0.1", "localhost"].iter().any(|name| {
        host.eq_ignore_ascii_case(&format!("{name}:{port}"))
            || (port == 80 && host.eq_ignore_ascii_case(name))
    })
}

/// The file name a request target asks for: the path without query or
/// fragment, percent-decoded; `/` is the report. `None` for anything but
/// one plain name (no folders, no hidden files).
pub fn requested_name(target: &str, report: &str) -> Option<String> {
    let path = target.split(['?', '#']).next().unwrap_or("");
    let path = path.strip_prefix('/')?;
    if path.is_empty() {
        return Some(report.to_string());
    }
    let name = String::from_utf8(percent_decode(path)?).ok()?;
    let plain = !name.contains(['/', '\\', '\0']) && !name.starts_with('.');
    plain.then_some(name)
}

fn percent_decode(text: &str) -> Option<Vec<u8>> {
    let bytes = text.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i] == b'%' {
            let hex = std::str::from_utf8(bytes.get(i + 1..i + 3)?).ok()?;
            out.push(u8::from_str_radix(hex, 16).ok()?);
            i += 3;
        } else {
            out.push(bytes[i]);
            i += 1;
        }
    }
    Some(out)
}

/// Opens `name` in the output folder if it is a regular file whose resolved
/// path lies inside the resolved folder. The resolved path is opened without
/// following a link at its end and without waiting on a FIFO, and what was
/// opened is checked again, so a swap after the check gains nothing.
pub fn open_inside(out: &Path, name: &str) -> Option<(std::fs::File, u64)> {
    let root = out.canonicalize().ok()?;
    let path = root.join(name).canonicalize().ok()?;
    if !path.starts_with(&root) || path == root {
        return None;
    }
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(libc::O_NOFOLLOW | libc::O_NONBLOCK);
    }
    let file = options.open(&path).ok()?;
    let meta = file.metadata().ok()?;
    meta.is_file().then_some((file, meta.len()))
}

fn content_type(name: &str) -> &'static str {
    match name.rsplit('.').next() {
        Some("html") => "text/html; charset=utf-8",
        Some("svg") => "image/svg+xml",
        Some("png") => "image/png",
        Some("json") => "application/json",
        Some("md") => "text/markdown; charset=utf-8",
        Some("tex") => "text/x-tex; charset=utf-8",
        Some("docx") => "application/vnd.openxmlformats-officedocument.wordprocessingml.document",
        Some("css") => "text/css; charset=utf-8",
        _ => "application/octet-stream",
    }
}

fn reason(status: u16) -> &'static str {
    match status {
        200 => "OK",
        400 => "Bad Request",
        404 => "Not Found",
        405 => "Method Not Allowed",
        408 => "Request Timeout",
        421 => "Misdirected Request",
        431 => "Request Header Fields Too Large",
        503 => "Service Unavailable",
        _ => "Internal Server Error",
    }
}

fn write_head(
    stream: &mut TcpStream,
    status: u16,
    kind: &str,
    length: u64,
    extra: &[(&str, &str)],
) -> std::io::Result<()> {
    let mut head = format!(
        "HTTP/1.1 {status} {}\r\nContent-Type: {kind}\r\nContent-Length: {length}\r\nCache-Control: no-store\r\nX-Content-Type-Options: nosniff\r\nConnection: close\r\n",
        reason(status)
    );
    for (name, value) in extra {
        head.push_str(&format!("{name}: {value}\r\n"));
    }
    head.push_str("\r\n");
    stream.write_all(head.as_bytes())
}

/// Reads up to the blank line that ends the head, within the deadline.
fn read_head(stream: &mut TcpStream) -> Result<Vec<u8>, u16> {
    let deadline = Instant::now() + READ_DEADLINE;
    let mut head = Vec::new();
    let mut buffer = [0u8; 2048];
    loop {
        let left = deadline.saturating_duration_since(Instant::now());
        if left.is_zero() || stream.set_read_timeout(Some(left)).is_err() {
            return Err(408);
        }
        let n = match stream.read(&mut buffer) {
            Ok(0) | Err(_) => return Err(408),
            Ok(n) => n,
        };
        head.extend_from_slice(&buffer[..n]);
        let end = head.windows(2).position(|w| w == b"\n\n").or_else(|| {
            head.windows(4)
                .position(|w| w == b"\r\n\r\n")
                .map(|i| i + 2)
        });
        if let Some(end) = end {
            head.truncate(end);
            return Ok(head);
        }
        if head.len() > MAX_HEAD {
            return Err(431);
        }
    }
}

/// A complete answer held in memory (messages, the version, HTML pages).
fn answer(stream: &mut TcpStream, status: u16, kind: &str, body: &[u8], head_only: bool) {
    let extra: &[(&str, &str)] = if status == 405 {
        &[("Allow", "GET, HEAD")]
    } else {
        &[]
    };
    if write_head(stream, status, kind, body.len() as u64, extra).is_ok() && !head_only {
        send(stream, body);
    }
}

fn serve_connection(mut stream: TcpStream, port: u16, site: &Site) {
    let _ = stream.set_write_timeout(Some(WRITE_STALL));
    let text = "text/plain; charset=utf-8";
    let request = match read_head(&mut stream).and_then(|h| parse_head(&h)) {
        Ok(r) => r,
        Err(408) => return,
        Err(status) => return answer(&mut stream, status, text, reason(status).as_bytes(), false),
    };
    if !host_allowed(request.host.as_deref(), port) {
        let body = format!("this server answers only to 127.0.0.1:{port} and localhost:{port}\n");
        return answer(&mut stream, 421, text, body.as_bytes(), false);
    }
    let head_only = request.method == "HEAD";
    if request.method != "GET" && !head_only {
        return answer(&mut stream, 405, text, b"only GET and HEAD\n", false);
    }
    if request.target.split('?').next() == Some("/__sheaf/version") {
        let version = site.version.load(Ordering::SeqCst).to_string();
        return answer(&mut stream, 200, text, version.as_bytes(), head_only);
    }
    let Some((name, (file, length))) = requested_name(&request.target, &site.report)
        .and_then(|name| open_inside(&site.out, &name).map(|f| (name, f)))
    else {
        return answer(&mut stream, 404, text, b"not found\n", head_only);
    };
    if name.ends_with(".html") {
        return serve_page(&mut stream, file, head_only);
    }
    if write_head(&mut stream, 200, content_type(&name), length, &[]).is_ok() && !head_only {
        send(&mut stream, file.take(length));
    }
}

/// An HTML page with the reload snippet added before its last `</body>`.
fn serve_page(stream: &mut TcpStream, mut file: std::fs::File, head_only: bool) {
    let mut bytes = Vec::new();
    if file.read_to_end(&mut bytes).is_err() {
        return answer(
            stream,
            500,
            "text/plain",
            b"cannot read the page\n",
            head_only,
        );
    }
    let mut text = String::from_utf8_lossy(&bytes).into_owned();
    if let Some(at) = text.rfind("</body>") {
        text.insert_str(at, &format!("{RELOAD}\n"));
    }
    answer(
        stream,
        200,
        content_type(".html"),
        text.as_bytes(),
        head_only,
    );
}

/// Copies a body to the client within the write deadline.
fn send(stream: &mut TcpStream, mut body: impl Read) {
    let deadline = Instant::now() + WRITE_DEADLINE;
    let mut buffer = vec![0u8; 64 * 1024];
    loop {
        let n = match body.read(&mut buffer) {
            Ok(0) | Err(_) => return,
            Ok(n) => n,
        };
        let left = deadline.saturating_duration_since(Instant::now());
        if left.is_zero()
            || stream
                .set_write_timeout(Some(left.min(WRITE_STALL)))
                .is_err()
        {
            return;
        }
        if stream.write_all(&buffer[..n]).is_err() {
            return;
        }
    }
}

#[cfg(test)]
#[path = "server_tests.rs"]
mod tests;
