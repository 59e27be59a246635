//! Incremental builds: a prose-only edit recomputes no block, a changed data
//! file recomputes exactly the blocks that read it, and cached and uncached
//! builds give byte-identical outputs. The count of computed blocks is
//! printed by `sheaf build`, which makes the cache observable.

use std::path::Path;
use std::process::Command;

fn build(dir: &Path, out: &str) -> (String, usize) {
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir)
        .args(["build", "report.md", "-o", out, "--to", "md"])
        .output()
        .expect("runs");
    let err = String::from_utf8_lossy(&o.stderr).into_owned();
    assert!(o.status.success(), "{err}");
    let computed = err
        .lines()
        .find_map(|l| {
            l.split(" block(s): ")
                .nth(1)
                .and_then(|r| r.split(' ').next())
                .and_then(|n| n.parse().ok())
        })
        .expect("a cache line");
    (err, computed)
}

fn files(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut v: Vec<(String, Vec<u8>)> = std::fs::read_dir(dir)
        .expect("dir")
        .filter_map(|e| e.ok())
        .filter(|e| e.path().is_file())
        .map(|e| {
            (
                e.file_name().to_string_lossy().into_owned(),
                std::fs::read(e.path()).expect("read"),
            )
        })
        .collect();
    v.sort();
    v
}

#[test]
fn unchanged_blocks_come_from_the_cache_and_change_nothing() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    std::fs::write(p.join("a.csv"), "y,g\n1,a\n2,a\n3,a\n4,b\n5,b\n7,b\n").expect("a");
    std::fs::write(p.join("b.csv"), "y,g\n10,x\n12,x\n11,x\n15,y\n16,y\n18,y\n").expect("b");
    let doc = "# T\n\n```anova\nid: first\ndata: a.csv\nmodel: y ~ g\nplot: box\n```\n\nFirst F {{ first.f | fixed(2) }}.\n\n```anova\nid: second\ndata: b.csv\nmodel: y ~ g\n```\n\n```power\nid: plan\ngroups: 3\neffect: 0.4\npower: 0.8\n```\n";
    std::fs::write(p.join("report.md"), doc).expect("doc");
    assert_eq!(build(p, "out").1, 3, "a cold build computes every block");
    assert_eq!(build(p, "out").1, 0, "nothing changed");

    // A prose-only edit, with a new paragraph that moves the blocks down.
    std::fs::write(
        p.join("report.md"),
        doc.replace("# T\n", "# T\n\nA new introduction.\n\nAnd more.\n"),
    )
    .expect("edit");
    assert_eq!(build(p, "out").1, 0, "prose edits recompute nothing");
    // The cached outputs equal an uncached build's, byte for byte (block
    // lines in the results file included).
    build(p, "fresh");
    std::fs::remove_dir_all(p.join("fresh/.sheaf-cache")).expect("drop cache");
    assert_eq!(build(p, "fresh").1, 3);
    assert_eq!(files(&p.join("out")), files(&p.join("fresh")));

    // One data file changes: only the block that reads it is recomputed.
    std::fs::write(p.join("b.csv"), "y,g\n10,x\n12,x\n11,x\n15,y\n16,y\n19,y\n").expect("edit b");
    assert_eq!(build(p, "out").1, 1);
    // A changed block is recomputed, the others are not.
    let doc2 = std::fs::read_to_string(p.join("report.md"))
        .expect("doc")
        .replace("effect: 0.4", "effect: 0.25");
    std::fs::write(p.join("report.md"), doc2).expect("edit");
    assert_eq!(build(p, "out").1, 1);
    // Deleting the cache is safe.
    std::fs::remove_dir_all(p.join("out/.sheaf-cache")).expect("drop");
    assert_eq!(build(p, "out").1, 3);
}
