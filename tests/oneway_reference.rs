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

/// Chick weights by feed supplement, in the order horsebean, linseed, soybean,
/// sunflower, meatmeal, casein (Anonymous 1948, Biometrika 35:214, via McNeil
/// 1977; data from memory, METHODS 6.1D, whose F reproduces the published one).
const CHICK_WEIGHTS: [&[f64]; 6] = [
    &[
        179.0, 160.0, 136.0, 227.0, 217.0, 168.0, 108.0, 124.0, 143.0, 140.0,
    ],
    &[
        309.0, 229.0, 181.0, 141.0, 260.0, 203.0, 148.0, 169.0, 213.0, 257.0, 244.0, 271.0,
    ],
    &[
        243.0, 230.0, 248.0, 327.0, 329.0, 250.0, 193.0, 271.0, 316.0, 267.0, 199.0, 171.0, 158.0,
        248.0,
    ],
    &[
        423.0, 340.0, 392.0, 339.0, 341.0, 226.0, 320.0, 295.0, 334.0, 322.0, 297.0, 318.0,
    ],
    &[
        325.0, 257.0, 303.0, 315.0, 380.0, 153.0, 263.0, 242.0, 206.0, 344.0, 258.0,
    ],
    &[
        368.0, 390.0, 379.0, 260.0, 404.0, 318.0, 352.0, 359.0, 216.0, 222.0, 283.0, 332.0,
    ],
];

fn anova_of(groups: &[&[f64]]) -> sheaf::stats::oneway::OneWay {
    let s: Vec<GroupSummary> = groups
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    one_way(&s, 0.05, None).expect("anova")
}

#[test]
fn textbook_examples_reproduce_their_printed_tables() {
    // Source: Montgomery, Design and Analysis of Experiments, 5th ed. (2001),
    // Example 3-1, tensile strength by cotton weight percent (from memory, via
    // METHODS 6.1A): SS_trt = 475.76, SS_E = 161.20, F = 14.76; printed to the
    // digits shown, so agreement is to half a unit in the last printed digit.
    let t = anova_of(&[
        &[7.0, 7.0, 15.0, 11.0, 9.0],
        &[12.0, 17.0, 12.0, 18.0, 18.0],
        &[14.0, 18.0, 18.0, 19.0, 19.0],
        &[19.0, 25.0, 22.0, 19.0, 23.0],
        &[7.0, 10.0, 11.0, 15.0, 11.0],
    ]);
    assert!((t.ss_between - 475.76).abs() < 0.005 && (t.ss_within - 161.20).abs() < 0.005);
    assert!((t.f - 14.76).abs() < 0.005);
    // Computed in METHODS 6.1A with scipy: F = 14.756824, p = 9.128e-06.
    assert!((t.p - 9.128e-6).abs() < 5e-10);

    // Montgomery, 8th ed. (2013), Example 3.1, etch rate by RF power (from
    // memory, METHODS 6.1B): SS_trt = 66,870.55, SS_E = 5,339.20, F = 66.80.
    let t = anova_of(&[
        &[575.0, 542.0, 530.0, 539.0, 570.0],
        &[565.0, 593.0, 590.0, 579.0, 610.0],
        &[600.0, 651.0, 610.0, 637.0, 629.0],
        &[725.0, 700.0, 715.0, 685.0, 710.0],
    ]);
    assert!((t.ss_between - 66870.55).abs() < 0.005 && (t.ss_within - 5339.20).abs() < 0.005);
    assert!((t.f - 66.80).abs() < 0.005);

    // Chick weights by feed, unequal n (Anonymous 1948, Biometrika 35:214, via
    // McNeil 1977; data and F(5, 65) = 15.365 from memory, METHODS 6.1D).
    let t = anova_of(&CHICK_WEIGHTS);
    assert_eq!((t.df_between, t.df_within), (5, 65));
    assert!((t.f - 15.365).abs() < 0.0005);
    // Computed (scipy, METHODS 6.1D): SSB = 231129.162, p = 5.9364e-10.
    assert!((t.ss_between - 231129.162).abs() < 0.0005);
    assert!((t.p - 5.9364e-10).abs() < 5e-14);
}

#[test]
fn chick_weight_tukey_kramer_with_unequal_n() {
    // Source: METHODS 6.4, computed with scipy.stats.tukey_hsd on the chick
    // weight data (unequal n): soybean−linseed p = 0.793285,
    // casein−soybean p = 0.008365, linseed−horsebean p = 0.141333; printed to
    // 6 digits, so agreement is to 5e-7 (within ptukey's 1e-8 bar).
    let groups = CHICK_WEIGHTS;
    let s: Vec<GroupSummary> = groups
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
    let tk = pairwise(
        &levels,
        t.ms_within,
        t.df_within as f64,
        0.05,
        Method::Tukey,
    );
    let p = |a: usize, b: usize| {
        tk.pairs
            .iter()
            .find(|x| (x.a, x.b) == (a, b))
            .expect("pair")
            .p_adj
    };
    // Order: 0 horsebean, 1 linseed, 2 soybean, 3 sunflower, 4 meatmeal, 5 casein.
    assert!((p(2, 1) - 0.793285).abs() < 5e-7);
    assert!((p(5, 2) - 0.008365).abs() < 5e-7);
    assert!((p(1, 0) - 0.141333).abs() < 5e-7);
    assert!((p(4, 2) - 0.739136).abs() < 5e-7);
    assert!((p(5, 3) - 0.99989).abs() < 5e-6);
}
