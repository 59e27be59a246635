//! Every check of a one-factor block on a streamed file is computed by
//! reading the file again (memory bounded whatever the rows) unless
//! something else needs every value at once. Both ways must give the same
//! numbers, bit for bit: a block with `method: ranks` keeps the values, the
//! same block with the default method reads the file again.

mod huge;

use huge::{Huge, cell, scramble};
use sheaf::compile::{Built, compile};
use sheaf::render::Format;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Invented kiln-zone temperature deviations: 5 zones, values on a 0.001
/// grid around zero (negative and positive), one value in 500 written with
/// a fourth decimal (outside the exact sums), one in 997 missing, and a
/// few far-out readings that the outlier check flags.
fn kiln(rows: u64) -> Vec<u8> {
    let mut text = String::with_capacity(rows as usize * 16);
    text.push_str("zone,deviation\n");
    for i in 0..rows {
        let zone = (i * 7 + i / 13) % 5;
        let u = scramble(i) + scramble(i + 7_777_777) + scramble(i + 15_555_555) - 1.5;
        let mut y = zone as f64 * 0.05 + 0.9 * u;
        if i % 99_991 == 5 {
            y += if i % 2 == 0 { 6.0 } else { -6.0 };
        }
        let cell = cell(i, y);
        text.push_str(&format!("Z{zone},{cell}\n"));
    }
    text.into_bytes()
}

fn build(doc: &str, world: &Huge) -> Result<Built, String> {
    compile("report.md", doc.as_bytes(), world, Format::Html).map_err(|d| d.to_string())
}

fn block(method: &str) -> String {
    format!(
        "# Invented kiln zones\n\n```anova\nid: k\ndata: kiln.csv\nmodel: deviation ~ zone\nmethod: {method}\ncompare: none\n```\n"
    )
}

fn results(built: &Built) -> serde_json::Value {
    serde_json::from_slice(&built.results).expect("results parse")
}

#[test]
fn reading_again_gives_the_same_bits_as_keeping_every_value() {
    let world = Huge::new(kiln(2_000_000));
    let kept = results(&build(&block("ranks"), &world).expect("values kept"));
    let opened_before = world.opened.load(Ordering::SeqCst);
    let reread = results(&build(&block("anova"), &world).expect("read again"));
    let passes = world.opened.load(Ordering::SeqCst) - opened_before;
    // The level sums, pass A, and one pass that collects the few values of
    // a median's bucket (the values with a fourth decimal share buckets
    // with their neighbours on the 0.001 grid); no bucket holds values on
    // both sides of a median, so Brown-Forsythe needs no pass of its own.
    assert_eq!(passes, 3, "the bounded path read the file {passes} times");
    let (a, b) = (&kept["blocks"][0], &reread["blocks"][0]);
    // JSON numbers are written as the shortest text that reads back as the
    // same f64, so equal text is equal bits.
    assert_eq!(a["checks"], b["checks"]);
    assert!(
        a["checks"]["brown_forsythe"]["statistic"].is_number(),
        "{}",
        a["checks"]
    );
    assert!(
        a["checks"]["outlier_count"].as_u64().unwrap_or(0) > 0,
        "{}",
        a["checks"]
    );
    let groups = |v: &serde_json::Value| v["groups"].clone();
    assert_eq!(groups(a), groups(b));
    assert!(
        groups(a)
            .as_array()
            .is_some_and(|g| g.len() == 5 && g.iter().all(|l| l["median"].is_number()))
    );
    assert_eq!(a["anova"], b["anova"]);
}

#[test]
fn a_file_that_changes_between_passes_is_an_error() {
    let world = Huge {
        data: kiln(20_000),
        opened: AtomicUsize::new(0),
        changed_after: Some(1),
    };
    let Err(err) = build(&block("anova"), &world) else {
        panic!("a file that changed after the first pass was accepted");
    };
    assert!(
        err.contains("the file changed while it was being read"),
        "{err}"
    );
}

fn invented(name: &str) -> Vec<u8> {
    let path = format!("{}/tests/data/invented/{name}", env!("CARGO_MANIFEST_DIR"));
    std::fs::read(path).expect("invented data")
}

fn reference() -> serde_json::Value {
    let path = format!(
        "{}/tests/reference/brown_forsythe_buckets.json",
        env!("CARGO_MANIFEST_DIR")
    );
    serde_json::from_str(&std::fs::read_to_string(path).expect("reference")).expect("json")
}

fn relative(got: &serde_json::Value, want: &serde_json::Value) -> f64 {
    let (g, w) = (
        got.as_f64().expect("number"),
        want.as_f64().expect("number"),
    );
    ((g - w) / w).abs()
}

/// Levels of 6,000 values, more than are kept whole, so the medians are
/// found by counting values in buckets. On a 0.01 grid every bucket near a
/// median holds one value and Brown-Forsythe comes from the counting pass
/// (the file is read twice: level sums, then every check); with six
/// decimals a bucket holds values on both sides of a median, which takes a
/// pass collecting the median's bucket and one for the deviations. Both
/// against scipy.stats.levene (tests/reference/brown_forsythe_buckets.py),
/// kept and read again giving the same bits.
#[test]
fn brown_forsythe_from_the_counting_pass_matches_scipy_and_the_kept_values() {
    let want = reference();
    for (file, reads) in [("spread_grid.csv", 2), ("spread_fine.csv", 4)] {
        let world = Huge::new(invented(file));
        let doc = |method: &str| {
            format!(
                "# Invented beds\n\n```anova\nid: b\ndata: beds.csv\nmodel: height ~ bed\nmethod: {method}\ncompare: none\n```\n"
            )
        };
        let kept = results(&build(&doc("ranks"), &world).expect("values kept"));
        let before = world.opened.load(Ordering::SeqCst);
        let reread = results(&build(&doc("anova"), &world).expect("read again"));
        let passes = world.opened.load(Ordering::SeqCst) - before;
        assert_eq!(passes, reads, "{file}: the file was read {passes} times");
        let (a, b) = (&kept["blocks"][0]["checks"], &reread["blocks"][0]["checks"]);
        assert_eq!(a, b, "{file}");
        let r = &want["files"][file];
        // 1e-11 relative: scipy sums the same 18,000 deviations in double
        // precision (pairwise), sheaf with compensated sums per bucket or
        // per value; an F of 319 with 2 and 17,997 df is well conditioned.
        for test in ["brown_forsythe", "levene"] {
            for field in ["statistic", "p"] {
                let e = relative(&a[test][field], &r[test][field]);
                assert!(e < 1e-11, "{file} {test} {field}: relative error {e:e}");
            }
        }
        for level in reread["blocks"][0]["groups"].as_array().expect("groups") {
            let name = level["level"].as_str().expect("level name");
            // numpy averages the two middle values in binary (50.300135999999995
            // for 50.300135 and 50.300137); sheaf writes the decimal median.
            let e = relative(&level["median"], &r["medians"][name]);
            assert!(e < 1e-15, "{file} {name}: median off by {e:e}");
        }
    }
}
