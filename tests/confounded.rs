//! A factorial confounded with blocks: the npk data hold N:P:K confounded
//! with blocks. sheaf says what is confounded with what and gives the usual
//! analysis (N:P:K left in the block sum of squares), checked against
//! statsmodels (tests/reference/confounded.json, written by
//! tests/reference/confounded.py) for every SS type.

use std::process::Command;

fn build(model: &str, ss: &str) -> (bool, String, serde_json::Value) {
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    let data = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/open/npk.csv");
    std::fs::copy(data, p.join("npk.csv")).expect("copy");
    let doc = format!(
        "# Peas\n\n```anova\nid: npk\ndata: npk.csv\nmodel: {model}\nblock: block\nss: {ss}\n```\n"
    );
    std::fs::write(p.join("report.md"), doc).expect("doc");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(p)
        .args(["build", "report.md", "-o", "out", "--to", "md"])
        .output()
        .expect("runs");
    let err = String::from_utf8_lossy(&o.stderr).into_owned();
    let json = std::fs::read_to_string(p.join("out/report.results.json"))
        .ok()
        .and_then(|t| serde_json::from_str(&t).ok())
        .unwrap_or(serde_json::Value::Null);
    (o.status.success(), err, json)
}

/// 1e-9 relative: the bar for agreement with the reference library.
fn close(got: f64, want: f64) -> bool {
    (got - want).abs() <= 1e-9 * want.abs().max(1e-12)
}

#[test]
fn a_term_confounded_with_blocks_is_named_and_absorbed() {
    let reference: serde_json::Value =
        serde_json::from_str(include_str!("../tests/reference/confounded.json"))
            .expect("reference");
    for ss in ["1", "2", "3"] {
        let (ok, err, json) = build("yield ~ block + N * P * K", ss);
        assert!(ok, "ss {ss}: {err}");
        assert!(
            err.contains("`N:P:K` is confounded with `block`"),
            "ss {ss}: {err}"
        );
        let want = &reference["types"][ss];
        let block = &json["blocks"][0];
        let terms = block["anova"]["terms"].as_array().expect("terms");
        let names: Vec<&str> = terms.iter().filter_map(|t| t["term"].as_str()).collect();
        assert_eq!(names, ["block", "N", "P", "K", "N:P", "N:K", "P:K"]);
        for (got, want) in terms.iter().zip(want["terms"].as_array().expect("ref")) {
            assert_eq!(got["df"].as_f64(), want["df"].as_f64());
            // A declared block is reported (SS, df) but not tested.
            let fields: &[&str] = if want["term"] == "block" {
                assert!(got["p"].is_null(), "blocks are not tested");
                &["ss"]
            } else {
                &["ss", "p"]
            };
            for &field in fields {
                let (g, w) = (
                    got[field].as_f64().unwrap_or(f64::NAN),
                    want[field].as_f64().unwrap_or(f64::NAN),
                );
                assert!(close(g, w), "ss {ss} {} {field}: {g} vs {w}", want["term"]);
            }
        }
        assert_eq!(
            block["anova"]["residual"]["df"].as_f64(),
            want["residual_df"].as_f64()
        );
        let rss = block["anova"]["residual"]["ss"]
            .as_f64()
            .unwrap_or(f64::NAN);
        assert!(close(rss, want["residual_ss"].as_f64().unwrap_or(f64::NAN)));
    }
}

#[test]
fn the_block_written_last_is_still_fitted_before_the_interactions() {
    // Terms are fitted by order (main effects, then two-factor interactions,
    // then three-factor), so N:P:K still comes after block and is absorbed.
    let (ok, err, json) = build("yield ~ N * P * K + block", "1");
    assert!(ok, "{err}");
    assert!(err.contains("`N:P:K` is confounded with `block`"), "{err}");
    let terms = json["blocks"][0]["anova"]["terms"]
        .as_array()
        .expect("terms");
    let block = terms
        .iter()
        .find(|t| t["term"] == "block")
        .expect("block row");
    assert_eq!(block["df"], 5);
    assert!(terms.iter().all(|t| t["term"] != "N:P:K"));
}

#[test]
fn a_term_determined_by_several_earlier_terms_is_refused_with_them_named() {
    // An invented layout over two blocking factors R and S in which only
    // three (R, S) pairs occur: in (r1, s1) the plots have N = P, in the
    // other two N != P. The N:P contrast is then a function of R and S
    // together, though of neither alone.
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    let mut csv = String::from("R,S,N,P,y\n");
    let plots = [
        ("r1", "s1", 0, 0),
        ("r1", "s1", 1, 1),
        ("r1", "s2", 0, 1),
        ("r1", "s2", 1, 0),
        ("r2", "s1", 0, 1),
        ("r2", "s1", 1, 0),
    ];
    for (i, (r, s, n, q)) in plots.iter().cycle().take(18).enumerate() {
        csv.push_str(&format!("{r},{s},{n},{q},{}\n", 10 + (i * 7) % 5));
    }
    std::fs::write(p.join("d.csv"), csv).expect("data");
    std::fs::write(
        p.join("report.md"),
        "# T\n\n```anova\ndata: d.csv\nmodel: y ~ R + S + N * P\nss: 1\n```\n",
    )
    .expect("doc");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(p)
        .args(["build", "report.md", "-o", "out"])
        .output()
        .expect("runs");
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(
        err.contains("`N:P` is not estimable: every one of its contrasts is determined by the terms before it (R, S, N, P)"),
        "{err}"
    );
}
