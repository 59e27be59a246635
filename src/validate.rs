//! `sheaf validate`: the accuracy suite built into the binary. Runs the NIST
//! StRD ANOVA datasets against their certified values and reference-library
//! cases for the distributions, comparison procedures and checks, and writes
//! a validation report. The ANOVA cases run whole blocks through the
//! engines' entry points, as a report does (data reading, origin shift,
//! protection), not the statistics functions alone. Every reference value
//! comes from an outside source (NIST, scipy, statsmodels, pingouin,
//! scikit-posthocs, published tables), embedded at compile time; nothing is
//! compared with sheaf's own output.

use crate::analysis::run_on_csv;
use crate::diag::Diagnostic;
use crate::doc::parse_document;
use crate::outcome::linear::LinearOutcome;
use crate::stats::dist::{f_isf, t_isf};
use crate::stats::dunnett::{Sides, dunnett};
use crate::stats::effect::one_way_sample_size;
use crate::stats::ptukey::{ptukey_cdf, ptukey_sf, qtukey_isf};
use serde::Serialize;
use serde_json::Value;
use std::path::{Path, PathBuf};

mod mixed;
mod repeated;
mod report;
pub use report::text;

/// The git revision sheaf was built from ("unknown" outside a git checkout).
pub const REVISION: &str = env!("SHEAF_GIT_REVISION");

/// How a check is judged.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Bar {
    /// Log relative error at least this.
    MinLre { lre: f64 },
    /// Absolute difference at most this.
    MaxAbs { diff: f64 },
    /// Exactly equal (counts such as degrees of freedom or sample sizes).
    Exact,
}

/// What part of sheaf a check covers; the report is grouped and summarised
/// by area, in this order.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Area {
    NistAnova,
    TAndF,
    StudentizedRange,
    OneWayComparisons,
    AssumptionsAndRobust,
    Factorial,
    Dunnett,
    Power,
    MixedModels,
    RepeatedMeasures,
}

impl Area {
    pub const ALL: [Area; 10] = [
        Area::NistAnova,
        Area::TAndF,
        Area::StudentizedRange,
        Area::OneWayComparisons,
        Area::AssumptionsAndRobust,
        Area::Factorial,
        Area::Dunnett,
        Area::Power,
        Area::MixedModels,
        Area::RepeatedMeasures,
    ];

    pub fn title(self) -> &'static str {
        match self {
            Area::NistAnova => "One-way ANOVA, NIST StRD datasets",
            Area::TAndF => "t and F distributions",
            Area::StudentizedRange => "Studentized range distribution",
            Area::OneWayComparisons => "One-way ANOVA and pairwise comparisons",
            Area::AssumptionsAndRobust => "Assumption checks, Welch and rank tests",
            Area::Factorial => "Factorial sums of squares (Types I, II, III)",
            Area::Dunnett => "Dunnett's procedure",
            Area::Power => "Power and sample size",
            Area::MixedModels => "Mixed models: strata, REML, Kenward-Roger df, predicted effects",
            Area::RepeatedMeasures => {
                "Repeated measures: sphericity corrections and covariance structures"
            }
        }
    }

    /// The anchor of the area's section in the HTML report.
    pub fn key(self) -> &'static str {
        match self {
            Area::NistAnova => "nist-anova",
            Area::TAndF => "t-and-f",
            Area::StudentizedRange => "studentized-range",
            Area::OneWayComparisons => "one-way-comparisons",
            Area::AssumptionsAndRobust => "assumptions-and-robust",
            Area::Factorial => "factorial",
            Area::Dunnett => "dunnett",
            Area::Power => "power",
            Area::MixedModels => "mixed-models",
            Area::RepeatedMeasures => "repeated-measures",
        }
    }
}

/// One check.
#[derive(Debug, Clone, Serialize)]
pub struct Check {
    pub area: Area,
    pub name: String,
    pub source: String,
    pub value: f64,
    pub reference: f64,
    /// −log10 of the relative error (15 when exact).
    pub lre: f64,
    pub bar: Bar,
    pub pass: bool,
}

impl Check {
    fn new(
        area: Area,
        name: impl Into<String>,
        source: &str,
        value: f64,
        reference: f64,
        bar: Bar,
    ) -> Self {
        let lre = if value == reference {
            15.0
        } else {
            (-((value - reference) / reference).abs().log10()).clamp(0.0, 15.0)
        };
        let pass = match bar {
            Bar::MinLre { lre: min } => lre >= min,
            Bar::MaxAbs { diff } => (value - reference).abs() <= diff,
            Bar::Exact => value == reference,
        };
        Check {
            area,
            name: name.into(),
            source: source.to_string(),
            value,
            reference,
            lre,
            bar,
            pass,
        }
    }

    /// The bar as text: "LRE ≥ 9", "|Δ| ≤ 1e-8" or "exact".
    pub fn bar_text(&self) -> String {
        match self.bar {
            Bar::MinLre { lre } => format!("LRE ≥ {lre}"),
            Bar::MaxAbs { diff } => format!("|Δ| ≤ {diff:e}"),
            Bar::Exact => "exact".to_string(),
        }
    }

    /// "value vs reference (LRE 14.2; LRE ≥ 9)".
    pub fn detail(&self) -> String {
        format!(
            "{:.10e} vs {:.10e} (LRE {:.1}; {})",
            self.value,
            self.reference,
            self.lre,
            self.bar_text()
        )
    }
}

/// The whole validation run.
#[derive(Debug, Clone, Serialize)]
pub struct Validation {
    pub sheaf: String,
    pub revision: String,
    pub platform: String,
    /// The day of the run (YYYY-MM-DD, UTC): `SOURCE_DATE_EPOCH` when set,
    /// else the clock; `None` when SOURCE_DATE_EPOCH is not a whole number.
    pub date: Option<String>,
    /// Grouped by area, in `Area::ALL` order.
    pub checks: Vec<Check>,
}

/// The checks of one area, counted.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AreaSummary {
    pub area: Area,
    pub checks: usize,
    pub passed: usize,
    /// The lowest log relative error among the area's checks.
    pub worst_lre: f64,
}

impl Validation {
    pub fn passed(&self) -> usize {
        self.checks.iter().filter(|c| c.pass).count()
    }

    pub fn failed(&self) -> usize {
        self.checks.len() - self.passed()
    }

    /// One line per area that has checks, in `Area::ALL` order.
    pub fn summary(&self) -> Vec<AreaSummary> {
        Area::ALL
            .iter()
            .filter_map(|&area| {
                let of_area = || self.checks.iter().filter(move |c| c.area == area);
                let checks = of_area().count();
                (checks > 0).then(|| AreaSummary {
                    area,
                    checks,
                    passed: of_area().filter(|c| c.pass).count(),
                    worst_lre: of_area().map(|c| c.lre).fold(f64::INFINITY, f64::min),
                })
            })
            .collect()
    }
}

const NIST: [(&str, &str); 11] = [
    ("AtmWtAg", include_str!("../tests/data/nist/AtmWtAg.csv")),
    ("SiRstv", include_str!("../tests/data/nist/SiRstv.csv")),
    ("SmLs01", include_str!("../tests/data/nist/SmLs01.csv")),
    ("SmLs02", include_str!("../tests/data/nist/SmLs02.csv")),
    ("SmLs03", include_str!("../tests/data/nist/SmLs03.csv")),
    ("SmLs04", include_str!("../tests/data/nist/SmLs04.csv")),
    ("SmLs05", include_str!("../tests/data/nist/SmLs05.csv")),
    ("SmLs06", include_str!("../tests/data/nist/SmLs06.csv")),
    ("SmLs07", include_str!("../tests/data/nist/SmLs07.csv")),
    ("SmLs08", include_str!("../tests/data/nist/SmLs08.csv")),
    ("SmLs09", include_str!("../tests/data/nist/SmLs09.csv")),
];
const NIST_CERTIFIED: &str = include_str!("../tests/data/nist/certified.json");
const DISTRIBUTIONS: &str = include_str!("../tests/reference/distributions.json");
const PTUKEY_MPMATH: &str = include_str!("../tests/reference/ptukey_mpmath.json");
const PTUKEY_TAIL_MPMATH: &str = include_str!("../tests/reference/ptukey_tail_mpmath.json");
const ONEWAY: &str = include_str!("../tests/reference/oneway.json");
const ROBUST: &str = include_str!("../tests/reference/robust.json");
const FACTORIAL: &str = include_str!("../tests/reference/factorial.json");
const PLANTS: &str = include_str!("../tests/data/open/PlantGrowth.csv");
const ASSAY: &str = include_str!("../tests/data/invented/assay.csv");
const WARP: &str = include_str!("../tests/data/open/warpbreaks.csv");
const WARP_UNBALANCED: &str = include_str!("../tests/data/invented/warp-unbalanced.csv");

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or(f64::NAN)
}

/// Runs one `anova` block with `keys` (one per line) on `csv`, held in
/// memory as `d.csv`, through the same engine entry points as a report.
fn run_block(keys: &str, csv: &str) -> Option<LinearOutcome> {
    let text = format!("```anova\nid: check\ndata: d.csv\n{keys}\n```\n");
    let doc = parse_document("validate.md", text).ok()?;
    let block = doc.blocks.first()?;
    run_on_csv(&doc, block, csv)?.ok().map(|(r, _)| r)
}

/// A one-factor block's outcome, as a report computes it.
fn one_factor(keys: &str, csv: &str) -> Option<LinearOutcome> {
    run_block(keys, csv)
}

/// A factorial block's outcome, as a report computes it.
fn factorial(keys: &str, csv: &str) -> Option<LinearOutcome> {
    run_block(keys, csv)
}

/// Runs every check.
pub fn run() -> Validation {
    let mut checks = Vec::new();
    nist(&mut checks);
    distributions(&mut checks);
    oneway_cases(&mut checks);
    robust_cases(&mut checks);
    factorial_cases(&mut checks);
    published(&mut checks);
    mixed::mixed_cases(&mut checks);
    repeated::repeated_cases(&mut checks);
    // Stable: within an area the checks keep the order they were run in.
    checks.sort_by_key(|c| c.area);
    Validation {
        sheaf: crate::VERSION.to_string(),
        revision: REVISION.to_string(),
        platform: format!("{}-{}", std::env::consts::ARCH, std::env::consts::OS),
        // The record of when this installation was checked may read the
        // clock; builds of reports never do.
        date: crate::world::system_today(),
        checks,
    }
}

fn nist(checks: &mut Vec<Check>) {
    let certified: Value = serde_json::from_str(NIST_CERTIFIED).unwrap_or(Value::Null);
    let source = "NIST StRD ANOVA certified values";
    for (name, csv) in NIST {
        let c = |key: &str| {
            certified["datasets"][name]["certified"][key]
                .as_str()
                .and_then(|s| s.parse::<f64>().ok())
                .unwrap_or(f64::NAN)
        };
        let Some(r) = one_factor("model: value ~ group\ncompare: none", csv) else {
            checks.push(Check::new(
                Area::NistAnova,
                format!("{name}: data readable"),
                source,
                0.0,
                1.0,
                Bar::Exact,
            ));
            continue;
        };
        let (t, residual) = (&r.terms[0], r.residual());
        let lre9 = Bar::MinLre { lre: 9.0 };
        checks.push(Check::new(
            Area::NistAnova,
            format!("{name}: between-groups SS"),
            source,
            t.ss,
            c("between_ss"),
            lre9,
        ));
        checks.push(Check::new(
            Area::NistAnova,
            format!("{name}: within-groups SS"),
            source,
            residual.ss,
            c("within_ss"),
            lre9,
        ));
        checks.push(Check::new(
            Area::NistAnova,
            format!("{name}: between-groups MS"),
            source,
            t.ms,
            c("between_ms"),
            lre9,
        ));
        checks.push(Check::new(
            Area::NistAnova,
            format!("{name}: within-groups MS"),
            source,
            residual.ms,
            c("within_ms"),
            lre9,
        ));
        checks.push(Check::new(
            Area::NistAnova,
            format!("{name}: F"),
            source,
            t.f,
            c("f_statistic"),
            lre9,
        ));
    }
}

fn distributions(checks: &mut Vec<Check>) {
    let fx: Value = serde_json::from_str(DISTRIBUTIONS).unwrap_or(Value::Null);
    for r in fx["t_isf"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|r| num(&r["p"]) == 0.025)
    {
        let got = t_isf(num(&r["p"]), num(&r["df"]));
        checks.push(Check::new(
            Area::TAndF,
            format!("t critical value, df = {}", r["df"]),
            "scipy.stats.t.isf",
            got,
            num(&r["isf"]),
            Bar::MinLre { lre: 9.0 },
        ));
    }
    for r in fx["f_isf"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|r| num(&r["p"]) == 0.05)
    {
        let got = f_isf(num(&r["p"]), num(&r["d1"]), num(&r["d2"]));
        checks.push(Check::new(
            Area::TAndF,
            format!("F critical value, df = ({}, {})", r["d1"], r["d2"]),
            "scipy.stats.f.isf",
            got,
            num(&r["isf"]),
            Bar::MinLre { lre: 9.0 },
        ));
    }
    let scipy_rows = fx["ptukey_cdf"]
        .as_array()
        .into_iter()
        .flatten()
        .filter(|r| r["k"].as_u64().unwrap_or(0) <= 20 && num(&r["q"]) >= 2.0);
    let scipy = "scipy.stats.studentized_range.cdf";
    for r in scipy_rows {
        checks.push(ptukey_check(r, scipy, Bar::MaxAbs { diff: 1e-8 }));
    }
    let fx: Value = serde_json::from_str(PTUKEY_MPMATH).unwrap_or(Value::Null);
    for r in fx["ptukey_cdf"].as_array().into_iter().flatten() {
        let mpmath = "mpmath quadrature at 20 digits";
        checks.push(ptukey_check(r, mpmath, Bar::MaxAbs { diff: 1e-11 }));
    }
    let fx: Value = serde_json::from_str(PTUKEY_TAIL_MPMATH).unwrap_or(Value::Null);
    for r in fx["ptukey_sf"].as_array().into_iter().flatten() {
        let k = r["k"].as_u64().unwrap_or(2) as usize;
        let df = r["df"].as_f64().unwrap_or(f64::INFINITY);
        let want: f64 = r["sf"]
            .as_str()
            .and_then(|t| t.parse().ok())
            .unwrap_or(f64::NAN);
        checks.push(Check::new(
            Area::StudentizedRange,
            format!(
                "studentized range upper tail, q = {}, k = {k}, df = {}",
                r["q"], r["df"]
            ),
            "mpmath quadrature at 30 digits",
            ptukey_sf(num(&r["q"]), k, df),
            want,
            Bar::MinLre { lre: 9.0 },
        ));
    }
}

/// One studentized-range cdf check from a fixture row {q, k, df, cdf}
/// (df null for infinity).
fn ptukey_check(r: &Value, source: &str, bar: Bar) -> Check {
    let k = r["k"].as_u64().unwrap_or(2) as usize;
    let df = r["df"].as_f64().unwrap_or(f64::INFINITY);
    Check::new(
        Area::StudentizedRange,
        format!(
            "studentized range cdf, q = {}, k = {k}, df = {}",
            r["q"], r["df"]
        ),
        source,
        ptukey_cdf(num(&r["q"]), k, df),
        num(&r["cdf"]),
        bar,
    )
}

fn oneway_cases(checks: &mut Vec<Check>) {
    let fx: Value = serde_json::from_str(ONEWAY).unwrap_or(Value::Null);
    let Some(case) = fx["cases"]
        .as_array()
        .and_then(|c| c.iter().find(|c| c["name"] == "plant_growth"))
    else {
        return;
    };
    let model = "model: weight ~ group";
    let Some(r) = one_factor(&format!("{model}\ncompare: none"), PLANTS) else {
        return;
    };
    let src = "statsmodels anova_lm";
    checks.push(Check::new(
        Area::OneWayComparisons,
        "PlantGrowth one-way F",
        src,
        r.terms[0].f,
        num(&case["anova"]["f"]),
        Bar::MinLre { lre: 9.0 },
    ));
    checks.push(Check::new(
        Area::OneWayComparisons,
        "PlantGrowth one-way p",
        src,
        r.terms[0].p,
        num(&case["anova"]["p"]),
        Bar::MaxAbs { diff: 1e-12 },
    ));
    // Each procedure as a report runs it (LSD unprotected: protection
    // changes the declarations, not the adjusted p-values compared here).
    for (key, keys, bar, src) in [
        (
            "tukey",
            "compare: tukey",
            Bar::MaxAbs { diff: 1e-8 },
            "scipy.stats.tukey_hsd",
        ),
        (
            "lsd",
            "compare: lsd\nprotected: no",
            Bar::MaxAbs { diff: 1e-12 },
            "scipy.stats.t",
        ),
        (
            "holm",
            "compare: holm",
            Bar::MaxAbs { diff: 1e-12 },
            "statsmodels multipletests",
        ),
    ] {
        let family = one_factor(&format!("{model}\n{keys}"), PLANTS)
            .and_then(|r| r.families.into_iter().next())
            .and_then(|f| f.comparison);
        let pairs = family.map(|c| c.contrasts).unwrap_or_default();
        for (p, r) in pairs
            .iter()
            .zip(case["comparisons"][key].as_array().into_iter().flatten())
        {
            checks.push(Check::new(
                Area::OneWayComparisons,
                format!("PlantGrowth {key} p, {} − {}", r["a"], r["b"]),
                src,
                p.p_adj,
                num(&r["p_adj"]),
                bar,
            ));
        }
    }
}

fn robust_cases(checks: &mut Vec<Check>) {
    let fx: Value = serde_json::from_str(ROBUST).unwrap_or(Value::Null);
    for (name, csv, model) in [
        ("plant_growth", PLANTS, "model: weight ~ group"),
        ("assay", ASSAY, "model: signal ~ condition"),
    ] {
        let Some(case) = fx["cases"]
            .as_array()
            .and_then(|c| c.iter().find(|c| c["name"] == name))
        else {
            continue;
        };
        let run =
            |method: &str| one_factor(&format!("{model}\nmethod: {method}\ncompare: none"), csv);
        if let Some(bf) = run("anova").and_then(|r| r.checks.brown_forsythe) {
            checks.push(Check::new(
                Area::AssumptionsAndRobust,
                format!("{name} Brown-Forsythe F"),
                "scipy.stats.levene",
                bf.statistic,
                num(&case["checks"]["brown_forsythe"]["statistic"]),
                Bar::MinLre { lre: 9.0 },
            ));
        }
        if let Some(w) = run("welch").and_then(|r| r.alternatives.welch) {
            checks.push(Check::new(
                Area::AssumptionsAndRobust,
                format!("{name} Welch F"),
                "pingouin.welch_anova",
                w.f,
                num(&case["welch"]["f"]),
                Bar::MinLre { lre: 9.0 },
            ));
        }
        if let Some(kw) = run("ranks").and_then(|r| r.alternatives.kruskal) {
            checks.push(Check::new(
                Area::AssumptionsAndRobust,
                format!("{name} Kruskal-Wallis H"),
                "scipy.stats.kruskal",
                kw.h,
                num(&case["kruskal"]["h"]),
                Bar::MinLre { lre: 9.0 },
            ));
        }
    }
}

fn factorial_cases(checks: &mut Vec<Check>) {
    let fx: Value = serde_json::from_str(FACTORIAL).unwrap_or(Value::Null);
    for (name, csv) in [("warpbreaks", WARP), ("warp_unbalanced", WARP_UNBALANCED)] {
        let Some(case) = fx["cases"]
            .as_array()
            .and_then(|c| c.iter().find(|c| c["name"] == name))
        else {
            continue;
        };
        for key in ["1", "2", "3"] {
            let keys = format!("model: breaks ~ wool * tension\nss: {key}\ncompare: none");
            let Some(r) = factorial(&keys, csv) else {
                continue;
            };
            let rows = case["tables"][key].as_array().into_iter().flatten();
            let (residual, terms): (Vec<&Value>, Vec<&Value>) =
                rows.partition(|row| row["label"] == "Residual");
            let source = "statsmodels anova_lm (sum-to-zero coding)";
            for (got, want) in r.terms.iter().zip(terms) {
                checks.push(Check::new(
                    Area::Factorial,
                    format!("{name} Type {key} SS, term {}", got.df),
                    source,
                    got.ss,
                    num(&want["ss"]),
                    Bar::MinLre { lre: 9.0 },
                ));
            }
            for want in residual {
                checks.push(Check::new(
                    Area::Factorial,
                    format!("{name} Type {key} residual SS"),
                    source,
                    r.residual().ss,
                    num(&want["ss"]),
                    Bar::MinLre { lre: 9.0 },
                ));
            }
        }
    }
}

fn published(checks: &mut Vec<Check>) {
    // Dunnett (1955) blood counts; reference p and d from deterministic
    // quadrature (METHODS 6.4), within 1e-6.
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
    let levels = [
        (6, mean(&[7.40, 8.50, 7.20, 8.24, 9.84, 8.32])),
        (4, mean(&[9.76, 8.80, 7.68, 9.36])),
        (5, mean(&[12.80, 9.68, 12.16, 9.20, 10.55])),
    ];
    let fam = dunnett(&levels, 0, 1.3805233, 12.0, 0.05, Sides::Two);
    let src = "Dunnett (1955) data; deterministic reference quadrature";
    let p = |i: usize| fam.pairs.get(i).map_or(f64::NAN, |pair| pair.p_adj);
    for (what, got, want, diff) in [
        ("adjusted p, drug A", p(0), 0.6201020, 1e-6),
        ("adjusted p, drug B", p(1), 0.0058254, 1e-6),
        ("critical value", fam.critical, 2.51348, 5e-5),
    ] {
        let bar = Bar::MaxAbs { diff };
        checks.push(Check::new(
            Area::Dunnett,
            format!("Dunnett {what}"),
            src,
            got,
            want,
            bar,
        ));
    }
    // Harter (1960) studentized range table, q(0.95), printed to 3 decimals.
    for (k, df, q) in [
        (3, 10.0, 3.877),
        (4, 20.0, 3.958),
        (5, f64::INFINITY, 3.858),
    ] {
        checks.push(Check::new(
            Area::StudentizedRange,
            format!("q(0.95; {k}, {df})"),
            "Harter (1960) table",
            qtukey_isf(0.05, k, df),
            q,
            Bar::MaxAbs { diff: 5e-4 },
        ));
    }
    // Cohen (1988) power tables: n per group for power 0.8, α = 0.05.
    for (k, f, n) in [(4, 0.25, 45.0), (4, 0.10, 274.0), (2, 0.25, 64.0)] {
        let got = one_way_sample_size(k, f, 0.05, 0.8).map_or(f64::NAN, |(n, _)| n as f64);
        checks.push(Check::new(
            Area::Power,
            format!("n per group, k = {k}, f = {f}"),
            "Cohen (1988) power tables",
            got,
            n,
            Bar::Exact,
        ));
    }
}

/// Writes validation.html and validation.results.json into `dir`.
pub fn write(v: &Validation, dir: &Path) -> Result<Vec<PathBuf>, Diagnostic> {
    let json = serde_json::to_vec_pretty(v).unwrap_or_default();
    let built = crate::compile::Built {
        report_name: "validation.html".into(),
        report: report::html(v).into_bytes(),
        results_name: "validation.results.json".into(),
        results: json,
        ..Default::default()
    };
    crate::output::write_outputs(dir, &built)
}

#[cfg(test)]
#[path = "validate_tests.rs"]
mod tests;
