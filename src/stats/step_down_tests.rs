//! Unit tests for `stats::step_down`.
//!
//! References: tests/reference/dose_ranks.json (statsmodels
//! `jonckheere_terpstra` on each S_j, the exact p from the q-multinomial in
//! Python integers, statsmodels OLS `t_test` for the ordinal contrast on
//! the groups in S_j) and linear-extensions.md E.5.

use super::*;
use crate::stats::jonckheere::tests::{close, number, promelas, reference};

fn run(test: TrendTest) -> StepDown {
    let data = promelas();
    let groups: Vec<&[f64]> = data.iter().map(|g| g.as_slice()).collect();
    step_down(&groups, test, Direction::Decrease, 0.05).unwrap()
}

#[test]
fn jonckheere_steps_match_the_reference() {
    // 1e-10 for the closed forms (measured 2.1e-15), 1e-12 for the exact p
    // (measured 9e-16); see jonckheere_tests.rs.
    let s = run(TrendTest::Jonckheere);
    let r = reference();
    for step in r["jonckheere"]["steps"].as_array().unwrap() {
        let doses = step["doses"].as_u64().unwrap() as usize;
        let got = &s.steps[doses - 1];
        assert_eq!(got.doses, doses);
        assert_eq!(got.statistic, number(&step["j"]));
        close(got.z.unwrap(), number(&step["z"]), 1e-10, "z");
        close(got.p_normal, number(&step["p_normal"]), 1e-10, "normal p");
        close(got.p, number(&step["p_exact"]), 1e-12, "exact p");
        assert!(got.exact);
    }
}

#[test]
fn jonckheere_step_down_gives_loec_128() {
    // E.5: J = 36, 34, 28, 16 with exact p 2.80774538741e-06,
    // 0.000867879862042, 0.0339319410748, 0.140404040404 → stop at 64 µg/L.
    let s = run(TrendTest::Jonckheere);
    let printed = [
        (5, 2.80774538741e-06),
        (4, 0.000867879862042),
        (3, 0.0339319410748),
        (2, 0.140404040404),
    ];
    for (doses, p) in printed {
        close(s.steps[doses - 1].p, p, 5e-12, "printed exact p");
        assert!(s.steps[doses - 1].tested);
    }
    let declared: Vec<bool> = s.steps.iter().map(|t| t.significant).collect();
    assert_eq!(declared, [false, false, true, true, true]);
    assert!(!s.steps[0].tested);
    assert_eq!(
        s.finding,
        Finding::Effect {
            loec: 2,
            noec: Some(1)
        }
    );
}

#[test]
fn ordinal_contrast_steps_match_statsmodels() {
    // statsmodels OLS t_test on the groups in S_j: same formulas, 1e-10
    // (measured 2.9e-15 for t, 1.7e-12 for p through the t tail).
    let s = run(TrendTest::OrdinalContrast);
    let r = reference();
    for step in r["ordinal"].as_array().unwrap() {
        let doses = step["doses"].as_u64().unwrap() as usize;
        let got = &s.steps[doses - 1];
        close(got.statistic, number(&step["t"]), 1e-10, "t");
        assert_eq!(got.df, Some(number(&step["df"])));
        close(got.p, number(&step["p"]), 1e-10, "p");
    }
    // E.5 printed values (12 digits): t = −6.42254836092 on 18 df, …,
    // −1.4451758299 on 9 df (p 0.0911554058731) → the same LOEC 128.
    close(s.steps[4].statistic, -6.42254836092, 5e-12, "t S_5");
    close(s.steps[4].p, 2.39961764769e-06, 5e-12, "p S_5");
    close(s.steps[1].statistic, -1.4451758299, 5e-12, "t S_2");
    close(s.steps[1].p, 0.0911554058731, 5e-12, "p S_2");
    assert_eq!(
        s.finding,
        Finding::Effect {
            loec: 2,
            noec: Some(1)
        }
    );
}

#[test]
fn every_step_significant_puts_the_noec_below_the_lowest_dose() {
    let groups: [&[f64]; 3] = [
        &[10.0, 11.0, 12.0, 13.0],
        &[5.0, 6.0, 7.0, 8.0],
        &[1.0, 2.0, 3.0, 4.0],
    ];
    let s = step_down(&groups, TrendTest::Jonckheere, Direction::Decrease, 0.05).unwrap();
    assert!(s.steps.iter().all(|t| t.tested && t.significant));
    assert_eq!(
        s.finding,
        Finding::Effect {
            loec: 0,
            noec: None
        }
    );
    // The same data read for an increase: nothing, and only the top tested.
    let s = step_down(
        &groups,
        TrendTest::OrdinalContrast,
        Direction::Increase,
        0.05,
    )
    .unwrap();
    assert_eq!(s.finding, Finding::NoEffect);
    assert!(s.steps[1].tested && !s.steps[0].tested);
}

#[test]
fn bad_input_gives_none() {
    let ok: &[f64] = &[1.0, 2.0];
    assert!(step_down(&[ok], TrendTest::Jonckheere, Direction::Decrease, 0.05).is_none());
    assert!(step_down(&[ok, &[]], TrendTest::Jonckheere, Direction::Decrease, 0.05).is_none());
    assert!(
        step_down(
            &[ok, &[f64::NAN]],
            TrendTest::Jonckheere,
            Direction::Decrease,
            0.05
        )
        .is_none()
    );
    assert!(step_down(&[ok, ok], TrendTest::Jonckheere, Direction::Decrease, 0.0).is_none());
    // One value per group leaves the contrast no residual df.
    assert!(
        step_down(
            &[&[1.0], &[2.0]],
            TrendTest::OrdinalContrast,
            Direction::Decrease,
            0.05
        )
        .is_none()
    );
}
