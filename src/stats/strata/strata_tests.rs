//! Tests of `stats::strata` against the check values of the mixed-models
//! specification (methods/mixed-models.md, section 9), each named with its
//! source there: statsmodels OLS sums of squares, closed forms on those mean
//! squares, scipy distributions. Tolerance 1e-9 relative: the reference
//! values are printed to 11-12 significant digits (rounding ≤ 5e-11) and the
//! computation is a handful of sums and quantiles, so anything larger is an
//! error, not rounding.

use super::*;
use crate::stats::linear::{Layout, TermFactors};

const TOL: f64 = 1e-9;

/// Compares with a reference value and prints log10 of the relative error
/// (the measurement quoted in the change's description).
fn check(name: &str, got: f64, want: f64) {
    let rel = ((got - want) / want).abs();
    let log = if rel == 0.0 {
        f64::NEG_INFINITY
    } else {
        rel.log10()
    };
    println!("check {name}: got {got:.12e} want {want:.12e} log10 rel err {log:.1}");
    assert!(
        rel <= TOL,
        "{name}: got {got}, want {want} (relative error {rel:e})"
    );
}

/// A tiny CSV reader for the committed test data (no quoting needed there).
fn read_csv(name: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let path = format!("{}/tests/data/open/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(path).expect("test data file");
    let mut lines = text.lines().filter(|l| !l.trim().is_empty());
    let header = lines
        .next()
        .expect("header")
        .split(',')
        .map(str::to_string)
        .collect();
    let rows = lines
        .map(|l| l.split(',').map(|c| c.trim().to_string()).collect())
        .collect();
    (header, rows)
}

/// Level indices of columns in order of first appearance (file order, as the
/// specification fits them); a combination of columns forms a nested term.
fn factor(rows: &[Vec<String>], columns: &[usize]) -> (usize, Vec<usize>) {
    let mut labels: Vec<Vec<String>> = Vec::new();
    let index = rows
        .iter()
        .map(|r| {
            let key: Vec<String> = columns.iter().map(|&c| r[c].clone()).collect();
            match labels.iter().position(|l| *l == key) {
                Some(i) => i,
                None => {
                    labels.push(key);
                    labels.len() - 1
                }
            }
        })
        .collect();
    (labels.len(), index)
}

/// A layout from several factors' (levels, indices).
fn layout(factors: &[(usize, Vec<usize>)], n: usize) -> Layout {
    Layout {
        levels: factors.iter().map(|f| f.0).collect(),
        rows: (0..n)
            .map(|i| factors.iter().map(|f| f.1[i]).collect())
            .collect(),
    }
}

/// Shifted response (first value as reference, as N1 does) and the shift.
fn response(rows: &[Vec<String>], column: usize) -> (Vec<f64>, f64) {
    let values: Vec<f64> = rows
        .iter()
        .map(|r| r[column].parse().expect("number"))
        .collect();
    let shift = values[0];
    (values.iter().map(|v| v - shift).collect(), shift)
}

struct Oats {
    y: Vec<f64>,
    shift: f64,
    treatments: Layout,
    random: Layout,
    terms: Vec<TermFactors>,
}

/// oats.csv (B, V, N, Y): treatments V, N; random B and B:V.
fn oats_from(rows: &[Vec<String>]) -> Oats {
    let (y, shift) = response(rows, 3);
    let n = rows.len();
    Oats {
        y,
        shift,
        treatments: layout(&[factor(rows, &[1]), factor(rows, &[2])], n),
        random: layout(&[factor(rows, &[0]), factor(rows, &[0, 1])], n),
        terms: vec![vec![0], vec![1], vec![0, 1]],
    }
}

fn run(o: &Oats) -> Result<StratumAnalysis, Vec<NotClassical>> {
    analyse(&StrataInput {
        y: &o.y,
        shift: o.shift,
        treatments: &o.treatments,
        terms: &o.terms,
        random: &o.random,
    })
}

fn kind(a: &StratumAnalysis, term: usize, differing: &[usize]) -> Comparison {
    let kind = a
        .comparison_kinds()
        .into_iter()
        .find(|k| k.term == term && k.differing == differing)
        .expect("kind listed");
    a.comparison(&kind, 0.05).expect("comparison")
}

fn component(a: &StratumAnalysis, i: usize) -> Combination {
    a.components[i].estimate.clone().expect("estimable")
}

#[test]
fn oats_stratum_table() {
    let (_, rows) = read_csv("oats.csv");
    let a = run(&oats_from(&rows)).expect("recognised");
    // Strata: B (blocks), B:V (whole plots), residual (subplots).
    let ids: Vec<StratumId> = a.strata.iter().map(|s| s.id).collect();
    assert_eq!(
        ids,
        vec![
            StratumId::Random(0),
            StratumId::Random(1),
            StratumId::Residual
        ]
    );
    assert_eq!(
        a.term_strata,
        vec![
            StratumId::Random(1),
            StratumId::Residual,
            StratumId::Residual
        ]
    );
    let (blocks, whole, sub) = (&a.strata[0], &a.strata[1], &a.strata[2]);
    assert!(blocks.treatments.is_empty());
    assert_eq!((blocks.error.df, whole.error.df, sub.error.df), (5, 10, 45));
    // Spec 9.1, statsmodels OLS: SS Blocks, V, Error (a), N, V:N, Error (b).
    check(
        "oats SS blocks (statsmodels OLS)",
        blocks.error.ss,
        15875.2777778,
    );
    check(
        "oats SS V (statsmodels OLS)",
        whole.treatments[0].ss,
        1786.36111111,
    );
    check(
        "oats SS error a (statsmodels OLS)",
        whole.error.ss,
        6013.30555556,
    );
    check("oats SS N (statsmodels OLS)", sub.treatments[0].ss, 20020.5);
    check(
        "oats SS V:N (statsmodels OLS)",
        sub.treatments[1].ss,
        321.75,
    );
    check("oats SS error b (statsmodels OLS)", sub.error.ss, 7968.75);
    assert_eq!(a.total.df, 71);
    check(
        "oats SS total (spec 5.2 table)",
        a.total.ss,
        15875.2777778 + 1786.36111111 + 6013.30555556 + 20020.5 + 321.75 + 7968.75,
    );
    // Spec 9.1: F on the stratum errors (closed form), p (scipy).
    let v = &whole.treatments[0];
    check("oats F V (closed form)", v.f.unwrap(), 1.48534037944);
    check("oats p V (scipy)", v.p.unwrap(), 0.272386856735);
    check(
        "oats F N (closed form)",
        sub.treatments[0].f.unwrap(),
        37.6856470588,
    );
    check(
        "oats p N (scipy)",
        sub.treatments[0].p.unwrap(),
        2.45770955456e-12,
    );
    check(
        "oats F V:N (closed form)",
        sub.treatments[1].f.unwrap(),
        0.302823529412,
    );
    check(
        "oats p V:N (scipy)",
        sub.treatments[1].p.unwrap(),
        0.932198758999,
    );
    check("oats grand mean (closed form)", a.grand_mean, 103.972222222);
    check(
        "oats CV(a) % (closed form)",
        whole.cv_percent.unwrap(),
        23.5851862301,
    );
    check(
        "oats CV(b) % (closed form)",
        sub.cv_percent.unwrap(),
        12.7988667561,
    );
}

#[test]
fn oats_components_and_errors() {
    let (_, rows) = read_csv("oats.csv");
    let a = run(&oats_from(&rows)).expect("recognised");
    // Spec 9.1, closed form (= own REML): σ²_B, σ²_w, σ².
    check(
        "oats sigma2 B (closed form)",
        component(&a, 0).value,
        214.477083333,
    );
    check(
        "oats sigma2 B:V (closed form)",
        component(&a, 1).value,
        106.061805556,
    );
    check(
        "oats sigma2 residual (closed form)",
        component(&a, 2).value,
        177.083333333,
    );
    assert!(a.components.iter().all(|c| !c.negative));
    // Spec 5.3: σ̂²_w = (E_a − E_b)/b, as coefficients over (B, B:V, residual).
    assert_eq!(component(&a, 1).coefficients, vec![0.0, 0.25, -0.25]);
    // Spec 9.1, closed form: the SEDs of the four kinds, LSDs (scipy t).
    let v = kind(&a, 0, &[0]);
    check("oats SED two V means (closed form)", v.sed, 7.07890384379);
    check("oats df two V means", v.variance.df.unwrap(), 10.0);
    check(
        "oats LSD two V means (scipy)",
        v.lsd.unwrap(),
        15.7727806838,
    );
    let n = kind(&a, 1, &[1]);
    check("oats SED two N means (closed form)", n.sed, 4.43575539519);
    check(
        "oats LSD two N means (scipy)",
        n.lsd.unwrap(),
        8.93406997369,
    );
    let n_same_v = kind(&a, 2, &[1]);
    check(
        "oats SED two N at same V (closed form)",
        n_same_v.sed,
        7.68295371441,
    );
    check(
        "oats df two N at same V",
        n_same_v.variance.df.unwrap(),
        45.0,
    );
    check(
        "oats LSD two N at same V (scipy)",
        n_same_v.lsd.unwrap(),
        15.4742631128,
    );
    let v_same_n = kind(&a, 2, &[0]);
    check(
        "oats SED two V at same N (closed form)",
        v_same_n.sed,
        9.71502511386,
    );
    check(
        "oats df two V at same N (closed form)",
        v_same_n.variance.df.unwrap(),
        30.2307802367,
    );
    check(
        "oats LSD two V at same N (scipy)",
        v_same_n.lsd.unwrap(),
        19.8343787457,
    );
    check(
        "oats t' Cochran-Cox (scipy)",
        v_same_n.weighted_t.unwrap(),
        2.12774304419,
    );
    check(
        "oats LSD with t' (scipy)",
        v_same_n.weighted_lsd.unwrap(),
        20.6710771101,
    );
    // Spec 5.4: cells at different V and different N share the SED of V at the same N.
    check(
        "oats SED cells differing in V and N (spec 5.4)",
        kind(&a, 2, &[0, 1]).sed,
        9.71502511386,
    );
    // Spec 9.1 / 4.1: SE of means, blocks fixed (classical) and random.
    let se = |term, blocks| a.mean_error(term, blocks).expect("mean error");
    check(
        "oats SE V mean, blocks fixed (closed form)",
        se(0, SeBasis::Stratum).se,
        5.00554091131,
    );
    check(
        "oats df V mean, blocks fixed",
        se(0, SeBasis::Stratum).variance.df.unwrap(),
        10.0,
    );
    check(
        "oats SE V mean, blocks random (closed form)",
        se(0, SeBasis::AllRandom).se,
        7.79753937921,
    );
    check(
        "oats df V mean, blocks random (closed form)",
        se(0, SeBasis::AllRandom).variance.df.unwrap(),
        8.86898066056,
    );
    check(
        "oats SE N mean, blocks fixed (closed form)",
        se(1, SeBasis::Stratum).se,
        3.13655271962,
    );
    check(
        "oats SE N mean, blocks random (closed form)",
        se(1, SeBasis::AllRandom).se,
        7.1747101718,
    );
    check(
        "oats df N mean, blocks random (closed form)",
        se(1, SeBasis::AllRandom).variance.df.unwrap(),
        6.79205105535,
    );
    check(
        "oats SE intercept (closed form)",
        a.grand_mean_error().unwrap().se,
        6.64063203522,
    );
}

#[test]
fn machines_workers_random() {
    let (_, rows) = read_csv("Machines.csv");
    let (y, shift) = response(&rows, 2);
    let n = rows.len();
    let treatments = layout(&[factor(&rows, &[1])], n);
    let random = layout(&[factor(&rows, &[0]), factor(&rows, &[0, 1])], n);
    let terms = vec![vec![0]];
    let a = analyse(&StrataInput {
        y: &y,
        shift,
        treatments: &treatments,
        terms: &terms,
        random: &random,
    })
    .expect("recognised");
    assert_eq!(a.term_strata, vec![StratumId::Random(1)]);
    let (worker, cell, residual) = (&a.strata[0], &a.strata[1], &a.strata[2]);
    // Spec 9.3, statsmodels OLS sums of squares.
    check(
        "Machines SS Machine (statsmodels OLS)",
        cell.treatments[0].ss,
        1755.26333333,
    );
    check(
        "Machines SS Worker (statsmodels OLS)",
        worker.error.ss,
        1241.895,
    );
    check(
        "Machines SS Machine:Worker (statsmodels OLS)",
        cell.error.ss,
        426.53,
    );
    check(
        "Machines SS residual (statsmodels OLS)",
        residual.error.ss,
        33.2866666667,
    );
    assert_eq!(
        (worker.error.df, cell.error.df, residual.error.df),
        (5, 10, 36)
    );
    check(
        "Machines F Machine (closed form)",
        cell.treatments[0].f.unwrap(),
        20.5760829641,
    );
    check(
        "Machines p Machine (scipy)",
        cell.treatments[0].p.unwrap(),
        2.85548485771e-04,
    );
    // Spec 9.3, closed form: components, Satterthwaite df, χ² intervals (scipy).
    let (w, wm, e) = (component(&a, 0), component(&a, 1), component(&a, 2));
    check(
        "Machines sigma2 Worker (closed form)",
        w.value,
        22.8584444444,
    );
    check(
        "Machines sigma2 Worker:Machine (closed form)",
        wm.value,
        13.9094567901,
    );
    check(
        "Machines sigma2 residual (closed form)",
        e.value,
        0.92462962963,
    );
    check(
        "Machines df sigma2 Worker:Machine (closed form)",
        wm.df.unwrap(),
        9.5698910964,
    );
    let (lo, hi) = a.components[1].interval(0.95).unwrap();
    check(
        "Machines CI low sigma2 Worker:Machine (scipy chi2)",
        lo,
        6.70314148434,
    );
    check(
        "Machines CI high sigma2 Worker:Machine (scipy chi2)",
        hi,
        44.2384471101,
    );
    check(
        "Machines df sigma2 Worker (closed form)",
        w.df.unwrap(),
        3.38035084381,
    );
    let (lo, hi) = a.components[0].interval(0.95).unwrap();
    check(
        "Machines CI low sigma2 Worker (scipy chi2)",
        lo,
        7.69102356102,
    );
    check(
        "Machines CI high sigma2 Worker (scipy chi2)",
        hi,
        251.486297888,
    );
    assert_eq!(e.df, Some(36.0));
    let (lo, hi) = a.components[2].interval(0.95).unwrap();
    check(
        "Machines exact CI low sigma2 (scipy chi2)",
        lo,
        0.611468066208,
    );
    check(
        "Machines exact CI high sigma2 (scipy chi2)",
        hi,
        1.5601261458,
    );
    let m = kind(&a, 0, &[0]);
    check(
        "Machines SED two machines (closed form)",
        m.sed,
        2.1769754758,
    );
    check("Machines df two machines", m.variance.df.unwrap(), 10.0);
    let se = a.mean_error(0, SeBasis::AllRandom).unwrap();
    check(
        "Machines SE of an EMM, workers random (closed form)",
        se.se,
        2.4858302138,
    );
    check(
        "Machines df of an EMM (closed form)",
        se.variance.df.unwrap(),
        8.52169850561,
    );
}

#[test]
fn penicillin_crossed_random_terms() {
    let (_, rows) = read_csv("Penicillin.csv");
    let (y, shift) = response(&rows, 0);
    let n = rows.len();
    let treatments = Layout {
        levels: Vec::new(),
        rows: vec![Vec::new(); n],
    };
    let random = layout(&[factor(&rows, &[1]), factor(&rows, &[2])], n);
    let a = analyse(&StrataInput {
        y: &y,
        shift,
        treatments: &treatments,
        terms: &[],
        random: &random,
    })
    .expect("recognised");
    // Sample (6 units) comes first: fewer units.
    let ids: Vec<StratumId> = a.strata.iter().map(|s| s.id).collect();
    assert_eq!(
        ids,
        vec![
            StratumId::Random(1),
            StratumId::Random(0),
            StratumId::Residual
        ]
    );
    // Spec 9.5, statsmodels OLS sums of squares.
    check(
        "Penicillin SS plate (statsmodels OLS)",
        a.strata[1].error.ss,
        105.888888889,
    );
    check(
        "Penicillin SS sample (statsmodels OLS)",
        a.strata[0].error.ss,
        449.222222222,
    );
    check(
        "Penicillin SS residual (statsmodels OLS)",
        a.strata[2].error.ss,
        34.7777777778,
    );
    let (plate, sample, e) = (component(&a, 0), component(&a, 1), component(&a, 2));
    check(
        "Penicillin sigma2 plate (closed form)",
        plate.value,
        0.71690821256,
    );
    check(
        "Penicillin sigma2 sample (closed form)",
        sample.value,
        3.7309178744,
    );
    check(
        "Penicillin sigma2 residual (closed form)",
        e.value,
        0.302415458937,
    );
    check(
        "Penicillin df sigma2 plate (closed form)",
        plate.df.unwrap(),
        20.0603136162,
    );
    let (lo, hi) = a.components[0].interval(0.95).unwrap();
    check(
        "Penicillin CI low sigma2 plate (scipy chi2)",
        lo,
        0.419909774329,
    );
    check(
        "Penicillin CI high sigma2 plate (scipy chi2)",
        hi,
        1.49303866277,
    );
    check(
        "Penicillin df sigma2 sample (closed form)",
        sample.df.unwrap(),
        4.96639430771,
    );
    let (lo, hi) = a.components[1].interval(0.95).unwrap();
    check(
        "Penicillin CI low sigma2 sample (scipy chi2)",
        lo,
        1.45019535296,
    );
    check(
        "Penicillin CI high sigma2 sample (scipy chi2)",
        hi,
        22.6378099204,
    );
    let (lo, hi) = a.components[2].interval(0.95).unwrap();
    check(
        "Penicillin exact CI low sigma2 (scipy chi2)",
        lo,
        0.237275896898,
    );
    check(
        "Penicillin exact CI high sigma2 (scipy chi2)",
        hi,
        0.398769223855,
    );
    // Spec 9.5: intercept SE √((MS_p + MS_s − MS_E)/144), negative coefficient.
    let se = a.grand_mean_error().unwrap();
    check(
        "Penicillin intercept (closed form)",
        a.grand_mean,
        22.9722222222,
    );
    check(
        "Penicillin SE intercept (closed form)",
        se.se,
        0.808573390986,
    );
    check(
        "Penicillin df intercept (closed form)",
        se.variance.df.unwrap(),
        5.4870922788,
    );
    assert!(se.variance.coefficients[2] < 0.0);
}

/// Spec 9.2's invented deletion pattern: rows (B I, Victory, 0.0cwt) and
/// (B IV, Marvellous, 0.6cwt) removed. The reason names both cells, once each,
/// in the blocks that lack them.
#[test]
fn oats_with_two_subplots_deleted_names_the_missing_cells() {
    let (_, rows) = read_csv("oats.csv");
    let kept: Vec<Vec<String>> = rows
        .into_iter()
        .filter(|r| {
            !((r[0] == "I" && r[1] == "Victory" && r[2] == "0.0cwt")
                || (r[0] == "IV" && r[1] == "Marvellous" && r[2] == "0.6cwt"))
        })
        .collect();
    assert_eq!(kept.len(), 70);
    let reasons = run(&oats_from(&kept)).expect_err("not recognised");
    // Level indices by first appearance in the kept rows.
    let level = |column: usize, label: &str| {
        let (_, index) = factor(&kept, &[column]);
        index[kept
            .iter()
            .position(|r| r[column] == label)
            .expect("label present")]
    };
    let cell = |block: &str, variety: &str, rate: &str| MissingCell {
        random_term: 0,
        unit: level(0, block),
        levels: vec![level(1, variety), level(2, rate)],
    };
    assert_eq!(
        reasons,
        vec![NotClassical::MissingCells {
            cells: vec![
                cell("I", "Victory", "0.0cwt"),
                cell("IV", "Marvellous", "0.6cwt")
            ],
            unnamed: 0,
        }]
    );
}

/// A variety label changed on one subplot while the whole plots keep their
/// units: V is no longer constant within that whole plot.
#[test]
fn treatment_varying_within_a_whole_plot_is_named() {
    let (_, rows) = read_csv("oats.csv");
    let mut o = oats_from(&rows);
    let changed = 1; // block I, Victory, 0.2cwt
    assert_eq!(o.treatments.rows[changed], vec![0, 1]);
    o.treatments.rows[changed][0] = 1;
    let reasons = run(&o).expect_err("not recognised");
    assert_eq!(
        reasons,
        vec![NotClassical::VariesWithinUnits {
            factor: 0,
            random_term: 1,
            units: vec![o.random.rows[changed][1]],
        }]
    );
}

#[test]
fn other_layouts_that_are_not_recognised() {
    let (_, rows) = read_csv("oats.csv");
    let base = oats_from(&rows);
    // A random term with one observation per unit duplicates the residual.
    let mut o = oats_from(&rows);
    o.random = layout(
        &[factor(&rows, &[0]), factor(&rows, &[0, 1, 2])],
        rows.len(),
    );
    assert_eq!(
        run(&o).unwrap_err(),
        vec![NotClassical::RandomTermIsResidual { random_term: 1 }]
    );
    // The same units declared twice.
    let mut o = oats_from(&rows);
    o.random = layout(&[factor(&rows, &[0]), factor(&rows, &[0])], rows.len());
    assert_eq!(
        run(&o).unwrap_err(),
        vec![NotClassical::SameUnits {
            first: 0,
            second: 1
        }]
    );
    // No random term.
    let mut o = oats_from(&rows);
    o.random = Layout {
        levels: Vec::new(),
        rows: vec![Vec::new(); rows.len()],
    };
    assert_eq!(run(&o).unwrap_err(), vec![NotClassical::NoRandomTerm]);
    // A missing response.
    let mut o = oats_from(&rows);
    o.y[5] = f64::NAN;
    assert_eq!(
        run(&o).unwrap_err(),
        vec![NotClassical::MissingResponse {
            observations: vec![5]
        }]
    );
    // Lengths that disagree are a reason, not a panic.
    let mut o = oats_from(&rows);
    o.y.pop();
    assert_eq!(run(&o).unwrap_err(), vec![NotClassical::LengthsDiffer]);
    // Whole plots (B:V) and "columns" (B:N) declared without blocks: their
    // join, the blocks, is not declared.
    let mut o = oats_from(&rows);
    o.random = layout(
        &[factor(&rows, &[0, 1]), factor(&rows, &[0, 2])],
        rows.len(),
    );
    assert_eq!(
        run(&o).unwrap_err(),
        vec![NotClassical::UndeclaredJoin {
            first: 0,
            second: 1
        }]
    );
    assert!(run(&base).is_ok());
}

/// Builds a layout from per-observation (treatment levels, random units).
fn small(
    rows: &[(Vec<usize>, Vec<usize>)],
    treatment_levels: Vec<usize>,
    random_levels: Vec<usize>,
) -> (Layout, Layout) {
    (
        Layout {
            levels: treatment_levels,
            rows: rows.iter().map(|r| r.0.clone()).collect(),
        },
        Layout {
            levels: random_levels,
            rows: rows.iter().map(|r| r.1.clone()).collect(),
        },
    )
}

/// Whole plots each hold one level of A, every level in every block and each
/// level equally often overall, but not equally often within each block
/// (blocks hold A 0,0,1,2 / 0,1,1,2 / 0,1,2,2): A is not orthogonal to
/// blocks. Invented layout.
#[test]
fn treatment_unbalanced_over_blocks_is_not_orthogonal() {
    let plots = [[0, 0, 1, 2], [0, 1, 1, 2], [0, 1, 2, 2]];
    let mut rows = Vec::new();
    for (block, levels) in plots.iter().enumerate() {
        for (plot, &a) in levels.iter().enumerate() {
            for s in 0..2 {
                rows.push((vec![a, s], vec![block, block * 4 + plot]));
            }
        }
    }
    let (treatments, random) = small(&rows, vec![3, 2], vec![3, 12]);
    let y: Vec<f64> = (0..rows.len()).map(|i| (i * 7 % 11) as f64).collect();
    let terms = vec![vec![0], vec![1], vec![0, 1]];
    let reasons = analyse(&StrataInput {
        y: &y,
        shift: 0.0,
        treatments: &treatments,
        terms: &terms,
        random: &random,
    })
    .expect_err("not recognised");
    assert_eq!(
        reasons,
        vec![NotClassical::NotOrthogonal {
            term: 0,
            random_term: 0
        }]
    );
}

/// Each of three sites gets its own treatment, two plots per site: the
/// treatment is estimated in the site stratum, which has no error df left.
/// No F, no site component, no SED — and no panic. Invented layout.
#[test]
fn a_stratum_without_error_df_gives_no_test() {
    let rows: Vec<(Vec<usize>, Vec<usize>)> = (0..6).map(|i| (vec![i / 2], vec![i / 2])).collect();
    let (treatments, random) = small(&rows, vec![3], vec![3]);
    let y = [1.0, 2.0, 4.0, 4.5, 7.0, 9.0];
    let terms = vec![vec![0]];
    let a = analyse(&StrataInput {
        y: &y,
        shift: 0.0,
        treatments: &treatments,
        terms: &terms,
        random: &random,
    })
    .expect("recognised");
    assert_eq!(a.term_strata, vec![StratumId::Random(0)]);
    let site = &a.strata[0];
    assert_eq!(
        (site.treatments[0].df, site.error.df, site.error.ms),
        (2, 0, None)
    );
    assert_eq!((site.treatments[0].f, site.treatments[0].p), (None, None));
    assert!(a.components[0].estimate.is_none());
    assert!(a.components[1].estimate.is_some());
    assert!(a.comparisons(0.05).is_empty());
}

/// A negative ANOVA estimate is kept as computed and flagged; it has no χ²
/// interval. Blocks whose means are closer than whole-plot noise allows.
/// Invented data.
#[test]
fn negative_component_is_flagged() {
    let mut rows = Vec::new();
    for block in 0..3 {
        for unit in 0..2 {
            for s in 0..2 {
                rows.push((vec![s], vec![block, block * 2 + unit]));
            }
        }
    }
    let (treatments, random) = small(&rows, vec![2], vec![3, 6]);
    // Block totals equal; units within blocks differ widely.
    let y = [
        0.0, 1.0, 10.0, 11.0, 0.0, 1.5, 10.0, 11.5, 0.5, 1.0, 10.5, 11.0,
    ];
    let terms = vec![vec![0]];
    let a = analyse(&StrataInput {
        y: &y,
        shift: 0.0,
        treatments: &treatments,
        terms: &terms,
        random: &random,
    })
    .expect("recognised");
    let blocks = &a.components[0];
    assert!(blocks.negative);
    assert!(blocks.estimate.as_ref().unwrap().value < 0.0);
    assert_eq!(blocks.interval(0.95), None);
}

/// Many missing cells: the first hundred are named, the rest counted.
/// Invented layout: 30 blocks of a 4 × 4 factorial, four cells gone from each.
#[test]
fn missing_cells_beyond_a_hundred_are_counted() {
    let mut rows = Vec::new();
    for block in 0..30 {
        for a in 0..4 {
            for b in 0..4 {
                if a != b {
                    rows.push((vec![a, b], vec![block]));
                }
            }
        }
    }
    let (treatments, random) = small(&rows, vec![4, 4], vec![30]);
    let y: Vec<f64> = (0..rows.len()).map(|i| i as f64).collect();
    let terms = vec![vec![0], vec![1]];
    let reasons = analyse(&StrataInput {
        y: &y,
        shift: 0.0,
        treatments: &treatments,
        terms: &terms,
        random: &random,
    })
    .expect_err("not recognised");
    let [NotClassical::MissingCells { cells, unnamed }] = reasons.as_slice() else {
        panic!("expected missing cells, got {reasons:?}");
    };
    assert_eq!((cells.len(), *unnamed), (100, 20));
    assert_eq!(
        cells[0],
        MissingCell {
            random_term: 0,
            unit: 0,
            levels: vec![0, 0]
        }
    );
}
