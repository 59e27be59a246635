//! Covariance structures over a repeated factor (`stats::mixed::fit_repeated`)
//! against the check values of the mixed-models specification, section 9.4
//! table C and the remarks after it (sleepstudy, Days as a 10-level factor,
//! sum-to-zero coding; values from its reference script: "own" dense REML
//! with Newton steps, closed forms, numpy for Hotelling's T²).
//!
//! Tolerances: 1e-8 relative for criteria, parameters, F and df (the spec
//! prints 10-12 digits and our optimiser stops at a relative step of 1e-10
//! with Newton's quadratic convergence); Hotelling's F is printed to 9
//! digits, so 1e-8 there too is at its rounding; p-values 1e-12 absolute.

use sheaf::stats::linear::Layout;
use sheaf::stats::mixed::{
    self, Ddf, FixedDesign, Information, MixedError, RepeatedFit, RepeatedLayout, Structure,
};

struct Sleep {
    y: Vec<f64>,
    days: Vec<usize>,
    subject: Vec<usize>,
}

/// sleepstudy.csv: Reaction, Days (0-9), Subject (codes in file order).
fn sleepstudy() -> Sleep {
    let path = format!(
        "{}/tests/data/open/sleepstudy.csv",
        env!("CARGO_MANIFEST_DIR")
    );
    let text = std::fs::read_to_string(&path).unwrap();
    let mut codes: Vec<String> = Vec::new();
    let mut s = Sleep {
        y: vec![],
        days: vec![],
        subject: vec![],
    };
    for line in text.lines().skip(1).filter(|l| !l.trim().is_empty()) {
        let f: Vec<&str> = line.split(',').collect();
        s.y.push(f[0].parse().unwrap());
        s.days.push(f[1].parse().unwrap());
        let pos = codes.iter().position(|c| c == f[2]).unwrap_or_else(|| {
            codes.push(f[2].to_string());
            codes.len() - 1
        });
        s.subject.push(pos);
    }
    s
}

fn design(days: &[usize]) -> FixedDesign {
    let layout = Layout {
        levels: vec![10],
        rows: days.iter().map(|d| vec![*d]).collect(),
    };
    FixedDesign::new(&layout, &[vec![0]])
}

fn layout(s: &Sleep) -> RepeatedLayout {
    RepeatedLayout {
        subjects: 18,
        subject_of: s.subject.clone(),
        occasions: 10,
        occasion_of: s.days.clone(),
        times: None,
    }
}

fn fit(structure: Structure) -> (RepeatedFit, FixedDesign) {
    let s = sleepstudy();
    let d = design(&s.days);
    let f = mixed::fit_repeated(&s.y, &d, &layout(&s), structure).expect("fit");
    eprintln!(
        "{structure:?}: iterations {}, max scaled gradient {:e}",
        f.statistics.iterations, f.statistics.max_scaled_gradient
    );
    (f, d)
}

fn close(found: f64, expected: f64, rel: f64, what: &str) {
    let err = ((found - expected) / expected).abs();
    eprintln!(
        "{what}: found {found:.12e}, expected {expected:.12e}, log10 rel err {:.1}",
        err.max(1e-17).log10()
    );
    assert!(
        err <= rel,
        "{what}: {found} vs {expected} (relative error {err:e})"
    );
}

const TIGHT: f64 = 1e-8;

/// The criteria of one row of spec 9.4 table C. The table's AIC and BIC
/// use d as fitted; ours use the invariant d (as `MixedFit`), so they are
/// compared after subtracting the table's own ln|X'X| = fitted − invariant.
fn check_criteria(f: &RepeatedFit, row: [f64; 5], what: &str) {
    let [fitted, invariant, aic, bic_n, bic_subjects] = row;
    let ln_xtx = fitted - invariant;
    close(
        f.statistics.criterion_as_fitted,
        fitted,
        TIGHT,
        &format!("{what} d as fitted"),
    );
    close(
        f.statistics.criterion,
        invariant,
        TIGHT,
        &format!("{what} d invariant"),
    );
    close(
        f.statistics.aic,
        aic - ln_xtx,
        TIGHT,
        &format!("{what} AIC"),
    );
    close(
        f.statistics.bic,
        bic_n - ln_xtx,
        TIGHT,
        &format!("{what} BIC ln(N - p)"),
    );
    close(
        f.bic_subjects,
        bic_subjects - ln_xtx,
        TIGHT,
        &format!("{what} BIC ln(subjects)"),
    );
}

#[test]
fn compound_symmetry_reproduces_the_univariate_analysis() {
    let (f, d) = fit(Structure::CompoundSymmetry);
    // spec 9.4 C, CS row
    check_criteria(
        &f,
        [
            1734.09773042,
            1700.58884266,
            1738.09773042,
            1744.3693273,
            1739.87847394,
        ],
        "CS",
    );
    // spec 9.4 C "further": own = closed form (MS_Subject − MS_E)/10 and MS_E
    close(
        f.parameters[0].value,
        1375.46531754,
        TIGHT,
        "CS common covariance",
    );
    close(f.parameters[1].value, 987.588487682, TIGHT, "CS residual");
    // spec 9.4 B/C: F(9, 153) = 18.7026979326 under KR (λ 1) and Satterthwaite
    for method in [
        Ddf::KenwardRoger,
        Ddf::Satterthwaite(Information::Observed),
        Ddf::Satterthwaite(Information::Expected),
    ] {
        let t = f.fixed.type3(&d, 0, method).unwrap();
        close(t.f, 18.7026979326, TIGHT, "CS F Days");
        close(t.df_den, 153.0, TIGHT, "CS df");
        close(t.lambda, 1.0, TIGHT, "CS lambda");
        // spec 9.4 B: p = 8.995345416e-21 (scipy). d ln p/d ln F is about 40
        // here, so an F good to 1e-9 gives p to about 4e-8.
        close(t.p_value, 8.995345416e-21, 1e-6, "CS p");
    }
}

#[test]
fn autoregressive_matches_table_c_with_and_without_second_derivatives() {
    let (f, d) = fit(Structure::Autoregressive);
    // spec 9.4 C, AR(1) row
    check_criteria(
        &f,
        [
            1687.77474705,
            1654.26585929,
            1691.77474705,
            1698.04634393,
            1693.55549057,
        ],
        "AR(1)",
    );
    // spec 9.4 C remarks: own Newton values
    close(
        f.parameters[0].value,
        2466.84663409,
        TIGHT,
        "AR(1) variance",
    );
    close(f.parameters[1].value, 0.799527176553, TIGHT, "AR(1) rho");
    let l = d.type3_rows(0).unwrap();
    // spec 9.4 C: Wald 4.92007106078 on Satterthwaite 133.868330666
    let sat = f
        .fixed
        .wald(&l, Ddf::Satterthwaite(Information::Observed))
        .unwrap();
    close(sat.f, 4.92007106078, TIGHT, "AR(1) Wald F");
    close(sat.df_den, 133.868330666, TIGHT, "AR(1) Satterthwaite df");
    // spec 9.4 C: KR df 148.969021233, λ 0.997812081623; F with Rᵢⱼ
    // (parameters (σ², ρ)) 4.77419427397, without 4.90930634689
    let kr = f.fixed.wald(&l, Ddf::KenwardRoger).unwrap();
    close(kr.df_den, 148.969021233, TIGHT, "AR(1) KR df");
    close(kr.lambda, 0.997812081623, TIGHT, "AR(1) KR lambda");
    close(kr.f, 4.77419427397, TIGHT, "AR(1) KR F with R_ij");
    let first = f.first_order.wald(&l, Ddf::KenwardRoger).unwrap();
    close(
        first.df_den,
        148.969021233,
        TIGHT,
        "AR(1) first-order KR df",
    );
    close(first.f, 4.90930634689, TIGHT, "AR(1) KR F without R_ij");
    assert!(f.second_derivative_terms);
}

#[test]
fn unstructured_reproduces_hotelling() {
    let (f, d) = fit(Structure::Unstructured);
    // spec 9.4 C, UN row
    check_criteria(
        &f,
        [
            1564.53525533,
            1531.02636756,
            1674.53525533,
            1847.00416936,
            1723.50570201,
        ],
        "UN",
    );
    let l = d.type3_rows(0).unwrap();
    // spec 9.4 C: Wald 10.6975314822 on Satterthwaite 17
    let sat = f
        .fixed
        .wald(&l, Ddf::Satterthwaite(Information::Observed))
        .unwrap();
    close(sat.f, 10.6975314822, TIGHT, "UN Wald F");
    close(sat.df_den, 17.0, TIGHT, "UN Satterthwaite df");
    // spec 9.4 C: KR 5.66339902 on 9 (λ 9/17), p 0.0082517245231 (numpy)
    let kr = f.fixed.wald(&l, Ddf::KenwardRoger).unwrap();
    close(kr.f, 5.66339902, TIGHT, "UN KR F = Hotelling");
    close(kr.df_den, 9.0, TIGHT, "UN KR df");
    close(kr.lambda, 9.0 / 17.0, TIGHT, "UN KR lambda");
    close(kr.p_value, 0.0082517245231, 1e-6, "UN KR p");
    assert_eq!(f.parameters.len(), 55);
}

/// spec 9.4 C remark: with complete data and a saturated mean, the UN
/// estimate is the sample covariance matrix of the 10 days (closed form,
/// computed here directly from the data).
#[test]
fn unstructured_estimate_is_the_sample_covariance() {
    let s = sleepstudy();
    let (f, _) = fit(Structure::Unstructured);
    let mut by = vec![[0.0f64; 10]; 18];
    for i in 0..s.y.len() {
        by[s.subject[i]][s.days[i]] = s.y[i];
    }
    let mean: Vec<f64> = (0..10)
        .map(|j| by.iter().map(|r| r[j]).sum::<f64>() / 18.0)
        .collect();
    for j in 0..10 {
        for l in 0..10 {
            let c: f64 = by
                .iter()
                .map(|r| (r[j] - mean[j]) * (r[l] - mean[l]))
                .sum::<f64>()
                / 17.0;
            let found = f.covariance[j][l];
            assert!(
                (found - c).abs() <= 1e-8 * f.covariance[j][j].max(f.covariance[l][l]),
                "Sigma({j},{l}): {found} vs {c}"
            );
        }
    }
}

/// spec 9.6 item 5: the order of the rows changes nothing.
#[test]
fn row_order_does_not_matter() {
    let s = sleepstudy();
    let n = s.y.len();
    // A fixed scramble: stride 77 through the 180 rows (77 and 180 coprime).
    let order: Vec<usize> = (0..n).map(|i| (i * 77) % n).collect();
    let t = Sleep {
        y: order.iter().map(|&i| s.y[i]).collect(),
        days: order.iter().map(|&i| s.days[i]).collect(),
        subject: order.iter().map(|&i| s.subject[i]).collect(),
    };
    for structure in [Structure::Autoregressive, Structure::Unstructured] {
        let (a, da) = fit(structure);
        let dt = design(&t.days);
        let b = mixed::fit_repeated(&t.y, &dt, &layout(&t), structure).unwrap();
        close(
            b.statistics.criterion,
            a.statistics.criterion,
            1e-12,
            "permuted criterion",
        );
        for (x, y) in a.parameters.iter().zip(&b.parameters) {
            close(y.value, x.value, 1e-10, "permuted parameter");
        }
        let ta = a.fixed.type3(&da, 0, Ddf::KenwardRoger).unwrap();
        let tb = b.fixed.type3(&dt, 0, Ddf::KenwardRoger).unwrap();
        close(tb.f, ta.f, 1e-10, "permuted F");
        close(tb.df_den, ta.df_den, 1e-10, "permuted df");
    }
}

/// Rows 17, 34, …, 170 deleted (spec 9.4 D's INVENTED deletion pattern):
/// every subject stays in (spec 7.5), and compound symmetry with a positive
/// common covariance is the random-intercept model, so it must equal
/// `mixed::fit` with a random subject term (a different implementation:
/// cross-products and the Woodbury identity) on every reported quantity.
#[test]
fn incomplete_subjects_stay_in_and_cs_equals_a_random_intercept() {
    let s = sleepstudy();
    let keep: Vec<usize> = (0..s.y.len()).filter(|i| (i + 1) % 17 != 0).collect();
    let t = Sleep {
        y: keep.iter().map(|&i| s.y[i]).collect(),
        days: keep.iter().map(|&i| s.days[i]).collect(),
        subject: keep.iter().map(|&i| s.subject[i]).collect(),
    };
    assert_eq!(t.y.len(), 170);
    let d = design(&t.days);
    let cs = mixed::fit_repeated(&t.y, &d, &layout(&t), Structure::CompoundSymmetry).unwrap();
    assert_eq!((cs.statistics.observations, cs.subjects), (170, 18));
    let subject = mixed::RandomTerm {
        name: "Subject".into(),
        levels: 18,
        level_of: t.subject.clone(),
    };
    let vc = mixed::fit(&t.y, &d, &[subject]).unwrap();
    close(
        cs.parameters[0].value,
        vc.components[0].variance,
        1e-8,
        "D: subject variance",
    );
    close(
        cs.parameters[1].value,
        vc.components[1].variance,
        1e-8,
        "D: residual",
    );
    close(
        cs.statistics.criterion,
        vc.statistics.criterion,
        1e-12,
        "D: criterion",
    );
    close(
        cs.statistics.criterion_as_fitted,
        vc.statistics.criterion_as_fitted,
        1e-12,
        "D: criterion as fitted",
    );
    for method in [
        Ddf::KenwardRoger,
        Ddf::Satterthwaite(Information::Observed),
        Ddf::Satterthwaite(Information::Expected),
    ] {
        let a = cs.fixed.type3(&d, 0, method).unwrap();
        let b = vc.fixed.type3(&d, 0, method).unwrap();
        close(a.f, b.f, 1e-8, "D: F Days");
        close(a.df_den, b.df_den, 1e-8, "D: df Days");
        let mut l = vec![0.0; cs.fixed.beta.len()];
        l[0] = 1.0;
        l[3] = 1.0;
        let ca = cs.fixed.contrast(&l, method).unwrap();
        let cb = vc.fixed.contrast(&l, method).unwrap();
        close(ca.se, cb.se, 1e-8, "D: contrast SE");
        close(ca.df, cb.df, 1e-8, "D: contrast df");
    }
    let ar = mixed::fit_repeated(&t.y, &d, &layout(&t), Structure::Autoregressive).unwrap();
    assert_eq!((ar.statistics.observations, ar.subjects), (170, 18));
    let kr = ar.fixed.type3(&d, 0, Ddf::KenwardRoger).unwrap();
    assert!(kr.df_den > 1.0 && kr.f > 0.0 && kr.p_value < 0.05, "{kr:?}");
    // UN here has no maximum: the 8 complete subjects' residuals span at
    // most 8 of the 10 dimensions, so Σ may shrink towards singular along
    // a direction orthogonal to them while the incomplete subjects' blocks
    // stay regular, and d falls without bound. The fit must say so with an
    // error value rather than return a degenerate Σ.
    assert!(mixed::fit_repeated(&t.y, &d, &layout(&t), Structure::Unstructured).is_err());
}

/// AR(1) in time units of half a day (times 0, 2, 4, …): ρ becomes √ρ per
/// unit and nothing else changes; times 0, 1, …, 9 given explicitly equal
/// the default.
#[test]
fn autoregressive_time_units_change_only_rho() {
    let s = sleepstudy();
    let d = design(&s.days);
    let (base, _) = fit(Structure::Autoregressive);
    let mut lay = layout(&s);
    lay.times = Some((0..10).map(|j| j as f64).collect());
    let same = mixed::fit_repeated(&s.y, &d, &lay, Structure::Autoregressive).unwrap();
    assert_eq!(same.statistics.criterion, base.statistics.criterion);
    lay.times = Some((0..10).map(|j| 2.0 * j as f64).collect());
    let doubled = mixed::fit_repeated(&s.y, &d, &lay, Structure::Autoregressive).unwrap();
    close(
        doubled.statistics.criterion,
        base.statistics.criterion,
        1e-12,
        "time units: criterion",
    );
    close(
        doubled.parameters[1].value,
        base.parameters[1].value.sqrt(),
        1e-9,
        "time units: rho",
    );
    let l = d.type3_rows(0).unwrap();
    let a = base.first_order.wald(&l, Ddf::KenwardRoger).unwrap();
    let b = doubled.first_order.wald(&l, Ddf::KenwardRoger).unwrap();
    close(b.f, a.f, 1e-8, "time units: first-order KR F");
    close(b.df_den, a.df_den, 1e-8, "time units: KR df");
}

/// Bad input is an error value naming what is wrong.
#[test]
fn bad_layouts_are_refused() {
    let s = sleepstudy();
    let d = design(&s.days);
    let run = |lay: &RepeatedLayout, st: Structure| mixed::fit_repeated(&s.y, &d, lay, st);
    let mut short = layout(&s);
    short.subject_of.pop();
    let err = run(&short, Structure::CompoundSymmetry).unwrap_err();
    assert!(
        matches!(
            err,
            MixedError::LengthMismatch {
                expected: 180,
                found: 179,
                ..
            }
        ),
        "{err:?}"
    );
    let mut short = layout(&s);
    short.occasion_of.truncate(10);
    assert!(matches!(
        run(&short, Structure::Autoregressive).unwrap_err(),
        MixedError::LengthMismatch { found: 10, .. }
    ));
    let mut out = layout(&s);
    out.occasion_of[5] = 10;
    let err = run(&out, Structure::CompoundSymmetry).unwrap_err();
    assert_eq!(
        err,
        MixedError::LevelOutOfRange {
            term: "occasion".into(),
            row: 5,
            level: 10,
            levels: 10
        }
    );
    let mut twice = layout(&s);
    twice.occasion_of[1] = 0;
    let err = run(&twice, Structure::Unstructured).unwrap_err();
    assert_eq!(
        err,
        MixedError::RepeatedOccasion {
            occasion: 0,
            first_row: 0,
            second_row: 1
        }
    );
    assert!(err.to_string().contains("rows 1 and 2"), "{err}");
    // UN on 10 occasions needs 11 subjects: keep 10.
    let keep: Vec<usize> = (0..s.y.len()).filter(|&i| s.subject[i] < 10).collect();
    let few = Sleep {
        y: keep.iter().map(|&i| s.y[i]).collect(),
        days: keep.iter().map(|&i| s.days[i]).collect(),
        subject: keep.iter().map(|&i| s.subject[i]).collect(),
    };
    let err = mixed::fit_repeated(
        &few.y,
        &design(&few.days),
        &layout(&few),
        Structure::Unstructured,
    )
    .unwrap_err();
    assert!(
        matches!(
            err,
            MixedError::TooFewSubjects {
                subjects: 10,
                needed: 11,
                ..
            }
        ),
        "{err:?}"
    );
    let mut times = layout(&s);
    times.times = Some(vec![0.0; 9]);
    assert!(matches!(
        run(&times, Structure::Autoregressive).unwrap_err(),
        MixedError::LengthMismatch {
            expected: 10,
            found: 9,
            ..
        }
    ));
    times.times = Some((0..10).map(|j| (j / 2) as f64).collect());
    assert!(matches!(
        run(&times, Structure::Autoregressive).unwrap_err(),
        MixedError::BadTimes { .. }
    ));
    times.times = Some(
        (0..10)
            .map(|j| if j == 3 { f64::NAN } else { j as f64 })
            .collect(),
    );
    assert!(matches!(
        run(&times, Structure::Autoregressive).unwrap_err(),
        MixedError::BadTimes { .. }
    ));
    let mut huge = layout(&s);
    huge.occasions = usize::MAX;
    assert!(matches!(
        run(&huge, Structure::Unstructured).unwrap_err(),
        MixedError::TooLarge { .. }
    ));
}

/// Days 0 and 9 never on the same subject: UN cannot estimate their
/// covariance and says so.
#[test]
fn occasions_never_together_are_refused_for_unstructured() {
    let s = sleepstudy();
    let keep: Vec<usize> = (0..s.y.len())
        .filter(|&i| {
            let even = s.subject[i].is_multiple_of(2);
            !(s.days[i] == 0 && even || s.days[i] == 9 && !even)
        })
        .collect();
    let t = Sleep {
        y: keep.iter().map(|&i| s.y[i]).collect(),
        days: keep.iter().map(|&i| s.days[i]).collect(),
        subject: keep.iter().map(|&i| s.subject[i]).collect(),
    };
    let err = mixed::fit_repeated(&t.y, &design(&t.days), &layout(&t), Structure::Unstructured)
        .unwrap_err();
    assert_eq!(
        err,
        MixedError::OccasionsNeverTogether {
            first: 0,
            second: 9
        }
    );
    // The two-parameter structures still fit.
    assert!(
        mixed::fit_repeated(
            &t.y,
            &design(&t.days),
            &layout(&t),
            Structure::Autoregressive
        )
        .is_ok()
    );
}

/// Compound symmetry allows a negative common covariance (spec 2.3.1):
/// on complete balanced data REML gives the ANOVA estimates
/// σ²ₛ = (MS_subject − MS_error)/k and σ² = MS_error even when the first is
/// negative, and F(occasion) = MS_occasion/MS_error on (n − 1)(k − 1) df.
/// The mean squares are computed here from the definitions (closed form).
#[test]
fn compound_symmetry_takes_a_negative_common_covariance() {
    // INVENTED: 6 subjects × 4 occasions with nearly equal subject means.
    let table = [
        [10.0, 12.9, 11.1, 14.0],
        [11.9, 11.0, 13.8, 11.3],
        [10.4, 13.2, 12.0, 12.6],
        [12.6, 11.3, 12.4, 12.1],
        [11.1, 12.2, 13.0, 12.3],
        [12.3, 12.5, 11.2, 12.8],
    ];
    let (n, k) = (6usize, 4usize);
    let (mut y, mut subject, mut occasion) = (vec![], vec![], vec![]);
    for (s, row) in table.iter().enumerate() {
        for (o, v) in row.iter().enumerate() {
            y.push(*v);
            subject.push(s);
            occasion.push(o);
        }
    }
    let grand = y.iter().sum::<f64>() / (n * k) as f64;
    let row_mean = |s: usize| table[s].iter().sum::<f64>() / k as f64;
    let col_mean = |o: usize| table.iter().map(|r| r[o]).sum::<f64>() / n as f64;
    let ss_subject: f64 = (0..n)
        .map(|s| k as f64 * (row_mean(s) - grand).powi(2))
        .sum();
    let ss_occasion: f64 = (0..k)
        .map(|o| n as f64 * (col_mean(o) - grand).powi(2))
        .sum();
    let ss_total: f64 = y.iter().map(|v| (v - grand).powi(2)).sum();
    let df_error = ((n - 1) * (k - 1)) as f64;
    let ms_error = (ss_total - ss_subject - ss_occasion) / df_error;
    let ms_subject = ss_subject / (n - 1) as f64;
    let expected_cov = (ms_subject - ms_error) / k as f64;
    assert!(
        expected_cov < 0.0,
        "the invented data must give a negative estimate"
    );
    let d = FixedDesign::new(
        &Layout {
            levels: vec![k],
            rows: occasion.iter().map(|o| vec![*o]).collect(),
        },
        &[vec![0]],
    );
    let lay = RepeatedLayout {
        subjects: n,
        subject_of: subject,
        occasions: k,
        occasion_of: occasion,
        times: None,
    };
    let f = mixed::fit_repeated(&y, &d, &lay, Structure::CompoundSymmetry).unwrap();
    close(
        f.parameters[0].value,
        expected_cov,
        1e-8,
        "negative common covariance",
    );
    close(
        f.parameters[1].value,
        ms_error,
        1e-8,
        "CS residual = MS error",
    );
    let t = f.fixed.type3(&d, 0, Ddf::KenwardRoger).unwrap();
    close(
        t.f,
        ss_occasion / (k - 1) as f64 / ms_error,
        1e-8,
        "CS F = univariate F",
    );
    close(t.df_den, df_error, 1e-8, "CS KR df");
}
