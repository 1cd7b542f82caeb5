//! The priority score of an event, computed when it is read (it depends on
//! the day it is asked for, so it is never stored).
//!
//! ```text
//! score = w_area · min(1, ln(1 + area_ha) / ln(1 + area_ref_ha))
//!       + w_recency · exp(−age_days / recency_days)
//!       + w_corroboration · [corroborated]
//!       + w_confidence · [highest confidence is confirmed]
//!       + w_zone · [inside a priority zone]
//! ```
//! `age_days` is the days from the event's last detection to the day asked
//! for (0 when negative). With the default weights (which sum to 1) the
//! score lies in [0, 1].

pub use crate::domain::tuning::PriorityWeights;

/// The inputs of the score for one event.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PriorityInput {
    pub area_ha: f64,
    pub age_days: f64,
    pub corroborated: bool,
    pub confirmed: bool,
    pub in_priority_zone: bool,
}

/// The score; see the module documentation for the formula.
pub fn score(w: &PriorityWeights, e: &PriorityInput) -> f64 {
    let area = if w.area_ref_ha > 0.0 {
        ((1.0 + e.area_ha.max(0.0)).ln() / (1.0 + w.area_ref_ha).ln()).min(1.0)
    } else {
        1.0
    };
    let recency = if w.recency_days > 0.0 {
        (-e.age_days.max(0.0) / w.recency_days).exp()
    } else {
        0.0
    };
    let flag = |b: bool| if b { 1.0 } else { 0.0 };
    w.area * area
        + w.recency * recency
        + w.corroboration * flag(e.corroborated)
        + w.confidence * flag(e.confirmed)
        + w.zone * flag(e.in_priority_zone)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worked_by_hand() {
        let w = PriorityWeights::default();
        let e = PriorityInput {
            area_ha: 10.0,
            age_days: 30.0,
            corroborated: true,
            confirmed: false,
            in_priority_zone: true,
        };
        // 0.30·1 + 0.25·e^-1 + 0.20 + 0 + 0.15 = 0.741970...
        let expect = 0.30 + 0.25 * (-1.0f64).exp() + 0.20 + 0.15;
        assert!((score(&w, &e) - expect).abs() < 1e-12);
        let all = PriorityInput {
            area_ha: 1e6,
            age_days: -5.0,
            corroborated: true,
            confirmed: true,
            in_priority_zone: true,
        };
        assert!((score(&w, &all) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn larger_and_newer_rank_higher() {
        let w = PriorityWeights::default();
        let base = PriorityInput {
            area_ha: 0.5,
            age_days: 10.0,
            corroborated: false,
            confirmed: false,
            in_priority_zone: false,
        };
        let bigger = PriorityInput {
            area_ha: 5.0,
            ..base
        };
        let older = PriorityInput {
            age_days: 100.0,
            ..base
        };
        assert!(score(&w, &bigger) > score(&w, &base));
        assert!(score(&w, &older) < score(&w, &base));
    }
}
