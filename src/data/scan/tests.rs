//! Unit tests for `data::scan`: the chunked reader must read a file exactly
//! as the whole-table reader does, whatever the chunk size and threads.

use super::*;
use crate::data::{Table, factor_response};

fn spec<'a>(format: &'a CsvFormat, keep_values: bool) -> ScanSpec<'a> {
    ScanSpec {
        response: "y",
        factors: &["g"],
        format,
        filters: &[],
        exclude: &[],
        keep_values,
    }
}

/// An invented file with quoted fields (one spanning lines), CRLF ends,
/// blank lines, missing values and a value in exponent notation.
fn awkward_file() -> String {
    let mut text = String::from("\u{feff}g,y,note\r\n");
    for i in 0..400 {
        let g = ["a", "b", "\"c\"", "d d"][i % 4];
        let y = match i % 37 {
            5 => "NA".to_string(),
            11 => "1.5e1".to_string(),
            _ => format!("{}.{:02}", 10 + (i * 7) % 13, (i * 31) % 100),
        };
        let note = if i % 50 == 3 {
            "\"two\nlines, \"\"quoted\"\"\""
        } else {
            "x"
        };
        text.push_str(&format!("{g},{y},{note}\r\n"));
        if i % 97 == 0 {
            text.push_str("\r\n");
        }
    }
    text
}

#[test]
fn chunks_and_threads_change_nothing() {
    let format = CsvFormat::default();
    let text = awkward_file();
    let table = Table::parse(text.as_bytes(), &format).expect("table");
    let whole = factor_response(&table, "y", "g", &format).expect("reference");
    for (chunk, threads) in [(1 << 20, 1), (64, 1), (64, 3), (200, 2), (1000, 4)] {
        let got = scan_file(
            Source::Memory(text.as_bytes()),
            &spec(&format, true),
            chunk,
            threads,
        )
        .expect("scan");
        let names: Vec<&str> = got.levels.iter().map(|l| l.name.as_str()).collect();
        assert_eq!(names, ["a", "b", "c", "d d"], "chunk {chunk}");
        assert_eq!(got.excluded, whole.excluded, "chunk {chunk}");
        assert_eq!(got.decimals, whole.decimals);
        assert_eq!(got.origin, whole.origin);
        for (l, w) in got.levels.iter().zip(&whole.levels) {
            assert_eq!(l.lines, w.lines, "chunk {chunk}");
            // Every chunk subtracts the same origin exactly.
            assert_eq!(l.offsets, w.offsets, "chunk {chunk}");
        }
        if chunk == 1 << 20 {
            // One chunk: the summaries are those of the whole level.
            for (l, w) in got.levels.iter().zip(&whole.levels) {
                assert_eq!(l.summary, GroupSummary::from_values(&w.offsets));
            }
        }
    }
    // The same chunking gives the same bits with 1 and 4 threads.
    let run = |threads| {
        scan_file(
            Source::Memory(text.as_bytes()),
            &spec(&format, false),
            150,
            threads,
        )
        .expect("scan")
    };
    assert_eq!(run(1), run(4));
}

#[test]
fn a_stream_reads_like_memory_and_is_hashed() {
    let format = CsvFormat::default();
    let text = awkward_file();
    let memory = scan_file(
        Source::Memory(text.as_bytes()),
        &spec(&format, false),
        300,
        2,
    )
    .expect("memory");
    let stream = scan_file(
        Source::Stream(Box::new(std::io::Cursor::new(text.clone().into_bytes()))),
        &spec(&format, false),
        300,
        2,
    )
    .expect("stream");
    assert_eq!(memory.levels, stream.levels);
    assert_eq!(
        stream.sha256.as_deref(),
        Some(crate::provenance::sha256_hex(text.as_bytes()).as_str())
    );
    // Fed chunk by chunk, the fingerprint is XXH3 of the whole file.
    assert_eq!(
        stream.fingerprint,
        Some(twox_hash::XxHash3_64::oneshot(text.as_bytes()))
    );
    assert_eq!(memory.fingerprint, None);
    assert_eq!(stream.bytes, text.len() as u64);
}

#[test]
fn errors_in_later_chunks_name_their_own_line() {
    let format = CsvFormat::default();
    let mut text = String::from("g,y\n");
    for i in 0..500 {
        text.push_str(&format!("L{},{}\n", i % 3, i));
    }
    text.push_str("L1,oops\n");
    text.push_str("L2,1,extra\n");
    for threads in [1, 2] {
        let err = scan_file(
            Source::Memory(text.as_bytes()),
            &spec(&format, true),
            64,
            threads,
        )
        .unwrap_err();
        assert_eq!((err.line, err.column), (Some(502), Some(2)), "{threads}");
        assert!(err.message.contains("must be a number, found `oops`"));
    }
    let bad_utf8 = [b"g,y\na,1\nb,2\n".as_slice(), b"c,\xff\n"].concat();
    let err = scan_file(Source::Memory(&bad_utf8), &spec(&format, true), 4, 2).unwrap_err();
    assert_eq!(err.line, Some(4));
}

#[test]
fn a_record_longer_than_a_chunk_is_read_whole() {
    let format = CsvFormat::default();
    let long = "x".repeat(5000);
    let text = format!("g,y,note\na,1,{long}\nb,2,\"{long}\n{long}\"\na,3,z\n");
    let got = scan_file(
        Source::Stream(Box::new(std::io::Cursor::new(text.into_bytes()))),
        &spec(&format, true),
        16,
        2,
    )
    .expect("scan");
    assert_eq!(got.levels[0].lines, vec![2, 5]);
    assert_eq!(got.levels[1].lines, vec![3]);
}

#[test]
fn rules_apply_by_absolute_line() {
    let format = CsvFormat::default();
    let mut text = String::from("g,y\n");
    for i in 0..300 {
        text.push_str(&format!("L{},{}\n", i % 2, i % 17));
    }
    let filters = [Filter {
        column: "y".into(),
        op: "<".into(),
        value: "15".into(),
    }];
    let exclude = [(250usize, "sensor fault".to_string())];
    let spec = ScanSpec {
        filters: &filters,
        exclude: &exclude,
        ..spec(&format, true)
    };
    let got = scan_file(Source::Memory(text.as_bytes()), &spec, 50, 2).expect("scan");
    assert!(
        got.excluded
            .iter()
            .any(|e| e.line == 250 && e.reason == "excluded: sensor fault")
    );
    let failing = (0..300).filter(|i| i % 17 >= 15 && i + 2 != 250).count();
    assert_eq!(got.excluded.len(), failing + 1);
    let missing = [(999usize, "no such".to_string())];
    let err = scan_file(
        Source::Memory(text.as_bytes()),
        &ScanSpec {
            exclude: &missing,
            ..spec
        },
        50,
        2,
    )
    .unwrap_err();
    assert!(err.message.contains("names line 999"), "{}", err.message);
}

/// Cells of two factors found by each factor's level (`cells::CellIndex`):
/// a factor of 100 levels (beyond the 64 it indexes per chunk) whose names
/// share their first 8 bytes, with spaces around some, against counts
/// and sums made here directly from the text.
#[test]
fn cells_of_many_long_levels_are_counted_as_written() {
    let format = CsvFormat::default();
    let mut text = String::from("a,b,y\n");
    let mut expected: BTreeMap<String, (usize, i64)> = BTreeMap::new();
    for i in 0..3000usize {
        let a = format!("batch-of-line-{}", (i * 37) % 100);
        let b = ["x", "long level name", "z"][i % 3];
        let y = (i * 13 % 101) as i64;
        let pad = if i % 7 == 0 { " " } else { "" };
        text.push_str(&format!("{pad}{a}{pad},{b},{y}\n"));
        let e = expected
            .entry(cell_key([a.as_str(), b].into_iter()))
            .or_default();
        e.0 += 1;
        e.1 += y;
    }
    let spec = ScanSpec {
        factors: &["a", "b"],
        ..spec(&format, false)
    };
    for chunk in [1 << 20, 4096] {
        let got = scan_file(Source::Memory(text.as_bytes()), &spec, chunk, 2).expect("scan");
        let found: BTreeMap<String, (usize, i64)> = got
            .levels
            .iter()
            .map(|l| {
                let s = l.summary;
                // Whole numbers from an origin of 0 (the first value): the
                // mean times n is the exact sum.
                let sum = (s.mean * s.n as f64 + got.origin * s.n as f64).round() as i64;
                (l.name.clone(), (s.n, sum))
            })
            .collect();
        assert_eq!(found, expected, "chunk {chunk}");
    }
}
