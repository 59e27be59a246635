//! `sheaf watch`, end to end: one edit gives one rebuild and then quiet; a
//! failed build is reported once and a fix to the file in error rebuilds;
//! the preview server answers only to its own name, serves only the output
//! folder, and one client that never reads holds up nobody else.
//! Requests go only to 127.0.0.1; every wait is bounded, and nothing asserts
//! how fast anything is.

use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpStream;
use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// A running `sheaf watch`, its terminal lines collected as they come.
struct Watch {
    child: Child,
    lines: Arc<Mutex<Vec<String>>>,
}

impl Drop for Watch {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

impl Watch {
    fn start(dir: &Path, extra: &[&str]) -> Watch {
        let mut args = vec!["watch", "report.md", "-o", "out"];
        args.extend_from_slice(extra);
        let mut child = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(dir)
            .args(&args)
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .expect("starts");
        let lines = Arc::new(Mutex::new(Vec::new()));
        let stderr = child.stderr.take().expect("stderr");
        let sink = Arc::clone(&lines);
        std::thread::spawn(move || {
            for line in BufReader::new(stderr).lines().map_while(Result::ok) {
                sink.lock().expect("lines").push(line);
            }
        });
        Watch { child, lines }
    }

    /// Starts with `--serve --port 0` and returns the port it reports.
    fn serving(dir: &Path) -> (Watch, u16) {
        let w = Watch::start(dir, &["--serve", "--port", "0"]);
        let mut port = None;
        let found = wait_for(Duration::from_secs(30), || {
            port = w.lines().iter().find_map(|l| {
                l.strip_prefix("serving on http://127.0.0.1:")
                    .and_then(|rest| rest.trim_end_matches('/').parse::<u16>().ok())
            });
            port.is_some()
        });
        assert!(found, "never served: {:?}", w.lines());
        (w, port.expect("port"))
    }

    fn lines(&self) -> Vec<String> {
        self.lines.lock().expect("lines").clone()
    }

    fn count(&self, needle: &str) -> usize {
        self.lines().iter().filter(|l| l.contains(needle)).count()
    }

    /// Waits (bounded) until `needle` has appeared `n` times.
    fn wait_count(&self, needle: &str, n: usize) -> bool {
        wait_for(Duration::from_secs(30), || self.count(needle) >= n)
    }
}

fn wait_for(deadline: Duration, mut check: impl FnMut() -> bool) -> bool {
    let start = Instant::now();
    while start.elapsed() < deadline {
        if check() {
            return true;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    false
}

/// Sends a raw request head and returns the status and the body as text.
fn request(port: u16, head: &str) -> Option<(u16, String)> {
    let mut s =
        TcpStream::connect_timeout(&([127, 0, 0, 1], port).into(), Duration::from_secs(2)).ok()?;
    s.set_read_timeout(Some(Duration::from_secs(5))).ok()?;
    s.write_all(head.as_bytes()).ok()?;
    let mut bytes = Vec::new();
    s.read_to_end(&mut bytes).ok()?;
    let text = String::from_utf8_lossy(&bytes).into_owned();
    let status = text.split(' ').nth(1)?.parse().ok()?;
    let body = text.split_once("\r\n\r\n").map(|(_, b)| b.to_string())?;
    Some((status, body))
}

fn get(port: u16, path: &str) -> Option<(u16, String)> {
    request(
        port,
        &format!("GET {path} HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\nConnection: close\r\n\r\n"),
    )
}

fn version(port: u16) -> Option<String> {
    get(port, "/__sheaf/version").map(|(_, b)| b)
}

const DATA: &str = "y,g\n1.0,a\n2.0,a\n3.0,a\n4.0,b\n5.0,b\n6.5,b\n";

fn study(dir: &Path) {
    std::fs::write(dir.join("d.csv"), DATA).expect("data");
    std::fs::write(
        dir.join("report.md"),
        "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n\nF is {{ t.f | fixed(3) }}.\n",
    )
    .expect("doc");
}

#[test]
fn watch_serves_the_report_and_rebuilds_on_change() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    let (_w, port) = Watch::serving(p);
    let mut first = String::new();
    assert!(
        wait_for(Duration::from_secs(20), || get(port, "/").is_some_and(
            |(_, b)| {
                first = b;
                first.contains("F is")
            }
        )),
        "the report was never served"
    );
    assert!(
        first.contains("/__sheaf/version"),
        "served pages carry the reload snippet"
    );
    let on_disk = std::fs::read_to_string(p.join("out/report.html")).expect("report on disk");
    assert!(
        !on_disk.contains("<script"),
        "the report file itself stays script-free"
    );
    let before_edit = version(port).expect("version");
    std::fs::write(
        p.join("d.csv"),
        "y,g\n1.0,a\n2.0,a\n3.0,a\n4.0,b\n5.0,b\n9.5,b\n",
    )
    .expect("edit");
    // The F value as printed (three decimals) is what must change.
    let f_text = |b: &str| {
        b.split("F is ").nth(1).map(|t| {
            t.chars()
                .take_while(|c| *c != '<' && *c != '\n')
                .collect::<String>()
        })
    };
    let before = f_text(&first).expect("F in the first page");
    let changed = wait_for(Duration::from_secs(20), || {
        get(port, "/").is_some_and(|(_, b)| f_text(&b).is_some_and(|f| f != before))
    });
    assert!(changed, "the report did not change after the data did");
    // The counter moves once the new files are in place, a moment after the
    // page itself changed: wait for it rather than read it once.
    assert!(
        wait_for(Duration::from_secs(20), || version(port)
            .is_some_and(|v| v != before_edit)),
        "the version counter did not move after the rebuild"
    );
    // Nothing outside the output folder is served.
    assert_eq!(get(port, "/..%2Fd.csv").map(|r| r.0), Some(404));
    assert_eq!(get(port, "/../d.csv").map(|r| r.0), Some(404));
}

/// The loop used to take every event on a watched file as a change, its own
/// build's opening of the files included, and rebuilt several times a second
/// for ever after one edit.
#[test]
fn one_edit_gives_one_rebuild_and_then_quiet() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    let (w, port) = Watch::serving(p);
    assert!(w.wait_count("rebuilt", 1), "{:?}", w.lines());
    assert!(wait_for(Duration::from_secs(20), || version(port)
        .as_deref()
        == Some("1")));

    std::fs::write(p.join("d.csv"), DATA.replace("6.5", "8.5")).expect("edit");
    assert!(w.wait_count("rebuilt", 2), "{:?}", w.lines());
    // Quiet afterwards: the served page's counter holds while the page and
    // the counter are fetched, which reads files in the output folder.
    for _ in 0..15 {
        assert_eq!(version(port).as_deref(), Some("2"));
        assert!(get(port, "/").is_some_and(|(s, _)| s == 200));
        std::thread::sleep(Duration::from_millis(200));
    }
    assert_eq!(w.count("rebuilt"), 2, "{:?}", w.lines());

    // Saving identical bytes, or only touching the file, changes nothing.
    std::fs::write(p.join("d.csv"), DATA.replace("6.5", "8.5")).expect("same bytes");
    std::fs::write(
        p.join("report.md"),
        std::fs::read(p.join("report.md")).expect("doc"),
    )
    .expect("same doc");
    let file = std::fs::File::options()
        .append(true)
        .open(p.join("d.csv"))
        .expect("open");
    file.set_modified(std::time::SystemTime::now())
        .expect("touch");
    drop(file);
    std::thread::sleep(Duration::from_secs(2));
    assert_eq!(w.count("rebuilt"), 2, "{:?}", w.lines());
    assert_eq!(version(port).as_deref(), Some("2"));
}

/// An erroneous document used to print its error 7-8 times a second; and a
/// build that failed on a data file did not follow that file, so fixing it
/// did nothing.
#[test]
fn a_failed_build_is_reported_once_and_fixing_the_data_rebuilds() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    std::fs::write(
        p.join("d.csv"),
        "y,g\n1.0,a\n2.0,a\nthree,a\n4.0,b\n5.0,b\n",
    )
    .expect("bad data");
    let w = Watch::start(p, &[]);
    let waiting = "waiting for a change";
    assert!(w.wait_count(waiting, 1), "{:?}", w.lines());
    std::fs::write(
        p.join("d.csv"),
        "y,g\n1.0,a\n2.0,a\nthree,a\n4.0,b\n6.0,b\n",
    )
    .expect("still bad");
    assert!(w.wait_count(waiting, 2), "{:?}", w.lines());
    std::thread::sleep(Duration::from_secs(2));
    assert_eq!(w.count(waiting), 2, "{:?}", w.lines());
    std::fs::write(p.join("d.csv"), DATA).expect("fixed");
    assert!(w.wait_count("rebuilt", 1), "{:?}", w.lines());
    assert_eq!(w.count(waiting), 2, "{:?}", w.lines());
}

#[test]
fn an_erroneous_document_is_reported_once_per_edit() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    let broken = "```anova\nid: t\ndata: d.csv\nmodle: y ~ g\n```\n";
    std::fs::write(p.join("report.md"), broken).expect("doc");
    let w = Watch::start(p, &["--short-errors"]);
    let waiting = "waiting for a change";
    assert!(w.wait_count(waiting, 1), "{:?}", w.lines());
    std::fs::write(p.join("report.md"), broken.replace("modle", "mdoel")).expect("edit");
    assert!(w.wait_count(waiting, 2), "{:?}", w.lines());
    std::thread::sleep(Duration::from_secs(2));
    assert_eq!(w.count(waiting), 2, "{:?}", w.lines());
    assert_eq!(w.count("report.md:4:1"), 2, "{:?}", w.lines());
}

/// DNS rebinding: a page from another site whose name now points at
/// 127.0.0.1 sends that name as Host. Only 127.0.0.1:<port> and
/// localhost:<port> are answered.
#[test]
fn requests_for_another_host_are_refused() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    let (_w, port) = Watch::serving(p);
    assert!(wait_for(Duration::from_secs(20), || get(port, "/")
        .is_some_and(|(s, _)| s == 200)));
    let with_host = |host: &str| {
        request(port, &format!("GET / HTTP/1.1\r\nHost: {host}\r\n\r\n"))
            .map(|(s, b)| (s, b.contains("F is")))
    };
    assert_eq!(with_host(&format!("localhost:{port}")), Some((200, true)));
    assert_eq!(with_host(&format!("127.0.0.1:{port}")), Some((200, true)));
    for foreign in [
        format!("evil.test:{port}"),
        "evil.test".to_string(),
        "127.0.0.1".to_string(),
        format!("localhost:{}", port.wrapping_add(1)),
    ] {
        assert_eq!(with_host(&foreign), Some((421, false)), "{foreign}");
    }
    let version_elsewhere = request(
        port,
        &format!("GET /__sheaf/version HTTP/1.1\r\nHost: evil.test:{port}\r\n\r\n"),
    );
    assert_eq!(version_elsewhere.map(|r| r.0), Some(421));
    let no_host = request(port, "GET / HTTP/1.0\r\n\r\n");
    assert_eq!(no_host.map(|r| r.0), Some(421));
}

#[cfg(unix)]
#[test]
fn links_out_of_the_output_folder_are_not_followed() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    std::fs::write(p.join("secret.txt"), "the secret").expect("secret");
    let (_w, port) = Watch::serving(p);
    assert!(wait_for(Duration::from_secs(20), || get(port, "/")
        .is_some_and(|(s, _)| s == 200)));
    std::os::unix::fs::symlink(p.join("secret.txt"), p.join("out/leak.txt")).expect("link");
    std::os::unix::fs::symlink("../d.csv", p.join("out/data.csv")).expect("link");
    for name in ["/leak.txt", "/data.csv"] {
        let (status, body) = get(port, name).expect("answered");
        assert_eq!(status, 404, "{name}");
        assert!(!body.contains("secret") && !body.contains("1.0,a"));
    }
}

/// A client that asks for a large file and never reads used to hold the only
/// serving thread: every other request waited for ever.
#[test]
fn a_client_that_never_reads_holds_up_nobody() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    let (_w, port) = Watch::serving(p);
    assert!(wait_for(Duration::from_secs(20), || get(port, "/")
        .is_some_and(|(s, _)| s == 200)));
    // Far more than the socket buffers on both sides hold.
    std::fs::write(p.join("out/big.json"), vec![b' '; 64 << 20]).expect("big file");
    let mut stalled = Vec::new();
    for _ in 0..3 {
        let mut s = TcpStream::connect(("127.0.0.1", port)).expect("connects");
        write!(
            s,
            "GET /big.json HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n\r\n"
        )
        .expect("asks");
        stalled.push(s);
    }
    std::thread::sleep(Duration::from_millis(500));
    assert!(version(port).is_some(), "the counter is still answered");
    assert!(
        get(port, "/").is_some_and(|(s, b)| s == 200 && b.contains("F is")),
        "the page is still answered"
    );
    drop(stalled);
}

/// Connections that send nothing are closed after the request deadline, so
/// they cannot keep every place taken.
#[test]
fn idle_connections_are_closed_and_their_places_freed() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    study(p);
    let (_w, port) = Watch::serving(p);
    assert!(wait_for(Duration::from_secs(20), || get(port, "/")
        .is_some_and(|(s, _)| s == 200)));
    let idle: Vec<TcpStream> = (0..20)
        .map(|_| TcpStream::connect(("127.0.0.1", port)).expect("connects"))
        .collect();
    for mut s in idle {
        s.set_read_timeout(Some(Duration::from_secs(60)))
            .expect("timeout");
        let mut buffer = [0u8; 256];
        // The server ends each one: end of stream, or a short busy answer
        // followed by the end of stream. A client-side timeout fails.
        let closed = loop {
            match s.read(&mut buffer) {
                Ok(0) => break true,
                Ok(_) => continue,
                Err(e) => break e.kind() == std::io::ErrorKind::ConnectionReset,
            }
        };
        assert!(closed, "an idle connection was left open");
    }
    assert!(wait_for(Duration::from_secs(20), || get(port, "/")
        .is_some_and(|(s, _)| s == 200)));
}
