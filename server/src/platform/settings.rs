//! Settings of one data directory, read from `settings.toml` in it when
//! present; every field has a documented default. The numbers and their
//! defaults are plain data in [`crate::domain::tuning`], so the pure modules
//! that use them (clustering, priority, intake's checks) need no file access.

pub use crate::domain::tuning::{
    ClusterSettings, DEFAULT_TOLERANCE_M, EvidenceSettings, PriorityWeights,
};
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
    pub organisation: OrganisationSettings,
}

/// The organisation's time zone and default language (`[organisation]` in settings.toml).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct OrganisationSettings {
    /// IANA time zone name (checked with chrono-tz); default "UTC".
    pub time_zone: String,
    /// Language of pages for users who chose none and whose browser asks for none we have:
    /// one of "en", "pt", "es", "fr", "id"; default "en".
    pub default_language: String,
}

impl Default for OrganisationSettings {
    fn default() -> Self {
        OrganisationSettings {
            time_zone: "UTC".to_string(),
            default_language: "en".to_string(),
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
        if !crate::platform::i18n::LANGUAGES.contains(&s.organisation.default_language.as_str()) {
            return Err(Error::Invalid(format!(
                "{}: organisation.default_language must be one of {}",
                path.display(),
                crate::platform::i18n::LANGUAGES.join(", ")
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
