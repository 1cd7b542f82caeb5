//! Settings of one data directory, read from `settings.toml` in it when
//! present; every field has a documented default. The settings own their
//! defaults; the modules that use them (clustering, priority, intake) read
//! them from here.

use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::path::Path;

/// All settings.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Settings {
    pub cluster: ClusterSettings,
    pub priority: PriorityWeights,
    pub evidence: EvidenceSettings,
}

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

impl Settings {
    /// Read `DATA/settings.toml`, or the defaults when there is none.
    pub fn load(data_dir: &Path) -> Result<Settings> {
        let path = data_dir.join("settings.toml");
        let text = match std::fs::read_to_string(&path) {
            Ok(t) => t,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(Settings::default()),
            Err(e) => return Err(Error::io(format!("reading {}", path.display()), e)),
        };
        let s: Settings = toml::from_str(&text)
            .map_err(|e| Error::Invalid(format!("{}: {e}", path.display())))?;
        if !(s.cluster.link_factor > 0.0 && s.cluster.link_factor <= 10.0) {
            return Err(Error::Invalid(format!(
                "{}: cluster.link_factor must be in (0, 10]",
                path.display()
            )));
        }
        if !(s.evidence.tolerance_m > 0.0 && s.evidence.tolerance_m <= 100_000.0) {
            return Err(Error::Invalid(format!(
                "{}: evidence.tolerance_m must be in (0, 100000] metres",
                path.display()
            )));
        }
        Ok(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_and_overrides() {
        let dir = tempfile::tempdir().unwrap();
        assert_eq!(Settings::load(dir.path()).unwrap(), Settings::default());
        std::fs::write(
            dir.path().join("settings.toml"),
            "[cluster]\nwindow_days = 30\n",
        )
        .unwrap();
        let s = Settings::load(dir.path()).unwrap();
        assert_eq!((s.cluster.window_days, s.cluster.link_factor), (30, 1.5));
        std::fs::write(dir.path().join("settings.toml"), "[cluster]\nbogus = 1\n").unwrap();
        assert!(Settings::load(dir.path()).is_err());
    }

    #[test]
    fn evidence_tolerance_is_a_setting_with_bounds() {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("settings.toml");
        assert_eq!(Settings::default().evidence.tolerance_m, 100.0);
        std::fs::write(&file, "[evidence]\ntolerance_m = 150\n").unwrap();
        let s = Settings::load(dir.path()).unwrap();
        assert_eq!(s.evidence.tolerance_m, 150.0);
        std::fs::write(&file, "[evidence]\ntolerance_m = -5\n").unwrap();
        let e = Settings::load(dir.path()).unwrap_err().to_string();
        assert!(e.contains("evidence.tolerance_m"), "{e}");
    }
}
