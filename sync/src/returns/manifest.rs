//! `return-manifest.json`: format, version, which bundle and key the return
//! belongs to, counts, and the SHA-256 and size of every entry except itself
//! and `signature.json`.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

use crate::bundle::{CameraZone, ManifestEntry, OpenedBundle};

/// Format name written into every return manifest.
pub const RETURN_FORMAT: &str = "groundproof-return";
/// Return format version this build writes and reads.
pub const RETURN_FORMAT_VERSION: u32 = 1;

/// Contents of `return-manifest.json`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ReturnManifest {
    /// Always [`RETURN_FORMAT`].
    pub format: String,
    /// Always [`RETURN_FORMAT_VERSION`].
    pub format_version: u32,
    /// Bundle the reports belong to.
    pub bundle_id: Uuid,
    /// Id of the upload key the return is signed with.
    pub upload_key_id: String,
    /// Team name from the bundle.
    pub team: String,
    /// When the return was packed.
    pub created_at: DateTime<Utc>,
    /// Version of the bundle's checklist the reports follow.
    pub checklist_version: u32,
    /// Reports in `reports.json`.
    pub report_count: u32,
    /// Photos under `photos/`.
    pub photo_count: u32,
    /// Every entry except this manifest and `signature.json`, sorted by name.
    pub entries: Vec<ManifestEntry>,
    /// The zone the team's cameras were set to, placing photo times written
    /// with neither offset nor GPS stamp; absent in returns written before it existed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub camera_zone: Option<CameraZone>,
}

/// What [`crate::returns::pack_return`] needs to know about the bundle.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ReturnHeader {
    /// Bundle id.
    pub bundle_id: Uuid,
    /// Team name.
    pub team: String,
    /// Checklist version of the bundle.
    pub checklist_version: u32,
    /// When the return is packed (written into the manifest; fixes the bytes).
    pub created_at: DateTime<Utc>,
    /// The trip's camera zone, if the field tool knows it.
    pub camera_zone: Option<CameraZone>,
}

impl ReturnHeader {
    /// The header for a return of `bundle` packed at `created_at`.
    pub fn for_bundle(bundle: &OpenedBundle, created_at: DateTime<Utc>) -> Self {
        ReturnHeader {
            bundle_id: bundle.manifest.bundle_id,
            team: bundle.manifest.team.clone(),
            checklist_version: bundle.checklist.version,
            created_at,
            camera_zone: bundle.manifest.camera_zone.clone(),
        }
    }
}

impl ReturnManifest {
    /// The listed entry called `name`.
    pub fn entry(&self, name: &str) -> Option<&ManifestEntry> {
        self.entries.iter().find(|e| e.name == name)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn manifest(zone: Option<CameraZone>) -> ReturnManifest {
        ReturnManifest {
            format: RETURN_FORMAT.into(),
            format_version: RETURN_FORMAT_VERSION,
            bundle_id: Uuid::from_u128(3),
            upload_key_id: "k1".into(),
            team: "Team Amber".into(),
            created_at: DateTime::from_timestamp(1_796_000_000, 0).expect("t"),
            checklist_version: 2,
            report_count: 0,
            photo_count: 0,
            entries: Vec::new(),
            camera_zone: zone,
        }
    }

    /// A return's camera zone round-trips; a return without one (written before
    /// the field existed) still reads, with none.
    #[test]
    fn camera_zone_round_trip_with_and_without() {
        let east = chrono::FixedOffset::east_opt(5 * 3600 + 30 * 60).expect("offset");
        let with = manifest(Some(CameraZone::new(east, "")));
        let json = serde_json::to_string(&with).expect("json");
        assert!(json.contains(r#""offset":"+05:30""#), "{json}");
        let back: ReturnManifest = serde_json::from_str(&json).expect("reads");
        assert_eq!(back, with);
        assert_eq!(back.camera_zone.expect("zone").fixed_offset(), Ok(east));

        let old = manifest(None);
        let json = serde_json::to_string(&old).expect("json");
        assert!(!json.contains("camera_zone"));
        let back: ReturnManifest = serde_json::from_str(&json).expect("old reads");
        assert_eq!(back.camera_zone, None);
    }
}
