//! Repeated-measures blocks (`subject`), end to end: the results file
//! against the check values of the mixed-models specification (9.4 B,
//! sleepstudy, open data) and against pingouin's `mixed_anova` on the
//! invented data of tests/reference/repeated_measures.json.

mod documents;

use documents::{build, open, sleepstudy_with_deletions};
use serde_json::Value;

/// The spec prints 12 significant digits and the computation agrees with
/// the libraries to about 1e-13 (tests/repeated_core.rs), so 1e-9 relative.
fn close(got: &Value, want: f64, what: &str) {
    let g = got
        .as_f64()
        .unwrap_or_else(|| panic!("{what}: not a number: {got}"));
    assert!(
        (g - want).abs() <= 1e-9 * want.abs(),
        "{what}: got {g}, want {want}"
    );
}

fn within<'a>(block: &'a Value, term: &str) -> &'a Value {
    block["repeated"]["univariate"]
        .as_array()
        .and_then(|t| t.iter().find(|t| t["term"] == term))
        .unwrap_or_else(|| panic!("within term {term}: {}", block["repeated"]))
}

const SLEEP: &str = "# Sleep\n\n```anova\nid: s\ndata: sleepstudy.csv\nmodel: Reaction ~ Days\nsubject: Subject\ncompare: none\n```\n";

#[test]
fn sleepstudy_univariate_analysis_matches_the_specification() {
    let r = build(SLEEP, &[("sleepstudy.csv", open("sleepstudy.csv"))]).expect("builds");
    let b = &r["blocks"][0];
    let rep = &b["repeated"];
    assert_eq!(rep["within"], serde_json::json!(["Days"]));
    assert_eq!(rep["between"], serde_json::json!([]));
    assert_eq!(rep["complete_subjects"], 18);
    let d = within(b, "Days");
    // Spec 9.4 B: own, pingouin, statsmodels AnovaRM; scipy for p.
    close(&d["f"], 18.7026979326, "F Days");
    assert_eq!(
        (d["df"].as_f64(), d["df_den"].as_f64()),
        (Some(9.0), Some(153.0))
    );
    close(&d["p"], 8.995345416e-21, "p Days");
    close(&d["p_gg"], 5.46309176758e-09, "p GG");
    close(&d["p_hf"], 7.07655175337e-11, "p HF");
    let s = &d["sphericity"];
    close(&s["gg_epsilon"], 0.369029844794, "GG epsilon");
    close(&s["hf_epsilon"], 0.46936479691, "HF epsilon");
    close(&s["mauchly_w"], 2.19020403394e-04, "Mauchly W");
    close(&s["chi_sq"], 116.252361507, "chi-square");
    assert_eq!(s["df"], 44);
    close(&s["p"], 1.94172524757e-08, "Mauchly p (first order)");
    // The mixed model with a random subject intercept (compound symmetry)
    // gives the same F on complete balanced data (spec 9.4 C, CS row).
    let t = b["anova"]["terms"][0].clone();
    close(&t["f"], 18.7026979326, "mixed-model F Days");
}

/// Spec 7.5 and 9.4 D: rows 17, 34, …, 170 deleted (an invented pattern)
/// leave 8 complete subjects for the univariate analysis, while the mixed
/// model keeps all 170 rows.
#[test]
fn incomplete_subjects_are_left_out_of_the_univariate_analysis_and_listed() {
    let kept = sleepstudy_with_deletions();
    let r = build(SLEEP, &[("sleepstudy.csv", kept)]).expect("builds");
    let b = &r["blocks"][0];
    assert_eq!(b["n"], 170, "{}", b["n"]);
    let rep = &b["repeated"];
    assert_eq!(rep["complete_subjects"], 8);
    assert_eq!(rep["incomplete_count"], 10);
    assert_eq!(rep["incomplete"].as_array().unwrap().len(), 10);
}

/// pingouin 0.7.0 `mixed_anova` (tests/reference/repeated_measures.json,
/// `with_groups_first_a_level`): three unequal groups, B at four occasions.
#[test]
fn a_between_subject_factor_matches_pingouin() {
    let reference: Value = serde_json::from_str(
        &std::fs::read_to_string(format!(
            "{}/tests/reference/repeated_measures.json",
            env!("CARGO_MANIFEST_DIR")
        ))
        .unwrap(),
    )
    .unwrap();
    let mut csv = String::from("subject,group,B,y\n");
    for (s, subject) in reference["subjects"].as_array().unwrap().iter().enumerate() {
        let y = subject["y"].as_array().unwrap();
        // A's first level: occasions 0..4 (A varies slowest).
        for (b, v) in y.iter().take(4).enumerate() {
            csv.push_str(&format!(
                "S{s:02},G{},B{b},{}\n",
                subject["group"],
                v.as_f64().unwrap()
            ));
        }
    }
    let doc = "# Groups\n\n```anova\nid: g\ndata: d.csv\nmodel: y ~ group * B\nsubject: subject\ncompare: none\n```\n";
    let r = build(doc, &[("d.csv", csv)]).expect("builds");
    let b = &r["blocks"][0];
    assert_eq!(b["repeated"]["between"], serde_json::json!(["group"]));
    let want = &reference["with_groups_first_a_level"];
    for (term, key) in [("B", "B"), ("group:B", "Interaction")] {
        let got = within(b, term);
        let w = &want[key];
        close(
            &got["f"],
            w["f [pingouin mixed_anova]"].as_f64().unwrap(),
            "F",
        );
        close(
            &got["p"],
            w["p [pingouin mixed_anova]"].as_f64().unwrap(),
            "p",
        );
        close(
            &got["p_gg"],
            w["p_gg [pingouin mixed_anova]"].as_f64().unwrap(),
            "p GG",
        );
        close(
            &got["sphericity"]["gg_epsilon"],
            w["eps_gg [pingouin mixed_anova]"].as_f64().unwrap(),
            "GG epsilon",
        );
    }
    close(
        &within(b, "B")["sphericity"]["mauchly_w"],
        want["B"]["mauchly_w [pingouin mixed_anova]"]
            .as_f64()
            .unwrap(),
        "Mauchly W",
    );
}

/// A factor that varies within some subjects and not in others is refused
/// with the subjects that break it (invented data).
#[test]
fn a_factor_neither_within_nor_between_is_refused() {
    // Invented: ewe-1, ewe-2 and ewe-4 change week (within) while ewe-3 is
    // seen twice in week 1, so week is neither within nor between.
    let csv = "animal,diet,week,w\newe-1,A,1,10\newe-1,A,2,12\newe-2,B,1,11\newe-2,B,2,13\newe-3,A,1,9\newe-3,A,1,10\newe-4,B,1,12\newe-4,B,2,15\n";
    let doc = "# Pens\n\n```anova\nid: p\ndata: d.csv\nmodel: w ~ diet * week\nsubject: animal\ncompare: none\n```\n";
    let err = build(doc, &[("d.csv", csv.to_string())]).expect_err("refused");
    assert!(err.contains("varies within some subjects"), "{err}");
    assert!(
        err.contains("(subjects `ewe-3`)"),
        "the subject by its label: {err}"
    );
}

#[test]
fn subject_with_random_is_refused_at_the_plan_stage() {
    let doc =
        "# x\n\n```anova\nid: p\ndata: d.csv\nmodel: w ~ week\nsubject: animal\nrandom: pen\n```\n";
    let err = build(doc, &[("d.csv", "animal,pen,week,w\n1,1,1,2\n".into())]).expect_err("refused");
    assert!(err.contains("`subject` and `random` together"), "{err}");
}

/// anorexia (open data, tests/data/open/SOURCES.md), each patient weighed
/// before and after: Treat between, time within, unequal groups (26, 29,
/// 17). Against tests/reference/anorexia_repeated.json: pingouin 0.7.0
/// `mixed_anova` for the univariate time and Treat × time tests and the
/// between-subject Treat test (the random-subject model's Treat test is the
/// same F on complete data); the mixed model's Type III test of time, which
/// weights the groups equally, against scipy's squared t of the unweighted
/// mean difference on the pooled within-group variance. With unequal groups
/// the two time tests differ, and the report says why.
#[test]
fn an_open_dataset_with_a_between_factor_matches_pingouin() {
    let reference: Value = serde_json::from_str(
        &std::fs::read_to_string(format!(
            "{}/tests/reference/anorexia_repeated.json",
            env!("CARGO_MANIFEST_DIR")
        ))
        .expect("reference"),
    )
    .expect("json");
    let mut csv = String::from("subject,Treat,time,weight\n");
    for (i, line) in open("anorexia.csv").lines().skip(1).enumerate() {
        let f: Vec<&str> = line.split(',').collect();
        csv.push_str(&format!("P{:02},{},pre,{}\n", i + 1, f[0], f[1]));
        csv.push_str(&format!("P{:02},{},post,{}\n", i + 1, f[0], f[2]));
    }
    let doc = "# Anorexia\n\n```anova\nid: a\ndata: d.csv\nmodel: weight ~ Treat * time\nsubject: subject\ncompare: none\n```\n";
    let r = build(doc, &[("d.csv", csv)]).expect("builds");
    let b = &r["blocks"][0];
    assert_eq!(b["repeated"]["between"], serde_json::json!(["Treat"]));
    let want = |term: &str, key: &str| reference[term][key].as_f64().unwrap();
    let pg = "f [pingouin mixed_anova]";
    close(
        &within(b, "time")["f"],
        want("time", pg),
        "univariate time F",
    );
    close(
        &within(b, "time")["p"],
        want("time", "p [pingouin mixed_anova]"),
        "univariate time p",
    );
    close(
        &within(b, "Treat:time")["f"],
        want("Interaction", pg),
        "univariate Treat × time F",
    );
    let term = |name: &str| {
        b["anova"]["terms"]
            .as_array()
            .and_then(|t| t.iter().find(|t| t["term"] == name))
            .unwrap()
            .clone()
    };
    close(&term("Treat")["f"], want("Treat", pg), "Treat F");
    close(
        &term("Treat:time")["f"],
        want("Interaction", pg),
        "mixed Treat × time F",
    );
    close(
        &term("time")["f"],
        want(
            "time",
            "f [scipy: squared t of the mean difference, pooled within-group variance]",
        ),
        "mixed (Type III) time F",
    );
    close(
        &term("time")["p"],
        want("time", "p [scipy t.sf]"),
        "mixed time p",
    );
}

/// When every subject of one group misses an occasion, the univariate
/// analysis has no subject in that group; the warning names the group by
/// its factor and level, not by index (invented data).
#[test]
fn a_group_without_complete_subjects_is_named_in_the_warning() {
    let mut csv = String::from("animal,diet,week,w\n");
    for (animal, diet, weeks) in [
        ("ewe-1", "A", &[1, 2, 3][..]),
        ("ewe-2", "A", &[1, 2, 3]),
        ("ewe-3", "A", &[1, 2, 3]),
        ("ewe-4", "B", &[1, 2]),
        ("ewe-5", "B", &[1, 3]),
        ("ewe-6", "B", &[2, 3]),
    ] {
        for (i, week) in weeks.iter().enumerate() {
            let w = 10.0 + *week as f64 * 1.5 + (animal.len() + i) as f64 * 0.3;
            csv.push_str(&format!("{animal},{diet},{week},{w}\n"));
        }
    }
    let doc = "# Pens\n\n```anova\nid: p\ndata: d.csv\nmodel: w ~ diet * week\nsubject: animal\ncompare: none\n```\n";
    let r = build(doc, &[("d.csv", csv)]).expect("builds");
    let warnings = r["blocks"][0]["warnings"].to_string();
    assert!(
        warnings.contains("no subject with diet = B was observed at every occasion"),
        "{warnings}"
    );
}
