use super::*;

fn columns() -> SummaryColumns {
    SummaryColumns {
        n: "n".into(),
        mean: "mean".into(),
        spread: "sd".into(),
        spread_is_se: false,
        sum: "sum".into(),
        squares: "squares".into(),
        origin: "origin".into(),
        rounded: "rounded".into(),
    }
}

fn read(text: &str, factors: &[&str]) -> Result<SummaryCells, DataError> {
    let format = CsvFormat::default();
    let table = Table::parse(text.as_bytes(), &format).expect("table");
    summary_cells(&table, factors, &columns(), &format)
}

/// Cell a holds 10.1 and 10.3, cell b 10.2; from origin 10 the sums are
/// 0.4 and 0.2, the squares 0.01 + 0.09 = 0.10 and 0.04 (exact decimal
/// arithmetic by hand). Means 10.2 and 10.2, SS 0.02 and 0.
#[test]
fn exact_sums_give_means_and_sums_of_squares() {
    let cells = read(
        "g,n,origin,sum,squares,rounded\na,2,10.00,0.4,0.10,0\nb,1,10,0.2,0.04,0\n",
        &["g"],
    )
    .expect("cells");
    // Means are offsets from the first cell's mean, 10.2.
    assert_eq!(cells.origin, 10.2);
    assert_eq!(cells.exact_origin.as_deref(), Some("10"));
    assert_eq!(cells.decimals, 1);
    assert_eq!(cells.cells[0].n, 2);
    assert_eq!(cells.cells[0].mean, 0.0);
    assert_eq!(cells.cells[1].mean, 0.0);
    // 0.1 − 0.16/2 = 0.02 exactly, then rounded once.
    assert_eq!(cells.cells[0].ss, 0.02);
    assert_eq!(cells.cells[1].ss, 0.0);
}

#[test]
fn exact_sums_refuse_bad_rows_with_their_line() {
    let cases = [
        // A second origin.
        (
            "g,n,origin,sum,squares\na,2,10,0.4,0.1\nb,1,11,0.2,0.04\n",
            3,
            "differs",
        ),
        // Exponent notation: the value went through a float.
        (
            "g,n,origin,sum,squares\na,2,10,4e-1,0.1\n",
            2,
            "exact decimal",
        ),
        // Squares below sum²/n.
        ("g,n,origin,sum,squares\na,2,10,0.4,0.07\n", 2, "negative"),
        // Rounded values reported by the query.
        (
            "g,n,origin,sum,squares,rounded\na,2,10,0.4,0.1,0\nb,1,10,0.2,0.04,3\n",
            3,
            "3 values had more decimals than the query kept; regenerate with more decimals",
        ),
        (
            "g,n,origin,sum,squares\na,2.5,10,0.4,0.1\n",
            2,
            "whole number",
        ),
        (
            "g,n,origin,sum,squares\na,2,10,0.4,0.1\na,1,10,0.2,0.04\n",
            3,
            "twice",
        ),
    ];
    for (text, line, words) in cases {
        let err = read(text, &["g"]).expect_err(text);
        assert_eq!(err.line, Some(line), "{text}");
        assert!(err.message.contains(words), "{}", err.message);
    }
}

#[test]
fn published_cells_of_two_factors() {
    let text = "a,b,n,mean,sd\nx,p,3,10.5,1.5\nx,q,1,11.25,\ny,p,2,9.5,0.5\n";
    let cells = read(text, &["a", "b"]).expect("cells");
    assert_eq!(cells.origin, 10.5);
    assert_eq!(cells.cells[1].levels, vec!["x", "q"]);
    assert_eq!(cells.cells[1].mean, 0.75);
    assert_eq!(cells.cells[1].ss, 0.0);
    assert_eq!(cells.cells[0].ss, 2.0 * 1.5 * 1.5);
    assert_eq!(cells.cells[2].mean, -1.0);
    assert_eq!(cells.exact_origin, None);
}

#[test]
fn published_cells_refuse_bad_rows() {
    let cases = [
        ("a,b,n,mean,sd\nx,,3,10.5,1.5\n", 2, "`b` is empty"),
        (
            "a,b,n,mean,sd\nNA,p,3,10.5,1.5\n",
            2,
            "`a` holds the missing-value marker `NA`",
        ),
        (
            "a,b,n,mean,sd\nx,p,3,10.5,1.5\nx,p,2,1,1\n",
            3,
            "cell x × p appears twice",
        ),
        ("a,b,n,mean,sd\nx,p,3,10.5,-1\n", 2, "negative"),
        ("a,b,n,mean,sd\nx,p,0,10.5,1\n", 2, "whole number"),
        (
            "a,b,n,mean,sd\nx,p,1,10.5,2\n",
            2,
            "one observation has no spread",
        ),
        ("a,b,n,mean,sd\nx,p,3,10.5,\n", 2, "must be a number"),
    ];
    for (text, line, words) in cases {
        let err = read(text, &["a", "b"]).expect_err(text);
        assert_eq!(err.line, Some(line), "{text}");
        assert!(err.message.contains(words), "{}", err.message);
    }
}
