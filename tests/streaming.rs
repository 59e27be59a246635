//! Large one-factor CSV files are streamed past (read in chunks while they
//! are hashed) instead of being read into memory. Streaming must change
//! nothing: the same report, the same results file, the same input hash and
//! the same diagnostics as reading the file whole.

use sheaf::compile::{Built, World, compile};
use sheaf::render::Format;
use std::io::Read;

/// Files in memory; with `stream`, every file claims to be huge, so the
/// build streams it.
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

/// An invented logging file (330,000 rows is about 5 MB, two chunks):
/// 7 levels, quoted level names, missing responses, three decimals.
fn logged(rows: u64) -> Vec<u8> {
    let mut text = String::from("station,reading,batch\n");
    for i in 0..rows {
        let level = i % 7;
        let name = if level == 3 {
            "\"S3\"".to_string()
        } else {
            format!("S{level}")
        };
        let reading = if i % 1001 == 17 {
            "NA".to_string()
        } else {
            let wobble = (i.wrapping_mul(2_654_435_761) % 1000) as f64 / 1000.0;
            format!("{:.3}", 20.0 + level as f64 * 0.01 + wobble)
        };
        text.push_str(&format!("{name},{reading},B{}\n", i / 500));
    }
    text.into_bytes()
}

fn build(doc: &str, files: Vec<(&'static str, Vec<u8>)>, stream: bool) -> Result<Built, String> {
    compile(
        "report.md",
        doc.as_bytes(),
        &Memory { files, stream },
        Format::Html,
    )
    .map_err(|d| d.to_string())
}

#[test]
fn streaming_changes_nothing() {
    let data = logged(330_000);
    for checks in ["summary", "all"] {
        let doc = format!(
            "# Invented readings\n\n```anova\nid: r\ndata: log.csv\nmodel: reading ~ station\ncompare: tukey\nchecks: {checks}\n```\n\nF = {{{{ r.f | fixed(3) }}}}\n"
        );
        let whole = build(&doc, vec![("log.csv", data.clone())], false).expect("whole");
        let streamed = build(&doc, vec![("log.csv", data.clone())], true).expect("streamed");
        assert_eq!(whole.results, streamed.results, "checks: {checks}");
        assert_eq!(whole.report, streamed.report, "checks: {checks}");
        let results: serde_json::Value =
            serde_json::from_slice(&streamed.results).expect("results parse");
        // Reference hash: computed here from the bytes, not by the build.
        use sha2::Digest;
        let expected: String = sha2::Sha256::digest(&data)
            .iter()
            .map(|b| format!("{b:02x}"))
            .collect();
        assert_eq!(results["inputs"][0]["sha256"], expected.as_str());
        assert_eq!(results["inputs"][0]["bytes"], data.len());
        let block = &results["blocks"][0];
        assert_eq!(block["n"], 330_000 - 330);
        assert_eq!(block["groups"].as_array().map(Vec::len), Some(7));
    }
}

#[test]
fn a_streamed_file_read_again_by_another_block_is_listed_once() {
    let data = logged(3_000);
    let doc = "```anova\nid: one\ndata: log.csv\nmodel: reading ~ station\nchecks: summary\n```\n\n```anova\nid: two\ndata: log.csv\nmodel: reading ~ station + batch\nss: 2\ncompare: none\n```\n";
    let built = build(doc, vec![("log.csv", data)], true).expect("build");
    let results: serde_json::Value = serde_json::from_slice(&built.results).expect("parse");
    assert_eq!(results["inputs"].as_array().map(Vec::len), Some(1));
    assert_eq!(results["blocks"].as_array().map(Vec::len), Some(2));
}

#[test]
fn errors_deep_in_a_streamed_file_name_their_line() {
    let mut data = logged(330_000);
    data.extend_from_slice(b"S1,twelve,B9\n");
    let doc = "```anova\nid: r\ndata: log.csv\nmodel: reading ~ station\nchecks: summary\n```\n";
    let err = build(doc, vec![("log.csv", data)], true).unwrap_err();
    assert!(err.contains("log.csv:330002:2"), "{err}");
    assert!(
        err.contains("`reading` must be a number, found `twelve`"),
        "{err}"
    );
}

#[test]
fn a_streamed_factorial_equals_a_whole_file_one() {
    let data = logged(20_000);
    let doc = "# Invented readings\n\n```anova\nid: f\ndata: log.csv\nmodel: reading ~ station + batch\nss: 2\ncompare: none\n```\n";
    let whole = build(doc, vec![("log.csv", data.clone())], false).expect("whole");
    let streamed = build(doc, vec![("log.csv", data)], true).expect("streamed");
    assert_eq!(whole.results, streamed.results);
    assert_eq!(whole.report, streamed.report);
}
