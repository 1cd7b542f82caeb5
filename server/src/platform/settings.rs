//! Settings of one data directory, read from `settings.toml` in it when
//! present; every field has a documented default. The numbers and their
//! defaults are plain data in [`crate::domain::tuning`], so the pure modules
//! that use them (clustering, priority, intake's checks) need no file access.
//!
//! The file stays the one place the settings live (a person may still edit
//! it by hand, and a backup of the data directory holds it). The settings
//! page changes it through [`LiveSettings::update`]: under one lock it reads
//! the file again, applies the change, checks every bound, writes the file
//! durably (temp file, fsync, rename, fsync folder: nothing half-written)
//! and only then lets the running server see the new values. A file the
//! server cannot read is never overwritten.

use crate::domain::OrgZone;
pub use crate::domain::tuning::{
    ClusterSettings, DEFAULT_TOLERANCE_M, EvidenceSettings, PriorityWeights,
};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex, RwLock};
use std::time::{Duration, Instant};

/// The languages pages can be shown in (the field app's catalogues).
pub const LANGUAGES: [&str; 5] = ["en", "pt", "es", "fr", "id"];

/// Bounds of each priority weight (our choice: with the default weights the
/// score lies in [0, 1]; a weight above 1 would only rescale it).
pub const WEIGHT_MAX: f64 = 1.0;
/// Largest reference area of the area term, hectares.
pub const AREA_REF_MAX_HA: f64 = 100_000.0;
/// Largest e-folding time of the recency term, days (ten years).
pub const RECENCY_MAX_DAYS: f64 = 3650.0;
/// Largest evidence tolerance, metres.
pub const TOLERANCE_MAX_M: f64 = 100_000.0;

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
        let path = settings_path(data_dir);
        let text = match std::fs::read_to_string(&path) {
            Ok(t) => t,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(Settings::default()),
            Err(e) => return Err(Error::io(format!("reading {}", path.display()), e)),
        };
        let s: Settings = toml::from_str(&text)
            .map_err(|e| Error::Invalid(format!("{}: {e}", path.display())))?;
        s.check()
            .map_err(|m| Error::Invalid(format!("{}: {m}", path.display())))?;
        Ok(s)
    }

    /// Every bound, checked; the message names the first field out of
    /// bounds (`section.field`) and its allowed range.
    pub fn check(&self) -> std::result::Result<(), String> {
        let c = &self.cluster;
        if !(c.link_factor > 0.0 && c.link_factor <= 10.0) {
            return Err("cluster.link_factor must be in (0, 10]".into());
        }
        if !(0..=3650).contains(&c.window_days) {
            return Err("cluster.window_days must be 0 (no limit) to 3650 days".into());
        }
        self.check_priority()?;
        let t = self.evidence.tolerance_m;
        if !(t > 0.0 && t <= TOLERANCE_MAX_M) {
            return Err(format!(
                "evidence.tolerance_m must be in (0, {TOLERANCE_MAX_M}] metres"
            ));
        }
        OrgZone::parse(&self.organisation.time_zone).map_err(|m| format!("organisation.{m}"))?;
        let lang = self.organisation.default_language.as_str();
        if !LANGUAGES.contains(&lang) {
            return Err(format!(
                "organisation.default_language '{}' must be one of {}",
                lang.chars().take(16).collect::<String>(),
                LANGUAGES.join(", ")
            ));
        }
        Ok(())
    }

    fn check_priority(&self) -> std::result::Result<(), String> {
        let p = &self.priority;
        let weights = [
            ("area", p.area),
            ("recency", p.recency),
            ("corroboration", p.corroboration),
            ("confidence", p.confidence),
            ("zone", p.zone),
        ];
        for (name, w) in weights {
            if !(0.0..=WEIGHT_MAX).contains(&w) {
                return Err(format!("priority.{name} must be in [0, {WEIGHT_MAX}]"));
            }
        }
        if weights.iter().all(|(_, w)| *w == 0.0) {
            return Err("priority: at least one weight must be above 0".into());
        }
        if !(p.area_ref_ha > 0.0 && p.area_ref_ha <= AREA_REF_MAX_HA) {
            return Err(format!(
                "priority.area_ref_ha must be in (0, {AREA_REF_MAX_HA}] hectares"
            ));
        }
        if !(p.recency_days > 0.0 && p.recency_days <= RECENCY_MAX_DAYS) {
            return Err(format!(
                "priority.recency_days must be in (0, {RECENCY_MAX_DAYS}] days"
            ));
        }
        Ok(())
    }

    /// The organisation's zone (UTC if the name is not in the tz database,
    /// which [`Settings::check`] refuses, so only hand-built values fall back).
    pub fn zone(&self) -> OrgZone {
        OrgZone::parse(&self.organisation.time_zone).unwrap_or_default()
    }

    /// The settings as the text of `settings.toml`.
    pub fn to_toml(&self) -> Result<String> {
        toml::to_string(self).map_err(|e| Error::Invalid(format!("writing the settings: {e}")))
    }
}

/// `DATA/settings.toml`.
pub fn settings_path(data_dir: &Path) -> PathBuf {
    data_dir.join("settings.toml")
}

/// The settings a running server uses, changeable while it runs.
///
/// [`LiveSettings::get`] hands out the values in force as an `Arc`: a
/// handler keeps the value it took for as long as it needs it, a save swaps
/// in a new `Arc`, and the old value is freed when its last reader drops it.
/// A server's settings ([`LiveSettings::watching`]) also follow the file:
/// at most every [`RECHECK`] a reader looks at the file's modification time
/// and size, and when they changed (a save by another server on the same
/// data directory, a hand edit) the file is read and checked again; a file
/// that does not read or check keeps the values in force (with a warning).
pub struct LiveSettings {
    current: RwLock<Arc<Settings>>,
    /// Serialises changes (read file, check, write, swap) and reloads.
    writing: Mutex<()>,
    file: Option<Watched>,
}

/// How often a server looks whether `settings.toml` changed under it.
pub const RECHECK: Duration = Duration::from_secs(2);

/// The watched file of [`LiveSettings::watching`].
struct Watched {
    data_dir: PathBuf,
    start: Instant,
    /// Milliseconds after `start` before which nobody looks again.
    next_look_ms: AtomicU64,
    /// The file as last read or written (`None`: there was none).
    mark: Mutex<Option<FileMark>>,
}

/// What tells a changed file: modification time and length.
#[derive(Debug, Clone, PartialEq, Eq)]
struct FileMark(std::time::SystemTime, u64);

fn file_mark(path: &Path) -> Option<FileMark> {
    let m = std::fs::metadata(path).ok()?;
    Some(FileMark(m.modified().ok()?, m.len()))
}

impl LiveSettings {
    /// Values that no file stands behind (tests, tools).
    pub fn new(settings: Settings) -> LiveSettings {
        LiveSettings {
            current: RwLock::new(Arc::new(settings)),
            writing: Mutex::new(()),
            file: None,
        }
    }

    /// The settings of `data_dir` (read from its `settings.toml` by the
    /// caller), following the file as it changes.
    pub fn watching(settings: Settings, data_dir: PathBuf) -> LiveSettings {
        let mark = file_mark(&settings_path(&data_dir));
        LiveSettings {
            file: Some(Watched {
                data_dir,
                start: Instant::now(),
                next_look_ms: AtomicU64::new(RECHECK.as_millis() as u64),
                mark: Mutex::new(mark),
            }),
            ..LiveSettings::new(settings)
        }
    }

    /// The settings in force now.
    pub fn get(&self) -> Arc<Settings> {
        self.follow_file();
        Arc::clone(&self.current.read().unwrap_or_else(|p| p.into_inner()))
    }

    /// Read the file again if it changed and [`RECHECK`] has passed since
    /// the last look. Never waits: a save or a look already running wins.
    fn follow_file(&self) {
        let Some(w) = &self.file else { return };
        let now_ms = w.start.elapsed().as_millis() as u64;
        if now_ms < w.next_look_ms.load(Ordering::Relaxed) {
            return;
        }
        let (Ok(_guard), Ok(mut mark)) = (self.writing.try_lock(), w.mark.try_lock()) else {
            return;
        };
        w.next_look_ms
            .store(now_ms + RECHECK.as_millis() as u64, Ordering::Relaxed);
        let now = file_mark(&settings_path(&w.data_dir));
        if now == *mark {
            return;
        }
        *mark = now;
        match Settings::load(&w.data_dir) {
            Ok(s) => {
                tracing::info!("settings.toml changed: its values are now in force");
                *self.current.write().unwrap_or_else(|p| p.into_inner()) = Arc::new(s);
            }
            Err(e) => tracing::warn!(
                "settings.toml changed but is refused, the values in force stay: {e}"
            ),
        }
    }

    /// Change the settings of `data_dir`: read the file again (a hand edit
    /// made since start is kept), apply `change`, check every bound, then
    /// run `commit` with the old and new values (the caller's log entry; it
    /// gets the durable file write to run inside its own transaction) and
    /// only after it succeeds make the new values the ones in force.
    /// Nothing is written when `change` or the check fails.
    pub fn update<T>(
        &self,
        data_dir: &Path,
        change: impl FnOnce(&mut Settings) -> Result<()>,
        commit: impl FnOnce(&Settings, &Settings, &dyn Fn() -> Result<()>) -> Result<T>,
    ) -> Result<(Settings, T)> {
        let _guard = self.writing.lock().unwrap_or_else(|p| p.into_inner());
        let old = Settings::load(data_dir).map_err(|e| {
            Error::Conflict(format!(
                "the settings file cannot be read, so it is not overwritten: {e}"
            ))
        })?;
        let mut new = old.clone();
        change(&mut new)?;
        new.check().map_err(Error::Invalid)?;
        let text = new.to_toml()?;
        let path = settings_path(data_dir);
        let write = || write_settings_file(&path, &text);
        let out = commit(&old, &new, &write)?;
        *self.current.write().unwrap_or_else(|p| p.into_inner()) = Arc::new(new.clone());
        if let Some(w) = self.file.as_ref().filter(|w| w.data_dir == data_dir) {
            *w.mark.lock().unwrap_or_else(|p| p.into_inner()) = file_mark(&path);
        }
        Ok((new, out))
    }
}

impl std::fmt::Debug for LiveSettings {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.get().fmt(f)
    }
}

fn write_settings_file(path: &Path, text: &str) -> Result<()> {
    use std::io::Write as _;
    let header = "# Groundproof settings. Written by the settings page; hand edits are kept\n\
                  # when the page saves (it reads this file again first), comments are not.\n";
    super::durable::write_durably(path, |f| {
        f.write_all(header.as_bytes())
            .and_then(|_| f.write_all(text.as_bytes()))
            .map_err(|e| Error::io(format!("writing {}", path.display()), e))
    })
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

    #[test]
    fn the_organisation_section_has_defaults_and_checked_values() {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("settings.toml");
        let d = Settings::default().organisation;
        assert_eq!(
            (d.time_zone.as_str(), d.default_language.as_str()),
            ("UTC", "en")
        );
        std::fs::write(&file, "[organisation]\ntime_zone = \"Etc/GMT+4\"\n").unwrap();
        let s = Settings::load(dir.path()).unwrap();
        assert_eq!(s.zone().name(), "Etc/GMT+4");
        assert_eq!(s.organisation.default_language, "en");
        std::fs::write(&file, "[organisation]\ntime_zone = \"Nowhere/Else\"\n").unwrap();
        let e = Settings::load(dir.path()).unwrap_err().to_string();
        assert!(e.contains("organisation.time zone 'Nowhere/Else'"), "{e}");
        std::fs::write(&file, "[organisation]\ndefault_language = \"xx\"\n").unwrap();
        let e = Settings::load(dir.path()).unwrap_err().to_string();
        assert!(e.contains("organisation.default_language 'xx'"), "{e}");
    }

    #[test]
    fn priority_weights_are_bounded() {
        let mut s = Settings::default();
        s.priority.zone = 1.5;
        assert_eq!(s.check().unwrap_err(), "priority.zone must be in [0, 1]");
        s.priority.zone = f64::NAN;
        assert!(s.check().is_err());
        let s = Settings {
            priority: PriorityWeights {
                area: 0.0,
                recency: 0.0,
                corroboration: 0.0,
                confidence: 0.0,
                zone: 0.0,
                ..PriorityWeights::default()
            },
            ..Settings::default()
        };
        assert!(s.check().unwrap_err().contains("at least one weight"));
        let mut s = Settings::default();
        s.priority.recency_days = 0.0;
        assert!(s.check().unwrap_err().contains("priority.recency_days"));
    }

    #[test]
    fn an_update_keeps_hand_edits_writes_durably_and_refuses_bad_values() {
        let dir = tempfile::tempdir().unwrap();
        let live = LiveSettings::new(Settings::default());
        // A hand edit after start: kept by the next update.
        std::fs::write(settings_path(dir.path()), "[cluster]\nwindow_days = 45\n").unwrap();
        let (new, ()) = live
            .update(
                dir.path(),
                |s| {
                    s.evidence.tolerance_m = 250.0;
                    Ok(())
                },
                |old, new, write| {
                    assert_eq!(old.cluster.window_days, 45);
                    assert_eq!(new.evidence.tolerance_m, 250.0);
                    write()
                },
            )
            .unwrap();
        assert_eq!(live.get().evidence.tolerance_m, 250.0);
        assert_eq!(Settings::load(dir.path()).unwrap(), new);
        assert_eq!(new.cluster.window_days, 45);
        // A bad value: nothing written, nothing in force changes.
        let before = std::fs::read(settings_path(dir.path())).unwrap();
        let e = live
            .update(
                dir.path(),
                |s| {
                    s.evidence.tolerance_m = -1.0;
                    Ok(())
                },
                |_, _, write| write(),
            )
            .unwrap_err()
            .to_string();
        assert!(e.contains("evidence.tolerance_m"), "{e}");
        assert_eq!(std::fs::read(settings_path(dir.path())).unwrap(), before);
        assert_eq!(live.get().evidence.tolerance_m, 250.0);
        // A commit that fails (the log could not be written): nothing in force changes.
        let r = live.update(
            dir.path(),
            |s| {
                s.evidence.tolerance_m = 300.0;
                Ok(())
            },
            |_, _, _| Err::<(), _>(Error::Invalid("log refused".into())),
        );
        assert!(r.is_err());
        assert_eq!(live.get().evidence.tolerance_m, 250.0);
        assert_eq!(std::fs::read(settings_path(dir.path())).unwrap(), before);
    }

    #[test]
    fn a_save_frees_the_old_values_once_their_last_reader_is_done() {
        let dir = tempfile::tempdir().unwrap();
        let live = LiveSettings::new(Settings::default());
        let held = live.get();
        let old = Arc::downgrade(&held);
        let save = |m: f64| {
            live.update(
                dir.path(),
                |s| {
                    s.evidence.tolerance_m = m;
                    Ok(())
                },
                |_, _, write| write(),
            )
            .unwrap()
        };
        save(120.0);
        // A reader that took the values before the save keeps them whole.
        assert_eq!(held.evidence.tolerance_m, 100.0);
        assert_eq!(live.get().evidence.tolerance_m, 120.0);
        drop(held);
        assert!(old.upgrade().is_none(), "the old values were freed");
        // Many saves keep one value alive, not one per save.
        let middle = Arc::downgrade(&live.get());
        for i in 0..50 {
            save(130.0 + f64::from(i));
        }
        assert!(middle.upgrade().is_none());
        assert_eq!(
            Arc::strong_count(&live.get()),
            2,
            "the one in force and ours"
        );
    }

    #[test]
    fn a_server_follows_a_save_made_elsewhere_within_the_recheck() {
        let dir = tempfile::tempdir().unwrap();
        let live = LiveSettings::watching(Settings::default(), dir.path().to_path_buf());
        // Another server on the same data directory saves (here: another
        // LiveSettings writing the same file).
        let other = LiveSettings::new(Settings::default());
        other
            .update(
                dir.path(),
                |s| {
                    s.evidence.tolerance_m = 175.0;
                    Ok(())
                },
                |_, _, write| write(),
            )
            .unwrap();
        assert_eq!(
            live.get().evidence.tolerance_m,
            100.0,
            "not before the recheck"
        );
        std::thread::sleep(RECHECK + Duration::from_millis(50));
        assert_eq!(live.get().evidence.tolerance_m, 175.0);
        // A broken hand edit keeps the values in force.
        std::fs::write(settings_path(dir.path()), "[evidence\n").unwrap();
        std::thread::sleep(RECHECK + Duration::from_millis(50));
        assert_eq!(live.get().evidence.tolerance_m, 175.0);
        // Our own save is in force at once.
        std::fs::write(settings_path(dir.path()), "").unwrap();
        live.update(
            dir.path(),
            |s| {
                s.evidence.tolerance_m = 190.0;
                Ok(())
            },
            |_, _, write| write(),
        )
        .unwrap();
        assert_eq!(live.get().evidence.tolerance_m, 190.0);
    }

    #[test]
    fn an_unreadable_file_is_not_overwritten() {
        let dir = tempfile::tempdir().unwrap();
        std::fs::write(settings_path(dir.path()), "[cluster\n").unwrap();
        let live = LiveSettings::new(Settings::default());
        let e = live
            .update(dir.path(), |_| Ok(()), |_, _, write| write())
            .unwrap_err()
            .to_string();
        assert!(e.contains("not overwritten"), "{e}");
        assert_eq!(
            std::fs::read_to_string(settings_path(dir.path())).unwrap(),
            "[cluster\n"
        );
    }
}
