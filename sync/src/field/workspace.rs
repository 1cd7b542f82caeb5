//! The field workspace on disk: `bundle.zip` (the bundle as received),
//! `bundle/` (its maps and route unpacked for other apps), `bundle.json`
//! (what the commands need from the bundle, written once on `open`),
//! `outbox.sqlite` and `photos/` (see [`crate::outbox`]), `outgoing/`
//! (packed returns). The upload key lives in `bundle.json`, so the file is
//! made readable by its owner only.

use std::path::{Path, PathBuf};

use chrono::{DateTime, Offset, Utc};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

use crate::SyncError;
use crate::bundle::{CameraZone, Checklist, OpenedBundle, UploadKey, parse_utc_offset};
use crate::outbox::write_atomic;

/// Snapshot file name in the workspace.
pub const SNAPSHOT: &str = "bundle.json";
/// Copy of the bundle ZIP in the workspace.
pub const BUNDLE_COPY: &str = "bundle.zip";
/// Folder the bundle's map entries are unpacked into.
pub const UNPACKED: &str = "bundle";
/// Folder of packed returns.
pub const OUTGOING: &str = "outgoing";
/// The trip's camera zone (an offset from UTC such as `+03:00`), set by `camera-zone`.
pub const CAMERA_ZONE: &str = "camera-zone";

/// The cameras' zone for this trip: what `camera-zone` set, else the bundle's
/// (the organisation's zone on the issue date), else UTC.
pub fn camera_zone(workspace: &Path) -> Result<chrono::FixedOffset, SyncError> {
    match std::fs::read_to_string(workspace.join(CAMERA_ZONE)) {
        Ok(text) => parse_offset(text.trim()),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            match Snapshot::load(workspace)?.camera_zone {
                Some(zone) => zone.fixed_offset().map_err(SyncError::Usage),
                None => Ok(chrono::Utc.fix()),
            }
        }
        Err(e) => Err(SyncError::io("read the camera zone", e)),
    }
}

/// The camera zone a return carries: the trip's offset, named after the
/// bundle's zone when the offset is the bundle's.
pub fn camera_zone_record(workspace: &Path) -> Result<CameraZone, SyncError> {
    let offset = camera_zone(workspace)?;
    let bundle = Snapshot::load(workspace)?.camera_zone;
    let name = bundle
        .filter(|z| z.fixed_offset().ok() == Some(offset))
        .map(|z| z.name)
        .unwrap_or_default();
    Ok(CameraZone::new(offset, &name))
}

/// An offset from UTC, `+HH:MM` or `-HH:MM`, within ±14:00 (the zones in use).
pub fn parse_offset(raw: &str) -> Result<chrono::FixedOffset, SyncError> {
    parse_utc_offset(raw).map_err(SyncError::Usage)
}

/// An event as the field commands see it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FieldEvent {
    pub code: String,
    pub event_id: i64,
    pub lat: f64,
    pub lon: f64,
    pub area_ha: f64,
    pub first_detected: String,
    pub last_detected: String,
    pub sources: Vec<String>,
    pub confidence: String,
    pub corroborated: bool,
    pub visit_order: u32,
}

/// A control point as the field commands see it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FieldControl {
    pub code: String,
    pub lat: f64,
    pub lon: f64,
    pub visit_order: u32,
}

/// What the commands need from the opened bundle.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Snapshot {
    pub bundle_id: Uuid,
    pub team: String,
    pub mode: String,
    pub issued_at: DateTime<Utc>,
    pub due_at: DateTime<Utc>,
    pub expires_at: DateTime<Utc>,
    pub upload_key_id: String,
    pub upload_key_hex: String,
    pub checklist: Checklist,
    pub start_name: String,
    pub start_lat: f64,
    pub start_lon: f64,
    pub events: Vec<FieldEvent>,
    pub controls: Vec<FieldControl>,
    /// Codes in visit order.
    pub route: Vec<String>,
    /// The bundle's camera zone, if it carries one.
    #[serde(default)]
    pub camera_zone: Option<CameraZone>,
}

/// A stop of the route.
#[derive(Debug, Clone, Copy)]
pub enum Stop<'a> {
    Event(&'a FieldEvent),
    Control(&'a FieldControl),
}

impl Stop<'_> {
    /// Its code.
    pub fn code(&self) -> &str {
        match self {
            Stop::Event(e) => &e.code,
            Stop::Control(c) => &c.code,
        }
    }

    /// Latitude and longitude.
    pub fn lat_lon(&self) -> (f64, f64) {
        match self {
            Stop::Event(e) => (e.lat, e.lon),
            Stop::Control(c) => (c.lat, c.lon),
        }
    }
}

impl Snapshot {
    /// The snapshot of an opened bundle.
    pub fn of(b: &OpenedBundle) -> Self {
        let m = &b.manifest;
        Snapshot {
            bundle_id: m.bundle_id,
            team: m.team.clone(),
            mode: m.mode.clone(),
            issued_at: m.issued_at,
            due_at: m.due_at,
            expires_at: m.expires_at,
            upload_key_id: b.upload_key.key_id.clone(),
            upload_key_hex: hex::encode(b.upload_key.key),
            checklist: b.checklist.clone(),
            start_name: b.start.name.clone(),
            start_lat: b.start.point.y(),
            start_lon: b.start.point.x(),
            events: b
                .events
                .iter()
                .map(|e| FieldEvent {
                    code: e.code.clone(),
                    event_id: e.event_id,
                    lat: e.centroid.y(),
                    lon: e.centroid.x(),
                    area_ha: e.area_ha,
                    first_detected: e.first_detected.clone(),
                    last_detected: e.last_detected.clone(),
                    sources: e.sources.clone(),
                    confidence: e.confidence.clone(),
                    corroborated: e.corroborated,
                    visit_order: e.visit_order,
                })
                .collect(),
            controls: b
                .controls
                .iter()
                .map(|c| FieldControl {
                    code: c.code.clone(),
                    lat: c.point.y(),
                    lon: c.point.x(),
                    visit_order: c.visit_order,
                })
                .collect(),
            route: b.route.clone(),
            camera_zone: m.camera_zone.clone(),
        }
    }

    /// The upload key.
    pub fn upload_key(&self) -> Result<UploadKey, SyncError> {
        let mut key = [0u8; 32];
        hex::decode_to_slice(&self.upload_key_hex, &mut key)
            .map_err(|_| SyncError::Usage(format!("{SNAPSHOT}: the upload key is damaged")))?;
        Ok(UploadKey {
            key_id: self.upload_key_id.clone(),
            key,
        })
    }

    /// The event or control point with this code.
    pub fn stop(&self, code: &str) -> Option<Stop<'_>> {
        self.events
            .iter()
            .find(|e| e.code == code)
            .map(Stop::Event)
            .or_else(|| {
                self.controls
                    .iter()
                    .find(|c| c.code == code)
                    .map(Stop::Control)
            })
    }

    /// Stops in visit order.
    pub fn stops(&self) -> impl Iterator<Item = Stop<'_>> {
        self.route.iter().filter_map(|c| self.stop(c))
    }

    /// Loads the snapshot of `workspace`.
    pub fn load(workspace: &Path) -> Result<Self, SyncError> {
        let path = workspace.join(SNAPSHOT);
        let bytes = std::fs::read(&path).map_err(|e| {
            if e.kind() == std::io::ErrorKind::NotFound {
                SyncError::Usage(format!(
                    "no bundle opened in {}; run `groundproof-field open BUNDLE.zip` first",
                    workspace.display()
                ))
            } else {
                SyncError::io(format!("read {}", path.display()), e)
            }
        })?;
        serde_json::from_slice(&bytes)
            .map_err(|e| SyncError::Usage(format!("{} is damaged: {e}", path.display())))
    }

    /// Saves the snapshot into `workspace` atomically, readable by the owner only.
    pub fn save(&self, workspace: &Path) -> Result<PathBuf, SyncError> {
        let path = workspace.join(SNAPSHOT);
        let bytes = serde_json::to_vec_pretty(self)
            .map_err(|e| SyncError::InvalidInput(format!("snapshot: {e}")))?;
        write_atomic(&path, &bytes)?;
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o600))
                .map_err(|e| SyncError::io(format!("restrict {}", path.display()), e))?;
        }
        Ok(path)
    }
}
