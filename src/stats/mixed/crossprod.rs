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
        let mut sums = RowSums::new(q, p + 1);
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
            sums.add(&row, &z_index);
        }
        let ww = sums.into_symmetric();
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

/// The running sums of W'W, each block laid out so that one observation's
/// updates touch contiguous memory (the sums, and their order, are those of
/// adding into W'W directly).
struct RowSums {
    q: usize,
    /// Width of [X y].
    width: usize,
    /// W'W with Z'Z in its upper triangle (the rest filled at the end).
    ww: DMatrix<f64>,
    /// Z'[X y], row-major q×width.
    zr: Vec<f64>,
    /// [X y]'[X y], upper triangle, row-major width×width.
    rr: Vec<f64>,
}

impl RowSums {
    fn new(q: usize, width: usize) -> Self {
        Self {
            q,
            width,
            ww: DMatrix::zeros(q + width, q + width),
            zr: vec![0.0; q * width],
            rr: vec![0.0; width * width],
        }
    }

    /// Adds one observation: its [X y] row and its random columns.
    fn add(&mut self, row: &[f64], z_index: &[usize]) {
        let w = self.width;
        for (a, &za) in z_index.iter().enumerate() {
            for &zb in &z_index[a..] {
                let (lo, hi) = (za.min(zb), za.max(zb));
                self.ww[(lo, hi)] += 1.0;
            }
            for (s, v) in self.zr[za * w..(za + 1) * w].iter_mut().zip(row) {
                *s += v;
            }
        }
        for (a, va) in row.iter().enumerate() {
            let sums = &mut self.rr[a * w + a..(a + 1) * w];
            for (s, vb) in sums.iter_mut().zip(&row[a..]) {
                *s += va * vb;
            }
        }
    }

    /// The full symmetric W'W.
    fn into_symmetric(self) -> DMatrix<f64> {
        let (q, w, mut ww) = (self.q, self.width, self.ww);
        for b in 0..q {
            for a in 0..b {
                ww[(b, a)] = ww[(a, b)];
            }
            for c in 0..w {
                ww[(b, q + c)] = self.zr[b * w + c];
                ww[(q + c, b)] = self.zr[b * w + c];
            }
        }
        for a in 0..w {
            for b in a..w {
                ww[(q + a, q + b)] = self.rr[a * w + b];
                ww[(q + b, q + a)] = self.rr[a * w + b];
            }
        }
        ww
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
