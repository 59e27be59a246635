//! Friedman's test, Kendall's W and the rank post hoc procedures for
//! complete blocks, against reference libraries and through documents.
//!
//! Source: tests/reference/friedman.json, written by
//! tests/reference/friedman.py with scipy.stats.friedmanchisquare (χ², p),
//! scipy.stats.rankdata (rank sums), Kendall's W from its textbook formula
//! with the tie correction (computed in the script from the ranks),
//! scikit-posthocs posthoc_nemenyi_friedman and posthoc_conover_friedman
//! (p_adjust=None), and the studentized range tail at ∞ df by mpmath at 30
//! digits. Data: Hollander & Wolfe (1999) Table 7.1 (rounding first base,
//! from memory), Conover (1999) Example 5.8.1 (lawn grasses, ranks with
//! ties, from memory) and tests/data/invented/crispness.csv (invented).

mod documents;

use documents::{build, build_report};
use serde_json::Value;
use sheaf::stats::friedman::{conover, friedman, nemenyi};

fn fixture() -> Value {
    serde_json::from_str(include_str!("reference/friedman.json")).expect("fixture")
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or(f64::NAN)
}

fn nums(v: &Value) -> Vec<f64> {
    v.as_array().expect("array").iter().map(num).collect()
}

fn table(set: &Value) -> Vec<Vec<f64>> {
    set["table"]
        .as_array()
        .expect("table")
        .iter()
        .map(nums)
        .collect()
}

/// Relative difference, or absolute below 1 in magnitude.
fn diff(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs().max(1.0)
}

#[test]
fn friedman_statistic_agrees_with_scipy() {
    // 1e-10: χ² is a few sums of exact mid-ranks, and χ²(k − 1)'s tail is
    // the regularized incomplete gamma (1e-14 relative against scipy in
    // tests/distributions.rs); measured worst below 1e-14.
    let mut worst: f64 = 0.0;
    for set in fixture()["sets"].as_array().expect("sets") {
        let f = friedman(&table(set)).expect("defined");
        let name = set["name"].as_str().unwrap_or("?");
        for (got, want) in [
            (f.chi_sq, num(&set["chi_sq"])),
            (f.p, num(&set["p"])),
            (f.df, num(&set["df"])),
            (f.ties, num(&set["ties"])),
        ] {
            worst = worst.max(diff(got, want));
            assert!(diff(got, want) < 1e-10, "{name}: {got} vs {want}");
        }
        let sums = nums(&set["rank_sums"]);
        let means = nums(&set["mean_ranks"]);
        assert_eq!(f.rank_sums, sums, "{name}: rank sums are exact");
        for (got, want) in f.mean_ranks.iter().zip(&means) {
            assert!(diff(*got, *want) < 1e-15, "{name}: {got} vs {want}");
        }
        // p relative, where it is small (the invented set's 2.4e-6).
        let p_rel = ((f.p - num(&set["p"])) / num(&set["p"])).abs();
        assert!(p_rel < 1e-10, "{name}: p relative {p_rel}");
    }
    println!("Friedman χ², p, ties: worst difference {worst:.2e}");
}

#[test]
fn kendall_w_agrees_with_the_tie_corrected_formula() {
    // Kendall's W computed in the script as 12S/(m²(n³ − n) − mΣT), not from
    // χ²: the identity W = χ²/(b(k − 1)) with tie-corrected χ² holds
    // algebraically, so 1e-12 leaves room for a few roundings only.
    for set in fixture()["sets"].as_array().expect("sets") {
        let f = friedman(&table(set)).expect("defined");
        let want = num(&set["kendall_w"]);
        assert!(
            diff(f.kendall_w, want) < 1e-12,
            "{}: W {} vs {want}",
            set["name"],
            f.kendall_w
        );
    }
}

#[test]
fn printed_textbook_values() {
    // From memory (see the script's header): Hollander & Wolfe's 11.14 and
    // p ≈ 0.004; Conover's T1 = 8.097; both as printed, to their digits.
    let fx = fixture();
    for set in fx["sets"].as_array().expect("sets") {
        let Some(printed) = set.get("printed") else {
            continue;
        };
        let f = friedman(&table(set)).expect("defined");
        let chi = num(&printed["chi_sq"]);
        let digits = if chi > 10.0 { 5e-3 } else { 5e-4 };
        assert!((f.chi_sq - chi).abs() < digits, "{}", set["name"]);
        assert_eq!(f.rank_sums, nums(&printed["rank_sums"]));
        if let Some(p) = printed.get("p") {
            assert!((f.p - num(p)).abs() < 5e-4);
        }
    }
}

#[test]
fn nemenyi_agrees_with_scikit_posthocs_and_mpmath() {
    // The studentized range tail at ∞ df: scikit-posthocs takes scipy's
    // 1 − cdf, mpmath integrates at 30 digits; on these sets the two agree
    // to 2e-16, so either decides. sheaf's tail is held to 1e-10 absolute
    // (its range cdf is within 1e-11 of mpmath, README "Accuracy") and
    // 1e-9 relative where p < 0.01 (computed as a tail in its own right).
    let mut worst_abs: f64 = 0.0;
    for set in fixture()["sets"].as_array().expect("sets") {
        let f = friedman(&table(set)).expect("defined");
        let family = nemenyi(&f, 0.05);
        let scikit = nums(&set["nemenyi_p"]);
        let exact = nums(&set["nemenyi_p_mpmath"]);
        let q = nums(&set["nemenyi_q"]);
        for (i, p) in family.pairs.iter().enumerate() {
            assert!((p.statistic - q[i]).abs() < 1e-12 * q[i].max(1.0));
            let (abs_s, abs_m) = ((p.p_adj - scikit[i]).abs(), (p.p_adj - exact[i]).abs());
            worst_abs = worst_abs.max(abs_s).max(abs_m);
            assert!(abs_s < 1e-10 && abs_m < 1e-10, "{}: pair {i}", set["name"]);
            if exact[i] < 0.01 {
                assert!(abs_m / exact[i] < 1e-9, "{}: pair {i}", set["name"]);
            }
        }
    }
    println!("Nemenyi p: worst absolute difference {worst_abs:.2e}");
}

#[test]
fn conover_agrees_with_scikit_posthocs() {
    // Student's t tail by the regularized incomplete beta: 1e-10 relative
    // (or absolute below 1) leaves margin over its 1e-14 agreement with scipy.
    for set in fixture()["sets"].as_array().expect("sets") {
        let f = friedman(&table(set)).expect("defined");
        let family = conover(&f, 0.05).expect("spread");
        let want = nums(&set["conover_p"]);
        for (p, w) in family.pairs.iter().zip(&want) {
            assert!(
                diff(p.p_adj, *w) < 1e-10,
                "{}: {} vs {w}",
                set["name"],
                p.p_adj
            );
        }
    }
}

/// The rounding-first-base table as a long CSV: player, method, time.
fn rounding_csv(set: &Value) -> String {
    let levels: Vec<&str> = set["levels"]
        .as_array()
        .expect("levels")
        .iter()
        .map(|l| l.as_str().unwrap_or("?"))
        .collect();
    let mut csv = String::from("player,method,time\n");
    for (i, row) in table(set).iter().enumerate() {
        for (level, value) in levels.iter().zip(row) {
            csv.push_str(&format!("p{},{level},{value:.2}\n", i + 1));
        }
    }
    csv
}

fn blocked(extra: &str) -> String {
    format!(
        "```anova\nid: run\ndata: d.csv\nmodel: time ~ method + player\nblock: player\nmethod: ranks\n{extra}```\n\n{{{{ run | statement }}}}\n"
    )
}

#[test]
fn a_blocked_rank_block_runs_friedmans_test_end_to_end() {
    // The textbook set through a document: the results file's numbers are the
    // library's, as in friedman_statistic_agrees_with_scipy (same tolerances).
    let fx = fixture();
    let set = &fx["sets"][0];
    let (report, results) =
        build_report(&blocked(""), &[("d.csv", rounding_csv(set))]).expect("builds");
    let block = &results["blocks"][0];
    let f = &block["friedman"];
    assert_eq!(block["method"], "ranks");
    assert!(diff(num(&f["statistic"]), num(&set["chi_sq"])) < 1e-10);
    assert!(diff(num(&f["p"]), num(&set["p"])) < 1e-10);
    assert!(diff(num(&f["kendall_w"]), num(&set["kendall_w"])) < 1e-12);
    assert_eq!(f["blocks"], 22);
    assert_eq!(f["procedure"], "nemenyi");
    let sums: Vec<f64> = f["levels"]
        .as_array()
        .expect("levels")
        .iter()
        .map(|l| num(&l["rank_sum"]))
        .collect();
    assert_eq!(sums, nums(&set["rank_sums"]));
    let want = nums(&set["nemenyi_p"]);
    for (i, p) in f["pairs"].as_array().expect("pairs").iter().enumerate() {
        assert!((num(&p["p_adj"]) - want[i]).abs() < 1e-10, "pair {i}");
    }
    // The comparison family carries the same decisions and letters.
    let c = &block["comparisons"][0];
    assert_eq!(c["method"], "nemenyi");
    assert_eq!(c["letters"]["wide angle"], f["levels"][2]["letters"]);
    // The table, the statement and the cautions.
    assert!(report.contains("Friedman's test of time by method within player"));
    assert!(report.contains("Friedman χ²(2) = 11.14, p = 0.004; Kendall's W = 0.25"));
    assert!(report.contains("Ties within blocks"));
    assert!(report.contains("discards how large the differences are"));
}

#[test]
fn conover_is_offered_and_protected_by_the_test() {
    let fx = fixture();
    let set = &fx["sets"][0];
    let results = build(
        &blocked("compare: conover\n"),
        &[("d.csv", rounding_csv(set))],
    )
    .expect("builds");
    let f = &results["blocks"][0]["friedman"];
    assert_eq!(f["procedure"], "conover");
    let want = nums(&set["conover_p"]);
    for (i, p) in f["pairs"].as_array().expect("pairs").iter().enumerate() {
        assert!(diff(num(&p["p_adj"]), want[i]) < 1e-10, "pair {i}");
    }
    // At α = 0.001 Friedman's p (0.0038) does not reject: no pair is declared.
    let (report, results) = build_report(
        &blocked("compare: conover\nalpha: 0.001\n"),
        &[("d.csv", rounding_csv(set))],
    )
    .expect("builds");
    let pairs = results["blocks"][0]["friedman"]["pairs"]
        .as_array()
        .cloned();
    assert!(
        pairs
            .expect("pairs")
            .iter()
            .all(|p| p["significant"] == false)
    );
    assert!(report.contains("no pair is declared different"));
}

#[test]
fn incomplete_and_repeated_blocks_are_refused_with_names() {
    let fx = fixture();
    let set = &fx["sets"][0];
    let csv = rounding_csv(set);
    // p3 loses its wide-angle time.
    let missing: String = csv
        .lines()
        .filter(|l| *l != "p3,wide angle,5.50")
        .map(|l| format!("{l}\n"))
        .collect();
    let err = build_report(&blocked(""), &[("d.csv", missing)]).expect_err("refused");
    assert!(err.contains("`p3` lacks `wide angle`"), "{err}");
    assert!(err.contains("`where` or `exclude`"), "{err}");
    // p5 timed twice with the narrow angle.
    let doubled = format!("{csv}p5,narrow angle,5.80\n");
    let err = build_report(&blocked(""), &[("d.csv", doubled)]).expect_err("refused");
    assert!(
        err.contains("`p5` has 2 observations of `narrow angle`"),
        "{err}"
    );
    assert!(err.contains("average the replicates"), "{err}");
}

#[test]
fn keys_friedmans_test_cannot_honour_are_refused() {
    let fx = fixture();
    let csv = rounding_csv(&fx["sets"][0]);
    let files = [("d.csv", csv)];
    for (extra, expect) in [
        ("compare: dunn\n", "compare: nemenyi"),
        ("compare: tukey\n", "does not fit `method: ranks`"),
        ("plot: means\n", "plot: box"),
        ("within: method\n", "does not apply to Friedman's test"),
        ("transform: log\n", "remove `transform`"),
        ("random: player\n", "random terms"),
        ("subject: player\n", "random terms"),
        ("covariate: time\n", "covariate"),
    ] {
        let err = build_report(&blocked(extra), &files).expect_err(extra);
        assert!(err.contains(expect), "{extra}: {err}");
    }
    // Nemenyi needs blocks; two treatment factors are refused by the engine.
    let one_factor =
        "```anova\ndata: d.csv\nmodel: time ~ method\nmethod: ranks\ncompare: nemenyi\n```\n";
    let err = build_report(one_factor, &files).expect_err("no blocks");
    assert!(err.contains("add `block:`"), "{err}");
    let two = "```anova\ndata: d.csv\nmodel: time ~ method + player + site\nblock: player\nmethod: ranks\n```\n";
    let with_site: String = files[0]
        .1
        .lines()
        .enumerate()
        .map(|(i, l)| match i {
            0 => format!("{l},site\n"),
            _ => format!("{l},s{}\n", i % 2),
        })
        .collect();
    let err = build_report(two, &[("d.csv", with_site)]).expect_err("two factors");
    assert!(err.contains("one treatment factor"), "{err}");
    // One block only: the block factor has a single level.
    let one_block: String = files[0]
        .1
        .lines()
        .filter(|l| l.starts_with("player,") || l.starts_with("p1,"))
        .map(|l| format!("{l}\n"))
        .collect();
    let err = build_report(&blocked(""), &[("d.csv", one_block)]).expect_err("one block");
    assert!(err.contains("`player` has 1 level with data"), "{err}");
    // Several responses are refused with ranks.
    let traits = "```anova\ndata: d.csv\nmodel: time, time2 ~ method + player\nblock: player\nmethod: ranks\n```\n";
    let err = build_report(traits, &files).expect_err("several responses");
    assert!(err.contains("several responses"), "{err}");
}
