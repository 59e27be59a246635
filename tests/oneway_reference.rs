//! One-way ANOVA and pairwise comparisons against reference libraries.
//!
//! Source: tests/reference/oneway.json, written by tests/reference/generate.py
//! with statsmodels `ols` + `anova_lm` (ANOVA table), scipy.stats.tukey_hsd
//! (Tukey-Kramer p and intervals), scipy.stats.t (LSD) and statsmodels
//! `multipletests` (Bonferroni, Holm). Datasets: Dobson's plant weights
//! (open data) and invented unequal-n cases in tests/data/invented/.

use serde_json::Value;
use sheaf::data::{CsvFormat, Table, factor_response};
use sheaf::stats::compare::{LevelMean, Method, pairwise};
use sheaf::stats::oneway::{GroupSummary, one_way};

fn num(v: &Value) -> f64 {
    v.as_f64().expect("number")
}

/// SS, MS and F: 1e-10 relative (METHODS 6, oracle tolerance); p-values from
/// the F and t distributions: 1e-12 absolute.
fn close(got: f64, want: f64, rel: f64, abs: f64) -> bool {
    (got - want).abs() <= abs || ((got - want) / want).abs() <= rel
}

#[test]
fn anova_and_pairwise_match_scipy_and_statsmodels() {
    let fixture: Value =
        serde_json::from_str(include_str!("reference/oneway.json")).expect("fixture");
    for case in fixture["cases"].as_array().expect("cases") {
        let name = case["name"].as_str().expect("name");
        let path = format!(
            "{}/{}",
            env!("CARGO_MANIFEST_DIR"),
            case["csv"].as_str().expect("csv")
        );
        let bytes = std::fs::read(&path).expect("data file");
        let format = CsvFormat::default();
        let table = Table::parse(&bytes, &format).expect("table");
        let response = case["response"].as_str().expect("response");
        let factor = case["factor"].as_str().expect("factor");
        let data = factor_response(&table, response, factor, &format).expect("columns");
        let summaries: Vec<GroupSummary> = data
            .levels
            .iter()
            .map(|l| GroupSummary::from_values(&l.offsets))
            .collect();
        let t = one_way(&summaries, 0.05, None).expect("anova");
        let a = &case["anova"];
        assert!(
            close(t.ss_between, num(&a["ss_between"]), 1e-10, 0.0),
            "{name} SSB"
        );
        assert!(
            close(t.ss_within, num(&a["ss_within"]), 1e-10, 0.0),
            "{name} SSW"
        );
        assert!(close(t.f, num(&a["f"]), 1e-10, 0.0), "{name} F");
        assert!(close(t.p, num(&a["p"]), 1e-9, 1e-12), "{name} p");
        assert!(
            close(t.f_crit, num(&a["f_crit"]), 1e-10, 0.0),
            "{name} F crit"
        );
        assert!(
            close(t.r_squared, num(&a["r_squared"]), 1e-10, 0.0),
            "{name} R2"
        );
        for (lvl, g) in data
            .levels
            .iter()
            .zip(case["groups"].as_array().expect("groups"))
        {
            assert_eq!(lvl.name, g["level"].as_str().expect("level"));
            let mean = data.origin + GroupSummary::from_values(&lvl.offsets).mean;
            assert!(close(mean, num(&g["mean"]), 1e-13, 0.0), "{name} mean");
        }
        let levels: Vec<LevelMean> = summaries
            .iter()
            .map(|s| LevelMean {
                n: s.n,
                mean: s.mean,
            })
            .collect();
        for (key, method, p_abs) in [
            ("lsd", Method::Lsd, 1e-12),
            ("bonferroni", Method::Bonferroni, 1e-12),
            ("holm", Method::Holm, 1e-12),
            // Studentized range: 1e-8 absolute (the bar set for ptukey).
            ("tukey", Method::Tukey, 1e-8),
        ] {
            let got = pairwise(&levels, t.ms_within, t.df_within as f64, 0.05, method);
            let want = case["comparisons"][key].as_array().expect("pairs");
            assert_eq!(got.pairs.len(), want.len());
            for (g, w) in got.pairs.iter().zip(want) {
                let label = format!("{name} {key} {}-{}", w["a"], w["b"]);
                assert_eq!(
                    data.levels[g.a].name,
                    w["a"].as_str().expect("a"),
                    "{label}"
                );
                assert_eq!(
                    data.levels[g.b].name,
                    w["b"].as_str().expect("b"),
                    "{label}"
                );
                assert!(close(g.diff, num(&w["diff"]), 1e-12, 1e-12), "{label} diff");
                assert!(close(g.se, num(&w["se"]), 1e-12, 0.0), "{label} se");
                // Interval ends: critical values agree to 1e-10 (t) or 1e-8 (q).
                assert!(
                    close(g.lower, num(&w["lower"]), 1e-8, 1e-8),
                    "{label} lower {} {}",
                    g.lower,
                    w["lower"]
                );
                assert!(
                    close(g.upper, num(&w["upper"]), 1e-8, 1e-8),
                    "{label} upper"
                );
                assert!(
                    close(g.p_adj, num(&w["p_adj"]), 1e-9, p_abs),
                    "{label} p {} vs {}",
                    g.p_adj,
                    w["p_adj"]
                );
            }
        }
    }
}

#[test]
fn dobson_tukey_matches_published_output() {
    // Source: METHODS 6.4 (published output from memory, confirmed with
    // scipy.stats.tukey_hsd): trt2−trt1 = 0.865, 95% CI [0.1738, 1.5562],
    // p = 0.01200642; CI half-width 0.69121605.
    let ctrl = [4.17, 5.58, 5.18, 6.11, 4.50, 4.61, 5.17, 4.53, 5.33, 5.14];
    let trt1 = [4.81, 4.17, 4.41, 3.59, 5.87, 3.83, 6.03, 4.89, 4.32, 4.69];
    let trt2 = [6.31, 5.12, 5.54, 5.50, 5.37, 5.29, 4.92, 6.15, 5.80, 5.26];
    let s: Vec<GroupSummary> = [&ctrl[..], &trt1, &trt2]
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    let t = one_way(&s, 0.05, None).expect("anova");
    let levels: Vec<LevelMean> = s
        .iter()
        .map(|g| LevelMean {
            n: g.n,
            mean: g.mean,
        })
        .collect();
    let tk = pairwise(&levels, t.ms_within, 27.0, 0.05, Method::Tukey);
    let last = &tk.pairs[2];
    assert_eq!((last.a, last.b), (2, 1));
    assert!((last.p_adj - 0.01200642).abs() < 5e-9);
    assert!((last.upper - last.diff - 0.69121605).abs() < 5e-9);
}
