//! Parquet files as data: the NIST StRD one-way datasets written as DECIMAL
//! and as DOUBLE columns reproduce the certified values, and every Parquet
//! file gives the same results file as the CSV file with the same table
//! (apart from the input's name and hash). Fixtures: tests/data/parquet/,
//! written by pyarrow with tests/reference/nist_parquet.py from the CSV
//! files in tests/data/nist/ (NIST/ITL StRD, see SOURCE.md there) and
//! tests/data/open/ (see SOURCES.md there); see README.md beside them.

use serde_json::Value;
use sheaf::compile::{DiskWorld, World, compile};
use sheaf::render::Format;
use std::io::Read;
use std::path::{Path, PathBuf};

fn data_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data")
}

fn build(doc: &str, world: &dyn World) -> Result<Value, Box<sheaf::diag::Diagnostic>> {
    let built = compile("report.md", doc.as_bytes(), world, Format::Markdown).map_err(Box::new)?;
    Ok(serde_json::from_slice(&built.results).expect("results parse"))
}

fn build_on_disk(doc: &str) -> Result<Value, Box<sheaf::diag::Diagnostic>> {
    build(doc, &DiskWorld { base: data_dir() })
}

/// A block's results without what names the block and its input (the
/// data file's name is also in messages).
fn stripped(block: &Value) -> Value {
    let mut b = block.clone();
    let map = b.as_object_mut().expect("a block is an object");
    for key in ["id", "line"] {
        map.remove(key);
    }
    let data = map.remove("data").expect("a data file");
    let text = b
        .to_string()
        .replace(data.as_str().expect("a path"), "DATA");
    serde_json::from_str(&text).expect("still JSON")
}

/// Every block of a build equals the last one (the CSV file) apart from
/// its id, line and data file.
fn assert_blocks_match_last(results: &Value) {
    let blocks = results["blocks"].as_array().expect("blocks");
    let csv = stripped(blocks.last().expect("a CSV block"));
    for b in &blocks[..blocks.len() - 1] {
        assert_eq!(stripped(b), csv, "block `{}` differs from the CSV", b["id"]);
    }
}

/// LRE = −log10(|x − c| / |c|) (McCullough 1998, Am. Stat. 52:358-366),
/// capped at 15 when exact, as tests/nist.rs computes it.
fn lre(got: f64, certified: f64) -> f64 {
    if got == certified {
        return 15.0;
    }
    (-((got - certified) / certified).abs().log10()).min(15.0)
}

#[test]
fn nist_datasets_as_decimal_and_double_columns_reproduce_the_certified_values() {
    let certified: Value = serde_json::from_str(include_str!("data/nist/certified.json"))
        .expect("certified.json parses");
    let datasets = certified["datasets"].as_object().expect("datasets");
    assert_eq!(datasets.len(), 11, "all eleven StRD ANOVA datasets");
    let mut worst = f64::INFINITY;
    for (name, entry) in datasets {
        let c = |key: &str| -> f64 {
            entry["certified"][key]
                .as_str()
                .expect("digit string")
                .parse()
                .expect("number")
        };
        let block = |id: &str, data: &str| {
            format!("```anova\nid: {id}\ndata: {data}\nmodel: value ~ group\n```\n\n")
        };
        let doc = format!(
            "# {name}\n\n{}{}{}",
            block("dec", &format!("parquet/nist/{name}.decimal.parquet")),
            block("dbl", &format!("parquet/nist/{name}.double.parquet")),
            block(
                "csv",
                &format!("nist/{}", entry["csv"].as_str().expect("csv"))
            ),
        );
        let results = build_on_disk(&doc).unwrap_or_else(|d| panic!("{name}: {d}"));
        for b in results["blocks"].as_array().expect("blocks") {
            let a = &b["anova"];
            let row = [
                lre(a["terms"][0]["ss"].as_f64().expect("ss"), c("between_ss")),
                lre(a["residual"]["ss"].as_f64().expect("ss"), c("within_ss")),
                lre(a["terms"][0]["ms"].as_f64().expect("ms"), c("between_ms")),
                lre(a["residual"]["ms"].as_f64().expect("ms"), c("within_ms")),
                lre(a["terms"][0]["f"].as_f64().expect("f"), c("f_statistic")),
            ];
            println!("{name:<8} {:<4} {row:.1?}", b["id"].as_str().unwrap_or("?"));
            for v in row {
                worst = worst.min(v);
                assert!(v >= 9.0, "{name} {}: LRE {v:.1} below 9 ({row:?})", b["id"]);
            }
            assert_eq!(a["terms"][0]["df"].as_f64(), Some(c("between_df")));
            assert_eq!(a["residual"]["df"].as_f64(), Some(c("within_df")));
        }
        // The decimal column carries the text's digits exactly: the same
        // results file as the CSV. The double column too wherever the
        // shortest text of each double is the file's text (no trailing
        // zeros written in the CSV).
        let blocks = results["blocks"].as_array().expect("blocks");
        assert_eq!(
            stripped(&blocks[0]),
            stripped(&blocks[2]),
            "{name}: decimal vs CSV"
        );
        if !has_trailing_zero(&data_dir().join("nist").join(entry["csv"].as_str().unwrap())) {
            assert_eq!(
                stripped(&blocks[1]),
                stripped(&blocks[2]),
                "{name}: double vs CSV"
            );
        } else {
            // The CSV's trailing zeros give its values more decimals than
            // the doubles' shortest texts, so the exact level sums are
            // formed on a finer grid and the last rounding can differ: the
            // tables agree to a few ulps (measured 2.3e-16 relative).
            assert_close(&blocks[1]["anova"], &blocks[2]["anova"], name);
        }
    }
    println!("lowest LRE over SS, MS and F, both Parquet forms and CSV: {worst:.1}");
}

/// Whether a value in the file's second column ends in a 0 after its
/// decimal point (then the shortest text of its double has fewer decimals).
/// Every number in `a` within 1e-14 relative of the one at the same place
/// in `b` (a few ulps), and everything else equal.
fn assert_close(a: &Value, b: &Value, name: &str) {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (x.as_f64().expect("x"), y.as_f64().expect("y"));
            let scale = x.abs().max(y.abs()).max(f64::MIN_POSITIVE);
            assert!((x - y).abs() / scale <= 1e-14, "{name}: {x} vs {y}");
        }
        (Value::Array(x), Value::Array(y)) => {
            assert_eq!(x.len(), y.len(), "{name}");
            x.iter().zip(y).for_each(|(x, y)| assert_close(x, y, name));
        }
        (Value::Object(x), Value::Object(y)) => {
            assert!(x.keys().eq(y.keys()), "{name}: keys differ");
            x.values()
                .zip(y.values())
                .for_each(|(x, y)| assert_close(x, y, name));
        }
        _ => assert_eq!(a, b, "{name}"),
    }
}

fn has_trailing_zero(csv: &Path) -> bool {
    std::fs::read_to_string(csv)
        .expect("csv")
        .lines()
        .skip(1)
        .filter_map(|l| l.split(',').nth(1))
        .any(|v| v.contains('.') && v.ends_with('0'))
}

#[test]
fn a_factorial_block_reads_parquet_as_it_reads_csv() {
    let doc = "# Warp breaks\n\n```anova\nid: pq\ndata: parquet/warpbreaks.parquet\nmodel: breaks ~ wool * tension\n```\n\n```anova\nid: csv\ndata: open/warpbreaks.csv\nmodel: breaks ~ wool * tension\n```\n";
    let results = build_on_disk(doc).unwrap_or_else(|d| panic!("{d}"));
    assert_blocks_match_last(&results);
    assert_eq!(
        results["blocks"][0]["anova"]["terms"]
            .as_array()
            .map(Vec::len),
        Some(3)
    );
}

#[test]
fn a_mixed_model_reads_the_whole_parquet_table_as_it_reads_csv() {
    let block = |id: &str, data: &str| {
        format!(
            "```anova\nid: {id}\ndata: {data}\nmodel: Reaction ~ Days\nsubject: Subject\ncompare: none\n```\n\n"
        )
    };
    let doc = format!(
        "# Sleep\n\n{}{}",
        block("pq", "parquet/sleepstudy.parquet"),
        block("csv", "open/sleepstudy.csv")
    );
    let results = build_on_disk(&doc).unwrap_or_else(|d| panic!("{d}"));
    assert_blocks_match_last(&results);
    let inputs = results["inputs"].as_array().expect("inputs");
    let bytes = std::fs::read(data_dir().join("parquet/sleepstudy.parquet")).expect("file");
    assert_eq!(inputs[0]["bytes"].as_u64(), Some(bytes.len() as u64));
    assert_eq!(
        inputs[0]["sha256"].as_str(),
        Some(sheaf::provenance::sha256_hex(&bytes).as_str()),
        "the hash is of the Parquet file's own bytes"
    );
}

#[test]
fn nulls_are_missing_and_row_groups_join_up() {
    // invented-nulls: 60 rows in row groups of 7, three null responses, one
    // null factor, a level name holding a comma and quotes.
    for model in ["fill_g ~ head", "fill_g ~ head * shift"] {
        let doc = format!(
            "# Fill\n\n```anova\nid: pq\ndata: parquet/invented-nulls.parquet\nmodel: {model}\n```\n\n```anova\nid: csv\ndata: parquet/invented-nulls.csv\nmodel: {model}\n```\n"
        );
        let results = build_on_disk(&doc).unwrap_or_else(|d| panic!("{d}"));
        assert_blocks_match_last(&results);
        let b = &results["blocks"][0];
        assert_eq!(b["n"].as_u64(), Some(56), "{model}");
        assert_eq!(b["n_excluded"].as_u64(), Some(4), "{model}");
        let lines: Vec<u64> = b["excluded"]
            .as_array()
            .expect("excluded")
            .iter()
            .map(|e| e["line"].as_u64().expect("line"))
            .collect();
        // Rows 5, 18, 24 and 42 of the file (0-based 4, 17, 23, 41) on
        // lines one past them, the header being line 1.
        assert_eq!(lines, [6, 19, 25, 43], "{model}");
    }
}

/// Files in memory; with `stream`, every file claims to be huge, so the
/// build streams it (and, having no file on disk, reads a Parquet file
/// whole for its rows while hashing the bytes it was opened with).
struct Memory {
    files: Vec<(&'static str, Vec<u8>)>,
    stream: bool,
}

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        self.files
            .iter()
            .find(|(p, _)| *p == path)
            .map(|(_, b)| b.clone())
            .ok_or_else(|| std::io::Error::from(std::io::ErrorKind::NotFound))
    }

    fn open(&self, path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        let bytes = self.read(path)?;
        let size = if self.stream {
            1 << 40
        } else {
            bytes.len() as u64
        };
        Ok((Box::new(std::io::Cursor::new(bytes)), size))
    }

    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

#[test]
fn a_streamed_parquet_file_gives_the_same_results_and_hash() {
    let bytes =
        std::fs::read(data_dir().join("parquet/nist/SmLs08.decimal.parquet")).expect("file");
    let doc =
        "# s\n\n```anova\nid: s\ndata: s.parquet\nmodel: value ~ group\nchecks: summary\n```\n";
    let run = |stream| {
        let world = Memory {
            files: vec![("s.parquet", bytes.clone())],
            stream,
        };
        build(doc, &world).unwrap_or_else(|d| panic!("{d}"))
    };
    let (loaded, streamed) = (run(false), run(true));
    assert_eq!(loaded, streamed);
    let input = &streamed["inputs"][0];
    assert_eq!(input["bytes"].as_u64(), Some(bytes.len() as u64));
    // SHA-256 of the file by the sha2 crate directly.
    use sha2::Digest;
    let digest: String = sha2::Sha256::digest(&bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect();
    assert_eq!(input["sha256"].as_str(), Some(digest.as_str()));
}

#[test]
fn every_readable_type_is_written_as_text() {
    let path = data_dir().join("parquet/types.parquet");
    let columns = [
        "day",
        "stamp_ms",
        "stamp_us_utc",
        "flag",
        "count_u32",
        "count_u64",
        "small_i8",
        "single",
        "wide_decimal",
        "text",
    ];
    let mut text = String::new();
    sheaf::data::parquet::open_rows(&path, &columns)
        .expect("opens")
        .read_to_string(&mut text)
        .expect("reads");
    // The values types.parquet was written with (see nist_parquet.py),
    // written out by hand.
    let expected = "day,stamp_ms,stamp_us_utc,flag,count_u32,count_u64,small_i8,single,wide_decimal,text\n\
        2024-05-01,2024-05-01T08:30:00.123,1969-12-31T23:59:59.999999Z,true,4294967295,18446744073709551615,-128,0.1,-12345678901234567890.123456789,\"line\nbreak\"\n\
        ,,,false,0,1,127,-0.0000000000000000000000000000025,0.000000001,\n";
    assert_eq!(text, expected);
}

#[test]
fn nested_columns_are_refused_by_name() {
    let path = data_dir().join("parquet/types.parquet");
    let err = sheaf::data::parquet::open_rows(&path, &["day", "tags"])
        .err()
        .expect("refused");
    assert!(
        err.message.contains("column `tags` is nested"),
        "{}",
        err.message
    );
    // A block that reads the whole table meets the list column too.
    let bytes = std::fs::read(&path).expect("file");
    let err = sheaf::data::read_table("t.parquet", &bytes, &Default::default(), None, None)
        .expect_err("refused");
    assert!(err.message.contains("`tags`"), "{}", err.message);
    // A block that streams only its own columns never reads it.
    let doc = "# t\n\n```anova\nid: t\ndata: parquet/types.parquet\nmodel: small_i8 ~ flag\ncompare: none\n```\n";
    let results = build_on_disk(doc).unwrap_or_else(|d| panic!("{d}"));
    assert_eq!(results["blocks"][0]["n"].as_u64(), Some(2));
}

#[test]
fn a_missing_column_is_named_with_the_nearest() {
    let doc = "# m\n\n```anova\ndata: parquet/invented-nulls.parquet\nmodel: fill ~ head\n```\n";
    let err = build_on_disk(doc).expect_err("no column `fill`");
    assert_eq!(err.message, "no column named `fill`");
    assert!(
        err.hints.iter().any(|h| h.contains("`fill_g`")),
        "{:?}",
        err.hints
    );
    let place = err.place.expect("a place").file;
    assert!(
        place.ends_with("invented-nulls.parquet, its column names"),
        "{place}"
    );
}

#[test]
fn a_bad_value_is_placed_by_row_group_and_row() {
    // Rows 41 to 60 have shift S2; row 41 is the 6th row of row group 6
    // (groups of 7 rows), and its head is not a number.
    let doc = "# m\n\n```anova\ndata: parquet/invented-nulls.parquet\nmodel: head ~ shift\nwhere: shift == S2\n```\n";
    let err = build_on_disk(doc).expect_err("a string response");
    assert!(err.message.contains("must be a number"), "{}", err.message);
    let place = err.place.expect("a place").file;
    assert!(
        place.ends_with(
            "invented-nulls.parquet, row 41 (row 6 of row group 6; both counted from 1)"
        ),
        "{place}"
    );
}

/// Damaged files: every prefix, a CSV file under a Parquet name, and
/// flipped bytes throughout; each is an error, never a panic.
#[test]
fn damaged_files_are_errors() {
    let good = std::fs::read(data_dir().join("parquet/invented-nulls.parquet")).expect("file");
    let columns = ["head", "fill_g", "shift"];
    let read = |bytes: &[u8]| -> Result<String, String> {
        let mut rows = sheaf::data::parquet::rows_in_memory(bytes.to_vec().into(), &columns)
            .map_err(|e| e.message)?;
        let mut text = String::new();
        rows.read_to_string(&mut text).map_err(|e| e.to_string())?;
        Ok(text)
    };
    let whole = read(&good).expect("the good file reads");
    assert_eq!(whole.lines().count(), 61);
    for cut in [
        0,
        3,
        4,
        11,
        100,
        good.len() / 2,
        good.len() - 5,
        good.len() - 1,
    ] {
        let err = read(&good[..cut]).expect_err("a cut file");
        assert!(err.contains("Parquet"), "cut at {cut}: {err}");
    }
    let csv = std::fs::read(data_dir().join("parquet/invented-nulls.csv")).expect("csv");
    let err = read(&csv).expect_err("not Parquet");
    assert!(err.contains("does not start and end with `PAR1`"), "{err}");
    let mut damaged = 0;
    for at in (4..good.len() - 8).step_by(3) {
        let mut bytes = good.clone();
        bytes[at] ^= 0x5a;
        if let Err(e) = read(&bytes) {
            assert!(!e.is_empty());
            damaged += 1;
        }
    }
    // Most flips land in compressed pages or the footer and are caught;
    // others change a value (Parquet pages carry no checksum here).
    assert!(damaged > 0, "no flipped byte was noticed");
}

#[test]
fn a_whole_table_keeps_its_rows_lines_and_nulls() {
    let bytes = std::fs::read(data_dir().join("parquet/invented-nulls.parquet")).expect("file");
    let table = sheaf::data::read_table("t.parquet", &bytes, &Default::default(), None, None)
        .expect("reads");
    assert_eq!(table.header, ["head", "fill_g", "shift"]);
    assert_eq!(table.rows.len(), 60);
    assert_eq!(table.rows[17].fields[0], "", "a null is an empty cell");
    assert_eq!(table.rows[17].line, 19);
}
