//! What the dose-response procedures share: the direction of the effect
//! looked for, and the NOEC/LOEC reading of a procedure's decisions.
//!
//! Doses are indexed from 0 (the lowest dose) to k − 1 (the highest); the
//! control is not a dose. The NOEC is the highest tested dose with no
//! significant effect below the LOEC, the lowest dose with one (OECD 2006,
//! Series on Testing and Assessment No. 54; from memory).

use serde::{Deserialize, Serialize};

/// The direction of the effect a one-sided dose-response test looks for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Direction {
    /// The response falls as the dose rises (growth, survival).
    Decrease,
    /// The response rises with the dose (malformations, enzyme activity).
    Increase,
}

impl Direction {
    /// +1 for an increase, −1 for a decrease: multiplies a difference
    /// (dose − control) so that an effect in the tested direction is positive.
    pub fn sign(self) -> f64 {
        match self {
            Direction::Decrease => -1.0,
            Direction::Increase => 1.0,
        }
    }

    pub fn key(self) -> &'static str {
        match self {
            Direction::Decrease => "decrease",
            Direction::Increase => "increase",
        }
    }
}

/// The NOEC and LOEC a procedure's decisions give, as dose indexes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Finding {
    /// No dose differs from the control: the NOEC is at least the highest
    /// tested dose and there is no LOEC.
    NoEffect,
    /// `loec` is the lowest dose with an effect; `noec` the dose below it,
    /// `None` when the lowest tested dose already has one.
    Effect { loec: usize, noec: Option<usize> },
}

impl Finding {
    /// The reading of a many-to-one procedure (Dunnett, Steel): the LOEC is
    /// the lowest dose declared different from the control.
    pub fn many_to_one(significant: &[bool]) -> Finding {
        match significant.iter().position(|&s| s) {
            None => Finding::NoEffect,
            Some(loec) => Finding::Effect {
                loec,
                noec: loec.checked_sub(1),
            },
        }
    }

    /// The reading of a step-down procedure (Williams, trend tests): the
    /// doses are tested from the highest down and testing stops at the first
    /// dose not declared, so the declared doses are the highest ones in a
    /// run. `significant[i]` is the decision for dose i; doses after the
    /// stop are `false`.
    pub fn step_down(significant: &[bool]) -> Finding {
        let declared = significant.iter().rev().take_while(|&&s| s).count();
        if declared == 0 {
            return Finding::NoEffect;
        }
        let loec = significant.len() - declared;
        Finding::Effect {
            loec,
            noec: loec.checked_sub(1),
        }
    }
}

#[cfg(test)]
#[path = "dose_tests.rs"]
mod tests;
