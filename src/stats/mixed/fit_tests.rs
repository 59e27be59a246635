//! Properties and refusals of the REML fit on invented data.

use super::*;
use crate::stats::linear::Layout;
use crate::stats::mixed::components::tests::invented;
use crate::stats::mixed::{Ddf, Information};

/// An invented layout whose batch term has exactly equal batch means after
/// the treatments (each batch's deviations are a permutation of the same
/// three numbers), so REML puts the batch variance on its bound.
fn equal_batch_means() -> (Vec<f64>, FixedDesign, RandomTerm) {
    let deviations = [
        [-1.2, 0.3, 0.9],
        [0.9, -1.2, 0.3],
        [0.3, 0.9, -1.2],
        [-1.2, 0.9, 0.3],
        [0.3, -1.2, 0.9],
    ];
    let means = [10.0, 12.5, 11.0];
    let mut y = Vec::new();
    let mut rows = Vec::new();
    let mut batch = Vec::new();
    for (b, dev) in deviations.iter().enumerate() {
        for (t, d) in dev.iter().enumerate() {
            y.push(means[t] + d);
            rows.push(vec![t]);
            batch.push(b);
        }
    }
    let design = FixedDesign::new(
        &Layout {
            levels: vec![3],
            rows,
        },
        &[vec![0]],
    );
    (
        y,
        design,
        RandomTerm {
            name: "batch".into(),
            levels: 5,
            level_of: batch,
        },
    )
}

/// mixed-models spec 9.6 item 1: a random term estimated at 0 changes
/// nothing (it is dropped from ψ for the df, spec 2.5).
#[test]
fn a_zero_variance_term_changes_nothing() {
    let (y, design, batch) = equal_batch_means();
    let with = fit(&y, &design, &[batch]).unwrap();
    let without = fit(&y, &design, &[]).unwrap();
    assert_eq!(with.components[0].variance, 0.0);
    assert!(with.components[0].on_boundary);
    let rel = |a: f64, b: f64| ((a - b) / b).abs();
    assert!(rel(with.components[1].variance, without.components[0].variance) < 1e-12);
    assert!(rel(with.statistics.criterion, without.statistics.criterion) < 1e-12);
    for method in [Ddf::KenwardRoger, Ddf::Satterthwaite(Information::Observed)] {
        let a = with.fixed.type3(&design, 0, method).unwrap();
        let b = without.fixed.type3(&design, 0, method).unwrap();
        assert!(
            rel(a.f, b.f) < 1e-12 && rel(a.df_den, b.df_den) < 1e-12,
            "{a:?} vs {b:?}"
        );
        // Residual only: the df are N − p = 12 (common practice).
        assert!(rel(b.df_den, 12.0) < 1e-9, "{b:?}");
    }
    // The profile interval of a component at 0 starts at 0.
    let ci = with.profile_intervals(0.95).unwrap();
    assert_eq!(ci[0].lower, 0.0);
    assert!(ci[0].upper > 0.0);
}

#[test]
fn a_term_with_one_observation_per_level_is_refused_by_name() {
    let (y, design, _) = equal_batch_means();
    let unit = RandomTerm {
        name: "plot".into(),
        levels: y.len(),
        level_of: (0..y.len()).collect(),
    };
    let err = fit(&y, &design, &[unit]).unwrap_err();
    assert_eq!(
        err,
        MixedError::DuplicatesResidual {
            term: "plot".into()
        }
    );
    assert!(err.to_string().contains("'plot'"));
}

#[test]
fn two_identical_terms_are_not_identified() {
    let (y, design, random) = invented();
    let twin = RandomTerm {
        name: "block again".into(),
        ..random[0].clone()
    };
    let err = fit(&y, &design, &[random[0].clone(), twin]).unwrap_err();
    assert_eq!(
        err,
        MixedError::SameGrouping {
            first: random[0].name.clone(),
            second: "block again".into()
        }
    );
    // Relabelled levels group the observations alike all the same.
    let relabelled = RandomTerm {
        name: "block relabelled".into(),
        levels: random[0].levels + 2,
        level_of: random[0]
            .level_of
            .iter()
            .map(|l| random[0].levels + 1 - l)
            .collect(),
    };
    let err = fit(&y, &design, &[random[0].clone(), relabelled]).unwrap_err();
    assert!(matches!(err, MixedError::SameGrouping { .. }), "{err:?}");
    // Plots nested in blocks are a different grouping, and are fitted.
    assert!(fit(&y, &design, &random).is_ok());
}

#[test]
fn bad_input_is_refused_with_sizes() {
    let (mut y, design, random) = invented();
    let too_many = RandomTerm {
        name: "huge".into(),
        levels: MAX_RANDOM_LEVELS + 1,
        level_of: random[0].level_of.clone(),
    };
    let err = fit(&y, &design, &[too_many]).unwrap_err();
    assert!(
        err.to_string()
            .contains(&format!("{}", MAX_RANDOM_LEVELS + 1)),
        "{err}"
    );
    let mut wrong = random[0].clone();
    wrong.level_of[3] = 9;
    assert!(matches!(
        fit(&y, &design, &[wrong]),
        Err(MixedError::LevelOutOfRange { row: 3, .. })
    ));
    let mut short = random[0].clone();
    short.level_of.pop();
    assert!(matches!(
        fit(&y, &design, &[short]),
        Err(MixedError::LengthMismatch { .. })
    ));
    y[2] = f64::NAN;
    assert_eq!(
        fit(&y, &design, &random).unwrap_err(),
        MixedError::NonFiniteResponse { row: 2 }
    );
}

#[test]
fn the_fit_is_reproducible_and_converges_with_a_small_gradient() {
    let (y, design, random) = invented();
    let a = fit(&y, &design, &random).unwrap();
    let b = fit(&y, &design, &random).unwrap();
    assert_eq!(a.components, b.components);
    assert_eq!(a.fixed.beta, b.fixed.beta);
    assert!(a.statistics.converged && a.statistics.iterations <= optimiser::MAX_ITERATIONS);
    assert!(a.statistics.max_scaled_gradient <= 1e-6);
}

/// Invented unbalanced data with block and plot effects of the given sizes
/// (relative to unit residual noise), from a fixed pseudo-random sequence.
fn scaled_effects(block_sd: f64, plot_sd: f64) -> (Vec<f64>, FixedDesign, Vec<RandomTerm>) {
    let mut state = 12_345u64;
    let mut noise = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (0..4)
            .map(|k| ((state >> (8 + 12 * k)) & 0xfff) as f64 / 4096.0 - 0.5)
            .sum::<f64>()
            * 1.7
    };
    let (mut y, mut rows, mut block, mut plot) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for b in 0..6 {
        let be = block_sd * noise();
        for t in 0..3 {
            let pe = plot_sd * noise();
            for s in 0..(1 + (b * 3 + t) % 4) {
                y.push(20.0 + t as f64 + be + pe + noise());
                rows.push(vec![t, s % 2]);
                block.push(b);
                plot.push(b * 3 + t);
            }
        }
    }
    let design = FixedDesign::new(
        &Layout {
            levels: vec![3, 2],
            rows,
        },
        &[vec![0], vec![1]],
    );
    let random = vec![
        RandomTerm {
            name: "block".into(),
            levels: 6,
            level_of: block,
        },
        RandomTerm {
            name: "plot".into(),
            levels: 18,
            level_of: plot,
        },
    ];
    (y, design, random)
}

#[test]
fn converges_from_the_fixed_start_over_a_range_of_component_sizes() {
    for block_sd in [0.0, 0.05, 1.0, 30.0] {
        for plot_sd in [0.0, 0.3, 3.0, 100.0] {
            let (y, design, random) = scaled_effects(block_sd, plot_sd);
            let fit =
                fit(&y, &design, &random).unwrap_or_else(|e| panic!("{block_sd} {plot_sd}: {e}"));
            assert!(
                fit.statistics.max_scaled_gradient <= 1e-6,
                "{block_sd} {plot_sd}"
            );
            assert!(fit.components.iter().all(|c| c.variance >= 0.0));
            let test = fit.fixed.type3(&design, 0, Ddf::KenwardRoger).unwrap();
            assert!(
                test.df_den > 0.0 && test.p_value >= 0.0 && test.p_value <= 1.0,
                "{test:?}"
            );
        }
    }
}

#[test]
fn a_design_without_intercept_keeps_its_coefficients() {
    // Cell-means coding (one indicator per treatment, no intercept): with
    // every batch holding each treatment once, β̂ are the treatment means.
    let (y, _, batch) = equal_batch_means();
    let indicators: Vec<Vec<f64>> = (0..3)
        .map(|t| {
            (0..y.len())
                .map(|i| f64::from(u8::from(i % 3 == t)))
                .collect()
        })
        .collect();
    let design = FixedDesign::from_columns(indicators, std::iter::once(0..3).collect());
    let fit = fit(&y, &design, &[batch]).unwrap();
    let means: Vec<f64> = (0..3)
        .map(|t| (0..5).map(|b| y[3 * b + t]).sum::<f64>() / 5.0)
        .collect();
    for (b, m) in fit.fixed.beta.iter().zip(&means) {
        assert!((b - m).abs() < 1e-10, "{b} vs {m}");
    }
}
