//! `return-manifest.json`: format, version, which bundle and key the return
//! belongs to, counts, and the SHA-256 and size of every entry except itself
//! and `signature.json`.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

use crate::bundle::{ManifestEntry, OpenedBundle};

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
}

impl ReturnHeader {
    /// The header for a return of `bundle` packed at `created_at`.
    pub fn for_bundle(bundle: &OpenedBundle, created_at: DateTime<Utc>) -> Self {
        ReturnHeader {
            bundle_id: bundle.manifest.bundle_id,
            team: bundle.manifest.team.clone(),
            checklist_version: bundle.checklist.version,
            created_at,
        }
    }
}

impl ReturnManifest {
    /// The listed entry called `name`.
    pub fn entry(&self, name: &str) -> Option<&ManifestEntry> {
        self.entries.iter().find(|e| e.name == name)
    }
}
