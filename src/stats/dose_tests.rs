use super::*;

// The readings below are the definitions of OECD 2006 (from memory) applied
// to the P.promelas decisions of linear-extensions.md E.5.

#[test]
fn dunnett_decisions_give_loec_256_noec_128() {
    // Doses 32, 64, 128, 256, 512: Dunnett one-sided declares 256 and 512.
    let f = Finding::many_to_one(&[false, false, false, true, true]);
    assert_eq!(
        f,
        Finding::Effect {
            loec: 3,
            noec: Some(2)
        }
    );
}

#[test]
fn williams_steps_give_loec_128_noec_64() {
    // Step-down declares 512, 256, 128 and stops at 64.
    let f = Finding::step_down(&[false, false, true, true, true]);
    assert_eq!(
        f,
        Finding::Effect {
            loec: 2,
            noec: Some(1)
        }
    );
}

#[test]
fn step_down_ignores_a_declaration_below_the_stop() {
    // Testing stops at the first non-significant dose from the top, so a
    // lower dose can never be declared: a `true` there is not an effect.
    let f = Finding::step_down(&[true, false, true]);
    assert_eq!(
        f,
        Finding::Effect {
            loec: 2,
            noec: Some(1)
        }
    );
}

#[test]
fn every_dose_declared_leaves_no_tested_noec() {
    assert_eq!(
        Finding::step_down(&[true, true]),
        Finding::Effect {
            loec: 0,
            noec: None
        }
    );
    assert_eq!(Finding::many_to_one(&[false, false]), Finding::NoEffect);
    assert_eq!(Finding::step_down(&[true, false]), Finding::NoEffect);
}

#[test]
fn direction_sign_makes_the_tested_effect_positive() {
    assert_eq!(
        Direction::Decrease.sign() * (0.471 - 0.6805),
        0.6805 - 0.471
    );
    assert_eq!(Direction::Increase.key(), "increase");
}
