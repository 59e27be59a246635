//! Cell-summary queries printed by `sheaf sql`, run on DuckDB and Apache
//! DataFusion through their Python packages (tests/engines.py, in the
//! virtual environment target/engines-venv that .ci/run creates; the test
//! says so and skips when it is missing).
//!
//! References: the NIST StRD one-way files (tests/data/nist) and a
//! generated 2,000,000-row invented file, one- and two-factor, read by the
//! engines from CSV and from Parquet. Every cell's n, origin, Σ(y − origin)
//! and Σ(y − origin)² must equal, digit for digit, the sums Python's
//! `decimal` module computes from the raw text (exact arithmetic, no
//! tolerance), with no value rounded by the query's cast.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Command;

const MANIFEST: &str = env!("CARGO_MANIFEST_DIR");

/// Rows of the generated file (the size the issue asks for).
const ROWS: usize = 2_000_000;

/// The engines' Python, when the virtual environment has every package.
fn engines_python() -> Option<PathBuf> {
    let python = Path::new(MANIFEST).join("target/engines-venv/bin/python");
    let script = Path::new(MANIFEST).join("tests/engines.py");
    let ok = Command::new(&python)
        .arg(&script)
        .arg("check")
        .output()
        .is_ok_and(|o| o.status.success());
    if !ok {
        println!(
            "skipped: {} with duckdb, datafusion and pyarrow is missing (.ci/run creates it)",
            python.display()
        );
    }
    ok.then_some(python)
}

fn python_step(python: &Path, args: &[&str]) {
    let out = Command::new(python)
        .arg(Path::new(MANIFEST).join("tests/engines.py"))
        .args(args)
        .output()
        .expect("python runs");
    assert!(
        out.status.success(),
        "engines.py {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// `sheaf sql` for a block, written to `out`.
fn print_query(document: &Path, block: &str, source: &[&str], extra: &[&str], out: &Path) {
    let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .arg("sql")
        .arg(document)
        .args(["--block", block])
        .args(source)
        .args(extra)
        .arg("--out")
        .arg(out)
        .output()
        .expect("sheaf runs");
    assert!(
        output.status.success(),
        "sheaf sql {block}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
}

/// One query run: its name, engine, files and what the exact reference
/// reads (the raw CSV, response, factors and `!=` filters). An overflow
/// job must end in an error or empty sums instead.
struct Job {
    overflow: bool,
    name: String,
    engine: &'static str,
    sql: PathBuf,
    table_csv: Option<PathBuf>,
    raw: PathBuf,
    response: &'static str,
    factors: Vec<&'static str>,
    out: PathBuf,
}

impl Job {
    fn json(&self) -> Value {
        serde_json::json!({
            "name": self.name, "engine": self.engine, "sql": self.sql,
            "table_csv": self.table_csv, "raw": self.raw, "response": self.response,
            "factors": self.factors, "out": self.out, "overflow": self.overflow,
        })
    }
}

fn nist_jobs(dir: &Path) -> Vec<Job> {
    let mut jobs = Vec::new();
    let nist = Path::new(MANIFEST).join("tests/data/nist");
    let mut names: Vec<String> = std::fs::read_dir(&nist)
        .expect("nist folder")
        .filter_map(|e| e.ok()?.file_name().into_string().ok())
        .filter(|n| n.ends_with(".csv"))
        .collect();
    names.sort();
    for file in names {
        let stem = file.trim_end_matches(".csv").to_string();
        let folder = dir.join(&stem);
        std::fs::create_dir_all(&folder).expect("folder");
        let raw = folder.join(&file);
        std::fs::copy(nist.join(&file), &raw).expect("copy");
        let document = folder.join("report.md");
        std::fs::write(
            &document,
            format!("# {stem}\n\n```anova\nid: cells\ndata: {file}\nmodel: value ~ group\n```\n"),
        )
        .expect("document");
        let sql = folder.join("cells.sql");
        // No --scale: the command reads it from the local file.
        print_query(&document, "cells", &["--table", "source"], &[], &sql);
        for engine in ["duckdb", "datafusion"] {
            jobs.push(Job {
                overflow: false,
                name: format!("{stem} table"),
                engine,
                sql: sql.clone(),
                table_csv: Some(raw.clone()),
                raw: raw.clone(),
                response: "value",
                factors: vec!["group"],
                out: folder.join(format!("cells-{engine}.csv")),
            });
        }
    }
    jobs
}

const FILL_DOC: &str = "# Fill weights (invented data)

```anova
id: heads
data: fill.csv
model: fill_g ~ head
checks: summary
```

```anova
id: shifts
data: fill.csv
model: fill_g ~ head * shift
checks: summary
```
";

fn generated_jobs(python: &Path, dir: &Path) -> Vec<Job> {
    let folder = dir.join("fill");
    std::fs::create_dir_all(&folder).expect("folder");
    python_step(
        python,
        &[
            "generate",
            folder.to_str().expect("utf-8"),
            &ROWS.to_string(),
        ],
    );
    let document = folder.join("report.md");
    std::fs::write(&document, FILL_DOC).expect("document");
    let raw = folder.join("fill.csv");
    let parquet = folder.join("fill.parquet");
    let mut jobs = Vec::new();
    for (block, factors) in [("heads", vec!["head"]), ("shifts", vec!["head", "shift"])] {
        for engine in ["duckdb", "datafusion"] {
            let table_sql = folder.join(format!("{block}-table.sql"));
            print_query(
                &document,
                block,
                &["--table", "source"],
                &["--scale", "3"],
                &table_sql,
            );
            let parquet_sql = folder.join(format!("{block}-{engine}-parquet.sql"));
            print_query(
                &document,
                block,
                &[
                    "--parquet",
                    parquet.to_str().expect("utf-8"),
                    "--engine",
                    engine,
                ],
                &["--scale", "3"],
                &parquet_sql,
            );
            for (kind, sql, table_csv) in [
                ("csv", table_sql, Some(raw.clone())),
                ("parquet", parquet_sql, None),
            ] {
                jobs.push(Job {
                    overflow: false,
                    name: format!("{block} {kind}"),
                    engine,
                    sql,
                    table_csv,
                    raw: raw.clone(),
                    response: "fill_g",
                    factors: factors.clone(),
                    out: folder.join(format!("{block}-{engine}-{kind}.csv")),
                });
            }
        }
    }
    jobs
}

/// Data past the query's decimals (invented): 20,000 values of 10¹⁷ − 1
/// and one 0 sum their squares past DECIMAL(38, 0) (scale 0); 10¹⁷ does
/// not fit DECIMAL(17, 1) (scale 1).
fn overflow_jobs(dir: &Path) -> Vec<Job> {
    let folder = dir.join("overflow");
    std::fs::create_dir_all(&folder).expect("folder");
    let mut big = String::from("g,y\na,0\n");
    for _ in 0..20_000 {
        big.push_str("b,99999999999999999\n");
    }
    std::fs::write(folder.join("sums.csv"), big).expect("data");
    std::fs::write(
        folder.join("cast.csv"),
        "g,y\na,1.5\nb,100000000000000000.0\n",
    )
    .expect("data");
    let document = folder.join("report.md");
    std::fs::write(&document, "```anova\nid: sums\ndata: sums.csv\nmodel: y ~ g\n```\n\n```anova\nid: cast\ndata: cast.csv\nmodel: y ~ g\n```\n").expect("document");
    let mut jobs = Vec::new();
    for (block, scale) in [("sums", "0"), ("cast", "1")] {
        let sql = folder.join(format!("{block}.sql"));
        print_query(
            &document,
            block,
            &["--table", "source"],
            &["--scale", scale],
            &sql,
        );
        for engine in ["duckdb", "datafusion"] {
            jobs.push(Job {
                overflow: true,
                name: format!("overflow {block}"),
                engine,
                sql: sql.clone(),
                table_csv: Some(folder.join(format!("{block}.csv"))),
                raw: folder.join(format!("{block}.csv")),
                response: "y",
                factors: vec!["g"],
                out: folder.join(format!("{block}-{engine}.csv")),
            });
        }
    }
    jobs
}

#[test]
fn engines_compute_exact_cell_sums() {
    let Some(python) = engines_python() else {
        return;
    };
    let dir = tempfile::tempdir().expect("temp dir");
    let mut jobs = nist_jobs(dir.path());
    jobs.extend(overflow_jobs(dir.path()));
    jobs.extend(generated_jobs(&python, dir.path()));
    let report = dir.path().join("report.json");
    let spec = serde_json::json!({
        "jobs": jobs.iter().map(Job::json).collect::<Vec<_>>(),
        "report": report,
    });
    let jobs_file = dir.path().join("jobs.json");
    std::fs::write(&jobs_file, spec.to_string()).expect("jobs");
    python_step(&python, &["run", jobs_file.to_str().expect("utf-8")]);
    let results: Value =
        serde_json::from_str(&std::fs::read_to_string(&report).expect("report")).expect("json");
    let mut failures = Vec::new();
    for r in results.as_array().expect("list") {
        println!(
            "{:<16} {:<10} {:>6.2} s {}",
            r["name"].as_str().unwrap_or(""),
            r["engine"].as_str().unwrap_or(""),
            r["seconds"].as_f64().unwrap_or(f64::NAN),
            r["outcome"].as_str().unwrap_or("")
        );
        for p in r["problems"].as_array().expect("problems") {
            failures.push(format!("{} on {}: {p}", r["name"], r["engine"]));
        }
    }
    assert_eq!(results.as_array().map(Vec::len), Some(jobs.len()));
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    reports_from_summaries_match_the_raw_reading(&jobs);
}

/// Relative agreement of every number the reports share: the engines'
/// exact sums and sheaf's own exact-origin reading differ only in the
/// order of the final floating-point steps, far below 1e-12.
const SAME_REPORT: f64 = 1e-12;

/// The parts of an anova record that summaries and raw data both give.
const SHARED: [&str; 4] = ["anova", "groups", "cells", "comparisons"];

fn compare_values(a: &Value, b: &Value, at: &str, failures: &mut Vec<String>) {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (
                x.as_f64().unwrap_or(f64::NAN),
                y.as_f64().unwrap_or(f64::NAN),
            );
            let scale = x.abs().max(y.abs());
            // A far-tail p-value (one comparison here has p = 4e-207) is ill
            // conditioned: d ln p / d ln q is in the hundreds, so statistics
            // equal to 1e-15 give p equal only to about 1e-12. There ln p is
            // compared, to 1e-12 of its size, which is the statistic's
            // agreement carried through the tail.
            let p_value = at.ends_with(".p") || at.ends_with(".p_adj");
            let logs_agree = p_value
                && x > 0.0
                && y > 0.0
                && (x.ln() - y.ln()).abs() <= SAME_REPORT * x.ln().abs();
            if x != y && (x - y).abs() > SAME_REPORT * scale && !logs_agree {
                failures.push(format!("{at}: {x} from the raw file, {y} from the summary"));
            }
        }
        (Value::Object(x), Value::Object(y)) => {
            for (key, value) in x {
                if let Some(other) = y.get(key) {
                    compare_values(value, other, &format!("{at}.{key}"), failures);
                }
            }
        }
        (Value::Array(x), Value::Array(y)) if x.len() == y.len() => {
            for (i, (p, q)) in x.iter().zip(y).enumerate() {
                compare_values(p, q, &format!("{at}[{i}]"), failures);
            }
        }
        (Value::Array(_), Value::Array(_)) => failures.push(format!("{at}: lengths differ")),
        (Value::String(x), Value::String(y)) if x != y => {
            failures.push(format!(
                "{at}: `{x}` from the raw file, `{y}` from the summary"
            ));
        }
        // A value only raw data give (medians, quartiles) is null in the other.
        _ => {}
    }
}

/// The block `id` of a built results file.
fn block_of<'a>(results: &'a Value, id: &str) -> &'a Value {
    results["blocks"]
        .as_array()
        .and_then(|b| b.iter().find(|b| b["id"] == id))
        .unwrap_or_else(|| panic!("block {id}"))
}

/// NIST's certified values, reproduced from the engines' summaries.
fn certified_lre(stem: &str, block: &Value) -> Vec<(String, f64)> {
    let certified: Value = serde_json::from_str(include_str!("data/nist/certified.json"))
        .expect("certified.json parses");
    let c = &certified["datasets"][stem]["certified"];
    let value = |key: &str| -> f64 {
        c[key]
            .as_str()
            .and_then(|t| t.parse().ok())
            .expect("digits")
    };
    let anova = &block["anova"];
    let got = |v: &Value| v.as_f64().unwrap_or(f64::NAN);
    [
        (
            "between SS",
            got(&anova["terms"][0]["ss"]),
            value("between_ss"),
        ),
        (
            "between MS",
            got(&anova["terms"][0]["ms"]),
            value("between_ms"),
        ),
        (
            "within SS",
            got(&anova["residual"]["ss"]),
            value("within_ss"),
        ),
        (
            "within MS",
            got(&anova["residual"]["ms"]),
            value("within_ms"),
        ),
        ("F", got(&anova["terms"][0]["f"]), value("f_statistic")),
    ]
    .into_iter()
    .map(|(name, x, c)| {
        // LRE (McCullough 1998), capped at 15 when exact.
        let lre = if x == c {
            15.0
        } else {
            (-((x - c) / c).abs().log10()).min(15.0)
        };
        (name.to_string(), lre)
    })
    .collect()
}

/// Builds a report from each engine's summary file (with `input: summary`
/// and `query`) and compares it with sheaf's reading of the raw file; for
/// the NIST files also with the certified values (LRE ≥ 9).
fn reports_from_summaries_match_the_raw_reading(jobs: &[Job]) {
    let mut failures = Vec::new();
    let mut raw_builds: std::collections::BTreeMap<PathBuf, Value> = Default::default();
    for job in jobs.iter().filter(|j| !j.overflow) {
        let folder = job.raw.parent().expect("folder");
        let block = match (job.response, job.factors.len()) {
            ("value", _) => "cells",
            (_, 1) => "heads",
            _ => "shifts",
        };
        let document = folder.join(format!(
            "summary-{}.md",
            job.out.file_stem().and_then(|s| s.to_str()).expect("name")
        ));
        std::fs::write(
            &document,
            format!(
                "# From an engine's cell summaries\n\n```anova\nid: {block}\ndata: {}\ninput: summary\nquery: {}\nmodel: {} ~ {}\nacknowledge: summary, unbalanced\n```\n",
                job.out.file_name().and_then(|n| n.to_str()).expect("name"),
                job.sql.file_name().and_then(|n| n.to_str()).expect("name"),
                job.response,
                job.factors.join(" * "),
            ),
        )
        .expect("document");
        let (summary, warnings) = build(&document);
        assert!(warnings.is_empty(), "{}: {warnings:?}", job.name);
        let raw = raw_builds
            .entry(folder.to_path_buf())
            .or_insert_with(|| build(&folder.join("report.md")).0);
        let (a, b) = (block_of(raw, block), block_of(&summary, block));
        for part in SHARED {
            compare_values(
                &a[part],
                &b[part],
                &format!("{} {} {part}", job.name, job.engine),
                &mut failures,
            );
        }
        if job.response == "value" {
            let stem = job.name.split(' ').next().expect("stem");
            let lre = certified_lre(stem, b);
            println!(
                "{stem:<8} {:<10} LRE {}",
                job.engine,
                lre.iter()
                    .map(|(n, l)| format!("{n} {l:.1}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            );
            for (name, l) in lre {
                if l < 9.0 {
                    failures.push(format!(
                        "{stem} on {}: {name} LRE {l:.1} below 9",
                        job.engine
                    ));
                }
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// A classic one-factor summary (n, mean, SD), invented, to test the
/// `query` key's provenance without an engine.
const SUMMARY: &str = "line,n,mean,sd\nL1,12,20.5,1.25\nL2,12,21.75,1.5\nL3,11,19.25,1.0\n";

fn summary_doc(extra: &str) -> String {
    format!(
        "# Lines (invented data)\n\n```anova\nid: lines\ndata: cells.csv\ninput: summary\nquery: cells.sql\nmodel: yield ~ line\nacknowledge: summary\n{extra}```\n"
    )
}

fn build(document: &Path) -> (Value, Vec<String>) {
    let built = sheaf::compile::build_file(document, sheaf::render::FORMATS[0], None, false)
        .unwrap_or_else(|d| panic!("build: {d}"));
    let results = serde_json::from_slice(&built.results).expect("results json");
    (results, built.warnings)
}

#[test]
fn the_query_file_is_hashed_listed_and_checked_for_staleness() {
    let dir = tempfile::tempdir().expect("temp dir");
    let document = dir.path().join("report.md");
    std::fs::write(dir.path().join("cells.csv"), SUMMARY).expect("summary");
    std::fs::write(&document, summary_doc("")).expect("document");
    let sql = dir.path().join("cells.sql");
    print_query(
        &document,
        "lines",
        &["--table", "trials"],
        &["--scale", "2"],
        &sql,
    );
    let (results, warnings) = build(&document);
    assert!(warnings.is_empty(), "{warnings:?}");
    let inputs = results["inputs"].as_array().expect("inputs");
    let listed = inputs
        .iter()
        .find(|i| i["path"] == "cells.sql")
        .expect("the query file is listed with the inputs");
    let bytes = std::fs::read(&sql).expect("sql");
    assert_eq!(
        listed["sha256"].as_str(),
        Some(sheaf::provenance::sha256_hex(&bytes).as_str())
    );
    assert_eq!(listed["bytes"].as_u64(), Some(bytes.len() as u64));
    assert_eq!(results["blocks"][0]["query"], "cells.sql");
    // The block now filters rows: the file no longer holds its query.
    std::fs::write(&document, summary_doc("where: line != L3\n")).expect("document");
    let (results, warnings) = build(&document);
    assert_eq!(warnings.len(), 1, "{warnings:?}");
    assert!(warnings[0].contains("cells.sql is stale"), "{warnings:?}");
    let recorded = results["blocks"][0]["warnings"]
        .as_array()
        .expect("warnings");
    assert!(
        recorded
            .iter()
            .any(|w| w.as_str().is_some_and(|w| w.contains("stale")))
    );
    // A missing query file is an error naming it.
    std::fs::remove_file(&sql).expect("remove");
    let e = sheaf::compile::build_file(&document, sheaf::render::FORMATS[0], None, false)
        .expect_err("error");
    assert!(e.to_string().contains("cells.sql"), "{e}");
}

/// The printed SQL for one one-factor and one factorial block, against the
/// snapshots in tests/data/sql (rewritten with UPDATE_SNAPSHOTS=1).
#[test]
fn printed_queries_match_their_snapshots() {
    let folder = Path::new(MANIFEST).join("tests/data/sql");
    let dir = tempfile::tempdir().expect("temp dir");
    let cases: [(&str, &[&str], &[&str]); 2] = [
        ("ovens", &["--table", "bakery.trials"], &["--scale", "1"]),
        (
            "recipes",
            &["--parquet", "/lake/trials", "--engine", "spark"],
            &["--scale", "2", "--origin", "3.5"],
        ),
    ];
    for (block, source, extra) in cases {
        let out = dir.path().join(format!("{block}.sql"));
        print_query(&folder.join("report.md"), block, source, extra, &out);
        let printed = std::fs::read_to_string(&out).expect("printed");
        let snapshot = folder.join(format!("{block}.sql"));
        if std::env::var_os("UPDATE_SNAPSHOTS").is_some() {
            std::fs::write(&snapshot, &printed).expect("snapshot written");
        }
        let expected = std::fs::read_to_string(&snapshot).expect("snapshot");
        assert_eq!(printed, expected, "{block}: the printed query changed");
    }
}

/// `sheaf sql` refuses unclear requests with a message that says what to give.
#[test]
fn unclear_requests_are_refused_with_what_to_give() {
    let dir = tempfile::tempdir().expect("temp dir");
    let document = dir.path().join("report.md");
    std::fs::write(
        &document,
        "```anova\nid: a\ndata: none.csv\nmodel: y ~ g\n```\n\n```anova\nid: b\ndata: none.csv\nmodel: y ~ g\nrandom: plot\n```\n",
    )
    .expect("document");
    let cases: [(&[&str], &str); 6] = [
        (&["--block", "a", "--table", "t"], "--scale"),
        (
            &["--table", "t", "--scale", "1"],
            "say which with `--block`",
        ),
        (
            &["--block", "c", "--table", "t", "--scale", "1"],
            "no anova block `c`",
        ),
        (
            &["--block", "a", "--parquet", "p", "--scale", "1"],
            "add `--engine`",
        ),
        (
            &["--block", "a", "--scale", "1"],
            "say where the raw rows are",
        ),
        (
            &["--block", "b", "--table", "t", "--scale", "1"],
            "random terms",
        ),
    ];
    for (args, expected) in cases {
        let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .arg("sql")
            .arg(&document)
            .args(args)
            .output()
            .expect("sheaf runs");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(1), "{args:?}: {stderr}");
        assert!(stderr.contains(expected), "{args:?}: {stderr}");
        assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
    }
}
