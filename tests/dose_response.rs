//! Dose-response tests end to end (linear-extensions specification E): the
//! open P.promelas data (control and five concentrations, 4 replicates,
//! growth expected to decrease) through `noec`, against the values of
//! specification E.5 (computed by the specification's own reference:
//! exact Williams integrals, exact rational Steel probabilities,
//! statsmodels and scipy for the normal approximations), and the errors a
//! toxicologist's document can meet.

mod documents;

use documents::{assert_close, build, open};
use serde_json::Value;

const BLOCK: &str = "model: dryweight ~ conc\ncontrol: 0\nsides: less\n";

fn dose(extra: &str) -> Value {
    let doc = format!("# T\n\n```anova\nid: t\ndata: p.csv\n{BLOCK}{extra}```\n");
    let results = build(&doc, &[("p.csv", open("P.promelas.csv"))]).expect("builds");
    results["blocks"][0]["dose_response"].clone()
}

fn step<'a>(test: &'a Value, level: &str) -> &'a Value {
    test["steps"]
        .as_array()
        .expect("steps")
        .iter()
        .find(|s| s["level"] == level)
        .unwrap_or_else(|| panic!("no step {level}"))
}

const DOSES: [&str; 5] = ["32", "64", "128", "256", "512"];

#[test]
fn williams_matches_the_specification_table() {
    let d = dose("noec: williams\n");
    let w = &d["tests"]["williams"];
    // E.5 Williams table: restricted mean, t̄, critical value (18 df), p.
    // 1e-8 relative: the specification's reference solves its integrals to
    // about 1e-10 and the critical values by Brent to 1e-10 absolute.
    let rows = [
        (
            "512",
            0.471,
            5.96621062271,
            1.8668429726,
            6.49729408708e-06,
            true,
        ),
        (
            "256",
            0.5805,
            3.28325348436,
            1.85893989248,
            0.00237665268584,
            true,
        ),
        (
            "128",
            0.6235,
            2.22967214237,
            1.8454693805,
            0.0232313774576,
            true,
        ),
        (
            "64",
            0.675375,
            0.958636511759,
            1.81780933531,
            0.209287186922,
            false,
        ),
    ];
    for (level, m, t, crit, p, sig) in rows {
        let s = step(w, level);
        assert_close(
            &s["restricted_mean"],
            m,
            1e-12,
            &format!("{level} restricted mean"),
        );
        assert_close(&s["statistic"], t, 1e-9, &format!("{level} t̄"));
        assert_close(&s["critical"], crit, 1e-8, &format!("{level} critical"));
        assert_close(&s["p"], p, 1e-7, &format!("{level} p"));
        assert_eq!(s["significant"], sig, "{level}");
        assert_eq!(s["tested"], true, "{level}");
    }
    // 32 µg/L is below the stop: not tested.
    assert_eq!(step(w, "32")["tested"], false);
    assert_eq!(w["loec"], "128");
    assert_eq!(w["noec"], "64");
    assert_eq!(w["noec_reading"], "dose");
    assert_eq!(w["unequal_replication"], false);
}

#[test]
fn trend_step_downs_match_the_specification() {
    let d = dose("noec: jonckheere, ordinal\n");
    // E.5: exact p of each Jonckheere-Terpstra step (continuous data: the
    // one tie lies inside a group and does not change J), 1e-9 relative.
    let j = &d["tests"]["jonckheere"];
    for (level, p) in [
        ("512", 2.80774538741e-06),
        ("256", 0.000867879862042),
        ("128", 0.0339319410748),
        ("64", 0.140404040404),
    ] {
        assert_close(
            &step(j, level)["p"],
            p,
            1e-9,
            &format!("JT exact p to {level}"),
        );
        assert_eq!(step(j, level)["p_source"], "exact");
    }
    assert_close(&step(j, "512")["z"], -4.23661459491, 1e-9, "JT z");
    assert_eq!(
        (j["loec"].clone(), j["noec"].clone()),
        ("128".into(), "64".into())
    );
    // E.5 ordinal-contrast step-down: t, df, p.
    let o = &d["tests"]["ordinal"];
    for (level, t, df, p) in [
        ("512", -6.42254836092, 18.0, 2.39961764769e-06),
        ("256", -3.84300536932, 15.0, 0.000798284229645),
        ("128", -2.41655668135, 12.0, 0.0162606253561),
        ("64", -1.4451758299, 9.0, 0.0911554058731),
    ] {
        let s = step(o, level);
        assert_close(&s["statistic"], t, 1e-9, &format!("ordinal t to {level}"));
        assert_eq!(s["df"], df, "{level}");
        assert_close(&s["p"], p, 1e-9, &format!("ordinal p to {level}"));
    }
    assert_eq!(o["loec"], "128");
}

#[test]
fn many_to_one_procedures_and_their_disagreement() {
    let d = dose("compare: dunnett\nnoec: steel\n");
    // E.5 Steel exact adjusted p (exact rational arithmetic), 1e-9.
    let s = &d["tests"]["steel"];
    for (level, p) in DOSES.iter().zip([
        0.445977110423,
        0.445977110423,
        0.189605374053,
        0.0557831737668,
        0.0557831737668,
    ]) {
        assert_close(
            &step(s, level)["p"],
            p,
            1e-9,
            &format!("Steel exact p at {level}"),
        );
        assert_eq!(step(s, level)["p_source"], "exact");
    }
    assert_eq!(s["loec"], Value::Null, "exact Steel declares no dose");
    assert_eq!(s["noec_reading"], "at_least_highest");
    // E.5 Dunnett one-sided: adjusted p by the specification's own
    // deterministic quadrature; 1e-6 relative, the accuracy of Dunnett's
    // integral in sheaf (README, Accuracy).
    let dn = &d["tests"]["dunnett"];
    for (level, p) in DOSES.iter().zip([
        0.422565814975,
        0.458133616669,
        0.0695069874085,
        0.00849232875515,
        2.77122141124e-05,
    ]) {
        assert_close(
            &step(dn, level)["p"],
            p,
            1e-6,
            &format!("Dunnett p at {level}"),
        );
    }
    assert_eq!(
        (dn["loec"].clone(), dn["noec"].clone()),
        ("256".into(), "128".into())
    );
    assert_eq!(d["agree"], false);
    assert_eq!(d["direction"], "decrease");
    assert_eq!(d["doses_from"], "names");
}

fn error(extra: &str, data: &str) -> String {
    let doc = format!("# T\n\n```anova\nid: t\ndata: p.csv\n{extra}```\n");
    build(&doc, &[("p.csv", data.to_string())]).expect_err("refused")
}

#[test]
fn a_document_without_the_direction_or_the_control_is_told_what_to_add() {
    let data = open("P.promelas.csv");
    let e = error(
        "model: dryweight ~ conc\ncontrol: 0\nnoec: williams\n",
        &data,
    );
    assert!(
        e.contains("one direction") && e.contains("sides: less"),
        "{e}"
    );
    let e = error(
        "model: dryweight ~ conc\nsides: less\nnoec: williams\n",
        &data,
    );
    assert!(e.contains("control"), "{e}");
    let e = error(&format!("{BLOCK}noec: williams, probit\n"), &data);
    assert!(e.contains("unknown NOEC procedure `probit`"), "{e}");
    let e = error(&format!("{BLOCK}doses: 32 1\n"), &data);
    assert!(e.contains("`doses` applies only with `noec`"), "{e}");
}

#[test]
fn level_names_that_are_not_doses_need_doses() {
    let data = "dose,y\nnone,5.1\nnone,5.3\nnone,4.9\nlow,5.0\nlow,4.8\nlow,4.7\nhigh,4.1\nhigh,4.3\nhigh,3.9\n";
    let block = "model: y ~ dose\ncontrol: none\nsides: less\nnoec: williams\n";
    let e = error(block, data);
    assert!(
        e.contains("`low` is not a number") && e.contains("doses:"),
        "{e}"
    );
    let e = error(&format!("{block}doses: low 1, medium 3\n"), data);
    assert!(e.contains("no dose for the level `high`"), "{e}");
    let doc = format!("# T\n\n```anova\nid: t\ndata: p.csv\n{block}doses: high 10, low 1\n```\n");
    let r = build(&doc, &[("p.csv", data.to_string())]).expect("builds");
    let d = &r["blocks"][0]["dose_response"];
    // Ordered by the given doses, not by name or by first appearance.
    assert_eq!(d["doses"][0]["level"], "low");
    assert_eq!(d["doses"][1]["dose"], 10.0);
    assert_eq!(d["doses_from"], "given");
}

#[test]
fn a_dose_moving_against_the_tested_direction_is_reported() {
    // Invented: stimulation at the low dose (hormesis), inhibition above.
    let data = "c,y\n0,10.0\n0,10.2\n0,9.8\n0,10.1\n1,11.9\n1,12.1\n1,12.0\n1,11.8\n5,9.9\n5,10.1\n5,9.7\n5,10.0\n25,7.1\n25,6.9\n25,7.2\n25,7.0\n";
    let doc = "# T\n\n```anova\nid: t\ndata: p.csv\nmodel: y ~ c\ncontrol: 0\nsides: less\nnoec: williams\n```\n";
    let r = build(doc, &[("p.csv", data.to_string())]).expect("builds");
    let d = &r["blocks"][0]["dose_response"];
    assert_eq!(d["reversals"][0]["level"], "1", "{d}");
    assert!(d["reversals"][0]["p"].as_f64().expect("p") < 0.05);
    assert_eq!(d["tests"]["williams"]["loec"], "25");
}

#[test]
fn unequal_dose_replication_uses_its_own_critical_values() {
    // Invented deletion of one 512 µg/L observation (tests/data/invented).
    let data = std::fs::read_to_string(format!(
        "{}/tests/data/invented/promelas-unequal.csv",
        env!("CARGO_MANIFEST_DIR")
    ))
    .expect("data");
    let doc = format!("# T\n\n```anova\nid: t\ndata: p.csv\n{BLOCK}noec: williams\n```\n");
    let (report, r) = documents::build_report(&doc, &[("p.csv", data)]).expect("builds");
    let w = &r["blocks"][0]["dose_response"]["tests"]["williams"];
    assert_eq!(w["unequal_replication"], true);
    // Every decision follows its own critical value (the kernel's values
    // for unequal replication are checked against a forward grid and a
    // seeded Monte Carlo in stats::williams).
    for s in w["steps"]
        .as_array()
        .expect("steps")
        .iter()
        .filter(|s| s["tested"] == true)
    {
        let (t, c) = (
            s["statistic"].as_f64().expect("t̄"),
            s["critical"].as_f64().expect("critical"),
        );
        assert_eq!(s["significant"], t > c, "{s}");
    }
    assert!(
        report.contains("which no published table covers"),
        "{report}"
    );
}

#[test]
fn williams_runs_on_summary_input_and_the_rank_tests_are_refused() {
    // Each level's n, mean and SD of P.promelas (computed here from the
    // open data, then read back as a summary file).
    let text = open("P.promelas.csv");
    let mut levels: Vec<(String, Vec<f64>)> = Vec::new();
    for line in text.lines().skip(1) {
        let (c, y) = line.split_once(',').expect("two columns");
        let y: f64 = y.parse().expect("number");
        match levels.iter_mut().find(|(l, _)| l == c) {
            Some((_, v)) => v.push(y),
            None => levels.push((c.to_string(), vec![y])),
        }
    }
    let mut summary = String::from("conc,n,mean,sd\n");
    for (c, v) in &levels {
        let n = v.len() as f64;
        let m = v.iter().sum::<f64>() / n;
        let sd = (v.iter().map(|y| (y - m).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        summary.push_str(&format!("{c},{},{m:.17},{sd:.17}\n", v.len()));
    }
    let doc = format!(
        "# T\n\n```anova\nid: t\ndata: p.csv\ninput: summary\n{BLOCK}noec: williams\n```\n"
    );
    let r = build(&doc, &[("p.csv", summary.clone())]).expect("builds");
    let w = &r["blocks"][0]["dose_response"]["tests"]["williams"];
    // The same t̄ as from the raw data (E.5), to the rounding of the
    // written means and SDs (17 digits).
    assert_close(&step(w, "128")["statistic"], 2.22967214237, 1e-9, "t̄ 128");
    assert_eq!(w["loec"], "128");
    let e = error(
        &format!("input: summary\n{BLOCK}noec: williams, steel\n"),
        &summary,
    );
    assert!(e.contains("need the observations"), "{e}");
}

#[test]
fn more_doses_than_a_dose_response_design_holds_are_refused() {
    // 51 doses besides the control: the work of Williams' critical values
    // grows with the square of the doses, so the count is bounded.
    let mut data = String::from("c,y\n");
    for c in 0..=51 {
        for r in 0..3 {
            data.push_str(&format!("{c},{}\n", 10 + (c * 7 + r * 3) % 5));
        }
    }
    let block = "model: y ~ c\ncontrol: 0\nsides: less\nnoec: williams\n";
    let e = error(block, &data);
    assert!(e.contains("51 doses") && e.contains("up to 50"), "{e}");
}
