//! The multi-stratum ANOVA table: each stratum's treatment lines, tested
//! against that stratum's error, and its error line; the total.
//!
//! Each stratum's SS is the squared length of the response projected on the
//! stratum (unit means minus the projections on the strata above), which for
//! an orthogonal block structure equals the sequential least-squares SS of the
//! stratum-defining term after everything above it (METHODS 3.3, spec 5.1);
//! the treatment SS are the sequential (Type I) SS of the fixed model. Both
//! cost O(N) per stratum, so long data stay cheap.

use super::reason::StratumId;
use super::unit_structure::UnitStructure;
use crate::stats::dist::f_sf;
use crate::stats::linear::{
    Layout, SsType, TermFactors, design_matrix, sums_of_squares, term_columns,
};
use crate::stats::sum::neumaier;

/// A treatment term's line, tested against its stratum's error.
#[derive(Debug, Clone, PartialEq)]
pub struct TreatmentLine {
    /// Index of the fixed term (model order).
    pub term: usize,
    pub df: usize,
    pub ss: f64,
    pub ms: f64,
    /// MS / stratum error MS; `None` when the error has no df or no variation.
    pub f: Option<f64>,
    pub p: Option<f64>,
}

/// A stratum's error line (for a stratum without treatments, such as blocks,
/// the line of the stratum itself, printed without F).
#[derive(Debug, Clone, PartialEq)]
pub struct ErrorLine {
    pub df: usize,
    pub ss: f64,
    /// SS/df; `None` with no df.
    pub ms: Option<f64>,
}

/// One stratum of the table.
#[derive(Debug, Clone, PartialEq)]
pub struct Stratum {
    pub id: StratumId,
    /// Number of units (observations for the residual).
    pub units: usize,
    /// Observations per unit.
    pub unit_size: usize,
    pub treatments: Vec<TreatmentLine>,
    pub error: ErrorLine,
    /// 100·√E / grand mean, in percent; `None` without an error MS or when
    /// the grand mean is not positive.
    pub cv_percent: Option<f64>,
    /// Expected error mean square: the coefficient of each variance component
    /// (random terms in the caller's order, then the residual).
    pub expected_mean_square: Vec<f64>,
}

/// The total line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Total {
    pub df: usize,
    pub ss: f64,
}

/// The response centred and projected on each stratum (table order).
fn stratum_projections(structure: &UnitStructure, centred: &[f64]) -> Vec<Vec<f64>> {
    let mut projections: Vec<Vec<f64>> = Vec::with_capacity(structure.partitions.len());
    for (g, units) in structure.partitions.iter().enumerate() {
        let mut own = units.unit_means(centred);
        for (h, above) in projections.iter().enumerate() {
            if structure.above[g][h] {
                own.iter_mut().zip(above).for_each(|(v, a)| *v -= a);
            }
        }
        projections.push(own);
    }
    projections
}

/// Expected mean square of each stratum in the components: σ² plus k_R σ²_R
/// for every random term R whose units lie within the stratum's units.
fn expected_mean_squares(structure: &UnitStructure, random_count: usize) -> Vec<Vec<f64>> {
    let s = structure.partitions.len();
    (0..s)
        .map(|g| {
            let mut coefficients = vec![0.0; random_count + 1];
            for r in 0..s {
                if let StratumId::Random(term) = structure.ids[r]
                    && (r == g || structure.above[r][g])
                {
                    coefficients[term] = structure.unit_size[r] as f64;
                }
            }
            coefficients[random_count] = 1.0;
            coefficients
        })
        .collect()
}

/// The table's strata and total.
pub(super) fn stratum_table(
    structure: &UnitStructure,
    y: &[f64],
    grand_mean: f64,
    treatments: &Layout,
    terms: &[TermFactors],
    term_strata: &[usize],
) -> (Vec<Stratum>, Total) {
    let mean = neumaier(y.iter().copied()) / y.len() as f64;
    let centred: Vec<f64> = y.iter().map(|v| v - mean).collect();
    let projections = stratum_projections(structure, &centred);
    let term_ss = if terms.is_empty() {
        Vec::new()
    } else {
        let design = design_matrix(treatments, terms);
        let ranges = term_columns(terms, &treatments.levels);
        sums_of_squares(&design, y, terms, &ranges, SsType::I).terms
    };
    let random_count = structure.ids.len() - 1;
    let ems = expected_mean_squares(structure, random_count);
    let mut strata = Vec::new();
    for (g, projection) in projections.iter().enumerate() {
        let stratum_ss = neumaier(projection.iter().map(|v| v * v));
        let mut lines: Vec<TreatmentLine> = (0..terms.len())
            .filter(|&t| term_strata[t] == g && term_ss[t].df > 0)
            .map(|t| TreatmentLine {
                term: t,
                df: term_ss[t].df,
                ss: term_ss[t].ss,
                ms: term_ss[t].ss / term_ss[t].df as f64,
                f: None,
                p: None,
            })
            .collect();
        let df = structure.df[g].saturating_sub(lines.iter().map(|l| l.df).sum());
        let ss = (stratum_ss - neumaier(lines.iter().map(|l| l.ss))).max(0.0);
        let ms = (df > 0).then(|| ss / df as f64);
        for line in &mut lines {
            if let Some(error) = ms.filter(|e| *e > 0.0) {
                let f = line.ms / error;
                line.f = Some(f);
                line.p = Some(f_sf(f, line.df as f64, df as f64));
            }
        }
        strata.push(Stratum {
            id: structure.ids[g],
            units: structure.partitions[g].present(),
            unit_size: structure.unit_size[g],
            treatments: lines,
            error: ErrorLine { df, ss, ms },
            cv_percent: ms
                .filter(|_| grand_mean > 0.0)
                .map(|e| 100.0 * e.sqrt() / grand_mean),
            expected_mean_square: ems[g].clone(),
        });
    }
    let total = Total {
        df: y.len() - 1,
        ss: neumaier(centred.iter().map(|v| v * v)),
    };
    (strata, total)
}
