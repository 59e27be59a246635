//! The standard normal cdf and density from a table, for integrands that call
//! them millions of times (the studentized range's inner integral).
//!
//! [−9, 9] is cut into steps of 1/32; on each, Φ is its Taylor polynomial of
//! degree 9 about the step's midpoint m, with the exact derivatives
//! Φ⁽ⁿ⁾(m) = (−1)ⁿ⁻¹·Heₙ₋₁(m)·φ(m) (Heₙ the probabilists' Hermite
//! polynomials). Every coefficient carries the factor φ(m), so the error is
//! relative even deep in the lower tail: there Φ(m + d)/Φ(m) behaves like
//! e^{−md}, and with |m·d| ≤ 9/64 the dropped terms are below
//! (9/64)¹⁰/10! ≈ 8e-16 of the value. What remains is rounding: a few ulps
//! of the value (times about 1 + x² far out, from the conditioning of Φ
//! itself). The density comes from the same polynomial's derivative. The
//! table is 576 steps of ten coefficients, 45 KiB, read in order by
//! quadrature sweeps.
//! Beyond ±9, Φ differs from 0 or 1 by less than 1.2e-19.
//! tests: stats::normal_table::tests compares it with `dist::normal_cdf`.

use super::dist::normal_cdf;
use std::sync::OnceLock;

const STEPS_PER_UNIT: f64 = 32.0;
const EDGE: f64 = 9.0;
/// The polynomials' degree; `cdf_and_pdf` spells out its ten terms.
const DEGREE: usize = 9;

/// Taylor coefficients cₙ = Φ⁽ⁿ⁾(m)/n! of one step, in increasing order.
#[derive(Clone, Copy)]
struct Step([f64; DEGREE + 1]);

/// Φ and φ on [−9, 9] by piecewise Taylor polynomials, built once.
#[derive(Clone, Copy)]
pub struct NormalTable(&'static [Step]);

impl NormalTable {
    pub fn get() -> NormalTable {
        static TABLE: OnceLock<Vec<Step>> = OnceLock::new();
        NormalTable(TABLE.get_or_init(|| {
            let steps = (2.0 * EDGE * STEPS_PER_UNIT) as usize;
            (0..steps)
                .map(|i| Step::taylor_at(-EDGE + (i as f64 + 0.5) / STEPS_PER_UNIT))
                .collect()
        }))
    }

    /// The step holding x (|x| < 9) and x's offset from its midpoint.
    #[inline(always)]
    fn locate(self, x: f64) -> (&'static Step, f64) {
        let position = (x + EDGE) * STEPS_PER_UNIT;
        // Truncation is the floor here: position is positive.
        let i = (position as usize).min(self.0.len() - 1);
        let offset = (position - i as f64 - 0.5) / STEPS_PER_UNIT;
        (&self.0[i], offset)
    }

    /// Φ(x), to within about two ulps.
    #[inline(always)]
    pub fn cdf(self, x: f64) -> f64 {
        self.cdf_and_pdf(x).0
    }

    /// 1 − Φ(x) = Φ(−x).
    #[inline(always)]
    pub fn sf(self, x: f64) -> f64 {
        self.cdf(-x)
    }

    /// φ(x), the derivative of the same polynomial (relative error a few
    /// ulps); 0 beyond ±9, where φ < 1.1e-18.
    #[inline(always)]
    pub fn pdf(self, x: f64) -> f64 {
        self.cdf_and_pdf(x).1
    }

    /// (Φ(x), φ(x)) from one look-up. Both polynomials are summed by
    /// Estrin's scheme, which shortens the chain of dependent operations
    /// that Horner's rule would make (the table is latency-bound).
    #[inline(always)]
    pub fn cdf_and_pdf(self, x: f64) -> (f64, f64) {
        if !(x > -EDGE && x < EDGE) {
            return if x.is_nan() {
                (f64::NAN, f64::NAN)
            } else if x > 0.0 {
                (1.0, 0.0)
            } else {
                (0.0, 0.0)
            };
        }
        let (step, d) = self.locate(x);
        let c = &step.0;
        let (d2, d4) = (d * d, d * d * d * d);
        let d8 = d4 * d4;
        let cdf = (c[0] + c[1] * d)
            + d2 * (c[2] + c[3] * d)
            + d4 * ((c[4] + c[5] * d) + d2 * (c[6] + c[7] * d))
            + d8 * (c[8] + c[9] * d);
        let pdf = (c[1] + 2.0 * c[2] * d)
            + d2 * (3.0 * c[3] + 4.0 * c[4] * d)
            + d4 * ((5.0 * c[5] + 6.0 * c[6] * d) + d2 * (7.0 * c[7] + 8.0 * c[8] * d))
            + d8 * (9.0 * c[9]);
        (cdf, pdf)
    }

    /// (1 − Φ(x), φ(x)) from one look-up.
    #[inline(always)]
    pub fn sf_and_pdf(self, x: f64) -> (f64, f64) {
        self.cdf_and_pdf(-x)
    }
}

impl Step {
    fn taylor_at(m: f64) -> Step {
        let density = (-0.5 * m * m).exp() / (2.0 * std::f64::consts::PI).sqrt();
        let mut c = [0.0; DEGREE + 1];
        c[0] = normal_cdf(m);
        // Heⱼ(m) by He₀ = 1, He₁ = m, Heⱼ₊₁ = m·Heⱼ − j·Heⱼ₋₁; then
        // cₙ = (−1)ⁿ⁻¹·Heₙ₋₁(m)·φ(m)/n!.
        let (mut previous, mut current) = (0.0, 1.0);
        let mut factorial = 1.0;
        for (n, slot) in c.iter_mut().enumerate().skip(1) {
            factorial *= n as f64;
            let sign = if n % 2 == 1 { 1.0 } else { -1.0 };
            *slot = sign * current * density / factorial;
            let j = (n - 1) as f64;
            (previous, current) = (current, m * current - j * previous);
        }
        Step(c)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::dist::normal_sf;

    #[test]
    fn the_table_matches_the_direct_cdf() {
        // Reference: erfc from the libm crate (a port of FreeBSD's msun,
        // accurate to about 1 ulp). Absolute bound: near Φ = 1 one ulp is
        // 1.1e-16, and the Horner sum rounds to about two. Relative bound in
        // the lower tail (x < 0): a few ulps times 1 + x², because rounding
        // the argument x/√2 by an ulp moves Φ(x) by about x² ulps there, in
        // the reference as in the table's own Φ(m).
        let table = NormalTable::get();
        let (mut absolute, mut relative): (f64, f64) = (0.0, 0.0);
        for i in 0..=400_000 {
            let x = -10.0 + i as f64 * 5e-5 + 1.3e-7;
            absolute = absolute.max((table.cdf(x) - normal_cdf(x)).abs());
            absolute = absolute.max((table.sf(x) - normal_sf(x)).abs());
            if x < 0.0 && x > -EDGE {
                let scaled = (table.cdf(x) / normal_cdf(x) - 1.0).abs() / (1.0 + x * x);
                relative = relative.max(scaled);
            }
        }
        assert!(absolute < 4e-16, "worst absolute error {absolute:e}");
        assert!(
            relative < 8e-16,
            "worst relative error / (1 + x²) below 0: {relative:e}"
        );
    }

    #[test]
    fn the_density_matches_the_direct_formula() {
        // Reference: φ(x) = exp(−x²/2)/√(2π) with the standard library's exp
        // (within an ulp). Relative bound a few ulps times 1 + x²: rounding
        // x²/2 by one ulp moves φ by about x²/2 ulps, in the reference as in
        // the table's own φ(m).
        let table = NormalTable::get();
        let (mut absolute, mut relative): (f64, f64) = (0.0, 0.0);
        for i in 0..=200_000 {
            let x = -8.9 + i as f64 * 8.9e-5 + 1.1e-7;
            let direct = (-0.5 * x * x).exp() / (2.0 * std::f64::consts::PI).sqrt();
            absolute = absolute.max((table.pdf(x) - direct).abs());
            if x.abs() < 8.0 {
                relative = relative.max((table.pdf(x) / direct - 1.0).abs() / (1.0 + x * x));
            }
        }
        assert!(absolute < 4e-16, "worst absolute error {absolute:e}");
        assert!(
            relative < 1e-15,
            "worst relative error / (1 + x²): {relative:e}"
        );
        assert_eq!(table.pdf(9.5), 0.0);
        assert_eq!(table.pdf(-12.0), 0.0);
    }
}
