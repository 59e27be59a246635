//! Mixed-model checks: blocks with random terms run as reports run them,
//! against the closed forms and reference values of the mixed-model
//! specification (section 9; closed forms from stratum mean squares, p
//! from scipy), the predicted unit effects and conditional residuals of a
//! dense numpy computation (tests/reference/mixed_predictions.json), and
//! Dunnett's procedure with a random interaction error. Data: the open
//! oats split-plot and Machines datasets.

use super::{Area, Bar, Check, num, run_block};
use crate::outcome::linear::{LinearOutcome, TermTest};
use serde_json::Value;

const OATS: &str = include_str!("../../tests/data/open/oats.csv");
const MACHINES: &str = include_str!("../../tests/data/open/Machines.csv");
const PREDICTIONS: &str = include_str!("../../tests/reference/mixed_predictions.json");
const DUNNETT_QUADRATURE: &str = include_str!("../../tests/reference/dunnett_quadrature.json");

/// The closed forms hold exactly in balanced designs; the REML fit reaches
/// them to about 1e-11 relative, so LRE 9 is the bar.
const LRE9: Bar = Bar::MinLre { lre: 9.0 };

/// What a check reads of a term's test.
type TermField = fn(&TermTest) -> f64;

pub(super) fn mixed_cases(checks: &mut Vec<Check>) {
    let src = "mixed-models specification 9.1 (closed form; scipy)";
    let oats = run_block("model: Y ~ V * N\nrandom: B + B:V\ncompare: tukey", OATS);
    let term = |name: &str| {
        oats.as_ref()
            .and_then(|o| o.terms.iter().find(|t| t.name == name))
    };
    let get = |name: &str, f: TermField| term(name).map_or(f64::NAN, f);
    let mut push = |name: &str, got: f64, want: f64, bar: Bar| {
        checks.push(Check::new(Area::MixedModels, name, src, got, want, bar));
    };
    // (check, term, what of its test, closed-form value)
    let term_checks: [(&str, &str, TermField, f64); 5] = [
        (
            "oats: F of varieties against the whole-plot error",
            "V",
            |t| t.f,
            1.48534037944,
        ),
        ("oats: p of varieties", "V", |t| t.p, 0.272386856735),
        (
            "oats: Kenward-Roger df of varieties",
            "V",
            |t| t.denominator_df,
            10.0,
        ),
        ("oats: F of nitrogen", "N", |t| t.f, 37.6856470588),
        ("oats: F of the interaction", "V:N", |t| t.f, 0.302823529412),
    ];
    for (name, term, field, want) in term_checks {
        push(name, get(term, field), want, LRE9);
    }
    let mean_se = oats
        .as_ref()
        .and_then(|o| o.main_family("V"))
        .and_then(|f| f.estimates.first())
        .map_or(f64::NAN, |e| e.se);
    push(
        "oats: SE of a variety mean, blocks random",
        mean_se,
        7.79753937921,
        LRE9,
    );
    let sed = |kind: &str| {
        oats.as_ref()
            .and_then(|o| o.mixed.as_ref())
            .and_then(|m| m.seds.iter().find(|s| s.kind == kind))
            .map_or((f64::NAN, f64::NAN), |s| (s.sed, s.df))
    };
    let (across, across_df) = sed("two V levels at the same N");
    push(
        "oats: SED of two varieties at one nitrogen rate",
        across,
        9.71502511386,
        LRE9,
    );
    push("oats: its Satterthwaite df", across_df, 30.2307802367, LRE9);
    let src = "mixed-models specification 9.3 (closed form; scipy)";
    let machines = run_block(
        "model: score ~ Machine\nrandom: Worker + Worker:Machine\ncompare: tukey",
        MACHINES,
    );
    let m = machines
        .as_ref()
        .and_then(|o| o.terms.iter().find(|t| t.name == "Machine"));
    checks.push(Check::new(
        Area::MixedModels,
        "Machines: F of machines against worker × machine",
        src,
        m.map_or(f64::NAN, |t| t.f),
        20.5760829641,
        LRE9,
    ));
    let components = machines.as_ref().and_then(|o| o.mixed.as_ref());
    for (i, (what, want)) in [
        ("workers", 22.8584444444),
        ("worker × machine", 13.9094567901),
        ("residual", 0.92462962963),
    ]
    .into_iter()
    .enumerate()
    {
        checks.push(Check::new(
            Area::MixedModels,
            format!("Machines: variance of {what} (REML = ANOVA estimate)"),
            src,
            components
                .and_then(|c| c.components.get(i))
                .map_or(f64::NAN, |c| c.variance),
            want,
            LRE9,
        ));
    }
    predictions(checks);
    machines_dunnett(checks);
}

/// The predictions' reference: numpy with a dense V on the variance
/// components of the expected mean squares (statsmodels OLS), which equal
/// the REML estimates in these balanced designs; scipy `shapiro`.
const PREDICTIONS_SOURCE: &str =
    "tests/reference/mixed_predictions.py (numpy dense V; scipy shapiro)";

/// The components agree with the reference's to about 1e-10 relative and
/// the predictions and Shapiro-Wilk are smooth in them (measured agreement
/// 1e-9 or better); tests/mixed_core.rs holds every unit to 1e-6, so LRE 6
/// here, far below a wrong formula's first-digit error.
const LRE6: Bar = Bar::MinLre { lre: 6.0 };

/// Predicted random effects (BLUPs) and conditional residuals of oats and
/// Machines, as a report's checks read them.
fn predictions(checks: &mut Vec<Check>) {
    let fx: Value = serde_json::from_str(PREDICTIONS).unwrap_or(Value::Null);
    // `plot: residuals` makes the outcome keep every observation with its
    // conditional residual, as the residual figure draws it.
    let cases = [
        (
            "oats",
            "model: Y ~ V * N\nrandom: B + B:V\ncompare: none\nplot: residuals",
            OATS,
        ),
        (
            "machines",
            "model: score ~ Machine\nrandom: Worker + Worker:Machine\ncompare: none\nplot: residuals",
            MACHINES,
        ),
    ];
    for (key, keys, csv) in cases {
        let outcome = run_block(keys, csv);
        let want = &fx[key];
        conditional_residuals(checks, key, outcome.as_ref(), want);
        predicted_effects(checks, key, outcome.as_ref(), want);
    }
}

/// Shapiro-Wilk on the conditional residuals, and the three residuals
/// largest in size (those a reader looks at first).
fn conditional_residuals(
    checks: &mut Vec<Check>,
    key: &str,
    outcome: Option<&LinearOutcome>,
    want: &Value,
) {
    let sw = outcome.and_then(|o| o.checks.shapiro_wilk.as_ref().ok());
    for (i, what) in ["W", "p"].into_iter().enumerate() {
        checks.push(Check::new(
            Area::MixedModels,
            format!("{key}: Shapiro-Wilk {what} of the conditional residuals"),
            PREDICTIONS_SOURCE,
            sw.map_or(f64::NAN, |s| if i == 0 { s.w } else { s.p }),
            num(&want["shapiro_residuals"][i]),
            LRE6,
        ));
    }
    let reference: Vec<f64> = want["residuals"]
        .as_array()
        .map(|r| r.iter().map(num).collect())
        .unwrap_or_default();
    let mut largest: Vec<usize> = (0..reference.len()).collect();
    largest.sort_by(|&a, &b| reference[b].abs().total_cmp(&reference[a].abs()));
    for i in largest.into_iter().take(3) {
        let got = outcome
            .and_then(|o| o.observations.get(i))
            .map_or(f64::NAN, |o| o.residual);
        checks.push(Check::new(
            Area::MixedModels,
            format!("{key}: conditional residual of observation {}", i + 1),
            PREDICTIONS_SOURCE,
            got,
            reference[i],
            LRE6,
        ));
    }
}

/// Shapiro-Wilk on each random term's standardised predicted effects, and
/// every flagged unit's effect and standardised effect.
fn predicted_effects(
    checks: &mut Vec<Check>,
    key: &str,
    outcome: Option<&LinearOutcome>,
    want: &Value,
) {
    let predicted = outcome
        .and_then(|o| o.mixed.as_ref())
        .map(|m| m.predicted.as_slice())
        .unwrap_or_default();
    let terms = want["terms"].as_object().into_iter().flatten();
    for (term, units) in terms {
        let got = predicted.iter().find(|p| &p.term == term);
        let sw = got.and_then(|p| p.shapiro_wilk.as_ref());
        for (i, what) in ["W", "p"].into_iter().enumerate() {
            checks.push(Check::new(
                Area::MixedModels,
                format!("{key}: Shapiro-Wilk {what} of the predicted {term} effects"),
                PREDICTIONS_SOURCE,
                sw.map_or(f64::NAN, |s| if i == 0 { s.w } else { s.p }),
                num(&want["shapiro_effects"][term][i]),
                LRE6,
            ));
        }
        for unit in got.map(|p| p.flagged.as_slice()).unwrap_or_default() {
            let reference = &units[&unit.unit];
            for (i, what, value) in [
                (0, "predicted effect", unit.effect),
                (1, "standardised predicted effect", unit.standardized),
            ] {
                checks.push(Check::new(
                    Area::MixedModels,
                    format!("{key}: {what} of flagged unit {term} {}", unit.unit),
                    PREDICTIONS_SOURCE,
                    value,
                    num(&reference[i]),
                    LRE6,
                ));
            }
        }
    }
}

/// Dunnett against machine A with workers and worker × machine random
/// (spec 9.3's design): both comparisons share the worker × machine error
/// on 10 df with correlation ½.
fn machines_dunnett(checks: &mut Vec<Check>) {
    let outcome = run_block(
        "model: score ~ Machine\nrandom: Worker + Worker:Machine\ncompare: dunnett\ncontrol: A",
        MACHINES,
    );
    let comparison = outcome
        .as_ref()
        .and_then(|o| o.families.first())
        .and_then(|f| f.comparison.as_ref());
    let pair = |i: usize| comparison.and_then(|c| c.contrasts.get(i));
    let closed = "mixed-models specification 9.3 (closed form √(2MS_WM/18))";
    for (i, other) in ["B", "C"].into_iter().enumerate() {
        let contrast = pair(i);
        checks.push(Check::new(
            Area::Dunnett,
            format!("Machines, workers random: SED of {other} − A"),
            closed,
            contrast.map_or(f64::NAN, |c| c.se),
            2.1769754758,
            LRE9,
        ));
        checks.push(Check::new(
            Area::Dunnett,
            format!("Machines, workers random: df of {other} − A"),
            closed,
            contrast.map_or(f64::NAN, |c| c.df),
            10.0,
            LRE9,
        ));
    }
    // scipy 1.17.1 multivariate_t(shape=[[1, ½], [½, 1]], df=10).cdf over
    // the box, quasi-Monte Carlo (seed 1, 4e6 points), as
    // tests/mixed_reports.rs uses it. Five seeds spread the p-values over
    // 6.7e-8 (B) and 1.4e-7 (C), and seed 1 sits 3e-8 and 6e-8 from the
    // deterministic quadrature below, which sheaf matches to 1e-13; so
    // 5e-7 absolute for the p-values, and 5e-6 for the critical value (its
    // root moves by the cdf's error over the density of max |T| there,
    // measured 2.2e-7).
    let qmc = "scipy multivariate_t cdf (quasi-Monte Carlo, 4e6 points)";
    let p_adj = |i: usize| pair(i).map_or(f64::NAN, |c| c.p_adj);
    let critical = comparison.map_or(f64::NAN, |c| c.critical);
    for (i, other, want) in [(0, "B", 0.00810252475), (1, "C", 0.000149514662)] {
        checks.push(Check::new(
            Area::Dunnett,
            format!("Machines, workers random: adjusted p of {other} − A"),
            qmc,
            p_adj(i),
            want,
            Bar::MaxAbs { diff: 5e-7 },
        ));
    }
    checks.push(Check::new(
        Area::Dunnett,
        "Machines, workers random: critical value",
        qmc,
        critical,
        2.56833866,
        Bar::MaxAbs { diff: 5e-6 },
    ));
    // The same by nested adaptive quadrature (scipy integrate.quad at 1e-13
    // relative; tests/reference/dunnett_quadrature.py). sheaf's
    // Gauss-Legendre rule holds the cdf to about 1e-10 absolute and solves
    // the critical value to 1e-9 relative (stats/dunnett.rs), so the
    // p-values are held to 1e-9 absolute and the critical value to LRE 8.
    let fx: Value = serde_json::from_str(DUNNETT_QUADRATURE).unwrap_or(Value::Null);
    let quad = "scipy integrate.quad, nested (tests/reference/dunnett_quadrature.py)";
    for (i, other) in ["B", "C"].into_iter().enumerate() {
        checks.push(Check::new(
            Area::Dunnett,
            format!("Machines, workers random: adjusted p of {other} − A, quadrature"),
            quad,
            p_adj(i),
            num(&fx["p_adj"][other]),
            Bar::MaxAbs { diff: 1e-9 },
        ));
    }
    checks.push(Check::new(
        Area::Dunnett,
        "Machines, workers random: critical value, quadrature",
        quad,
        critical,
        num(&fx["critical_95"]),
        Bar::MinLre { lre: 8.0 },
    ));
}
