//! Refusals and properties of the repeated-measures analysis on invented data.

use super::*;

/// INVENTED: 8 subjects × occasions of `within` (first factor slowest), a
/// deterministic irregular pattern so no covariance is degenerate.
fn invented(subjects: usize, occasions: usize) -> Vec<Vec<f64>> {
    (0..subjects)
        .map(|s| {
            (0..occasions)
                .map(|o| {
                    let (s, o) = (s as f64, o as f64);
                    10.0 + s * 0.7
                        + o * 1.3
                        + ((s + 1.0) * (o + 2.0) * 0.913).sin() * 2.0
                        + ((s * 3.0 + o * o) * 0.37).cos()
                })
                .collect()
        })
        .collect()
}

fn groups(of: &[usize], levels: usize) -> BetweenTerm {
    BetweenTerm {
        levels,
        level_of: of.to_vec(),
    }
}

fn run(
    responses: &[Vec<f64>],
    within: &[usize],
    between: &[BetweenTerm],
) -> Result<RepeatedAnalysis, RepeatedError> {
    analyse(&RepeatedInput {
        responses,
        within,
        between,
    })
}

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[test]
fn refuses_missing_or_degenerate_within_factors() {
    let y = invented(8, 4);
    assert_eq!(run(&y, &[], &[]), Err(RepeatedError::NoWithinFactor));
    assert_eq!(
        run(&y, &[4, 1], &[]),
        Err(RepeatedError::TooFewWithinLevels {
            factor: 1,
            levels: 1
        })
    );
    assert_eq!(
        run(&[], &[usize::MAX, 2], &[]),
        Err(RepeatedError::TooManyOccasions)
    );
}

#[test]
fn refuses_incomplete_subjects_and_non_finite_values() {
    let mut y = invented(8, 4);
    y[5].pop();
    assert_eq!(
        run(&y, &[4], &[]),
        Err(RepeatedError::NotRectangular {
            subject: 5,
            expected: 4,
            found: 3
        })
    );
    for bad in [f64::NAN, f64::INFINITY, f64::NEG_INFINITY] {
        let mut y = invented(8, 4);
        y[2][3] = bad;
        assert_eq!(
            run(&y, &[2, 2], &[]),
            Err(RepeatedError::NonFinite {
                subject: 2,
                occasion: 3
            })
        );
    }
}

#[test]
fn refuses_bad_between_terms() {
    let y = invented(8, 3);
    let of = [0, 0, 0, 1, 1, 1, 2, 2];
    assert_eq!(
        run(&y, &[3], &[groups(&of[..7], 3)]),
        Err(RepeatedError::TermLength {
            term: 0,
            expected: 8,
            found: 7
        })
    );
    assert_eq!(
        run(&y, &[3], &[groups(&of, 2)]),
        Err(RepeatedError::LevelOutOfRange {
            term: 0,
            subject: 6,
            level: 2,
            levels: 2
        })
    );
    // A group with no subject, including a level count far past the subjects
    // (refused without allocating for it).
    assert_eq!(
        run(&y, &[3], &[groups(&of, 4)]),
        Err(RepeatedError::EmptyLevel { term: 0, level: 3 })
    );
    assert_eq!(
        run(&y, &[3], &[groups(&of, usize::MAX)]),
        Err(RepeatedError::EmptyLevel { term: 0, level: 3 })
    );
    // One level, and a second term that only repeats the first.
    assert_eq!(
        run(&y, &[3], &[groups(&[0; 8], 1)]),
        Err(RepeatedError::AliasedTerm { term: 0 })
    );
    let relabelled = [2, 2, 2, 0, 0, 0, 1, 1];
    assert_eq!(
        run(&y, &[3], &[groups(&of, 3), groups(&relabelled, 3)]),
        Err(RepeatedError::AliasedTerm { term: 1 })
    );
}

#[test]
fn refuses_a_between_model_too_large_for_the_dense_basis() {
    let n = MAX_BETWEEN_COLUMNS;
    let y = invented(n, 2);
    let each_own: Vec<usize> = (0..n).collect();
    assert_eq!(
        run(&y, &[2], &[groups(&each_own, n)]),
        Err(RepeatedError::TooLarge {
            columns: n + 1,
            limit: n
        })
    );
}

#[test]
fn refuses_too_few_subjects() {
    // ν = 2 subjects − 1 = 1 ≤ p = 2 for a 3-level factor.
    assert_eq!(
        run(&invented(2, 3), &[3], &[]),
        Err(RepeatedError::TooFewSubjects {
            subjects: 2,
            residual_df: 1,
            contrasts: 2
        })
    );
    // ν = 3 = p: M could be inverted, but the HF denominator and the test need ν > p.
    assert_eq!(
        run(&invented(4, 4), &[4], &[]),
        Err(RepeatedError::TooFewSubjects {
            subjects: 4,
            residual_df: 3,
            contrasts: 3
        })
    );
    // Refused before the 2^60 occasions or their effects are laid out.
    assert_eq!(
        run(&[], &[2; 60], &[]),
        Err(RepeatedError::TooFewSubjects {
            subjects: 0,
            residual_df: 0,
            contrasts: 0
        })
    );
    assert_eq!(
        run(&[], &[2], &[]),
        Err(RepeatedError::TooFewSubjects {
            subjects: 0,
            residual_df: 0,
            contrasts: 0
        })
    );
    // Two occasions need only ν ≥ 1; two subjects in two groups leave none.
    assert_eq!(
        run(&invented(2, 2), &[2], &[groups(&[0, 1], 2)]),
        Err(RepeatedError::TooFewSubjects {
            subjects: 2,
            residual_df: 0,
            contrasts: 0
        })
    );
    // Groups cost df: 6 subjects in 3 groups leave ν = 3 ≤ p = 3.
    assert_eq!(
        run(&invented(6, 4), &[4], &[groups(&[0, 0, 1, 1, 2, 2], 3)]),
        Err(RepeatedError::TooFewSubjects {
            subjects: 6,
            residual_df: 3,
            contrasts: 3
        })
    );
}

#[test]
fn refuses_zero_error_singular_covariance_and_overflow() {
    // Every subject has the same profile shifted: no within-subject error.
    let profile = [1.0, 4.0, 2.0, 7.0];
    let shifted: Vec<Vec<f64>> = (0..6)
        .map(|s| profile.iter().map(|y| y + s as f64).collect())
        .collect();
    assert!(matches!(
        run(&shifted, &[4], &[]),
        Err(RepeatedError::NoResidualVariation { .. })
    ));
    // Subjects differ only by a multiple of one shape: the residual
    // covariance of the 3 contrasts has rank 1.
    let scaled: Vec<Vec<f64>> = (0..6)
        .map(|s| {
            profile
                .iter()
                .map(|y| y * (1.0 + 0.37 * s as f64))
                .collect()
        })
        .collect();
    assert_eq!(
        run(&scaled, &[4], &[]),
        Err(RepeatedError::SingularCovariance { effect: vec![0] })
    );
    let huge: Vec<Vec<f64>> = invented(6, 3)
        .iter()
        .map(|r| r.iter().map(|y| y * 1e300).collect())
        .collect();
    assert_eq!(run(&huge, &[3], &[]), Err(RepeatedError::Overflow));
}

/// Every refusal reads as a sentence naming 1-based positions.
#[test]
fn refusals_explain_themselves() {
    let message = RepeatedError::NonFinite {
        subject: 2,
        occasion: 3,
    }
    .to_string();
    assert!(
        message.contains("subject 3") && message.contains("occasion 4"),
        "{message}"
    );
    let message = RepeatedError::SingularCovariance { effect: vec![0, 1] }.to_string();
    assert!(message.contains("1 × 2"), "{message}");
}

/// With two occasions the within F is the square of the paired t statistic
/// (issue 16's property), sphericity holds trivially and every corrected p
/// is the uncorrected one.
#[test]
fn two_occasions_give_the_paired_t_squared() {
    let y = invented(9, 2);
    let a = run(&y, &[2], &[]).unwrap();
    let d: Vec<f64> = y.iter().map(|r| r[1] - r[0]).collect();
    let n = d.len() as f64;
    let mean = d.iter().sum::<f64>() / n;
    let var = d.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0);
    let t = mean / (var / n).sqrt();
    let effect = &a.within[0];
    assert!(rel(effect.effect.test.f, t * t) < 1e-12);
    assert_eq!(effect.sphericity, Sphericity::HoldsTrivially);
    assert_eq!(effect.epsilons, Epsilons::one());
    let p = effect.effect.test.p;
    assert!(rel(effect.effect.corrected.gg, p) < 1e-14);
    assert!(rel(effect.effect.corrected.hf, p) < 1e-14);
    assert!(rel(effect.effect.corrected.lower_bound, p) < 1e-14);
}

/// The lines partition the total sum of squares about the grand mean.
#[test]
fn sums_of_squares_add_up_to_the_total() {
    let y = invented(12, 6);
    let of = [0, 1, 2, 0, 1, 2, 0, 1, 2, 0, 1, 1];
    let blocks = [0, 0, 0, 1, 1, 1, 2, 2, 2, 3, 3, 3];
    let a = run(&y, &[2, 3], &[groups(&blocks, 4), groups(&of, 3)]).unwrap();
    let all: Vec<f64> = y.iter().flatten().copied().collect();
    let mean = all.iter().sum::<f64>() / all.len() as f64;
    let total: f64 = all.iter().map(|v| (v - mean).powi(2)).sum();
    let mut parts = a.between.error.ss + a.between.terms.iter().map(|t| t.ss).sum::<f64>();
    let mut df = a.between.error.df + a.between.terms.iter().map(|t| t.df).sum::<usize>();
    for e in &a.within {
        parts +=
            e.effect.test.ss + e.error.ss + e.by_between.iter().map(|l| l.test.ss).sum::<f64>();
        df += e.effect.test.df + e.error.df + e.by_between.iter().map(|l| l.test.df).sum::<usize>();
    }
    assert!(rel(parts, total) < 1e-12, "{parts} vs {total}");
    assert_eq!(df, 12 * 6 - 1);
    assert_eq!(a.residual_df, 12 - 1 - 3 - 2);
    let factors: Vec<Vec<usize>> = a.within.iter().map(|e| e.factors.clone()).collect();
    assert_eq!(factors, vec![vec![0], vec![1], vec![0, 1]]);
}

/// Shifting and scaling the responses, reordering the subjects and the
/// within factors leave F, p, ε and Mauchly's test unchanged. Tolerance
/// 1e-9: a shift of 1e6 leaves the inputs about 1e-10 of their spread (the
/// rounding of a value near 1e6), which the results inherit.
#[test]
fn invariant_to_shift_scale_and_order() {
    let y = invented(10, 6);
    let of = [0, 1, 0, 1, 0, 1, 0, 1, 1, 1];
    let base = run(&y, &[2, 3], &[groups(&of, 2)]).unwrap();
    let moved: Vec<Vec<f64>> = y
        .iter()
        .rev()
        .map(|r| r.iter().map(|v| 1e6 + 3.5 * v).collect())
        .collect();
    let of_rev: Vec<usize> = of.iter().rev().copied().collect();
    let other = run(&moved, &[2, 3], &[groups(&of_rev, 2)]).unwrap();
    // Occasions re-laid with the 3-level factor slowest.
    let swapped: Vec<Vec<f64>> = y
        .iter()
        .map(|r| (0..6).map(|o| r[(o % 2) * 3 + o / 2]).collect())
        .collect();
    let swap = run(&swapped, &[3, 2], &[groups(&of, 2)]).unwrap();
    let same = |a: &WithinEffect, b: &WithinEffect| {
        for (x, z) in [
            (a.effect.test.f, b.effect.test.f),
            (a.effect.test.p, b.effect.test.p),
            (a.by_between[0].test.f, b.by_between[0].test.f),
            (a.effect.corrected.gg, b.effect.corrected.gg),
            (a.epsilons.gg, b.epsilons.gg),
            (a.epsilons.hf_uncapped, b.epsilons.hf_uncapped),
        ] {
            assert!(rel(x, z) < 1e-9, "{x} vs {z}");
        }
        if let (Sphericity::Tested(s), Sphericity::Tested(t)) = (&a.sphericity, &b.sphericity) {
            assert!(rel(s.w, t.w) < 1e-9 && rel(s.chi_sq, t.chi_sq) < 1e-9);
        }
    };
    for (a, b) in base.within.iter().zip(&other.within) {
        same(a, b);
    }
    same(&base.within[0], &swap.within[1]);
    same(&base.within[1], &swap.within[0]);
    same(&base.within[2], &swap.within[2]);
    assert!(rel(base.between.terms[0].f, other.between.terms[0].f) < 1e-9);
}

/// The example of the module documentation (doc-tests are not run).
#[test]
fn the_module_example_holds() {
    let responses = vec![
        vec![10.0, 12.5, 15.0],
        vec![11.0, 12.0, 16.5],
        vec![9.5, 13.0, 14.0],
        vec![10.5, 14.0, 18.0],
        vec![12.0, 15.5, 19.5],
        vec![11.0, 13.5, 19.0],
    ];
    let diet = groups(&[0, 0, 0, 1, 1, 1], 2);
    let a = run(&responses, &[3], &[diet]).unwrap();
    let week = &a.within[0];
    assert_eq!((week.effect.test.df, week.error.df), (2, 8));
    assert!(matches!(week.sphericity, Sphericity::Tested(_)));
    // Box's bounds: 1/p ≤ ε̂ ≤ 1.
    assert!((0.5..=1.0).contains(&week.epsilons.gg));
}
