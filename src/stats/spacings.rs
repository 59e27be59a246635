//! The exact joint tail of Mann-Whitney counts that share one control
//! sample, for continuous data (the exact form of Steel's many-to-one test,
//! linear-extensions.md E.3).
//!
//! Given the control, the counts are independent: a treatment value falls
//! in gap g (g control values below it) with probability D_g, where
//! D ~ Dirichlet(1, …, 1) are the n₀ + 1 spacings of n₀ uniform order
//! statistics. Uⱼ ≤ cⱼ needs every value of treatment j in a gap g ≤ cⱼ
//! with the gap indexes summing to at most cⱼ, so P(Uⱼ ≤ cⱼ | D) = Pⱼ(D) is
//! a polynomial in D₀…D_L (L = the largest cut-off, at most n₀). The gaps
//! above L enter only through their sum R, Dirichlet with weight n₀ − L,
//! and E[Π D_g^{a_g} R^b] = n₀!·Π a_g!·(n₀ − L)^{(b)} / (n₀ + Σa + b)!.
//!
//! P(some Uⱼ ≤ cⱼ) = Σᵢ E[Π_{j<i} Qⱼ(D) · Pᵢ(D)], Qⱼ = (ΣD + R)^{nⱼ} − Pⱼ:
//! every polynomial has positive coefficients, so the sum has no
//! cancellation and each term carries only the rounding of a few hundred
//! products at most (relative error below 1e-13). Measured against the
//! exact rationals of tests/reference/dose_ranks.json: at most 1.1e-14
//! relative on P.promelas, 6e-16 on the enumerated tiny designs, and
//! 7466897/133855722 of E.3 to the last bit.

use std::collections::HashMap;

/// Work (bound on monomial products) above which the computation is
/// refused. Measured in the test build (opt-level 1): a control of 4 and
/// five treatments of 5 at the central cut-off (U ≤ 12, bound 2e6) takes
/// 0.05 s, so the cap costs at most about 1.3 s per treatment there (less in
/// a release build). It admits the usual ecotoxicity layout, a control of 6
/// and doses of 4 (bound 2e7).
pub const SPACINGS_WORK_CAP: f64 = 5e7;

/// A polynomial in the spacings: (packed exponents, coefficient) terms.
type Polynomial = Vec<(u128, f64)>;

/// Monomials are packed 8 bits per variable into a u128: at most 16
/// variables (n₀ ≤ 14 with R) and total degree at most 255.
const MAX_VARIABLES: usize = 16;
/// Keeps the factorials of the moments inside f64 (170! is the largest).
const MAX_TOTAL_DEGREE: usize = 100;

/// P(Uⱼ ≤ cⱼ for some j) for treatments of `sizes` against a control of
/// `n0`, continuous data; a negative cut-off never triggers. `Err` says why
/// the work was refused.
pub fn any_count_at_most(n0: usize, sizes: &[usize], cutoffs: &[i64]) -> Result<f64, String> {
    let highest = cutoffs.iter().copied().max().unwrap_or(-1);
    if highest < 0 {
        return Ok(0.0);
    }
    let last_gap = (highest as usize).min(n0);
    let with_rest = last_gap < n0;
    let variables = last_gap + 1 + usize::from(with_rest);
    let total: usize = sizes.iter().sum();
    if variables > MAX_VARIABLES || total > MAX_TOTAL_DEGREE || n0 + total > 170 {
        return Err(format!(
            "the exact computation handles at most {} control values and {MAX_TOTAL_DEGREE} treatment values",
            MAX_VARIABLES - 2
        ));
    }
    let work = estimated_work(sizes, variables);
    if work > SPACINGS_WORK_CAP {
        return Err(format!(
            "the exact computation would need about {work:.1e} steps, above the cap of {SPACINGS_WORK_CAP:.0e}"
        ));
    }
    let space = Space::new(n0, last_gap, with_rest, total);
    let mut prefix: Polynomial = vec![(0, 1.0)];
    let mut p = 0.0;
    for (&n, &cutoff) in sizes.iter().zip(cutoffs) {
        let (hit, miss) = space.split(n, cutoff);
        p += space.expectation(&prefix, &hit);
        prefix = multiply(&prefix, &miss);
    }
    Ok(p.min(1.0))
}

/// An upper bound on the monomial products: the prefix before factor i has
/// at most C(deg + v − 1, v − 1) terms, the factor at most C(nᵢ + v − 1, v − 1).
fn estimated_work(sizes: &[usize], variables: usize) -> f64 {
    let monomials = |degree: usize| binomial(degree + variables - 1, variables - 1);
    let mut degree = 0;
    let mut work = 0.0;
    for &n in sizes {
        work += monomials(degree) * monomials(n);
        degree += n;
    }
    work
}

fn binomial(n: usize, k: usize) -> f64 {
    (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64)
}

/// The variables (gaps 0…L, then R) and the moments of the spacings.
struct Space {
    n0: usize,
    gaps: usize,
    with_rest: bool,
    factorial: Vec<f64>,
}

impl Space {
    fn new(n0: usize, last_gap: usize, with_rest: bool, total: usize) -> Space {
        let mut factorial = vec![1.0; n0 + total + 1];
        for k in 1..factorial.len() {
            factorial[k] = factorial[k - 1] * k as f64;
        }
        Space {
            n0,
            gaps: last_gap + 1,
            with_rest,
            factorial,
        }
    }

    fn variables(&self) -> usize {
        self.gaps + usize::from(self.with_rest)
    }

    /// The terms of (ΣD + R)^n with their multinomial coefficients, split
    /// into those of P(U ≤ cutoff | D) and the rest.
    fn split(&self, n: usize, cutoff: i64) -> (Polynomial, Polynomial) {
        let (mut hit, mut miss) = (Vec::new(), Vec::new());
        let mut counts = vec![0u8; self.variables()];
        self.compositions(n, 0, &mut counts, &mut |c| {
            let rest = if self.with_rest { c[self.gaps] } else { 0 };
            let sum: i64 = (0..self.gaps).map(|g| g as i64 * i64::from(c[g])).sum();
            let coefficient = c.iter().fold(self.factorial[n], |acc, &k| {
                acc / self.factorial[k as usize]
            });
            let term = (pack(c), coefficient);
            if rest == 0 && sum <= cutoff {
                hit.push(term);
            } else {
                miss.push(term);
            }
        });
        (hit, miss)
    }

    fn compositions(
        &self,
        left: usize,
        at: usize,
        counts: &mut [u8],
        visit: &mut dyn FnMut(&[u8]),
    ) {
        if at + 1 == counts.len() {
            counts[at] = left as u8;
            visit(counts);
            return;
        }
        for k in 0..=left {
            counts[at] = k as u8;
            self.compositions(left - k, at + 1, counts, visit);
        }
    }

    /// E[a(D)·b(D)] over the Dirichlet spacings.
    fn expectation(&self, a: &[(u128, f64)], b: &[(u128, f64)]) -> f64 {
        let mut total = 0.0;
        for &(ka, ca) in a {
            for &(kb, cb) in b {
                total += ca * cb * self.moment(ka + kb);
            }
        }
        total
    }

    /// E[Π D_g^{a_g} R^b] = n₀!·Π a_g!·(n₀ − L)(n₀ − L + 1)…(n₀ − L + b − 1) / (n₀ + Σa + b)!.
    fn moment(&self, key: u128) -> f64 {
        let mut degree = 0;
        let mut value = self.factorial[self.n0];
        for g in 0..self.gaps {
            let a = unpack(key, g);
            degree += a;
            value *= self.factorial[a];
        }
        if self.with_rest {
            let b = unpack(key, self.gaps);
            degree += b;
            let weight = (self.n0 + 1 - self.gaps) as f64;
            for i in 0..b {
                value *= weight + i as f64;
            }
        }
        value / self.factorial[self.n0 + degree]
    }
}

fn pack(counts: &[u8]) -> u128 {
    counts
        .iter()
        .enumerate()
        .fold(0, |acc, (i, &c)| acc | (u128::from(c) << (8 * i)))
}

fn unpack(key: u128, variable: usize) -> usize {
    ((key >> (8 * variable)) & 0xff) as usize
}

/// The product of two polynomials. Packed keys add field by field because
/// no degree exceeds 255. The map only accumulates; the result is sorted,
/// so the order of later sums does not depend on hashing.
fn multiply(a: &[(u128, f64)], b: &[(u128, f64)]) -> Polynomial {
    let mut product: HashMap<u128, f64> = HashMap::with_capacity(a.len() * 4);
    for &(ka, ca) in a {
        for &(kb, cb) in b {
            *product.entry(ka + kb).or_insert(0.0) += ca * cb;
        }
    }
    let mut terms: Polynomial = product.into_iter().collect();
    terms.sort_by_key(|t| t.0);
    terms
}

#[cfg(test)]
#[path = "spacings_tests.rs"]
mod tests;
