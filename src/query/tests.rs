use super::*;
use crate::doc::parse_document;

fn doc(block: &str) -> Document {
    parse_document("r.md", format!("```anova\nid: b\n{block}\n```\n")).expect("document parses")
}

fn options(source: Source) -> QueryOptions {
    QueryOptions {
        block: "b".into(),
        source,
        scale: 1,
        origin: None,
    }
}

#[test]
fn the_header_records_the_options_and_reads_back() {
    let d = doc("data: d.csv\nmodel: y ~ g");
    for source in [
        Source::Table("lake.rows".into()),
        Source::Parquet {
            path: "/data/fill weights.parquet".into(),
            engine: Engine::Spark,
        },
    ] {
        let o = QueryOptions {
            origin: Some("12.5".into()),
            ..options(source)
        };
        let sql = cell_query(&d, &o).expect("query");
        assert_eq!(read_options(&sql), Some(o));
    }
}

#[test]
fn only_the_from_clause_differs_between_engines() {
    let d = doc("data: d.csv\nmodel: y ~ g * h\nwhere: site != north and dose >= 2.5");
    let texts: Vec<String> = Engine::ALL
        .into_iter()
        .map(|engine| {
            let o = options(Source::Parquet {
                path: "rows.parquet".into(),
                engine,
            });
            cell_query(&d, &o).expect("query")
        })
        .collect();
    let differing = |a: &str, b: &str| {
        a.lines()
            .zip(b.lines())
            .filter(|(x, y)| x != y)
            .map(|(x, _)| x.to_string())
            .collect::<Vec<_>>()
    };
    // The recorded options line and the FROM line, nothing else.
    let diff = differing(&texts[0], &texts[2]);
    assert_eq!(diff.len(), 2, "{diff:?}");
    assert!(diff[1].trim_start().starts_with("FROM "), "{diff:?}");
    assert!(texts[2].contains("FROM parquet.`rows.parquet` AS t"));
    assert!(texts[0].contains("FROM 'rows.parquet' AS t"));
    assert!(
        texts[0].contains("(t.`dose` IS NULL OR")
            || texts[0].contains("CAST(t.`dose` AS DOUBLE) >= 2.5")
    );
    assert!(texts[0].contains("COALESCE(TRIM(CAST(t.`site` AS STRING)), '') <> 'north'"));
}

#[test]
fn unsupported_blocks_are_refused_with_the_reason() {
    // The block's lines: 1 the fence, 2 `id`, 3 `data`, 4 `model`, 5 the
    // key under test; each refusal points at the line that asks for it,
    // where it has one.
    let cases = [
        ("model: y, z ~ g", "several responses", Some(4)),
        ("model: y ~ g\nrandom: plot", "random terms", Some(5)),
        (
            "model: y ~ g * time\nsubject: animal",
            "a `subject`",
            Some(5),
        ),
        ("model: y ~ g\ncovariate: x", "covariates", Some(5)),
        ("model: y ~ g\ntransform: log", "a transformation", Some(5)),
        ("model: y ~ g\nexclude: 4: spilled", "line numbers", None),
        ("model: y ~ g\nmethod: ranks", "rank tests", Some(4)),
        ("model: y ~ n", "name of a summary column", Some(4)),
    ];
    for (keys, expected, line) in cases {
        let d = doc(&format!("data: d.csv\n{keys}"));
        let e = cell_query(&d, &options(Source::Table("rows".into()))).unwrap_err();
        assert!(e.message.contains(expected), "{keys}: {}", e.message);
        if let Some(line) = line {
            assert_eq!(e.place.and_then(|p| p.line), Some(line), "{keys}");
        }
    }
}

#[test]
fn bad_options_are_refused() {
    let d = doc("data: d.csv\nmodel: y ~ g");
    let refused = |o: QueryOptions| cell_query(&d, &o).unwrap_err().message;
    let base = options(Source::Table("rows".into()));
    assert!(
        refused(QueryOptions {
            scale: 17,
            ..base.clone()
        })
        .contains("more than")
    );
    let origin = QueryOptions {
        origin: Some("1.25".into()),
        ..base.clone()
    };
    assert!(refused(origin).contains("at most 1 digits"));
    let table = QueryOptions {
        source: Source::Table("rows; drop".into()),
        ..base.clone()
    };
    assert!(refused(table).contains("not a plain table name"));
    let quoted = doc("data: d.csv\nmodel: y ~ g\nwhere: g == o'brien");
    assert!(
        cell_query(&quoted, &base)
            .unwrap_err()
            .message
            .contains("quote")
    );
    let ordered = doc("data: d.csv\nmodel: y ~ g\nwhere: g < b");
    assert!(
        cell_query(&ordered, &base)
            .unwrap_err()
            .message
            .contains("orders text")
    );
}

#[test]
fn a_changed_block_makes_the_query_stale() {
    let d = doc("data: d.csv\nmodel: y ~ g");
    let block = find_block(&d, Some("b")).expect("block");
    let sql = cell_query(&d, &options(Source::Table("rows".into()))).expect("query");
    assert_eq!(staleness(&d, block, "q.sql", &sql), None);
    // Line endings and trailing spaces do not count.
    let crlf = sql.replace('\n', "  \r\n");
    assert_eq!(staleness(&d, block, "q.sql", &crlf), None);
    let changed = doc("data: d.csv\nmodel: y ~ g\nwhere: site == a");
    let block = find_block(&changed, Some("b")).expect("block");
    let w = staleness(&changed, block, "q.sql", &sql).expect("stale");
    assert!(w.contains("stale"), "{w}");
    let w = staleness(&changed, block, "q.sql", "SELECT 1").expect("no header");
    assert!(w.contains("no `-- sheaf-query:` line"), "{w}");
}
