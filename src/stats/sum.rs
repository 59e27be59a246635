//! Compensated (Neumaier) summation: the running error of each addition is
//! carried separately, so long sums keep nearly full precision.

/// Neumaier's improvement of Kahan summation (Neumaier 1974, *ZAMM* 54:39-51).
#[derive(Debug, Clone, Copy, Default)]
pub struct NeumaierSum {
    sum: f64,
    compensation: f64,
}

impl NeumaierSum {
    pub const ZERO: NeumaierSum = NeumaierSum {
        sum: 0.0,
        compensation: 0.0,
    };

    pub fn add(&mut self, x: f64) {
        let t = self.sum + x;
        if self.sum.abs() >= x.abs() {
            self.compensation += (self.sum - t) + x;
        } else {
            self.compensation += (x - t) + self.sum;
        }
        self.sum = t;
    }

    pub fn value(&self) -> f64 {
        self.sum + self.compensation
    }
}

/// Compensated sum of an iterator.
pub fn neumaier(values: impl IntoIterator<Item = f64>) -> f64 {
    let mut s = NeumaierSum::default();
    for v in values {
        s.add(v);
    }
    s.value()
}

#[cfg(test)]
#[path = "sum_tests.rs"]
mod tests;
