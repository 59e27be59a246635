use super::*;

#[test]
fn request_heads_are_parsed_strictly() {
    let r = parse_head(b"GET /a.svg?x=1 HTTP/1.1\r\nHost: localhost:7357\r\nAccept: */*\r\n")
        .expect("parses");
    assert_eq!(
        r,
        Request {
            method: "GET".into(),
            target: "/a.svg?x=1".into(),
            host: Some("localhost:7357".into()),
        }
    );
    // Bare line feeds are tolerated; a missing Host is recorded as missing.
    assert_eq!(parse_head(b"HEAD / HTTP/1.0\n").map(|r| r.host), Ok(None));
    for bad in [
        &b"GET /\r\n"[..],
        b"GET / HTTP/1.1 extra\r\n",
        b"GET / SPDY/3\r\n",
        b"GET / HTTP/1.1\r\nno colon here\r\n",
        b"GET / HTTP/1.1\r\nHost: 127.0.0.1:1\r\nHost: evil.test:1\r\n",
        b"GET /\xff HTTP/1.1\r\n",
    ] {
        assert_eq!(
            parse_head(bad),
            Err(400),
            "{}",
            String::from_utf8_lossy(bad)
        );
    }
}

/// DNS rebinding: a page on another site whose name now resolves to
/// 127.0.0.1 sends its own name as Host; only our two names pass.
#[test]
fn only_our_own_host_names_are_answered() {
    for ok in ["127.0.0.1:7357", "localhost:7357", "LocalHost:7357"] {
        assert!(host_allowed(Some(ok), 7357), "{ok}");
    }
    for bad in [
        None,
        Some(""),
        Some("127.0.0.1"),
        Some("localhost"),
        Some("127.0.0.1:7358"),
        Some("evil.test:7357"),
        Some("localhost.evil.test:7357"),
        Some("127.0.0.1:7357.evil.test"),
        Some("[::1]:7357"),
        Some("0.0.0.0:7357"),
    ] {
        assert!(!host_allowed(bad, 7357), "{bad:?}");
    }
    // Port 80 may be left out, as browsers do.
    assert!(host_allowed(Some("localhost"), 80));
}

#[test]
fn only_plain_names_are_requested() {
    let r = "report.html";
    assert_eq!(requested_name("/", r).as_deref(), Some(r));
    assert_eq!(requested_name("/?v=2", r).as_deref(), Some(r));
    assert_eq!(
        requested_name("/fresh-box.svg#top", r).as_deref(),
        Some("fresh-box.svg")
    );
    assert_eq!(
        requested_name("/my%20report.html", r).as_deref(),
        Some("my report.html")
    );
    for bad in [
        "/..%2Fd.csv",
        "/../d.csv",
        "/sub/x.svg",
        "/%2e%2e",
        "/.sheaf-cache",
        "/a%5Cb",
        "/a%00b",
        "/%zz",
        "/%ff",
        "http://evil.test/report.html",
        "*",
    ] {
        assert_eq!(requested_name(bad, r), None, "{bad}");
    }
}

#[cfg(unix)]
#[test]
fn links_out_of_the_folder_and_special_files_are_never_opened() {
    use std::os::unix::fs::symlink;
    let dir = tempfile::tempdir().expect("temp dir");
    let out = dir.path().join("out");
    std::fs::create_dir_all(out.join("figs")).expect("dirs");
    std::fs::write(dir.path().join("secret.txt"), "secret").expect("secret");
    std::fs::write(out.join("report.html"), "<p>ok</p>").expect("report");
    std::fs::write(out.join("figs/a.svg"), "<svg/>").expect("figure");
    symlink(dir.path().join("secret.txt"), out.join("leak.txt")).expect("link");
    symlink("../secret.txt", out.join("relative-leak.txt")).expect("link");
    symlink(dir.path(), out.join("parent")).expect("link");
    symlink(out.join("figs/a.svg"), out.join("inside.svg")).expect("link");
    let made = std::process::Command::new("mkfifo")
        .arg(out.join("pipe.json"))
        .status()
        .expect("mkfifo runs");
    assert!(made.success());

    let (_, len) = open_inside(&out, "report.html").expect("a plain file is served");
    assert_eq!(len, 9);
    assert!(
        open_inside(&out, "inside.svg").is_some(),
        "a link that stays inside"
    );
    for refused in [
        "leak.txt",
        "relative-leak.txt",
        "parent",
        "figs",
        "pipe.json",
        "none",
    ] {
        assert!(open_inside(&out, refused).is_none(), "{refused}");
    }
    // An output folder that is itself a link is resolved first: its files are
    // inside it, and links out of it still lead nowhere.
    symlink(&out, dir.path().join("out-link")).expect("link");
    assert!(open_inside(&dir.path().join("out-link"), "report.html").is_some());
    assert!(open_inside(&dir.path().join("out-link"), "leak.txt").is_none());
}
