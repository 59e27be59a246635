//! `sheaf watch --serve`, end to end on loopback: the served report changes
//! after a data file is edited, and the page-reload counter moves. Requests go
//! only to 127.0.0.1; every wait is bounded.

use std::io::{Read, Write};
use std::net::{TcpListener, TcpStream};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

struct Killed(Child);

impl Drop for Killed {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

fn get(port: u16, path: &str) -> Option<String> {
    let mut s =
        TcpStream::connect_timeout(&([127, 0, 0, 1], port).into(), Duration::from_millis(500))
            .ok()?;
    s.set_read_timeout(Some(Duration::from_secs(2))).ok()?;
    write!(
        s,
        "GET {path} HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n\r\n"
    )
    .ok()?;
    let mut body = String::new();
    s.read_to_string(&mut body).ok()?;
    Some(body)
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

#[test]
fn watch_serves_the_report_and_rebuilds_on_change() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    std::fs::write(
        p.join("d.csv"),
        "y,g\n1.0,a\n2.0,a\n3.0,a\n4.0,b\n5.0,b\n6.5,b\n",
    )
    .expect("data");
    std::fs::write(
        p.join("report.md"),
        "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\n```\n\nF is {{ t.f | fixed(3) }}.\n",
    )
    .expect("doc");
    // A free loopback port.
    let port = TcpListener::bind("127.0.0.1:0")
        .expect("bind")
        .local_addr()
        .expect("addr")
        .port();
    let child = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(p)
        .args([
            "watch",
            "report.md",
            "-o",
            "out",
            "--serve",
            "--port",
            &port.to_string(),
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("starts");
    let _guard = Killed(child);
    let mut first = String::new();
    assert!(
        wait_for(Duration::from_secs(20), || get(port, "/").is_some_and(
            |b| {
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
    let version = get(port, "/__sheaf/version").expect("version");
    // Edit a data value; the served report must change.
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
        get(port, "/").is_some_and(|b| f_text(&b).is_some_and(|f| f != before))
    });
    assert!(changed, "the report did not change after the data did");
    assert_ne!(get(port, "/__sheaf/version").expect("version"), version);
    // Nothing outside the output folder is served.
    assert!(get(port, "/..%2Fd.csv").is_some_and(|b| b.contains("404")));
}
