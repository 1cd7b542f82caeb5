//! The organisation's tunable numbers with their documented defaults: how
//! alerts are joined into events, the priority score's weights, and the
//! evidence tolerance. Plain data; `platform::settings` reads them from
//! `settings.toml`.

use serde::{Deserialize, Serialize};

/// How alerts are joined into events (configurable in `settings.toml`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ClusterSettings {
    /// Link distance as a multiple of the larger pixel size.
    pub link_factor: f64,
    /// Largest gap between detection days of linked alerts; 0 means none.
    pub window_days: i32,
}

impl Default for ClusterSettings {
    fn default() -> Self {
        ClusterSettings {
            link_factor: 1.5,
            window_days: 90,
        }
    }
}

/// Weights and scales of the priority score (the formula is in
/// `crate::alerts::cluster::priority`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct PriorityWeights {
    pub area: f64,
    pub recency: f64,
    pub corroboration: f64,
    pub confidence: f64,
    pub zone: f64,
    /// Area that earns the full area term, hectares.
    pub area_ref_ha: f64,
    /// E-folding time of the recency term, days.
    pub recency_days: f64,
}

impl Default for PriorityWeights {
    fn default() -> Self {
        PriorityWeights {
            area: 0.30,
            recency: 0.25,
            corroboration: 0.20,
            confidence: 0.10,
            zone: 0.15,
            area_ref_ha: 10.0,
            recency_days: 30.0,
        }
    }
}

/// Default distance tolerance of the evidence checks in metres (common
/// practice: consumer GPS under canopy errs by tens of metres, and a team
/// photographs a clearing from its edge).
pub const DEFAULT_TOLERANCE_M: f64 = 100.0;

/// The evidence checks of intake.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct EvidenceSettings {
    /// Distance from a report's or photo's position to its target beyond
    /// which the report is flagged, metres (default 100 m, common practice).
    pub tolerance_m: f64,
}

impl Default for EvidenceSettings {
    fn default() -> Self {
        EvidenceSettings {
            tolerance_m: DEFAULT_TOLERANCE_M,
        }
    }
}
