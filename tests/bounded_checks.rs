//! Every check of a one-factor block on a streamed file is computed by
//! reading the file again (memory bounded whatever the rows) unless
//! something else needs every value at once. Both ways must give the same
//! numbers, bit for bit: a block with `method: ranks` keeps the values, the
//! same block with the default method reads the file again.

use sheaf::compile::{Built, World, compile};
use sheaf::render::Format;
use std::io::Read;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Files in memory that claim to be huge, so that every build streams them.
/// With `changed_after`, the file's bytes change once it has been opened
/// that many times (a file rewritten while a build reads it).
struct Huge {
    data: Vec<u8>,
    opened: AtomicUsize,
    changed_after: Option<usize>,
}

impl World for Huge {
    fn read(&self, _path: &str) -> std::io::Result<Vec<u8>> {
        Ok(self.data.clone())
    }

    fn open(&self, _path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        let times = self.opened.fetch_add(1, Ordering::SeqCst);
        let mut bytes = self.data.clone();
        if self.changed_after.is_some_and(|n| times >= n) {
            // One digit of the last value, same size: only the hash can tell.
            let at = bytes.len() - 2;
            bytes[at] = if bytes[at] == b'1' { b'2' } else { b'1' };
        }
        Ok((Box::new(std::io::Cursor::new(bytes)), 1 << 40))
    }

    /// Without opening, so that `opened` counts the passes only.
    fn probe(&self, _path: &str) -> std::io::Result<u64> {
        Ok(1 << 40)
    }

    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

/// A deterministic scramble in [0, 1) (no clock, no random crate).
fn scramble(i: u64) -> f64 {
    let x = i
        .wrapping_mul(6_364_136_223_846_793_005)
        .wrapping_add(1_442_695_040_888_963_407);
    (x >> 11) as f64 / (1u64 << 53) as f64
}

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
        let cell = if i % 997 == 3 {
            "NA".to_string()
        } else if i % 500 == 1 {
            format!("{y:.4}")
        } else {
            format!("{y:.3}")
        };
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
    let world = Huge {
        data: kiln(2_000_000),
        opened: AtomicUsize::new(0),
        changed_after: None,
    };
    let kept = results(&build(&block("ranks"), &world).expect("values kept"));
    let opened_before = world.opened.load(Ordering::SeqCst);
    let reread = results(&build(&block("anova"), &world).expect("read again"));
    let passes = world.opened.load(Ordering::SeqCst) - opened_before;
    // The level sums, pass A, Brown-Forsythe, and one pass that collects the
    // few values of a median's bucket (the values with a fourth decimal
    // share buckets with their neighbours on the 0.001 grid).
    assert!(
        (3..=4).contains(&passes),
        "the bounded path read the file {passes} times"
    );
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
