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
    let row_totals: Vec<u64> = counts.iter().map(|row| row.iter().sum()).collect();
    for (class, (&n, &m)) in row_totals.iter().zip(mapped).enumerate() {
        if n == 0 && m > 0.0 {
            return Err(StatsError::UnsampledStratum { class, mapped: m });
        }
    }
    let total: f64 = mapped.iter().sum();
    let sample_size: u64 = row_totals.iter().sum();
    if total <= 0.0 || sample_size == 0 {
        return Ok(None);
    }
    let weights: Vec<f64> = mapped.iter().map(|m| m / total).collect();
    // q_ij = n_ij / n_i. (0 for an unsampled, zero-size stratum).
    let share = |i: usize, j: usize| match row_totals[i] {
        0 => 0.0,
        n => counts[i][j] as f64 / n as f64,
    };
    // W_i² q(1 − q)/(n_i. − 1), `None` when not estimable.
    let term = |i: usize, q: f64| -> Option<f64> {
        if weights[i] == 0.0 {
            Some(0.0)
        } else if row_totals[i] < 2 {
            None
        } else {
            Some(weights[i] * weights[i] * q * (1.0 - q) / (row_totals[i] - 1) as f64)
        }
    };
    let cells: Vec<Vec<f64>> = (0..k)
        .map(|i| (0..k).map(|j| weights[i] * share(i, j)).collect())
        .collect();
    let column_total = |j: usize| (0..k).map(|i| cells[i][j]).sum::<f64>();

    let overall_value: f64 = (0..k).map(|j| cells[j][j]).sum();
    let overall_var = (0..k).map(|i| term(i, share(i, i))).sum::<Option<f64>>();
    let overall = Estimate::normal(overall_value, overall_var.map(f64::sqrt), 0.0, 1.0);

    let mut classes = Vec::with_capacity(k);
    for j in 0..k {
        let users = (row_totals[j] > 0).then(|| {
            let u = share(j, j);
            let var = match row_totals[j] {
                n if n >= 2 => Some(u * (1.0 - u) / (n - 1) as f64),
                _ => None,
            };
            Estimate::normal(u, var.map(f64::sqrt), 0.0, 1.0)
        });
        let p_col = column_total(j);
        let area_var = (0..k).map(|i| term(i, share(i, j))).sum::<Option<f64>>();
        let area_proportion = Estimate::normal(p_col, area_var.map(f64::sqrt), 0.0, 1.0);
        let area = Estimate::normal(
            total * p_col,
            area_var.map(|v| total * v.sqrt()),
            0.0,
            total,
        );
        let producers = (p_col > 0.0).then(|| {
            let p = cells[j][j] / p_col;
            // Variance in terms of W rather than N: the 1/N̂_.j² scaling cancels.
            let u = share(j, j);
            let own = term(j, u).map(|t| (1.0 - p) * (1.0 - p) * t);
            let others = (0..k)
                .filter(|&i| i != j)
                .map(|i| term(i, share(i, j)))
                .sum::<Option<f64>>();
            let var = own
                .zip(others)
                .map(|(a, b)| (a + p * p * b) / (p_col * p_col));
            Estimate::normal(p, var.map(f64::sqrt), 0.0, 1.0)
        });
        classes.push(ClassAccuracy {
            users,
            producers,
            area_proportion,
            area,
        });
    }
    Ok(Some(AccuracyAssessment {
        overall,
        classes,
        cell_proportions: cells,
        total_mapped: total,
        sample_size,
    }))
}

#[cfg(test)]
mod tests;
