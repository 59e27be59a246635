//! The cross-products W'W of W = [Z X y], the only data a variance-component
//! fit needs (Henderson's mixed-model equations): once they are formed, every
//! evaluation costs O((q + p)³) whatever the number of observations.

use std::ops::Range;

use nalgebra::DMatrix;

use super::design::{FixedDesign, RandomTerm};
use super::error::MixedError;

/// W'W with W = [Z₁ … Z_J, X, y − ȳ]; Z never formed (indicators).
#[derive(Debug, Clone)]
pub(crate) struct CrossProducts {
    pub n: usize,
    pub q: usize,
    pub p: usize,
    /// Each random term's columns among the first q.
    pub blocks: Vec<Range<usize>>,
    pub ww: DMatrix<f64>,
    /// ln|X'X| (for the coding-invariant criterion).
    pub ln_det_xtx: f64,
    /// The mean subtracted from y (added back to the intercept; 0 without one).
    pub y_mean: f64,
}

impl CrossProducts {
    pub fn new(y: &[f64], fixed: &FixedDesign, random: &[RandomTerm]) -> Result<Self, MixedError> {
        let n = y.len();
        check_lengths(n, fixed, random)?;
        let mut blocks = Vec::with_capacity(random.len());
        let mut q = 0;
        for t in random {
            blocks.push(q..q + t.levels);
            q += t.levels;
        }
        let p = fixed.rank();
        // Centring y keeps y'y small against what is subtracted from it; it
        // only shifts the intercept, so it is done only when there is one.
        let has_intercept = fixed
            .columns
            .first()
            .is_some_and(|c| c.iter().all(|v| *v == 1.0));
        let y_mean = if has_intercept {
            y.iter().sum::<f64>() / n as f64
        } else {
            0.0
        };
        let dim = q + p + 1;
        let mut ww = DMatrix::<f64>::zeros(dim, dim);
        let mut row = vec![0.0; p + 1];
        let mut z_index = vec![0usize; random.len()];
        for i in 0..n {
            for (c, col) in fixed.columns.iter().enumerate() {
                row[c] = col[i];
            }
            row[p] = y[i] - y_mean;
            for (k, t) in random.iter().enumerate() {
                z_index[k] = blocks[k].start + t.level_of[i];
            }
            accumulate(&mut ww, q, &row, &z_index);
        }
        // Mirror the upper triangle filled above.
        for a in 0..dim {
            for b in 0..a {
                ww[(a, b)] = ww[(b, a)];
            }
        }
        let xtx = ww.view((q, q), (p, p)).clone_owned();
        let ln_det_xtx = xtx
            .cholesky()
            .map(|c| 2.0 * c.l().diagonal().iter().map(|v| v.ln()).sum::<f64>())
            .ok_or(MixedError::Singular {
                what: "the fixed-effects design X'X",
            })?;
        Ok(Self {
            n,
            q,
            p,
            blocks,
            ww,
            ln_det_xtx,
            y_mean,
        })
    }

    /// Index of the response column in W.
    pub fn y_index(&self) -> usize {
        self.q + self.p
    }
}

/// Adds one observation's contribution to the upper triangle of W'W.
fn accumulate(ww: &mut DMatrix<f64>, q: usize, row: &[f64], z_index: &[usize]) {
    for (a, &za) in z_index.iter().enumerate() {
        for &zb in &z_index[a..] {
            let (lo, hi) = (za.min(zb), za.max(zb));
            ww[(lo, hi)] += 1.0;
        }
        for (c, v) in row.iter().enumerate() {
            ww[(za, q + c)] += v;
        }
    }
    for (a, va) in row.iter().enumerate() {
        for (b, vb) in row.iter().enumerate().skip(a) {
            ww[(q + a, q + b)] += va * vb;
        }
    }
}

fn check_lengths(n: usize, fixed: &FixedDesign, random: &[RandomTerm]) -> Result<(), MixedError> {
    if fixed.rows() != n {
        return Err(MixedError::LengthMismatch {
            what: "the fixed-effects design".into(),
            expected: n,
            found: fixed.rows(),
        });
    }
    for t in random {
        if t.level_of.len() != n {
            return Err(MixedError::LengthMismatch {
                what: format!("random term '{}'", t.name),
                expected: n,
                found: t.level_of.len(),
            });
        }
        if let Some((row, &level)) = t.level_of.iter().enumerate().find(|(_, l)| **l >= t.levels) {
            return Err(MixedError::LevelOutOfRange {
                term: t.name.clone(),
                row,
                level,
                levels: t.levels,
            });
        }
    }
    Ok(())
}
