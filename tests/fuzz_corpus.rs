//! Replays the checked-in fuzz corpus (fuzz/corpus/<target>/) through the
//! same entry points the fuzz targets use, so CI catches regressions without
//! a fuzzer. Every input must be handled without a panic.

use std::path::Path;

/// A fuzz entry point.
type Target = fn(&[u8]);

#[test]
fn every_corpus_input_is_handled_without_a_panic() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("fuzz/corpus");
    let targets: [(&str, Target); 11] = [
        ("block_parser", sheaf::fuzzing::block_parser),
        ("formula", sheaf::fuzzing::formula),
        ("document", sheaf::fuzzing::document),
        ("csv", sheaf::fuzzing::csv),
        ("expand", sheaf::fuzzing::expand),
        ("scan", sheaf::fuzzing::scan),
        ("cache_entry", sheaf::fuzzing::cache_entry),
        ("spreadsheet", sheaf::fuzzing::spreadsheet),
        ("expression", sheaf::fuzzing::expression),
        ("parquet", sheaf::fuzzing::parquet),
        ("engines", sheaf::fuzzing::engines),
    ];
    let mut replayed = 0;
    for (name, run) in targets {
        let dir = root.join(name);
        let mut files: Vec<_> = std::fs::read_dir(&dir)
            .unwrap_or_else(|_| panic!("{} exists", dir.display()))
            .filter_map(|e| e.ok())
            .collect();
        files.sort_by_key(|e| e.file_name());
        for f in files {
            run(&std::fs::read(f.path()).expect("corpus file"));
            replayed += 1;
        }
    }
    assert!(
        replayed >= 10,
        "the corpus is nearly empty ({replayed} inputs)"
    );
}
