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

#[test]
fn the_cache_keeps_only_what_the_last_build_used_and_is_ignored_by_git() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    std::fs::write(p.join("a.csv"), "y,g\n1,a\n2,a\n3,a\n4,b\n5,b\n7,b\n").expect("a");
    std::fs::write(
        p.join("report.md"),
        "```anova\nid: first\ndata: a.csv\nmodel: y ~ g\n```\n\n```power\nid: plan\ngroups: 3\neffect: 0.4\npower: 0.8\n```\n",
    )
    .expect("doc");
    let entries = |p: &Path| -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(p.join("out/.sheaf-cache"))
            .expect("cache")
            .flatten()
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| n.len() == 64)
            .collect();
        v.sort();
        v
    };
    build(p, "out");
    let first = entries(p);
    assert_eq!(first.len(), 2, "{first:?}");
    // Five versions of the data: the cache still holds one entry per block.
    for last in 8..13 {
        std::fs::write(
            p.join("a.csv"),
            format!("y,g\n1,a\n2,a\n3,a\n4,b\n5,b\n{last},b\n"),
        )
        .expect("edit");
        assert_eq!(build(p, "out").1, 1);
        assert_eq!(entries(p).len(), 2, "{:?}", entries(p));
    }
    assert_ne!(entries(p), first);
    // Git ignores everything in the cache folder, the .gitignore included.
    let ignore = std::fs::read_to_string(p.join("out/.sheaf-cache/.gitignore")).expect("ignore");
    assert!(ignore.lines().any(|l| l == "*"), "{ignore}");
}

#[test]
fn leftovers_of_a_killed_build_are_removed_by_the_next() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    std::fs::write(p.join("a.csv"), "y,g\n1,a\n2,a\n3,a\n4,b\n5,b\n7,b\n").expect("a");
    std::fs::write(
        p.join("report.md"),
        "```anova\ndata: a.csv\nmodel: y ~ g\n```\n",
    )
    .expect("doc");
    // What a build killed while staging leaves (this version's staging
    // folder with a half-written file, and an older version's temporary
    // files), and an entry's temporary file from an older version.
    let staging = p.join("out/.sheaf-cache/staging-Ab12Cd");
    std::fs::create_dir_all(&staging).expect("staging");
    std::fs::write(staging.join("report.html"), "<html>half").expect("half");
    std::fs::write(p.join("out/.report.html.tmp"), "half").expect("old tmp");
    std::fs::write(
        p.join(format!("out/.sheaf-cache/.{}.tmp", "ab".repeat(32))),
        "x",
    )
    .expect("t");
    build(p, "out");
    let mut left: Vec<String> = std::fs::read_dir(p.join("out"))
        .expect("out")
        .chain(std::fs::read_dir(p.join("out/.sheaf-cache")).expect("cache"))
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.len() != 64)
        .collect();
    left.sort();
    assert_eq!(
        left,
        [
            ".gitignore",
            ".sheaf-cache",
            "lock",
            "report.md",
            "report.results.json",
            "report.sha256"
        ]
    );
}

/// A study in memory with a cache that serves whatever entry a test plants.
struct Planted {
    data: Vec<u8>,
    entry: Option<(String, Vec<u8>)>,
}

impl sheaf::compile::World for Planted {
    fn read(&self, _path: &str) -> std::io::Result<Vec<u8>> {
        Ok(self.data.clone())
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
    fn cache_get(&self, key: &str) -> Option<Vec<u8>> {
        self.entry
            .as_ref()
            .filter(|(k, _)| k == key)
            .map(|(_, e)| e.clone())
    }
}

const STUDY_DOC: &str =
    "# T\n\n```anova\nid: first\ndata: a.csv\nmodel: y ~ g\n```\n\nF = {{ first.f | fixed(3) }}.\n";
const STUDY_DATA: &str = "y,g\n1.5,a\n2.25,a\n3,a\n4,b\n5.5,b\n7,b\n";

fn build_with(entry: Option<(String, Vec<u8>)>) -> sheaf::compile::Built {
    let world = Planted {
        data: STUDY_DATA.as_bytes().to_vec(),
        entry,
    };
    sheaf::compile::compile(
        "report.md",
        STUDY_DOC.as_bytes(),
        &world,
        sheaf::render::Format::Html,
    )
    .expect("builds")
}

/// The cold build and its one cache entry.
fn cold() -> (sheaf::compile::Built, String, Vec<u8>) {
    let built = build_with(None);
    let (key, entry) = built.cache_entries.first().cloned().expect("an entry");
    (built, key, entry)
}

fn same_outputs(a: &sheaf::compile::Built, b: &sheaf::compile::Built) -> bool {
    a.report == b.report && a.results == b.results && a.files == b.files
}

#[test]
fn every_damaged_cache_entry_is_a_miss_and_changes_nothing() {
    let (cold, key, entry) = cold();
    // The intact entry is used, and gives the same outputs.
    let warm = build_with(Some((key.clone(), entry.clone())));
    assert_eq!(warm.recomputed, 0, "the intact entry is a hit");
    assert!(same_outputs(&warm, &cold));
    // One changed byte at every position, three kinds of change in turn.
    for i in 0..entry.len() {
        let mut damaged = entry.clone();
        damaged[i] ^= [0x01, 0x80, 0xff][i % 3];
        let built = build_with(Some((key.clone(), damaged)));
        assert_eq!(built.recomputed, 1, "byte {i}: a damaged entry is a miss");
        assert!(same_outputs(&built, &cold), "byte {i} changed the outputs");
    }
    // Cut short at every length.
    for len in 0..entry.len() {
        let built = build_with(Some((key.clone(), entry[..len].to_vec())));
        assert_eq!(built.recomputed, 1, "length {len}");
        assert!(same_outputs(&built, &cold), "length {len}");
    }
}

#[test]
fn an_entry_of_another_schema_version_revision_or_key_is_a_miss() {
    let (cold, key, entry) = cold();
    let newline = entry
        .iter()
        .position(|&b| b == b'\n')
        .expect("checksum line");
    let body = &entry[newline + 1..];
    // Re-sealed with a correct checksum, so only the header can refuse it.
    let reseal = |from: &str, to: &str| -> Vec<u8> {
        let text = String::from_utf8_lossy(body);
        let head_len = text.find("\n\n").expect("header") + 2;
        let mut changed = body[..head_len].to_vec();
        let replaced = String::from_utf8_lossy(&changed).replacen(from, to, 1);
        assert_ne!(
            replaced.as_bytes(),
            changed.as_slice(),
            "{from} is in the header"
        );
        changed = replaced.into_bytes();
        changed.extend_from_slice(&body[head_len..]);
        let mut out = format!("{}\n", sheaf::provenance::sha256_hex(&changed)).into_bytes();
        out.extend_from_slice(&changed);
        out
    };
    let schema = format!(
        "schema {}\n",
        <sheaf::outcome::BlockResult as sheaf::cache::Cacheable>::SCHEMA
    );
    let version = format!("sheaf {}\n", sheaf::VERSION);
    let revision = format!("revision {}\n", sheaf::cache::REVISION);
    let other_key = format!("key {}\n", "0".repeat(64));
    for (from, to) in [
        (schema.as_str(), "schema 999\n"),
        (version.as_str(), "sheaf 0.0.0-other\n"),
        (revision.as_str(), "revision 0123456789ab\n"),
        (&format!("key {key}\n"), other_key.as_str()),
    ] {
        let built = build_with(Some((key.clone(), reseal(from, to))));
        assert_eq!(built.recomputed, 1, "{to}");
        assert!(same_outputs(&built, &cold), "{to}");
    }
    // The old format (a bare serialized result) is a miss too.
    let bare = body[body.windows(2).position(|w| w == b"\n\n").expect("header") + 2..].to_vec();
    assert_eq!(build_with(Some((key, bare))).recomputed, 1);
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]

    /// Several changes at once (bytes replaced, inserted and removed) never
    /// panic and never change the outputs.
    #[test]
    fn arbitrary_damage_never_changes_the_report(
        edits in proptest::collection::vec((0usize..4096, 0u8..=255, 0u8..3), 1..8)
    ) {
        let (cold, key, entry) = cold();
        let mut damaged = entry.clone();
        for (at, byte, how) in edits {
            let at = at % (damaged.len() + 1);
            match how {
                0 if at < damaged.len() => damaged[at] = byte,
                1 => damaged.insert(at, byte),
                _ if at < damaged.len() => { damaged.remove(at); }
                _ => damaged.push(byte),
            }
        }
        proptest::prop_assume!(damaged != entry);
        let built = build_with(Some((key, damaged)));
        proptest::prop_assert_eq!(built.recomputed, 1);
        proptest::prop_assert!(same_outputs(&built, &cold));
    }
}

#[test]
fn presentation_edits_reuse_the_computation_and_show_the_new_presentation() {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    std::fs::write(p.join("a.csv"), "y,g\n1,a\n2,a\n3,a\n4,b\n5,b\n7,b\n").expect("a");
    let doc = "# T\n\n```anova\nid: first\ndata: a.csv\nmodel: y ~ g\nplot: box\n```\n";
    std::fs::write(p.join("report.md"), doc).expect("doc");
    assert_eq!(build(p, "out").1, 1);
    // A caption, display names, a unit and a comment: shown, not computed.
    let edited = doc.replace(
        "plot: box\n",
        "plot: box   # spread by group\ncaption: Growth by group\nnames: g = Growth regime\nunit: cm\norder: levels\n",
    );
    std::fs::write(p.join("report.md"), &edited).expect("edit");
    assert_eq!(build(p, "out").1, 0, "presentation edits recompute nothing");
    let report = std::fs::read_to_string(p.join("out/report.md")).expect("report");
    assert!(report.contains("Growth by group"), "{report}");
    assert!(report.contains("Growth regime"), "{report}");
    // The cached build equals an uncached one, byte for byte.
    std::fs::remove_dir_all(p.join("fresh")).ok();
    assert_eq!(build(p, "fresh").1, 1);
    assert_eq!(files(&p.join("out")), files(&p.join("fresh")));
    // A setting that enters the computation is recomputed.
    std::fs::write(
        p.join("report.md"),
        edited.replace("model: y ~ g\n", "model: y ~ g\nalpha: 0.01\n"),
    )
    .expect("edit");
    assert_eq!(build(p, "out").1, 1);
}
