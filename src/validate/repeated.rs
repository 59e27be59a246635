//! Repeated-measures checks: blocks with `subject` run as reports run them,
//! against pingouin, statsmodels and scipy (sleepstudy, spec 9.4 B and C;
//! anorexia, tests/reference/anorexia_repeated.json) and against an
//! independent REML fit of the covariance structures on incomplete data
//! (tests/reference/repeated_structures.json: the criterion written out in
//! numpy, maximised by scipy BFGS and Newton steps on its score).

use super::{Area, Bar, Check, num, run_block};
use crate::outcome::linear::LinearOutcome;
use crate::outcome::repeated::WithinTest;
use serde_json::Value;

const SLEEP: &str = include_str!("../../tests/data/open/sleepstudy.csv");
const ANOREXIA: &str = include_str!("../../tests/data/open/anorexia.csv");
const ANOREXIA_REFERENCE: &str = include_str!("../../tests/reference/anorexia_repeated.json");
const STRUCTURES: &str = include_str!("../../tests/reference/repeated_structures.json");

/// The libraries agree with each other to about 1e-13 and the spec prints
/// 10 to 12 significant digits; sheaf's univariate sums of squares are
/// direct, so LRE 9 (tests/repeated_reports.rs holds 1e-9 relative).
const LRE9: Bar = Bar::MinLre { lre: 9.0 };

pub(super) fn repeated_cases(checks: &mut Vec<Check>) {
    sleepstudy(checks);
    anorexia(checks);
    structures(checks);
}

/// The within-subject test of `term` of the univariate analysis.
fn within<'a>(o: Option<&'a LinearOutcome>, term: &str) -> Option<&'a WithinTest> {
    o.and_then(|o| o.repeated.as_ref())
        .and_then(|r| r.univariate.as_ref().ok())
        .and_then(|tests| tests.iter().find(|t| t.term == term))
}

/// The mixed model's test of `term`: (F, denominator df, p).
fn mixed_test(o: Option<&LinearOutcome>, term: &str) -> (f64, f64, f64) {
    o.and_then(|o| o.terms.iter().find(|t| t.name == term))
        .map_or((f64::NAN, f64::NAN, f64::NAN), |t| {
            (t.f, t.denominator_df, t.p)
        })
}

/// sleepstudy with Days as a 10-level factor, 18 complete subjects (spec
/// 9.4 B): the univariate analysis, its sphericity corrections, and the
/// random-intercept model's F, which on complete balanced data is the
/// univariate F (spec 9.6, property 4).
fn sleepstudy(checks: &mut Vec<Check>) {
    let o = run_block(
        "model: Reaction ~ Days\nsubject: Subject\ncompare: none",
        SLEEP,
    );
    let t = within(o.as_ref(), "Days");
    let get = |f: fn(&WithinTest) -> f64| t.map_or(f64::NAN, f);
    let mauchly = |f: fn(&crate::outcome::repeated::Mauchly) -> f64| {
        t.and_then(|t| t.sphericity.as_ref()).map_or(f64::NAN, f)
    };
    let pingouin = "mixed-models specification 9.4 B (pingouin rm_anova; statsmodels AnovaRM)";
    let sphericity = "mixed-models specification 9.4 B (pingouin sphericity, epsilon)";
    let scipy = "mixed-models specification 9.4 B (scipy f.sf)";
    let (f, df_den, _) = mixed_test(o.as_ref(), "Days");
    for (name, source, got, want, bar) in [
        ("F of Days", pingouin, get(|t| t.f), 18.7026979326, LRE9),
        ("numerator df", pingouin, get(|t| t.df), 9.0, Bar::Exact),
        (
            "denominator df",
            pingouin,
            get(|t| t.df_den),
            153.0,
            Bar::Exact,
        ),
        ("p of Days", scipy, get(|t| t.p), 8.995345416e-21, LRE9),
        (
            "Greenhouse-Geisser ε",
            sphericity,
            get(|t| t.gg_epsilon),
            0.369029844794,
            LRE9,
        ),
        (
            "Huynh-Feldt ε (one group)",
            sphericity,
            get(|t| t.hf_epsilon),
            0.46936479691,
            LRE9,
        ),
        (
            "Greenhouse-Geisser p",
            pingouin,
            get(|t| t.p_gg),
            5.46309176758e-09,
            LRE9,
        ),
        (
            "Mauchly's W",
            sphericity,
            mauchly(|m| m.w),
            2.19020403394e-04,
            LRE9,
        ),
        (
            "Mauchly's χ²",
            sphericity,
            mauchly(|m| m.chi_sq),
            116.252361507,
            LRE9,
        ),
        (
            "random-intercept model F of Days",
            pingouin,
            f,
            18.7026979326,
            LRE9,
        ),
        ("its Kenward-Roger df", pingouin, df_den, 153.0, LRE9),
    ] {
        checks.push(Check::new(
            Area::RepeatedMeasures,
            format!("sleepstudy: {name}"),
            source,
            got,
            want,
            bar,
        ));
    }
}

/// anorexia.csv in long form: one row per weighing, subjects P01…P72 in
/// file order, as tests/reference/anorexia_repeated.py reshapes it.
fn anorexia_long() -> String {
    let mut csv = String::from("subject,Treat,time,weight\n");
    for (i, line) in ANOREXIA.lines().skip(1).enumerate() {
        let f: Vec<&str> = line.trim().split(',').collect();
        if let [treat, pre, post] = f[..] {
            let id = i + 1;
            csv.push_str(&format!("P{id:02},{treat},pre,{pre}\n"));
            csv.push_str(&format!("P{id:02},{treat},post,{post}\n"));
        }
    }
    csv
}

/// anorexia: Treat between subjects in unequal groups, time within. The
/// univariate tests and the between-subject test against pingouin's
/// `mixed_anova`; the mixed model's Type III time test, which weights the
/// groups equally, against scipy's squared t of the unweighted mean
/// difference on the pooled within-group variance.
fn anorexia(checks: &mut Vec<Check>) {
    let fx: Value = serde_json::from_str(ANOREXIA_REFERENCE).unwrap_or(Value::Null);
    let o = run_block(
        "model: weight ~ Treat * time\nsubject: subject\ncompare: none",
        &anorexia_long(),
    );
    let o = o.as_ref();
    let pg = "pingouin mixed_anova (tests/reference/anorexia_repeated.json)";
    let scipy = "scipy squared t (tests/reference/anorexia_repeated.json)";
    let want = |term: &str, key: &str| num(&fx[term][key]);
    let (treat, _, _) = mixed_test(o, "Treat");
    let (interaction, _, _) = mixed_test(o, "Treat:time");
    let (time, _, time_p) = mixed_test(o, "time");
    let univariate = |term: &str, f: fn(&WithinTest) -> f64| within(o, term).map_or(f64::NAN, f);
    for (name, source, got, reference) in [
        (
            "univariate F of time",
            pg,
            univariate("time", |t| t.f),
            want("time", "f [pingouin mixed_anova]"),
        ),
        (
            "univariate p of time",
            pg,
            univariate("time", |t| t.p),
            want("time", "p [pingouin mixed_anova]"),
        ),
        (
            "univariate F of Treat × time",
            pg,
            univariate("Treat:time", |t| t.f),
            want("Interaction", "f [pingouin mixed_anova]"),
        ),
        (
            "random-subject model F of Treat",
            pg,
            treat,
            want("Treat", "f [pingouin mixed_anova]"),
        ),
        (
            "random-subject model F of Treat × time",
            pg,
            interaction,
            want("Interaction", "f [pingouin mixed_anova]"),
        ),
        (
            "random-subject model Type III F of time",
            scipy,
            time,
            want(
                "time",
                "f [scipy: squared t of the mean difference, pooled within-group variance]",
            ),
        ),
        (
            "random-subject model p of time",
            scipy,
            time_p,
            want("time", "p [scipy t.sf]"),
        ),
    ] {
        checks.push(Check::new(
            Area::RepeatedMeasures,
            format!("anorexia: {name}"),
            source,
            got,
            reference,
            LRE9,
        ));
    }
}

/// sleepstudy less the (Subject, Days) rows the reference lists (an
/// INVENTED deletion pattern: 5 subjects lose 3 days each).
fn sleepstudy_incomplete(deleted: &Value) -> String {
    let gone: Vec<(String, String)> = deleted
        .as_array()
        .into_iter()
        .flatten()
        .map(|d| {
            let subject = d["Subject"].as_str().unwrap_or_default().to_string();
            (subject, d["Days"].to_string())
        })
        .collect();
    let mut lines = SLEEP.lines();
    let mut csv = format!("{}\n", lines.next().unwrap_or_default());
    for line in lines {
        let f: Vec<&str> = line.trim().split(',').collect();
        let dropped = matches!(f[..], [_, day, subject]
            if gone.iter().any(|(s, d)| s == subject && d == day));
        if !dropped {
            csv.push_str(line);
            csv.push('\n');
        }
    }
    csv
}

/// The reference criterion is stationary at the optimum and both fits
/// converge to a relative step of 1e-10 or less, so what is left is the
/// rounding of sums of logarithms of size 10³ (tests measured 1e-14):
/// LRE 10. Parameters are first order in the stopping error; the
/// 55-parameter unstructured fit's information has condition number 6e6,
/// so LRE 8. Wald F and Satterthwaite df: the reference's df come from
/// numdifftools gradients good to about 1e-8, so LRE 6 for df and LRE 8 for
/// F (first order in the parameters).
const CRITERION: Bar = Bar::MinLre { lre: 10.0 };
const PARAMETER: Bar = Bar::MinLre { lre: 8.0 };
const WALD_F: Bar = Bar::MinLre { lre: 8.0 };
const SATTERTHWAITE_DF: Bar = Bar::MinLre { lre: 6.0 };

/// A covariance parameter checked: sheaf's name and its index among the
/// reference's parameters.
type Parameter = (&'static str, usize);

/// Compound symmetry, AR(1) and unstructured fitted to the incomplete
/// sleepstudy, each with Satterthwaite df (observed information, as the
/// reference) so that the tests are the unadjusted Wald F.
fn structures(checks: &mut Vec<Check>) {
    let fx: Value = serde_json::from_str(STRUCTURES).unwrap_or(Value::Null);
    let data = &fx["A"];
    let csv = sleepstudy_incomplete(&data["deleted"]);
    // (reference key, block key, parameters checked: sheaf's name and the
    // reference's index; unstructured (j, l) is at l(l+1)/2 + j).
    let cases: [(&str, &str, &[Parameter]); 3] = [
        (
            "CS",
            "compound-symmetry",
            &[("covariance", 0), ("residual", 1)],
        ),
        (
            "AR1",
            "autoregressive",
            &[("variance", 0), ("correlation", 1)],
        ),
        (
            "UN",
            "unstructured",
            &[
                ("variance[0]", 0),
                ("covariance[0,9]", 45),
                ("variance[9]", 54),
            ],
        ),
    ];
    for (key, structure, parameters) in cases {
        let keys = format!(
            "model: Reaction ~ Days\nsubject: Subject\ncovariance: {structure}\nddf: satterthwaite\ncompare: none"
        );
        let o = run_block(&keys, &csv);
        structure_checks(
            checks,
            key,
            o.as_ref(),
            &data["structures"][key],
            parameters,
        );
    }
    unstructured_is_hotelling(checks);
}

/// One structure's criterion, parameters and Type III test of Days.
fn structure_checks(
    checks: &mut Vec<Check>,
    key: &str,
    o: Option<&LinearOutcome>,
    want: &Value,
    parameters: &[Parameter],
) {
    let source = "tests/reference/repeated_structures.py (numpy REML; scipy BFGS + Newton)";
    let detail = o
        .and_then(|o| o.repeated.as_ref())
        .and_then(|r| r.covariance.as_ref());
    let mut push = |name: String, got: f64, reference: f64, bar: Bar| {
        let name = format!("incomplete sleepstudy, {key}: {name}");
        checks.push(Check::new(
            Area::RepeatedMeasures,
            name,
            source,
            got,
            reference,
            bar,
        ));
    };
    push(
        "−2 REML log-likelihood (coding-invariant)".into(),
        detail.map_or(f64::NAN, |d| -2.0 * d.fit.log_likelihood),
        num(&want["criterion"]),
        CRITERION,
    );
    for &(name, index) in parameters {
        let got = detail
            .and_then(|d| d.parameters.iter().find(|p| p.name == name))
            .map_or(f64::NAN, |p| p.value);
        push(
            format!("parameter {name}"),
            got,
            num(&want["parameters"][index]),
            PARAMETER,
        );
    }
    let (f, df, _) = mixed_test(o, "Days");
    let test = &want["type3"][0];
    push("Wald F of Days".into(), f, num(&test["f"]), WALD_F);
    push(
        "Satterthwaite df of Days".into(),
        df,
        num(&test["satterthwaite_df_observed"]),
        SATTERTHWAITE_DF,
    );
}

/// Unstructured on the complete sleepstudy: Kenward-Roger's F is Hotelling's
/// exact F(9, 9) (spec 9.4 C and 9.6 property 3; numpy, and statsmodels
/// MANOVA on the differences from day 0), printed to 9 digits, so LRE 8.
fn unstructured_is_hotelling(checks: &mut Vec<Check>) {
    let o = run_block(
        "model: Reaction ~ Days\nsubject: Subject\ncovariance: unstructured\ncompare: none",
        SLEEP,
    );
    let (f, df, p) = mixed_test(o.as_ref(), "Days");
    let source = "mixed-models specification 9.4 C (numpy Hotelling T²; statsmodels MANOVA)";
    for (name, got, want) in [
        ("Kenward-Roger F = Hotelling's F", f, 5.66339902),
        ("Kenward-Roger df = n − k + 1", df, 9.0),
        ("p", p, 0.0082517245231),
    ] {
        checks.push(Check::new(
            Area::RepeatedMeasures,
            format!("sleepstudy, unstructured: {name}"),
            source,
            got,
            want,
            Bar::MinLre { lre: 8.0 },
        ));
    }
}
