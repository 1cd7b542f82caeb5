//! Accuracy and area estimates from a stratified sample whose strata are the
//! map classes: the estimators of Olofsson et al. (2014), Remote Sensing of
//! Environment 148:42–57, as written out in statistics.md §1.2b.
//!
//! Input: the error matrix of sample counts n_ij (rows i = map class =
//! stratum, columns j = reference class, same class order) and the mapped size
//! N_i. of each map class (pixels, hectares: any unit; areas come out in it).
//! W_i = N_i./Σ N_i.. No finite-population correction (as in the paper).
//!
//! - user's accuracy Û_i = n_ii/n_i., V̂ = Û_i(1 − Û_i)/(n_i. − 1)
//! - overall Ô = Σ_j W_j n_jj/n_j., V̂ = Σ_i W_i² Û_i(1 − Û_i)/(n_i. − 1)
//! - area proportion p̂_.k = Σ_i W_i n_ik/n_i., V̂ = Σ_i W_i² q(1 − q)/(n_i. − 1), q = n_ik/n_i.
//! - producer's accuracy P̂_j = p̂_jj/p̂_.j with the variance of statistics.md,
//!   summing the second term over i ≠ j (the form that reproduces the paper).
//! - area Â_k = A_tot·p̂_.k, SE = A_tot·SE(p̂_.k).
//!
//! Intervals are estimate ± z·SE clipped to [0, 1] (to [0, A_tot] for areas).
//! A stratum with one sampled unit makes every variance it enters `None`.

use serde::Serialize;

use super::StatsError;
use super::interval::Estimate;

/// Estimates for one class (map class for user's accuracy, reference class
/// for the others).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ClassAccuracy {
    /// `None` when the map class has no sampled unit (and no mapped size).
    pub users: Option<Estimate>,
    /// `None` when no sampled unit has this reference class.
    pub producers: Option<Estimate>,
    /// Estimated share of the total mapped size that truly is this class.
    pub area_proportion: Estimate,
    /// The area in the unit of the mapped sizes.
    pub area: Estimate,
}

/// Result of [`olofsson`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AccuracyAssessment {
    pub overall: Estimate,
    /// One entry per class, in the order of the error matrix.
    pub classes: Vec<ClassAccuracy>,
    /// p̂_ij = W_i n_ij/n_i. (Olofsson Table 9), rows = map, cols = reference.
    pub cell_proportions: Vec<Vec<f64>>,
    /// A_tot = Σ N_i..
    pub total_mapped: f64,
    /// Σ n_ij.
    pub sample_size: u64,
}

/// Olofsson et al. (2014) estimators; see the module docs.
///
/// Returns `Ok(None)` when the total mapped size or the sample is 0. Errors:
/// a matrix that is not k × k with k mapped sizes; a mapped size that is
/// negative or not finite; a map class with mapped size but no sample.
pub fn olofsson(
    counts: &[Vec<u64>],
    mapped: &[f64],
) -> Result<Option<AccuracyAssessment>, StatsError> {
    check_inputs(counts, mapped)?;
    let row_totals = sampled_row_totals(counts, mapped)?;
    let total: f64 = mapped.iter().sum();
    let sample_size: u64 = row_totals.iter().sum();
    if total <= 0.0 || sample_size == 0 {
        return Ok(None);
    }
    let m = Matrix::new(counts, mapped, row_totals, total);
    let overall = m.overall();
    let classes = (0..m.k).map(|j| m.class(j)).collect();
    Ok(Some(AccuracyAssessment {
        overall,
        classes,
        cell_proportions: m.cells,
        total_mapped: total,
        sample_size,
    }))
}

/// The error matrix is k × k for k mapped sizes, each finite and not negative.
fn check_inputs(counts: &[Vec<u64>], mapped: &[f64]) -> Result<(), StatsError> {
    let k = mapped.len();
    if counts.len() != k || counts.iter().any(|row| row.len() != k) {
        return Err(StatsError::Shape(format!(
            "expected {k} rows of {k} counts to match {k} mapped sizes"
        )));
    }
    if mapped.iter().any(|m| !m.is_finite()) {
        return Err(StatsError::NotFinite {
            what: "mapped size",
        });
    }
    if mapped.iter().any(|&m| m < 0.0) {
        return Err(StatsError::Negative {
            what: "mapped size",
        });
    }
    Ok(())
}

/// n_i. for each map class; an error when a class with mapped size has none.
fn sampled_row_totals(counts: &[Vec<u64>], mapped: &[f64]) -> Result<Vec<u64>, StatsError> {
    let row_totals: Vec<u64> = counts.iter().map(|row| row.iter().sum()).collect();
    for (class, (&n, &m)) in row_totals.iter().zip(mapped).enumerate() {
        if n == 0 && m > 0.0 {
            return Err(StatsError::UnsampledStratum { class, mapped: m });
        }
    }
    Ok(row_totals)
}

/// The checked error matrix with its stratum weights and cell proportions.
struct Matrix<'a> {
    k: usize,
    counts: &'a [Vec<u64>],
    row_totals: Vec<u64>,
    /// W_i.
    weights: Vec<f64>,
    /// p̂_ij.
    cells: Vec<Vec<f64>>,
    /// A_tot.
    total: f64,
}

impl<'a> Matrix<'a> {
    fn new(counts: &'a [Vec<u64>], mapped: &[f64], row_totals: Vec<u64>, total: f64) -> Self {
        let k = mapped.len();
        let weights: Vec<f64> = mapped.iter().map(|m| m / total).collect();
        let mut m = Matrix {
            k,
            counts,
            row_totals,
            weights,
            cells: Vec::new(),
            total,
        };
        m.cells = (0..k)
            .map(|i| (0..k).map(|j| m.weights[i] * m.share(i, j)).collect())
            .collect();
        m
    }

    /// q_ij = n_ij / n_i. (0 for an unsampled, zero-size stratum).
    fn share(&self, i: usize, j: usize) -> f64 {
        match self.row_totals[i] {
            0 => 0.0,
            n => self.counts[i][j] as f64 / n as f64,
        }
    }

    /// W_i² q(1 − q)/(n_i. − 1), `None` when not estimable.
    fn term(&self, i: usize, q: f64) -> Option<f64> {
        let weights = &self.weights;
        if weights[i] == 0.0 {
            Some(0.0)
        } else if self.row_totals[i] < 2 {
            None
        } else {
            Some(weights[i] * weights[i] * q * (1.0 - q) / (self.row_totals[i] - 1) as f64)
        }
    }

    /// p̂_.j.
    fn column_total(&self, j: usize) -> f64 {
        (0..self.k).map(|i| self.cells[i][j]).sum::<f64>()
    }

    /// Overall accuracy Ô.
    fn overall(&self) -> Estimate {
        let k = self.k;
        let overall_value: f64 = (0..k).map(|j| self.cells[j][j]).sum();
        let overall_var = (0..k)
            .map(|i| self.term(i, self.share(i, i)))
            .sum::<Option<f64>>();
        Estimate::normal(overall_value, overall_var.map(f64::sqrt), 0.0, 1.0)
    }

    /// The estimates for class `j`.
    fn class(&self, j: usize) -> ClassAccuracy {
        let users = self.users(j);
        let p_col = self.column_total(j);
        let area_var = (0..self.k)
            .map(|i| self.term(i, self.share(i, j)))
            .sum::<Option<f64>>();
        let area_proportion = Estimate::normal(p_col, area_var.map(f64::sqrt), 0.0, 1.0);
        let total = self.total;
        let area = Estimate::normal(
            total * p_col,
            area_var.map(|v| total * v.sqrt()),
            0.0,
            total,
        );
        let producers = (p_col > 0.0).then(|| self.producers(j, p_col));
        ClassAccuracy {
            users,
            producers,
            area_proportion,
            area,
        }
    }

    /// User's accuracy Û_j, `None` when map class `j` has no sampled unit.
    fn users(&self, j: usize) -> Option<Estimate> {
        (self.row_totals[j] > 0).then(|| {
            let u = self.share(j, j);
            let var = match self.row_totals[j] {
                n if n >= 2 => Some(u * (1.0 - u) / (n - 1) as f64),
                _ => None,
            };
            Estimate::normal(u, var.map(f64::sqrt), 0.0, 1.0)
        })
    }

    /// Producer's accuracy P̂_j, given p̂_.j > 0.
    fn producers(&self, j: usize, p_col: f64) -> Estimate {
        let p = self.cells[j][j] / p_col;
        // Variance in terms of W rather than N: the 1/N̂_.j² scaling cancels.
        let u = self.share(j, j);
        let own = self.term(j, u).map(|t| (1.0 - p) * (1.0 - p) * t);
        let others = (0..self.k)
            .filter(|&i| i != j)
            .map(|i| self.term(i, self.share(i, j)))
            .sum::<Option<f64>>();
        let var = own
            .zip(others)
            .map(|(a, b)| (a + p * p * b) / (p_col * p_col));
        Estimate::normal(p, var.map(f64::sqrt), 0.0, 1.0)
    }
}

#[cfg(test)]
mod tests;
