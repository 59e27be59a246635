//! The maximum of a Brownian motion seen at a few times, by a recursion over
//! quadrature nodes: the null distribution of Williams' statistic when the
//! doses are not equally replicated.
//!
//! Why a Brownian motion. Take doses 1…i with replications r₁…rᵢ and the
//! control with c, all with unit variance. The mean of doses u…i is Tᵤ/Rᵤ,
//! where Rᵤ = r_u + … + rᵢ and Tᵤ is a random walk with independent N(0, rⱼ)
//! steps, that is a Brownian motion B seen at the times Rᵤ. Time inversion
//! (W(s) = s·B(1/s) is again a Brownian motion) turns the running means into
//! W(1/Rᵤ), and adding the control mean, N(0, 1/c) and independent, starts the
//! motion 1/c earlier: (ȳ₀ − mean(u…i)) has the law of W(1/c + 1/Rᵤ) jointly
//! over u. So P(t̄ᵢ ≤ t | s) = P(max_u W(τᵤ) ≤ t·s) with
//! τᵤ = (1/c + 1/Rᵤ)/(1/c + 1/rᵢ), the last of them 1.
//!
//! The level of that maximum is constant, unlike the sloping line that the
//! partial sums Tᵤ must stay under, so one backward sweep serves every level:
//! with D = y − W, hₘ(d) = P(D stays ≥ 0 at the times after the m-th | D = d
//! there) obeys hₘ(d) = ∫₀^∞ φ_σ(d′ − d)·hₘ₊₁(d′) dd′ with σ² the gap to the
//! next time, and P(max ≤ y) is the same integral once more from D(0) = y.
//! Each hₘ is kept at Gauss-Legendre nodes on [0, D], D being where it
//! differs from 1 by less than 1e-20; it is analytic up to the end at 0, so
//! the panels converge geometrically, where a uniform trapezoid grid (the
//! specification's reference, linear-extensions.md E.1) converges as h².
//!
//! Accuracy: with equal replication the sweep reproduces Spitzer's exact
//! running-maximum formula to about 1e-13 (stats::williams_grid::tests).

use super::normal_table::NormalTable;
use super::quadrature::gauss_legendre_16;

/// hₘ(d) ≥ 1 − 2Φ̄(d/√(time left)) (the reflection bound), so beyond this
/// many standard deviations of the time left it is 1 within 4e-21.
const REACH: f64 = 9.5;
/// Panel width in units of the narrowest Gaussian the panel's values meet:
/// the kernel that made them and the kernel they are integrated against.
/// A 16-node panel integrates Φ(a·x)·φ(x) to 2e-14 while a·width ≤ 6.4
/// (measured); 3 keeps a margin, and the sweep then matches Spitzer's exact
/// formula to rounding (stats::williams_grid::tests).
const PANEL_WIDTH: f64 = 3.0;
/// φ is 0 to double precision beyond 9 standard deviations (below 1e-18).
const KERNEL_REACH: f64 = 9.0;

/// P(W(τ₁) ≤ y, …, W(τₙ) ≤ y) for a standard Brownian motion W started at 0,
/// as a function of y, for fixed times 0 < τ₁ < … < τₙ.
#[derive(Debug, Clone)]
pub struct BrownianMaximum {
    /// √τ₁: the spread of W at the first time.
    first_spread: f64,
    /// h₁, the chance of meeting every later time given D at the first.
    first: Values,
}

impl BrownianMaximum {
    /// The backward sweep over `times`, which must be positive, finite and
    /// strictly increasing (the caller's times are; checked in debug builds).
    pub fn new(times: &[f64]) -> BrownianMaximum {
        debug_assert!(!times.is_empty() && times[0] > 0.0);
        debug_assert!(times.windows(2).all(|p| p[1] > p[0]));
        let last = times[times.len() - 1];
        // After the last time nothing is required: h = 1 on [0, ∞), no nodes.
        let mut current = Values {
            nodes: Vec::new(),
            weighted: Vec::new(),
            edge: 0.0,
        };
        for m in (0..times.len() - 1).rev() {
            let spread = (times[m + 1] - times[m]).sqrt();
            let next_spread = if m == 0 {
                times[0].sqrt()
            } else {
                (times[m] - times[m - 1]).sqrt()
            };
            let edge = REACH * (last - times[m]).sqrt();
            let width = PANEL_WIDTH * spread.min(next_spread);
            let (nodes, weights) = panel_nodes(edge, width);
            let weighted = nodes
                .iter()
                .zip(&weights)
                .map(|(&d, &w)| w * current.step(d, spread))
                .collect();
            current = Values {
                nodes,
                weighted,
                edge,
            };
        }
        BrownianMaximum {
            first_spread: times[0].sqrt(),
            first: current,
        }
    }

    /// P(max over the times of W ≤ y).
    pub fn cdf(&self, y: f64) -> f64 {
        self.first.step(y, self.first_spread).clamp(0.0, 1.0)
    }
}

/// One hₘ: known at ascending nodes on [0, edge] (stored as quadrature
/// weight × value), and 1 beyond the edge.
#[derive(Debug, Clone)]
struct Values {
    nodes: Vec<f64>,
    weighted: Vec<f64>,
    edge: f64,
}

impl Values {
    /// ∫₀^∞ φ_σ(d′ − d)·h(d′) dd′: the quadrature over [0, edge] plus the
    /// Gaussian mass beyond the edge, where h = 1.
    fn step(&self, d: f64, spread: f64) -> f64 {
        let normal = NormalTable::get();
        let beyond = normal.sf((self.edge - d) / spread);
        // Only nodes within the kernel's reach contribute; nodes ascend.
        let lo = self
            .nodes
            .partition_point(|&x| x < d - KERNEL_REACH * spread);
        let hi = self
            .nodes
            .partition_point(|&x| x <= d + KERNEL_REACH * spread);
        let mut inside = 0.0;
        for (&x, &w) in self.nodes[lo..hi].iter().zip(&self.weighted[lo..hi]) {
            inside += w * normal.pdf((x - d) / spread);
        }
        beyond + inside / spread
    }
}

/// Nodes and weights of 16-point Gauss-Legendre panels of at most `width`
/// covering [0, edge], ascending.
fn panel_nodes(edge: f64, width: f64) -> (Vec<f64>, Vec<f64>) {
    let rule = gauss_legendre_16();
    let panels = (edge / width).ceil().max(1.0) as usize;
    let step = edge / panels as f64;
    let mut nodes = Vec::with_capacity(panels * rule.nodes.len());
    let mut weights = Vec::with_capacity(panels * rule.nodes.len());
    for p in 0..panels {
        let mid = (p as f64 + 0.5) * step;
        for (x, w) in rule.nodes.iter().zip(&rule.weights) {
            nodes.push(mid + 0.5 * step * x);
            weights.push(0.5 * step * w);
        }
    }
    (nodes, weights)
}

/// The times τᵤ of the module doc for Williams' statistic on doses 1…i with
/// replications `dose_ns` (lowest dose first) and a control of `control_n`,
/// ascending: the first belongs to the mean of all i doses, the last (= 1)
/// to dose i alone.
pub fn williams_times(control_n: usize, dose_ns: &[usize]) -> Vec<f64> {
    let inverse_c = 1.0 / control_n as f64;
    let top = dose_ns[dose_ns.len() - 1] as f64;
    let scale = inverse_c + 1.0 / top;
    let mut total = 0.0;
    let mut times: Vec<f64> = dose_ns
        .iter()
        .rev()
        .map(|&r| {
            total += r as f64;
            (inverse_c + 1.0 / total) / scale
        })
        .collect();
    times.reverse();
    times
}

#[cfg(test)]
#[path = "williams_grid_tests.rs"]
mod tests;
