//! Polynomial trends over a fixed factor of a mixed model: nitrogen on the
//! subplots of the oats split plot (open data, Yates 1935), against
//! tests/reference/mixed_trend.py (statsmodels OLS in the subplot stratum
//! with the whole plots fixed, and textbook orthogonal polynomials from the
//! QR factorisation of the Vandermonde matrix), which gives the exact tests
//! Kenward-Roger reproduces in a balanced split plot. Then an unbalanced
//! run, checked for structure only.

mod documents;

use documents::{assert_close, build, build_report, open, reference_json};
use serde_json::Value;
use std::cell::Cell;

fn reference() -> Value {
    reference_json("mixed_trend.json")
}

fn oats_block(trend: &str, ddf: &str) -> String {
    format!(
        "# Oats\n\n```anova\nid: oats\ndata: oats.csv\nmodel: Y ~ V * N\nrandom: B + B:V\n{ddf}compare: none\n{trend}\n```\n"
    )
}

const EQUAL: &str = "trend: N = 0.0cwt 0, 0.2cwt 0.2, 0.4cwt 0.4, 0.6cwt 0.6";
const UNEQUAL: &str = "trend: N = 0.0cwt 0, 0.2cwt 1, 0.4cwt 2, 0.6cwt 4";

/// 1e-8 relative: the reference's tests are closed forms on the subplot
/// error; sheaf's rest on the REML variance components, which converge to
/// about 1e-11 relative (tests/mixed_reports.rs), and F, the df and p
/// carry that to at most about 1e-9 even for p near 1e-13.
const TOLERANCE: f64 = 1e-8;

/// Compares and keeps the largest relative difference seen, printed at the
/// end of each test (`--nocapture`) for the record.
struct Comparison {
    largest: Cell<f64>,
}

impl Comparison {
    fn new() -> Self {
        Comparison {
            largest: Cell::new(0.0),
        }
    }

    fn close(&self, got: &Value, want: &Value, what: &str) {
        let want = want
            .as_f64()
            .unwrap_or_else(|| panic!("{what}: reference {want}"));
        assert_close(got, want, TOLERANCE, what);
        let g = got.as_f64().unwrap_or(f64::NAN);
        let rel = (g - want).abs() / want.abs().max(1e-300);
        self.largest.set(self.largest.get().max(rel));
    }

    /// Each shown component and lack-of-fit row: F, both df and p.
    fn rows(&self, trend: &Value, want: &Value) {
        for (kind, names) in [
            ("components", &["linear", "quadratic", "cubic"][..]),
            ("lack_of_fit", &["after linear", "after quadratic"][..]),
        ] {
            for name in names {
                let got = row(&trend[kind], name);
                let want = &want[kind][name];
                for (field, key) in [("f", "f"), ("df", "df1"), ("error_df", "df2"), ("p", "p")] {
                    self.close(&got[field], &want[key], &format!("{name} {field}"));
                }
            }
        }
    }

    fn report(&self, what: &str) {
        eprintln!(
            "{what}: largest relative difference {:e}",
            self.largest.get()
        );
    }
}

fn row<'a>(rows: &'a Value, term: &str) -> &'a Value {
    rows.as_array()
        .expect("rows")
        .iter()
        .find(|r| r["term"] == term)
        .unwrap_or_else(|| panic!("no {term} in {rows}"))
}

fn oats_trend(trend: &str, ddf: &str) -> (String, Value) {
    let (html, results) =
        build_report(&oats_block(trend, ddf), &[("oats.csv", open("oats.csv"))]).expect("builds");
    (html, results["blocks"][0]["trend"].clone())
}

#[test]
fn equally_spaced_rates_give_the_subplot_stratum_tests() {
    let r = &reference()["equal"];
    let (html, t) = oats_trend(EQUAL, "");
    let c = Comparison::new();
    c.rows(&t, r);
    assert_eq!(t["df_method"], "kenward-roger");
    // Each row has its own error: no pooled error and no sums of squares.
    assert!(
        t["error_df"].is_null() && t["treatment_ss"].is_null(),
        "{t}"
    );
    assert!(row(&t["components"], "linear")["ss"].is_null(), "{t}");
    // The degree rule: linear significant, the deviations after it not.
    assert_eq!(t["degree"], 1);
    let want = &r["curve"];
    for j in 0..2 {
        c.close(
            &t["curve"]["coefficients"][j],
            &want["coefficients"][j],
            &format!("coefficient {j}"),
        );
    }
    c.close(&t["curve"]["se"][1], &want["se"][1], "slope SE");
    // The curve's df is the linear component's.
    c.close(
        &t["curve"]["df"],
        &r["components"]["linear"]["df2"],
        "curve df",
    );
    assert!(
        html.contains("tested with its own SE and Kenward-Roger df from the mixed model"),
        "the table says what each component is tested against"
    );
    assert!(
        !html.contains("Residual (pure error)"),
        "no single residual line"
    );
    c.report("equal spacing");
}

#[test]
fn unequal_spacing_finds_a_quadratic_and_locates_its_maximum() {
    let r = &reference()["unequal"];
    let (_, t) = oats_trend(UNEQUAL, "");
    let c = Comparison::new();
    c.rows(&t, r);
    assert_eq!(t["degree"], 2);
    let want = &r["curve"];
    for j in 0..3 {
        c.close(
            &t["curve"]["coefficients"][j],
            &want["coefficients"][j],
            &format!("coefficient {j}"),
        );
    }
    for j in 1..3 {
        c.close(&t["curve"]["se"][j], &want["se"][j], &format!("SE {j}"));
    }
    let o = &t["curve"]["optimum"];
    assert_eq!(o["kind"], "maximum");
    assert_eq!(o["set"], "bounded");
    assert_eq!(want["optimum"]["bounded"], true);
    c.close(&o["x"], &want["optimum"]["x"], "x*");
    c.close(&o["lower"], &want["optimum"]["limits"][0], "Fieller lower");
    c.close(&o["upper"], &want["optimum"]["limits"][1], "Fieller upper");
    c.report("unequal spacing");
}

/// Satterthwaite gives the same exact stratum tests in a balanced split
/// plot, and the results file says which method found the df.
#[test]
fn satterthwaite_agrees_in_the_balanced_split_plot() {
    let r = &reference()["equal"];
    let (_, t) = oats_trend(EQUAL, "ddf: satterthwaite\n");
    assert_eq!(t["df_method"], "satterthwaite");
    let c = Comparison::new();
    c.rows(&t, r);
    c.report("Satterthwaite");
}

/// Not a reference check: with two subplots removed there is no exact
/// stratum test to compare with, so this asserts only what must hold for
/// any unbalanced split plot: each row still gets an F with its own
/// Kenward-Roger df, which is no longer a whole number, and a p in (0, 1].
#[test]
fn unbalanced_rows_have_their_own_fractional_df() {
    let data: String = open("oats.csv")
        .lines()
        .filter(|l| !l.starts_with("I,Victory,0.2cwt") && !l.starts_with("III,Marvellous,0.6cwt"))
        .map(|l| format!("{l}\n"))
        .collect();
    assert_eq!(data.lines().count(), 71, "header and 70 subplots");
    let doc = oats_block(EQUAL, "");
    let results = build(&doc, &[("oats.csv", data)]).expect("builds");
    let t = &results["blocks"][0]["trend"];
    let rows: Vec<&Value> = (t["components"].as_array().expect("components").iter())
        .chain(t["lack_of_fit"].as_array().expect("lack of fit"))
        .collect();
    assert_eq!(rows.len(), 5);
    for r in rows {
        let df = r["error_df"].as_f64().expect("df");
        assert!(df.fract() != 0.0 && df > 0.0, "own df: {r}");
        let (f, p) = (r["f"].as_f64().expect("f"), r["p"].as_f64().expect("p"));
        assert!(f.is_finite() && f >= 0.0 && p > 0.0 && p <= 1.0, "{r}");
    }
}

/// A random factor or the subject has no marginal means to trend over.
#[test]
fn a_trend_over_a_random_factor_is_refused() {
    let doc = oats_block("trend: B = I 1, II 2, III 3, IV 4, V 5, VI 6", "");
    let e = build(&doc, &[("oats.csv", open("oats.csv"))]).expect_err("random");
    assert!(e.contains("`B` is a random factor"), "{e}");
}
