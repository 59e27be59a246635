//! Gauss-Legendre quadrature rules, computed (not tabulated) at first use.

use std::sync::OnceLock;

/// Nodes and weights of an n-point Gauss-Legendre rule on [−1, 1].
#[derive(Debug)]
pub struct GaussLegendre {
    pub nodes: Vec<f64>,
    pub weights: Vec<f64>,
}

impl GaussLegendre {
    /// Builds the rule by Newton iteration on the Legendre polynomial from the
    /// classical cosine starting values; converges to full double precision.
    pub fn new(n: usize) -> Self {
        let mut nodes = vec![0.0; n];
        let mut weights = vec![0.0; n];
        let nf = n as f64;
        for i in 0..n.div_ceil(2) {
            let mut x = (std::f64::consts::PI * (i as f64 + 0.75) / (nf + 0.5)).cos();
            let mut derivative = 0.0;
            for _ in 0..100 {
                // Three-term recurrence for P_n(x) and its derivative.
                let (mut p0, mut p1) = (1.0, x);
                for j in 2..=n {
                    let jf = j as f64;
                    let p2 = ((2.0 * jf - 1.0) * x * p1 - (jf - 1.0) * p0) / jf;
                    p0 = p1;
                    p1 = p2;
                }
                let (pn, pn_1) = if n == 1 { (x, 1.0) } else { (p1, p0) };
                derivative = nf * (x * pn - pn_1) / (x * x - 1.0);
                let dx = pn / derivative;
                x -= dx;
                if dx.abs() < 1e-16 {
                    break;
                }
            }
            let w = 2.0 / ((1.0 - x * x) * derivative * derivative);
            nodes[i] = -x;
            nodes[n - 1 - i] = x;
            weights[i] = w;
            weights[n - 1 - i] = w;
        }
        GaussLegendre { nodes, weights }
    }

    /// ∫_a^b f(x) dx by this rule.
    pub fn integrate(&self, a: f64, b: f64, mut f: impl FnMut(f64) -> f64) -> f64 {
        let half = 0.5 * (b - a);
        let mid = 0.5 * (a + b);
        let mut sum = 0.0;
        for (x, w) in self.nodes.iter().zip(&self.weights) {
            sum += w * f(mid + half * x);
        }
        sum * half
    }
}

/// The 16-point rule, shared.
pub fn gauss_legendre_16() -> &'static GaussLegendre {
    static RULE: OnceLock<GaussLegendre> = OnceLock::new();
    RULE.get_or_init(|| GaussLegendre::new(16))
}

#[cfg(test)]
#[path = "quadrature_tests.rs"]
mod tests;
