//! Settings of one data directory, read from `settings.toml` in it when
//! present; every field has a documented default. The numbers and their
//! defaults are plain data in [`crate::domain::tuning`], so the pure modules
//! that use them (clustering, priority, intake's checks) need no file access.
//!
//! The organisation's settings live in the database (one row with a version,
//! `platform::storage::shared`), so that every server instance on one
//! database uses the same values. `settings.toml` in each data directory is
//! the way in and a copy: on the first start of a data directory from before
//! (nothing stored yet) its values are taken in ([`open_shared`]); afterwards
//! each server writes the stored values there (with the version in its first
//! line), and an edit of that copy is taken in like a save
//! ([`take_in_file`]: checked, logged; a copy of an older version is never
//! taken in, so it cannot undo another server's change). The settings page
//! changes them through [`LiveSettings::update`]: one transaction reads the
//! stored version, applies the change, checks every bound, appends the log
//! row and stores the next version (nothing half-written); other instances
//! follow within [`POLL`]. A file the server cannot read is never overwritten.

use crate::domain::OrgZone;
pub use crate::domain::tuning::{
    ClusterSettings, DEFAULT_TOLERANCE_M, EvidenceSettings, PriorityWeights,
};
use crate::error::{Error, Result};
use crate::platform::storage::{Db, Reader, Tx};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicI64, Ordering};
use std::sync::{Arc, Mutex, RwLock};
use std::time::Duration;

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

/// The first line of the copy each server writes: the stored version it
/// holds follows (`# Groundproof settings, version 7 …`).
const VERSION_LINE: &str = "# Groundproof settings, version ";

/// The stored version a copy of the settings names in its first line.
fn copy_version(text: &str) -> Option<i64> {
    let rest = text.lines().next()?.strip_prefix(VERSION_LINE)?;
    rest.split(|c: char| !c.is_ascii_digit())
        .next()?
        .parse()
        .ok()
}

/// The text of `settings.toml` as a server writes it: the values of
/// stored `version` with a header that says what the file is.
fn copy_text(version: i64, s: &Settings) -> Result<String> {
    Ok(format!(
        "{VERSION_LINE}{version} (a copy written by the server; the database holds the settings).\n\
         # Change them on the settings page, or edit this file: a running server takes an edit\n\
         # of this version in (checked, logged) and every server uses it within seconds.\n\
         # Comments are not kept.\n{}",
        s.to_toml()?
    ))
}

fn write_settings_file(path: &Path, text: &str) -> Result<()> {
    use std::io::Write as _;
    super::durable::write_durably(path, |f| {
        f.write_all(text.as_bytes())
            .map_err(|e| Error::io(format!("writing {}", path.display()), e))
    })
}

/// `section.field old → new` for each value that differs (the change
/// log's words for a change of the settings).
pub fn changes(old: &Settings, new: &Settings) -> Result<Vec<String>> {
    let flat = |s: &Settings| -> Result<Vec<(String, String)>> {
        let v = toml::Value::try_from(s)
            .map_err(|e| Error::Invalid(format!("reading the settings: {e}")))?;
        let mut out = Vec::new();
        for (section, table) in v.as_table().into_iter().flatten() {
            for (k, val) in table.as_table().into_iter().flatten() {
                out.push((format!("{section}.{k}"), val.to_string()));
            }
        }
        Ok(out)
    };
    let (a, b) = (flat(old)?, flat(new)?);
    Ok(b.iter()
        .filter_map(|(k, nv)| {
            let ov = a.iter().find(|(ka, _)| ka == k).map(|(_, v)| v.as_str());
            (ov != Some(nv.as_str())).then(|| format!("{k} {} → {nv}", ov.unwrap_or("none")))
        })
        .collect())
}

/// The stored settings, read and checked; `None` when none were stored.
fn stored(r: &Reader<'_>) -> Result<Option<(i64, Settings)>> {
    let Some(row) = r.stored_settings()? else {
        return Ok(None);
    };
    let s: Settings = toml::from_str(&row.text).map_err(|e| {
        Error::Internal(format!(
            "the stored settings (version {}): {e}",
            row.version
        ))
    })?;
    s.check().map_err(|m| {
        Error::Internal(format!(
            "the stored settings (version {}): {m}",
            row.version
        ))
    })?;
    Ok(Some((row.version, s)))
}

/// What became of `settings.toml` when it was compared with the stored
/// settings ([`take_in_file`]).
#[derive(Debug, Clone, PartialEq)]
pub enum FileOutcome {
    /// No file, or its values are the stored ones.
    Same,
    /// Its values were stored as this version (the first stored settings,
    /// or an edit of the version in force).
    TakenIn(i64),
    /// It does not read or check; the stored values stay.
    Refused(String),
    /// It names an older version than the stored one (or none) and its
    /// values differ: not taken in, so another server's change is not undone.
    Stale { stored: i64, file: Option<i64> },
}

/// Compares `DATA/settings.toml` with the stored settings in one
/// transaction and takes its values in when they are the first settings
/// stored (a data directory from before the settings were in the database)
/// or an edit of the version in force; each taken-in change has its row in
/// the change log. Never writes the file.
pub fn take_in_file(db: &Db, data_dir: &Path, now: i64) -> Result<FileOutcome> {
    let path = settings_path(data_dir);
    let text = match std::fs::read_to_string(&path) {
        Ok(t) => t,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(FileOutcome::Same),
        Err(e) => return Err(Error::io(format!("reading {}", path.display()), e)),
    };
    let file: Settings = match toml::from_str::<Settings>(&text)
        .map_err(|e| e.to_string())
        .and_then(|s| s.check().map(|()| s))
    {
        Ok(s) => s,
        Err(m) => return Ok(FileOutcome::Refused(format!("{}: {m}", path.display()))),
    };
    let named = copy_version(&text);
    let source = path.display().to_string();
    db.write_bookkeeping(|tx| {
        let current = stored(&tx.reader())?;
        if current.as_ref().is_some_and(|(_, s)| *s == file) {
            return Ok(FileOutcome::Same);
        }
        let (version, old) = match current {
            None => (0, None),
            Some((v, s)) if named == Some(v) => (v, Some(s)),
            Some((v, _)) => {
                return Ok(FileOutcome::Stale {
                    stored: v,
                    file: named,
                });
            }
        };
        let (action, detail) = match &old {
            None => ("settings.import", format!("taken in from {source}")),
            Some(o) => ("settings.change", changes(o, &file)?.join("; ")),
        };
        tx.append_admin_log(now, &source, action, "settings", &detail)?;
        tx.put_settings(version + 1, &file.to_toml()?, now)?;
        Ok(FileOutcome::TakenIn(version + 1))
    })
}

/// The settings a command or a starting server uses: the stored ones,
/// after `settings.toml` was compared with them ([`take_in_file`]: on the
/// first start of a data directory from before, its file is taken in, and
/// the log says so). A file that does not read stops the start when nothing
/// is stored yet (as it always did); otherwise the stored values stay and
/// the log warns. Returns the stored version (0: none stored, the defaults)
/// and the values.
pub fn open_shared(db: &Db, data_dir: &Path, now: i64) -> Result<(i64, Settings)> {
    let outcome = take_in_file(db, data_dir, now)?;
    let current = db.read(stored)?;
    if let (FileOutcome::Refused(m), None) = (&outcome, &current) {
        return Err(Error::Invalid(m.clone()));
    }
    report(&outcome, data_dir, now);
    let (version, settings) = current.unwrap_or_default();
    if version > 0 {
        write_copy(data_dir, version, &settings)?;
    }
    Ok((version, settings))
}

/// Says in the log what [`take_in_file`] did, and keeps a stale file
/// aside (`settings.toml.set-aside-<unix seconds>`) so no edit in it is lost.
fn report(outcome: &FileOutcome, data_dir: &Path, now: i64) {
    match outcome {
        FileOutcome::Same => {}
        FileOutcome::TakenIn(1) => tracing::info!(
            "settings.toml taken into the database as the organisation's settings (version 1): from now on the database holds them, and settings.toml is the copy each server writes (an edit of it is still taken in)"
        ),
        FileOutcome::TakenIn(v) => {
            tracing::info!("an edit of settings.toml taken in as the settings' version {v}")
        }
        FileOutcome::Refused(m) => {
            tracing::warn!("settings.toml is refused, the stored settings stay: {m}")
        }
        FileOutcome::Stale { stored, file } => {
            let from = settings_path(data_dir);
            let to = data_dir.join(format!("settings.toml.set-aside-{now}"));
            let kept = std::fs::rename(&from, &to).map(|()| to.display().to_string());
            tracing::warn!(
                ?kept,
                "settings.toml names version {file:?} of the settings but the database holds version {stored} with other values: it is not taken in (another server changed them since); it is kept aside and the stored values are written in its place"
            )
        }
    }
}

/// Writes the copy of stored `version` unless the file already is it, or
/// holds text that does not read or check as settings (someone is editing
/// it: it is never overwritten, and the log says so when it is looked at).
fn write_copy(data_dir: &Path, version: i64, s: &Settings) -> Result<()> {
    let path = settings_path(data_dir);
    let text = copy_text(version, s)?;
    let refused = |t: &str| toml::from_str::<Settings>(t).map_or(true, |s| s.check().is_err());
    match std::fs::read_to_string(&path) {
        Ok(t) if t == text || refused(&t) => return Ok(()),
        _ => {}
    }
    write_settings_file(&path, &text)
}

/// The settings a running server uses, the same on every instance of one
/// database.
///
/// [`LiveSettings::get`] hands out the values in force as an `Arc`: a
/// handler keeps the value it took for as long as it needs it, a save swaps
/// in a new `Arc`, and the old value is freed when its last reader drops it.
/// A server's settings ([`LiveSettings::shared`]) follow the database: a
/// thread looks at the stored version every [`POLL`] and, when another
/// instance saved, reads the stored values and writes the data directory's
/// copy (`settings.toml`); the same thread takes in an edit of that copy
/// ([`take_in_file`]).
pub struct LiveSettings {
    current: RwLock<Arc<Settings>>,
    /// The stored version in force (0: none stored).
    version: AtomicI64,
    /// Serialises changes and reloads.
    writing: Mutex<()>,
    shared: Option<Shared>,
}

/// How often a server looks whether the stored settings or its copy changed.
pub const POLL: Duration = Duration::from_millis(500);

/// The database and data directory of [`LiveSettings::shared`].
struct Shared {
    db: Arc<Db>,
    data_dir: PathBuf,
    /// The copy as last read or written (`None`: there was none).
    mark: Mutex<Option<FileMark>>,
}

/// What tells a changed file: modification time and length.
#[derive(Debug, Clone, PartialEq, Eq)]
struct FileMark(std::time::SystemTime, u64);

fn file_mark(path: &Path) -> Option<FileMark> {
    let m = std::fs::metadata(path).ok()?;
    Some(FileMark(m.modified().ok()?, m.len()))
}

fn unix_now() -> i64 {
    std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0)
}

impl LiveSettings {
    /// Values that nothing stores (tests, tools): [`LiveSettings::update`]
    /// refuses.
    pub fn new(settings: Settings) -> LiveSettings {
        LiveSettings {
            current: RwLock::new(Arc::new(settings)),
            version: AtomicI64::new(0),
            writing: Mutex::new(()),
            shared: None,
        }
    }

    /// The settings of `db` (`fallback` while none are stored: what the
    /// caller read at start, or the defaults), followed by a thread of their
    /// own until the last `Arc` is dropped. Call off the async executor.
    pub fn shared(db: Arc<Db>, data_dir: PathBuf, fallback: Settings) -> Arc<LiveSettings> {
        let found = db.read(stored).unwrap_or_else(|e| {
            tracing::warn!("the stored settings cannot be read, the values handed in stay: {e}");
            None
        });
        let (version, settings) = found.unwrap_or((0, fallback));
        let mark = file_mark(&settings_path(&data_dir));
        let live = Arc::new(LiveSettings {
            shared: Some(Shared {
                db,
                data_dir,
                mark: Mutex::new(mark),
            }),
            version: AtomicI64::new(version),
            ..LiveSettings::new(settings)
        });
        let weak = Arc::downgrade(&live);
        let spawned = std::thread::Builder::new()
            .name("settings".into())
            .spawn(move || {
                while let Some(live) = weak.upgrade() {
                    live.follow();
                    drop(live);
                    std::thread::sleep(POLL);
                }
            });
        if let Err(e) = spawned {
            tracing::warn!("settings are not followed (no thread: {e}); a restart reads them");
        }
        live
    }

    /// The settings in force now.
    pub fn get(&self) -> Arc<Settings> {
        Arc::clone(&self.current.read().unwrap_or_else(|p| p.into_inner()))
    }

    /// The stored version in force (0: none stored).
    pub fn version(&self) -> i64 {
        self.version.load(Ordering::Acquire)
    }

    fn set(&self, version: i64, s: Settings) {
        *self.current.write().unwrap_or_else(|p| p.into_inner()) = Arc::new(s);
        self.version.store(version, Ordering::Release);
    }

    /// One look: an edit of the copy is taken in, then a stored version
    /// other than ours is read and put in force. Never waits for a save.
    pub fn follow(&self) {
        let Some(sh) = &self.shared else { return };
        let Ok(_guard) = self.writing.try_lock() else {
            return;
        };
        let path = settings_path(&sh.data_dir);
        let now = file_mark(&path);
        let mut mark = sh.mark.lock().unwrap_or_else(|p| p.into_inner());
        if now != *mark {
            *mark = now;
            match take_in_file(&sh.db, &sh.data_dir, unix_now()) {
                Ok(o) => {
                    report(&o, &sh.data_dir, unix_now());
                    // A stale file was set aside: the copy goes in its place.
                    if matches!(o, FileOutcome::Stale { .. }) && self.version() > 0 {
                        let _ = write_copy(&sh.data_dir, self.version(), &self.get());
                        *mark = file_mark(&path);
                    }
                }
                Err(e) => tracing::warn!("settings.toml could not be compared: {e}"),
            }
        }
        let moved = sh.db.read(|r| r.settings_version());
        if moved.as_ref().is_ok_and(|v| *v == self.version()) {
            return;
        }
        match sh.db.read(stored) {
            Ok(Some((v, s))) => {
                if let Err(e) = write_copy(&sh.data_dir, v, &s) {
                    tracing::warn!("the copy of the settings could not be written: {e}");
                }
                *mark = file_mark(&path);
                tracing::info!("the settings' version {v} is now in force");
                self.set(v, s);
            }
            Ok(None) => {}
            Err(e) => {
                tracing::warn!("the stored settings cannot be read, the values in force stay: {e}")
            }
        }
    }

    /// Change the stored settings: in one transaction read the stored
    /// version (another instance's change is never undone unseen), apply
    /// `change`, check every bound, run `commit` with the old and new
    /// values (the caller's log entry, in the same transaction) and store
    /// the next version; only after the commit are the new values in force
    /// here (other instances follow within [`POLL`]) and the copy written.
    /// Nothing is stored when `change`, the check or `commit` fails.
    pub fn update<T>(
        &self,
        change: impl FnOnce(&mut Settings) -> Result<()>,
        commit: impl FnOnce(&Tx<'_>, &Settings, &Settings) -> Result<T>,
        now: i64,
    ) -> Result<(Settings, T)> {
        let Some(sh) = &self.shared else {
            return Err(Error::Conflict(
                "these settings are not stored: nothing to change".into(),
            ));
        };
        let _guard = self.writing.lock().unwrap_or_else(|p| p.into_inner());
        let in_force = self.get();
        let (version, new, out) = sh.db.write_bookkeeping(|tx| {
            let (version, old) = stored(&tx.reader())?.unwrap_or((0, (*in_force).clone()));
            let mut new = old.clone();
            change(&mut new)?;
            new.check().map_err(Error::Invalid)?;
            let out = commit(tx, &old, &new)?;
            tx.put_settings(version + 1, &new.to_toml()?, now)?;
            Ok((version + 1, new, out))
        })?;
        self.set(version, new.clone());
        let path = settings_path(&sh.data_dir);
        if let Err(e) = write_copy(&sh.data_dir, version, &new) {
            tracing::warn!("the copy of the settings could not be written: {e}");
        }
        *sh.mark.lock().unwrap_or_else(|p| p.into_inner()) = file_mark(&path);
        Ok((new, out))
    }
}

impl std::fmt::Debug for LiveSettings {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.get().fmt(f)
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

    fn shared(dir: &Path) -> (Arc<Db>, Arc<LiveSettings>) {
        let db = Arc::new(crate::platform::storage::test_db(dir));
        let live = LiveSettings::shared(db.clone(), dir.to_path_buf(), Settings::default());
        (db, live)
    }

    fn set_tolerance(live: &LiveSettings, m: f64) -> Result<(Settings, ())> {
        live.update(
            |s| {
                s.evidence.tolerance_m = m;
                Ok(())
            },
            |tx, old, new| {
                let detail = changes(old, new)?.join("; ");
                tx.append_admin_log(1, "test", "settings.change", "settings", &detail)
                    .map(drop)
            },
            1,
        )
    }

    #[test]
    fn an_update_stores_the_next_version_writes_the_copy_and_refuses_bad_values() {
        let dir = tempfile::tempdir().unwrap();
        let (db, live) = shared(dir.path());
        assert_eq!(live.version(), 0);
        let (new, ()) = set_tolerance(&live, 250.0).unwrap();
        assert_eq!(live.get().evidence.tolerance_m, 250.0);
        assert_eq!(live.version(), 1);
        let row = db.read(|r| r.stored_settings()).unwrap().unwrap();
        assert_eq!(toml::from_str::<Settings>(&row.text).unwrap(), new);
        // The copy names its version and reads as the same values.
        let text = std::fs::read_to_string(settings_path(dir.path())).unwrap();
        assert_eq!(copy_version(&text), Some(1));
        assert_eq!(Settings::load(dir.path()).unwrap(), new);
        // A bad value: nothing stored, nothing logged, nothing in force changes.
        let log = |db: &Db| db.read(|r| r.admin_log(None, 100)).unwrap().len();
        let n = log(&db);
        let e = set_tolerance(&live, -1.0).unwrap_err().to_string();
        assert!(e.contains("evidence.tolerance_m"), "{e}");
        assert_eq!(db.read(|r| r.settings_version()).unwrap(), 1);
        assert_eq!(log(&db), n);
        assert_eq!(
            std::fs::read_to_string(settings_path(dir.path())).unwrap(),
            text
        );
        // A commit that fails (the log could not be written): nothing stored.
        let r = live.update(
            |s| {
                s.evidence.tolerance_m = 300.0;
                Ok(())
            },
            |_, _, _| Err::<(), _>(Error::Invalid("log refused".into())),
            2,
        );
        assert!(r.is_err());
        assert_eq!(live.get().evidence.tolerance_m, 250.0);
        assert_eq!(db.read(|r| r.settings_version()).unwrap(), 1);
        // Values nothing stores cannot be changed.
        assert!(set_tolerance(&LiveSettings::new(Settings::default()), 120.0).is_err());
    }

    #[test]
    fn a_save_frees_the_old_values_once_their_last_reader_is_done() {
        let dir = tempfile::tempdir().unwrap();
        let (_db, live) = shared(dir.path());
        let held = live.get();
        let old = Arc::downgrade(&held);
        let save = |m: f64| set_tolerance(&live, m).unwrap();
        save(120.0);
        // A reader that took the values before the save keeps them whole.
        assert_eq!(held.evidence.tolerance_m, 100.0);
        assert_eq!(live.get().evidence.tolerance_m, 120.0);
        drop(held);
        assert!(old.upgrade().is_none(), "the old values were freed");
        // Many saves keep one value alive, not one per save.
        let middle = Arc::downgrade(&live.get());
        for i in 0..20 {
            save(130.0 + f64::from(i));
        }
        assert!(middle.upgrade().is_none());
        let now = live.get();
        assert!(
            Arc::strong_count(&now) <= 3,
            "the one in force, ours, and at most the follower's"
        );
    }

    #[test]
    fn another_instance_follows_a_save_within_the_poll() {
        let dir = tempfile::tempdir().unwrap();
        let other_dir = tempfile::tempdir().unwrap();
        let (db, live) = shared(dir.path());
        // A second instance: the same database, a data directory of its own.
        let other = LiveSettings::shared(
            db.clone(),
            other_dir.path().to_path_buf(),
            Settings::default(),
        );
        set_tolerance(&live, 175.0).unwrap();
        let deadline = std::time::Instant::now() + POLL * 8;
        while other.get().evidence.tolerance_m != 175.0 && std::time::Instant::now() < deadline {
            std::thread::sleep(Duration::from_millis(50));
        }
        assert_eq!(other.get().evidence.tolerance_m, 175.0);
        assert_eq!(other.version(), 1);
        // Its own copy is written too.
        let text = std::fs::read_to_string(settings_path(other_dir.path())).unwrap();
        assert_eq!(copy_version(&text), Some(1));
        assert!(text.contains("tolerance_m = 175.0"), "{text}");
    }

    #[test]
    fn the_file_is_taken_in_first_then_an_edit_of_its_version_but_never_a_stale_copy() {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        let file = settings_path(dir.path());
        assert_eq!(take_in_file(&db, dir.path(), 1).unwrap(), FileOutcome::Same);
        // A data directory from before: its file is taken in as version 1.
        std::fs::write(&file, "[cluster]\nwindow_days = 45\n").unwrap();
        let (v, s) = open_shared(&db, dir.path(), 2).unwrap();
        assert_eq!((v, s.cluster.window_days), (1, 45));
        let log = db.read(|r| r.admin_log(None, 1)).unwrap();
        assert_eq!(log[0].action, "settings.import");
        // ... and the file is now the copy of version 1.
        let copy = std::fs::read_to_string(&file).unwrap();
        assert_eq!(copy_version(&copy), Some(1));
        assert_eq!(take_in_file(&db, dir.path(), 3).unwrap(), FileOutcome::Same);
        // An edit of the copy of version 1: taken in as version 2, logged.
        std::fs::write(&file, copy.replace("window_days = 45", "window_days = 60")).unwrap();
        assert_eq!(
            take_in_file(&db, dir.path(), 4).unwrap(),
            FileOutcome::TakenIn(2)
        );
        let log = db.read(|r| r.admin_log(None, 1)).unwrap();
        assert_eq!(log[0].detail, "cluster.window_days 45 → 60");
        // A copy of version 1 with other values (another server saved since): not taken in.
        std::fs::write(&file, copy.replace("window_days = 45", "window_days = 90")).unwrap();
        assert_eq!(
            take_in_file(&db, dir.path(), 5).unwrap(),
            FileOutcome::Stale {
                stored: 2,
                file: Some(1)
            }
        );
        // Nor a file without a version once settings are stored.
        std::fs::write(&file, "[cluster]\nwindow_days = 90\n").unwrap();
        assert!(matches!(
            take_in_file(&db, dir.path(), 6).unwrap(),
            FileOutcome::Stale { file: None, .. }
        ));
        // open_shared keeps such a file aside and writes the stored values in its place.
        let (v, s) = open_shared(&db, dir.path(), 7).unwrap();
        assert_eq!((v, s.cluster.window_days), (2, 60));
        let aside = std::fs::read_to_string(dir.path().join("settings.toml.set-aside-7")).unwrap();
        assert_eq!(aside, "[cluster]\nwindow_days = 90\n");
        assert_eq!(Settings::load(dir.path()).unwrap().cluster.window_days, 60);
        // A file out of bounds: refused, nothing stored.
        std::fs::write(&file, "[cluster]\nwindow_days = 9999\n").unwrap();
        assert!(matches!(
            take_in_file(&db, dir.path(), 8).unwrap(),
            FileOutcome::Refused(m) if m.contains("cluster.window_days")
        ));
        assert_eq!(db.read(|r| r.settings_version()).unwrap(), 2);
    }

    #[test]
    fn a_broken_file_stops_a_first_start_and_is_never_overwritten() {
        let dir = tempfile::tempdir().unwrap();
        let db = crate::platform::storage::test_db(dir.path());
        std::fs::write(settings_path(dir.path()), "[cluster\n").unwrap();
        let e = open_shared(&db, dir.path(), 1).unwrap_err().to_string();
        assert!(e.contains("settings.toml"), "{e}");
        let live =
            LiveSettings::shared(Arc::new(db), dir.path().to_path_buf(), Settings::default());
        set_tolerance(&live, 150.0).unwrap();
        assert_eq!(
            std::fs::read_to_string(settings_path(dir.path())).unwrap(),
            "[cluster\n"
        );
    }
}
