//! `manifest.json` and `upload-key.json`: the manifest names the format and
//! its version, repeats the bundle header, counts what is inside and lists
//! every other entry with its SHA-256 and size; the upload key file carries
//! the 256-bit key the field kit signs returns with.

use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use super::types::{BundleHeader, CameraZone, is_key_id};
use crate::{BUNDLE_FORMAT, BUNDLE_FORMAT_VERSION};

/// Contents of `manifest.json`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Manifest {
    /// Always [`BUNDLE_FORMAT`].
    pub format: String,
    /// Always [`BUNDLE_FORMAT_VERSION`] for bundles this build writes.
    pub format_version: u32,
    /// Id of the bundle.
    pub bundle_id: uuid::Uuid,
    /// Team name.
    pub team: String,
    /// `response` or `assessment`.
    pub mode: String,
    /// When the office issued the bundle (RFC 3339).
    pub issued_at: DateTime<Utc>,
    /// When the team should be back (RFC 3339).
    pub due_at: DateTime<Utc>,
    /// After this the bundle is refused (RFC 3339).
    pub expires_at: DateTime<Utc>,
    /// Id of the upload key in `upload-key.json`.
    pub upload_key_id: String,
    /// Seed of the assessment sample, if any.
    pub seed: Option<u64>,
    /// Version of the checklist in `checklist.json`.
    pub checklist_version: u32,
    /// What the bundle holds.
    pub counts: ManifestCounts,
    /// Every entry except `manifest.json` itself, sorted by name.
    pub entries: Vec<ManifestEntry>,
    /// The trip's default camera zone (the organisation's zone on the issue
    /// date); absent in bundles written before it existed.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub camera_zone: Option<CameraZone>,
}

/// Counts of what a bundle holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct ManifestCounts {
    /// Clearing events.
    pub events: u32,
    /// Control points.
    pub control_points: u32,
    /// Stops on the route after the start (events plus control points).
    pub route_stops: u32,
}

/// One entry listed in the manifest.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ManifestEntry {
    /// Entry name in the ZIP.
    pub name: String,
    /// SHA-256 of the uncompressed content, lowercase hex.
    pub sha256: String,
    /// Uncompressed size in bytes.
    pub size: u64,
}

impl Manifest {
    /// A manifest for `header` with the given counts, checklist version and entries.
    pub fn new(
        header: &BundleHeader,
        checklist_version: u32,
        counts: ManifestCounts,
        mut entries: Vec<ManifestEntry>,
    ) -> Self {
        entries.sort_by(|a, b| a.name.cmp(&b.name));
        Manifest {
            format: BUNDLE_FORMAT.to_owned(),
            format_version: BUNDLE_FORMAT_VERSION,
            bundle_id: header.bundle_id,
            team: header.team.clone(),
            mode: header.mode.clone(),
            issued_at: header.issued_at,
            due_at: header.due_at,
            expires_at: header.expires_at,
            upload_key_id: header.upload_key_id.clone(),
            seed: header.seed,
            checklist_version,
            counts,
            entries,
            camera_zone: header.camera_zone.clone(),
        }
    }

    /// The bundle header repeated in this manifest.
    pub fn header(&self) -> BundleHeader {
        BundleHeader {
            bundle_id: self.bundle_id,
            team: self.team.clone(),
            mode: self.mode.clone(),
            issued_at: self.issued_at,
            due_at: self.due_at,
            expires_at: self.expires_at,
            upload_key_id: self.upload_key_id.clone(),
            seed: self.seed,
            camera_zone: self.camera_zone.clone(),
        }
    }

    /// The listed entry called `name`.
    pub fn entry(&self, name: &str) -> Option<&ManifestEntry> {
        self.entries.iter().find(|e| e.name == name)
    }
}

/// The upload key of a bundle. `Debug` does not print the key.
#[derive(Clone, PartialEq, Eq)]
pub struct UploadKey {
    /// Id of the key, as in the manifest.
    pub key_id: String,
    /// The 256-bit HMAC-SHA256 key.
    pub key: [u8; 32],
}

impl std::fmt::Debug for UploadKey {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("UploadKey")
            .field("key_id", &self.key_id)
            .field("key", &"<redacted>")
            .finish()
    }
}

/// Wire form of `upload-key.json`.
#[derive(Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
struct UploadKeyFile {
    key_id: String,
    key_hex: String,
}

impl UploadKey {
    /// The bytes of `upload-key.json`: `{"key_id": …, "key_hex": …}`.
    pub fn to_json(&self) -> Vec<u8> {
        let file = UploadKeyFile {
            key_id: self.key_id.clone(),
            key_hex: hex::encode(self.key),
        };
        // Serialising a struct of two strings cannot fail.
        serde_json::to_vec_pretty(&file).unwrap_or_default()
    }

    /// Parses `upload-key.json`; the error says what is wrong.
    pub fn from_json(bytes: &[u8]) -> Result<Self, String> {
        let file: UploadKeyFile = serde_json::from_slice(bytes).map_err(|e| e.to_string())?;
        if !is_key_id(&file.key_id) {
            return Err(format!(
                "key_id {:?} must be 1-64 chars of [A-Za-z0-9_-]",
                file.key_id
            ));
        }
        let mut key = [0u8; 32];
        hex::decode_to_slice(&file.key_hex, &mut key)
            .map_err(|_| "key_hex must be 64 hexadecimal digits (256 bits)".to_owned())?;
        Ok(UploadKey {
            key_id: file.key_id,
            key,
        })
    }
}

/// Lowercase hex SHA-256 of `bytes`.
pub fn sha256_hex(bytes: &[u8]) -> String {
    hex::encode(Sha256::digest(bytes))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::bundle::read::parse_manifest;
    use chrono::TimeZone;

    fn manifest(zone: Option<CameraZone>) -> Manifest {
        let t = |d| {
            Utc.with_ymd_and_hms(2026, 11, d, 8, 0, 0)
                .single()
                .expect("t")
        };
        let header = BundleHeader {
            bundle_id: uuid::Uuid::from_u128(9),
            team: "Team Amber".into(),
            mode: "response".into(),
            issued_at: t(1),
            due_at: t(5),
            expires_at: t(9),
            upload_key_id: "k1".into(),
            seed: None,
            camera_zone: zone,
        };
        let counts = ManifestCounts {
            events: 0,
            control_points: 0,
            route_stops: 0,
        };
        Manifest::new(&header, 2, counts, Vec::new())
    }

    /// The camera zone survives a write and a read; a bundle written before it
    /// existed (no key at all) still reads, with no zone; a bad offset is refused.
    #[test]
    fn camera_zone_round_trip_with_and_without() {
        let west4 = chrono::FixedOffset::west_opt(4 * 3600).expect("offset");
        let with = manifest(Some(CameraZone::new(west4, "Etc/GMT+4")));
        let json = serde_json::to_vec(&with).expect("json");
        assert!(String::from_utf8_lossy(&json).contains(r#""offset":"-04:00""#));
        let back = parse_manifest(&json).expect("reads");
        assert_eq!(back, with);
        let zone = back.camera_zone.expect("zone");
        assert_eq!(zone.fixed_offset(), Ok(west4));
        assert_eq!(zone.name, "Etc/GMT+4");

        let without = manifest(None);
        let json = serde_json::to_string(&without).expect("json");
        assert!(
            !json.contains("camera_zone"),
            "old bundles stay byte-identical"
        );
        assert_eq!(
            parse_manifest(json.as_bytes())
                .expect("old reads")
                .camera_zone,
            None
        );

        let mut bad = serde_json::to_value(&with).expect("value");
        bad["camera_zone"]["offset"] = "-15:00".into();
        let err = parse_manifest(bad.to_string().as_bytes()).expect_err("refused");
        assert!(err.to_string().contains("camera zone"), "{err}");
    }

    #[test]
    fn sha256_of_abc() {
        // FIPS 180-2, Appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert!(crate::Sha256Digest::is_valid(&sha256_hex(b"")));
    }

    #[test]
    fn upload_key_round_trip_and_redaction() {
        let key = UploadKey {
            key_id: "uk-7".into(),
            key: [0xab; 32],
        };
        let back = UploadKey::from_json(&key.to_json()).expect("round trip");
        assert_eq!(back, key);
        assert!(!format!("{key:?}").contains("abababab"));
        assert!(UploadKey::from_json(br#"{"key_id":"uk","key_hex":"abcd"}"#).is_err());
        assert!(UploadKey::from_json(br#"{"key_id":"u k","key_hex":""}"#).is_err());
    }
}
