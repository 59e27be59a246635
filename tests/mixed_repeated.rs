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
    self, Ddf, FixedDesign, Information, RepeatedFit, RepeatedLayout, Structure,
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
        f.iterations, f.max_scaled_gradient
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
        f.criterion_as_fitted,
        fitted,
        TIGHT,
        &format!("{what} d as fitted"),
    );
    close(
        f.criterion,
        invariant,
        TIGHT,
        &format!("{what} d invariant"),
    );
    close(f.aic, aic - ln_xtx, TIGHT, &format!("{what} AIC"));
    close(
        f.bic,
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
        let t = f.type3(&d, 0, method).unwrap();
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
        .wald(&l, Ddf::Satterthwaite(Information::Observed))
        .unwrap();
    close(sat.f, 4.92007106078, TIGHT, "AR(1) Wald F");
    close(sat.df_den, 133.868330666, TIGHT, "AR(1) Satterthwaite df");
    // spec 9.4 C: KR df 148.969021233, λ 0.997812081623; F with Rᵢⱼ
    // (parameters (σ², ρ)) 4.77419427397, without 4.90930634689
    let kr = f.wald(&l, Ddf::KenwardRoger).unwrap();
    close(kr.df_den, 148.969021233, TIGHT, "AR(1) KR df");
    close(kr.lambda, 0.997812081623, TIGHT, "AR(1) KR lambda");
    close(kr.f, 4.77419427397, TIGHT, "AR(1) KR F with R_ij");
    let first = f.wald_first_order(&l).unwrap();
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
        .wald(&l, Ddf::Satterthwaite(Information::Observed))
        .unwrap();
    close(sat.f, 10.6975314822, TIGHT, "UN Wald F");
    close(sat.df_den, 17.0, TIGHT, "UN Satterthwaite df");
    // spec 9.4 C: KR 5.66339902 on 9 (λ 9/17), p 0.0082517245231 (numpy)
    let kr = f.wald(&l, Ddf::KenwardRoger).unwrap();
    close(kr.f, 5.66339902, TIGHT, "UN KR F = Hotelling");
    close(kr.df_den, 9.0, TIGHT, "UN KR df");
    close(kr.lambda, 9.0 / 17.0, TIGHT, "UN KR lambda");
    close(kr.p_value, 0.0082517245231, 1e-6, "UN KR p");
    assert_eq!(f.parameters.len(), 55);
}
