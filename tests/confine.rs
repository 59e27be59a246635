//! `--confine`: untrusted documents read data only from inside their folder,
//! and write only inside it. Each escape is refused with a clear message,
//! and nothing is written; links planted in an output folder are never
//! followed, with or without `--confine`.

use std::path::Path;
use std::process::Command;

fn run(dir: &Path, data: &str) -> (Option<i32>, String) {
    std::fs::write(
        dir.join("doc/report.md"),
        format!("```anova\ndata: {data}\nmodel: y ~ g\n```\n"),
    )
    .expect("doc");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .args(["build", "doc/report.md", "-o", "doc/out", "--confine"])
        .output()
        .expect("runs");
    (
        o.status.code(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

#[test]
fn every_escape_is_refused() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    let data = "y,g\n1,a\n2,a\n3,b\n5,b\n";
    std::fs::create_dir_all(p.join("doc/sub")).expect("dirs");
    std::fs::write(p.join("doc/sub/inside.csv"), data).expect("inside");
    std::fs::write(p.join("secret.csv"), data).expect("outside");
    let outside = p.join("secret.csv");

    // Inside the tree (through a `..` that stays inside): allowed.
    let (code, err) = run(p, "sub/../sub/inside.csv");
    assert_eq!(code, Some(0), "{err}");

    for (path, why) in [
        ("../secret.csv", "a path that leaves the document's folder"),
        (
            "sub/../../secret.csv",
            "a path that leaves the document's folder",
        ),
        (outside.to_str().expect("utf-8"), "an absolute path"),
    ] {
        let (code, err) = run(p, path);
        assert_eq!(code, Some(1), "{path}: {err}");
        assert!(
            err.contains(why) && err.contains("--confine"),
            "{path}: {err}"
        );
    }
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(&outside, p.join("doc/link.csv")).expect("symlink");
        let (code, err) = run(p, "link.csv");
        assert_eq!(code, Some(1), "{err}");
        assert!(
            err.contains("a link that points outside the document's folder"),
            "{err}"
        );
    }
    // Without --confine the same document may read outside (trusted use).
    std::fs::write(
        p.join("doc/report.md"),
        "```anova\ndata: ../secret.csv\nmodel: y ~ g\n```\n",
    )
    .expect("doc");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(p)
        .args(["build", "doc/report.md", "-o", "out2"])
        .output()
        .expect("runs");
    assert!(o.status.success());
}

fn sheaf(dir: &Path, args: &[&str]) -> (Option<i32>, String) {
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .args(args)
        .output()
        .expect("runs");
    (
        o.status.code(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

/// A study in `doc/` and a file outside it that no build may touch.
fn study() -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    std::fs::create_dir_all(p.join("doc")).expect("doc");
    std::fs::write(p.join("doc/plants.csv"), "y,g\n1,a\n2,a\n3,b\n5,b\n").expect("data");
    std::fs::write(
        p.join("doc/report.md"),
        "# T\n\n```anova\nid: growth\ndata: plants.csv\nmodel: y ~ g\nplot: box\n```\n",
    )
    .expect("doc");
    std::fs::write(p.join("victim.txt"), "PRECIOUS").expect("victim");
    dir
}

fn victim_intact(p: &Path) {
    assert_eq!(
        std::fs::read_to_string(p.join("victim.txt")).expect("victim"),
        "PRECIOUS",
        "a file outside the output folder was written"
    );
}

#[test]
fn outputs_outside_the_documents_folder_are_refused_under_confine() {
    let dir = study();
    let p = dir.path();
    for out in ["out", "doc/../out", "doc/sub/../../out"] {
        let (code, err) = sheaf(p, &["build", "doc/report.md", "-o", out, "--confine"]);
        assert_eq!(code, Some(1), "{out}: {err}");
        assert!(
            err.contains("outside the document's folder")
                || err.contains("leaves the document's folder"),
            "{out}: {err}"
        );
        assert!(!p.join("out").exists(), "{out}: nothing may be created");
    }
    let absolute = p.join("elsewhere");
    let absolute = absolute.to_str().expect("utf-8");
    let (code, err) = sheaf(p, &["build", "doc/report.md", "-o", absolute, "--confine"]);
    assert_eq!(code, Some(1), "{err}");
    assert!(!p.join("elsewhere").exists());
    // Inside the tree, through a `..` that stays inside: allowed.
    std::fs::create_dir(p.join("doc/x")).expect("x");
    let (code, err) = sheaf(
        p,
        &["build", "doc/report.md", "-o", "doc/x/../out", "--confine"],
    );
    assert_eq!(code, Some(0), "{err}");
    assert!(p.join("doc/out/report.html").is_file());
}

#[cfg(unix)]
#[test]
fn links_planted_in_an_output_folder_are_never_followed() {
    use std::os::unix::fs::symlink;
    let dir = study();
    let p = dir.path();
    let victim = p.join("victim.txt");
    // The old fixed temporary names and every output name, as links.
    let out = p.join("doc/out");
    std::fs::create_dir_all(&out).expect("out");
    for name in [
        ".report.html.tmp",
        ".report.results.json.tmp",
        "report.html",
        "report.results.json",
        "report.sha256",
    ] {
        symlink(&victim, out.join(name)).expect("plant");
    }
    for confine in [true, false] {
        let mut args = vec!["build", "doc/report.md", "-o", "doc/out"];
        if confine {
            args.push("--confine");
        }
        let (code, err) = sheaf(p, &args);
        assert_eq!(code, Some(0), "{err}");
        victim_intact(p);
        for name in ["report.html", "report.results.json", "report.sha256"] {
            let meta = std::fs::symlink_metadata(out.join(name)).expect("written");
            assert!(meta.is_file(), "{name} is a regular file now");
        }
        assert!(!out.join(".report.html.tmp").exists());
    }
    // Markdown figures: a link at a figure's name.
    symlink(&victim, out.join("report-growth-box.svg")).expect("plant");
    let (code, err) = sheaf(
        p,
        &[
            "build",
            "doc/report.md",
            "-o",
            "doc/out",
            "--to",
            "md",
            "--confine",
        ],
    );
    assert_eq!(code, Some(0), "{err}");
    victim_intact(p);

    // Cache entries planted as links (to a file outside, and to a FIFO-like
    // non-file): never read, and removed as links by the next build.
    let cache = out.join(".sheaf-cache");
    for entry in std::fs::read_dir(&cache).expect("cache").flatten() {
        let name = entry.file_name().to_string_lossy().into_owned();
        if name.len() == 64 {
            std::fs::remove_file(entry.path()).expect("drop");
            symlink(&victim, entry.path()).expect("plant entry");
        }
    }
    let (code, err) = sheaf(
        p,
        &["build", "doc/report.md", "-o", "doc/out", "--to", "md"],
    );
    assert_eq!(code, Some(0), "{err}");
    assert!(
        err.contains("1 computed"),
        "a linked entry is a miss: {err}"
    );
    victim_intact(p);
}

#[cfg(unix)]
#[test]
fn a_linked_output_or_cache_folder_is_refused() {
    use std::os::unix::fs::symlink;
    let dir = study();
    let p = dir.path();
    std::fs::create_dir(p.join("outside")).expect("outside");
    // An output folder that is itself a link (to a folder outside).
    symlink(p.join("outside"), p.join("doc/out")).expect("plant");
    let (code, err) = sheaf(p, &["build", "doc/report.md", "-o", "doc/out", "--confine"]);
    assert_eq!(code, Some(1), "{err}");
    assert!(err.contains("is a symbolic link"), "{err}");
    assert_eq!(std::fs::read_dir(p.join("outside")).expect("ls").count(), 0);
    std::fs::remove_file(p.join("doc/out")).expect("unplant");

    // A link at the cache folder, with and without --confine: refused, and
    // the folder it points to stays empty.
    std::fs::create_dir(p.join("doc/out")).expect("out");
    symlink(p.join("outside"), p.join("doc/out/.sheaf-cache")).expect("plant cache");
    for confine in [true, false] {
        let mut args = vec!["build", "doc/report.md", "-o", "doc/out"];
        if confine {
            args.push("--confine");
        }
        let (code, err) = sheaf(p, &args);
        assert_eq!(code, Some(1), "{err}");
        assert!(err.contains(".sheaf-cache is not a folder"), "{err}");
        assert_eq!(std::fs::read_dir(p.join("outside")).expect("ls").count(), 0);
        assert!(!p.join("doc/out/report.html").exists(), "nothing written");
    }

    // A link at the lock file: refused, the target untouched.
    std::fs::remove_file(p.join("doc/out/.sheaf-cache")).expect("unplant");
    std::fs::create_dir(p.join("doc/out/.sheaf-cache")).expect("cache");
    symlink(p.join("victim.txt"), p.join("doc/out/.sheaf-cache/lock")).expect("plant lock");
    let (code, err) = sheaf(p, &["build", "doc/report.md", "-o", "doc/out"]);
    assert_eq!(code, Some(1), "{err}");
    assert!(err.contains("cannot lock"), "{err}");
    victim_intact(p);
}

#[test]
fn confined_builds_read_no_cache() {
    let dir = study();
    let p = dir.path();
    let args = ["build", "doc/report.md", "-o", "doc/out", "--confine"];
    for _ in 0..2 {
        let (code, err) = sheaf(p, &args);
        assert_eq!(code, Some(0), "{err}");
        assert!(
            err.contains("1 computed, 0 from the cache"),
            "an entry found in an unread folder is not trusted: {err}"
        );
    }
    // The same folder without --confine uses the entry the builds left.
    let (code, err) = sheaf(p, &["build", "doc/report.md", "-o", "doc/out"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(err.contains("0 computed, 1 from the cache"), "{err}");
}
