//! `--confine`: untrusted documents read data only from inside their folder.
//! Each escape is refused with a clear message, and nothing is written.

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
        .args(["build", "doc/report.md", "-o", "out", "--confine"])
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
