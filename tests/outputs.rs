//! The outputs of a build are one set: two builds into the same folder at
//! once (and a `verify` reading it meanwhile) never leave or see a mix of
//! files from both, every output matches the manifest written with it, and
//! no temporary file is left behind. A build killed at any moment leaves
//! either the earlier set or a mix its manifest exposes, and the next build
//! repairs it.

use sha2::{Digest, Sha256};
use std::path::Path;
use std::process::{Child, Command, Stdio};

fn spawn(dir: &Path, args: &[&str]) -> Child {
    Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("runs")
}

fn hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Two studies with the same document name and different data, so that
/// their outputs have the same names and different contents.
fn studies(p: &Path) {
    for (name, last) in [("a", "7"), ("b", "9.5")] {
        let dir = p.join(name);
        std::fs::create_dir_all(&dir).expect("study");
        std::fs::write(
            dir.join("plants.csv"),
            format!("y,g\n1,a\n2,a\n3,a\n4,b\n5,b\n{last},b\n"),
        )
        .expect("data");
        std::fs::write(
            dir.join("report.md"),
            "# T\n\n```anova\nid: growth\ndata: plants.csv\nmodel: y ~ g\nplot: box, means\n```\n",
        )
        .expect("doc");
    }
}

/// The files of `out` (not sub-folders), sorted by name.
fn set(out: &Path) -> Vec<(String, Vec<u8>)> {
    let mut files: Vec<(String, Vec<u8>)> = std::fs::read_dir(out)
        .expect("out")
        .flatten()
        .filter(|e| e.file_type().is_ok_and(|t| t.is_file()))
        .map(|e| {
            let bytes = std::fs::read(e.path()).expect("read");
            (e.file_name().to_string_lossy().into_owned(), bytes)
        })
        .collect();
    files.sort();
    files
}

/// Every line of the manifest matches its file, and the manifest lists
/// every other file of the set.
fn manifest_holds(files: &[(String, Vec<u8>)]) -> bool {
    let Some((_, manifest)) = files.iter().find(|(n, _)| n == "report.sha256") else {
        return false;
    };
    let text = String::from_utf8_lossy(manifest);
    let listed: Vec<(&str, &str)> = text.lines().filter_map(|l| l.split_once("  ")).collect();
    listed.len() + 1 == files.len()
        && listed
            .iter()
            .all(|(hash, name)| files.iter().any(|(n, b)| n == name && hex(b) == *hash))
}

/// Names in sheaf's folder other than its lock, `.gitignore` and entries.
fn leftovers(out: &Path) -> Vec<String> {
    std::fs::read_dir(out.join(".sheaf-cache"))
        .expect("cache")
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n != "lock" && n != ".gitignore" && n.len() != 64)
        .collect()
}

#[test]
fn concurrent_builds_into_one_folder_never_mix_their_outputs() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    studies(p);
    let shared = p.join("shared");
    let shared = shared.to_str().expect("utf-8");
    // Each study's own set, built alone.
    let mut alone = Vec::new();
    for name in ["a", "b"] {
        let out = p.join(format!("alone-{name}"));
        let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(p.join(name))
            .args([
                "build",
                "report.md",
                "-o",
                out.to_str().expect("utf-8"),
                "--to",
                "md",
            ])
            .output()
            .expect("runs");
        assert!(o.status.success());
        alone.push(set(&out));
    }
    assert_ne!(alone[0], alone[1]);
    let trials = 25;
    for trial in 0..trials {
        let build = ["build", "report.md", "-o", shared, "--to", "md"];
        let first = if trial % 2 == 0 { "a" } else { "b" };
        let second = if trial % 2 == 0 { "b" } else { "a" };
        let one = spawn(&p.join(first), &build);
        let two = spawn(&p.join(second), &build);
        let reader = spawn(&p.join("a"), &["verify", "report.md", "-o", shared]);
        for child in [one, two] {
            let o = child.wait_with_output().expect("waits");
            let err = String::from_utf8_lossy(&o.stderr);
            assert!(o.status.success(), "trial {trial}: {err}");
        }
        let read = reader.wait_with_output().expect("waits");
        let said = String::from_utf8_lossy(&read.stderr);
        assert!(
            !said.contains("edited after sheaf wrote them"),
            "trial {trial}: verify saw a half-written set:\n{said}"
        );
        let now = set(Path::new(shared));
        assert!(
            now == alone[0] || now == alone[1],
            "trial {trial}: a mixed set"
        );
        assert!(manifest_holds(&now), "trial {trial}");
        assert_eq!(leftovers(Path::new(shared)), Vec::<String>::new());
    }
}

#[test]
fn a_killed_build_leaves_a_set_its_manifest_explains_and_the_next_build_repairs() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    studies(p);
    let out = p.join("out");
    let out_arg = out.to_str().expect("utf-8");
    let build = ["build", "report.md", "-o", out_arg, "--to", "md"];
    assert!(spawn(&p.join("a"), &build).wait().expect("waits").success());
    let earlier = set(&out);
    // Kill builds of the other study after a growing delay: whatever moment
    // the kill lands on, the folder holds the earlier set, the new set, or a
    // mix that its manifest exposes (a torn commit); never a mix that looks
    // whole.
    for delay_ms in [0u64, 2, 5, 10, 20, 40, 80] {
        let mut child = spawn(&p.join("b"), &build);
        std::thread::sleep(std::time::Duration::from_millis(delay_ms));
        let _ = child.kill();
        let _ = child.wait();
        let now = set(&out);
        if now != earlier {
            let whole = manifest_holds(&now);
            let is_new = now.iter().any(|(n, b)| {
                n == "report.sha256" && earlier.iter().all(|(m, c)| m != n || c != b)
            });
            assert!(!whole || is_new, "{delay_ms} ms: an unexplained mix");
        }
        // The next build of the first study puts its whole set back, clean.
        assert!(spawn(&p.join("a"), &build).wait().expect("waits").success());
        assert_eq!(set(&out), earlier, "{delay_ms} ms");
        assert_eq!(leftovers(&out), Vec::<String>::new(), "{delay_ms} ms");
    }
}
