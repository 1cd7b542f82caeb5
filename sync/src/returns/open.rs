//! Opening a return on the server. The order matters: structure first (the
//! safe ZIP checks), then the signature over the exact manifest bytes with
//! the key the server holds for the bundle, then the manifest's format and
//! listing, then every entry's size and SHA-256, and only then the reports,
//! each on its own so that one bad report does not spoil the others.

use std::collections::{BTreeMap, BTreeSet};
use std::io::Write;
use std::path::{Path, PathBuf};

use sha2::{Digest, Sha256};
use uuid::Uuid;

use super::limits::ReturnLimits;
use super::manifest::{RETURN_FORMAT, RETURN_FORMAT_VERSION, ReturnManifest};
use super::names::{
    REPORTS, RETURN_MANIFEST, SIGNATURE, check_return_entry_name, photo_entry_name, photo_sha_of,
};
use super::report::Report;
use super::sign::{Signature, verify_manifest};
use super::validate::{check_report_shape, validate_report};
use crate::SyncError;
use crate::bundle::Checklist;
use crate::safezip::SafeZip;
use crate::safezip::check_digest;

/// A report of the package that cannot be taken in, and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RejectedReport {
    /// Position in `reports.json`.
    pub index: usize,
    /// Its `report_id`, when it could be read.
    pub report_id: Option<Uuid>,
    /// What is wrong, in words the team can act on.
    pub reason: String,
}

/// A return whose signature and checksums are good.
#[derive(Debug)]
pub struct OpenedReturn {
    /// The manifest (signed).
    pub manifest: ReturnManifest,
    /// The exact bytes of `return-manifest.json`.
    pub manifest_bytes: Vec<u8>,
    /// The signature.
    pub signature: Signature,
    /// Reports that passed every check so far, sorted by id.
    pub reports: Vec<Report>,
    /// Reports that did not, with their reasons.
    pub rejected: Vec<RejectedReport>,
    index: BTreeMap<Uuid, usize>,
    path: PathBuf,
    limits: ReturnLimits,
}

impl OpenedReturn {
    /// SHA-256 of every photo in the package, sorted.
    pub fn photo_shas(&self) -> impl Iterator<Item = &str> {
        self.manifest
            .entries
            .iter()
            .filter_map(|e| photo_sha_of(&e.name))
    }

    /// Streams photo `sha256` into `out`, reading the file again and checking the
    /// bytes once more; on error what was written must be discarded.
    pub fn copy_photo_to<W: Write>(&self, sha256: &str, mut out: W) -> Result<u64, SyncError> {
        let name = photo_entry_name(sha256);
        let listed = self
            .manifest
            .entry(&name)
            .ok_or(SyncError::MissingEntry { name: name.clone() })?;
        let mut zip = open_zip(&self.path, &self.limits)?;
        let mut hasher = Sha256::new();
        let size = zip.read_entry(&name, self.limits.photo(listed.size), &mut |c: &[u8]| {
            hasher.update(c);
            out.write_all(c)
        })?;
        check_digest(&name, listed.size, &listed.sha256, size, hasher)?;
        Ok(size)
    }

    /// The bytes of photo `sha256` (see [`OpenedReturn::copy_photo_to`]).
    pub fn photo_bytes(&self, sha256: &str) -> Result<Vec<u8>, SyncError> {
        let mut out = Vec::new();
        self.copy_photo_to(sha256, &mut out)?;
        Ok(out)
    }

    /// Moves every report failing [`validate_report`] against `checklist` to
    /// [`OpenedReturn::rejected`].
    pub fn apply_checklist(&mut self, checklist: &Checklist) {
        let mut kept = Vec::with_capacity(self.reports.len());
        for r in std::mem::take(&mut self.reports) {
            match validate_report(&r, checklist) {
                Ok(()) => kept.push(r),
                Err(reason) => self.rejected.push(RejectedReport {
                    index: self.index.get(&r.report_id).copied().unwrap_or_default(),
                    report_id: Some(r.report_id),
                    reason,
                }),
            }
        }
        self.reports = kept;
        self.rejected.sort_by_key(|r| r.index);
    }
}

fn open_zip(path: &Path, limits: &ReturnLimits) -> Result<SafeZip, SyncError> {
    SafeZip::open(
        path,
        limits.max_file_bytes,
        limits.max_entries,
        limits.max_total_bytes,
        &check_return_entry_name,
    )
}

/// Opens and checks the return at `path`. `lookup_key(bundle_id, key_id)` gives the
/// server's upload key for that bundle, or `None` when it has none or it is revoked.
///
/// A broken package (bad ZIP structure, disallowed or overlapping entry, bomb,
/// unknown key, bad signature, bad manifest, checksum mismatch, unreadable
/// `reports.json`) is an error naming the entry. A report that cannot be taken in
/// goes to [`OpenedReturn::rejected`]. The checklist is not known here: call
/// [`OpenedReturn::apply_checklist`] with the bundle's checklist.
pub fn open_return(
    path: impl AsRef<Path>,
    lookup_key: impl Fn(&Uuid, &str) -> Option<[u8; 32]>,
    limits: &ReturnLimits,
) -> Result<OpenedReturn, SyncError> {
    let path = path.as_ref();
    let mut zip = open_zip(path, limits)?;
    check_required_entries(&zip)?;

    // 1. Signature, before anything in the manifest is believed.
    let (signature, manifest_bytes, value) = verify_signature(&mut zip, &lookup_key, limits)?;

    // 2. The manifest: format and version first, then the listing.
    let manifest = read_manifest(value, &signature)?;
    check_listing(&manifest, zip.names(), limits)?;

    // 3. Every entry's size and checksum; keep reports.json.
    let reports_bytes = check_entries(&mut zip, &manifest, limits)?;

    // 4. Reports, one by one.
    let (reports, rejected, index_of) = take_reports(&reports_bytes, &manifest, limits)?;
    Ok(OpenedReturn {
        manifest,
        manifest_bytes,
        signature,
        reports,
        rejected,
        index: index_of,
        path: path.to_owned(),
        limits: *limits,
    })
}

/// The manifest, the signature and the reports are all there.
fn check_required_entries(zip: &SafeZip) -> Result<(), SyncError> {
    for required in [RETURN_MANIFEST, SIGNATURE, REPORTS] {
        if !zip.names().contains(required) {
            return Err(SyncError::MissingEntry {
                name: required.into(),
            });
        }
    }

    Ok(())
}

/// Reads the signature and the manifest and checks the manifest's signature with
/// the upload key of the bundle it names. Returns the signature, the manifest's
/// bytes and the manifest as JSON (not yet trusted beyond its signature).
fn verify_signature(
    zip: &mut SafeZip,
    lookup_key: &impl Fn(&Uuid, &str) -> Option<[u8; 32]>,
    limits: &ReturnLimits,
) -> Result<(Signature, Vec<u8>, serde_json::Value), SyncError> {
    let sig_bytes = zip.read_to_vec(SIGNATURE, limits.json(limits.max_signature_bytes))?;
    let signature: Signature =
        serde_json::from_slice(&sig_bytes).map_err(|e| SyncError::BadSignature {
            reason: e.to_string(),
        })?;
    let manifest_bytes =
        zip.read_to_vec(RETURN_MANIFEST, limits.json(limits.max_manifest_bytes))?;
    let bad_manifest = |r: String| SyncError::invalid_entry(RETURN_MANIFEST, r);
    let value: serde_json::Value =
        serde_json::from_slice(&manifest_bytes).map_err(|e| bad_manifest(e.to_string()))?;
    let bundle_id: Uuid = value
        .get("bundle_id")
        .and_then(serde_json::Value::as_str)
        .and_then(|s| Uuid::parse_str(s).ok())
        .ok_or_else(|| bad_manifest("bundle_id is missing or not a UUID".into()))?;
    let key = lookup_key(&bundle_id, &signature.key_id).ok_or_else(|| SyncError::UnknownKey {
        bundle_id,
        key_id: signature.key_id.clone(),
    })?;
    verify_manifest(&signature, &key, &manifest_bytes)?;
    Ok((signature, manifest_bytes, value))
}

/// The signed manifest: its format and version first, then its fields; its
/// upload key id must be the signature's.
fn read_manifest(
    value: serde_json::Value,
    signature: &Signature,
) -> Result<ReturnManifest, SyncError> {
    let bad_manifest = |r: String| SyncError::invalid_entry(RETURN_MANIFEST, r);
    let format = value
        .get("format")
        .and_then(serde_json::Value::as_str)
        .unwrap_or_default();
    if format != RETURN_FORMAT {
        return Err(SyncError::WrongFormat {
            found: format.to_owned(),
            expected: RETURN_FORMAT,
        });
    }
    let version = value
        .get("format_version")
        .and_then(serde_json::Value::as_u64)
        .ok_or_else(|| bad_manifest("format_version is missing or not an integer".into()))?;
    if version != u64::from(RETURN_FORMAT_VERSION) {
        return Err(SyncError::UnsupportedVersion {
            found: version,
            supported: RETURN_FORMAT_VERSION,
        });
    }
    let manifest: ReturnManifest =
        serde_json::from_value(value).map_err(|e| bad_manifest(e.to_string()))?;
    if manifest.upload_key_id != signature.key_id {
        return Err(bad_manifest(format!(
            "upload_key_id {:?} differs from the signature's key_id {:?}",
            manifest.upload_key_id, signature.key_id
        )));
    }
    if let Some(zone) = &manifest.camera_zone {
        zone.fixed_offset().map_err(bad_manifest)?;
        if zone.name.chars().count() > crate::bundle::MAX_TEXT_CHARS {
            return Err(bad_manifest("camera_zone name is too long".into()));
        }
    }
    Ok(manifest)
}

/// Reads every listed entry within its limit and checks its size and checksum;
/// returns the bytes of `reports.json`.
fn check_entries(
    zip: &mut SafeZip,
    manifest: &ReturnManifest,
    limits: &ReturnLimits,
) -> Result<Vec<u8>, SyncError> {
    let mut reports_bytes = Vec::new();
    for listed in &manifest.entries {
        let mut hasher = Sha256::new();
        let is_reports = listed.name == REPORTS;
        let limit = if is_reports {
            limits.json(listed.size)
        } else {
            limits.photo(listed.size)
        };
        let size = zip.read_entry(&listed.name, limit, &mut |c: &[u8]| {
            hasher.update(c);
            if is_reports {
                reports_bytes.extend_from_slice(c);
            }
            Ok(())
        })?;
        check_digest(&listed.name, listed.size, &listed.sha256, size, hasher)?;
    }
    Ok(reports_bytes)
}

/// The reports of `reports.json`, each checked on its own: the good ones (with
/// their positions) and the rejected ones with a reason.
fn take_reports(
    reports_bytes: &[u8],
    manifest: &ReturnManifest,
    limits: &ReturnLimits,
) -> Result<TakenReports, SyncError> {
    let bad_manifest = |r: String| SyncError::invalid_entry(RETURN_MANIFEST, r);
    // Each item is kept as its raw text first: a value serde_json cannot
    // hold (a number like 1e400 is out of range for f64) then spoils only
    // its own report, not the whole package (DESIGN invariant 4).
    let items: Vec<&serde_json::value::RawValue> = serde_json::from_slice(reports_bytes)
        .map_err(|e| SyncError::invalid_entry(REPORTS, format!("not a JSON array: {e}")))?;
    if items.len() > limits.max_reports {
        return Err(SyncError::invalid_entry(
            REPORTS,
            format!("{} reports, more than {}", items.len(), limits.max_reports),
        ));
    }
    if items.len() != manifest.report_count as usize {
        return Err(bad_manifest(format!(
            "report_count is {}, reports.json holds {}",
            manifest.report_count,
            items.len()
        )));
    }
    let photos: BTreeSet<&str> = manifest
        .entries
        .iter()
        .filter_map(|e| photo_sha_of(&e.name))
        .collect();
    let mut reports = Vec::new();
    let mut rejected = Vec::new();
    let mut seen = BTreeSet::new();
    let mut index_of = BTreeMap::new();
    for (index, raw) in items.into_iter().enumerate() {
        let verdict = serde_json::from_str::<Report>(raw.get())
            .map_err(|e| format!("not a valid report: {e}"))
            .and_then(|r| {
                check_one(&r, manifest, &photos, &seen)?;
                Ok(r)
            });
        match verdict {
            Ok(r) => {
                seen.insert(r.report_id);
                index_of.insert(r.report_id, index);
                reports.push(r);
            }
            Err(reason) => rejected.push(RejectedReport {
                index,
                report_id: report_id_of(raw.get()),
                reason,
            }),
        }
    }
    Ok((reports, rejected, index_of))
}

/// The `report_id` of a report item that could not be read as a whole
/// (the other fields are skipped unread, so a bad value elsewhere does not
/// hide the id).
fn report_id_of(item: &str) -> Option<Uuid> {
    #[derive(serde::Deserialize)]
    struct IdOnly {
        report_id: Option<String>,
    }
    serde_json::from_str::<IdOnly>(item)
        .ok()?
        .report_id
        .and_then(|s| Uuid::parse_str(&s).ok())
}

/// The accepted reports, the rejected ones, and each accepted report's position.
type TakenReports = (Vec<Report>, Vec<RejectedReport>, BTreeMap<Uuid, usize>);

fn check_one(
    r: &Report,
    manifest: &ReturnManifest,
    photos: &BTreeSet<&str>,
    seen: &BTreeSet<Uuid>,
) -> Result<(), String> {
    if r.bundle_id != manifest.bundle_id {
        return Err(format!(
            "belongs to bundle {}, the return to {}",
            r.bundle_id, manifest.bundle_id
        ));
    }
    if seen.contains(&r.report_id) {
        return Err(format!(
            "report {} appears twice in the return",
            r.report_id
        ));
    }
    check_report_shape(r)?;
    if let Some(p) = r
        .photos
        .iter()
        .find(|p| !photos.contains(p.sha256.as_str()))
    {
        return Err(format!("photo {} is not in the return", p.sha256));
    }
    Ok(())
}

/// The manifest must list exactly the entries in the ZIP (but itself and the
/// signature), each once, with a well-formed checksum, sizes within the limits, and
/// photo entries named by their own checksum.
fn check_listing(
    manifest: &ReturnManifest,
    in_zip: &BTreeSet<String>,
    limits: &ReturnLimits,
) -> Result<(), SyncError> {
    let bad = |r: String| SyncError::invalid_entry(RETURN_MANIFEST, r);
    let mut listed = BTreeSet::new();
    let mut total = 0u64;
    let mut photo_count = 0u32;
    for e in &manifest.entries {
        if e.name == RETURN_MANIFEST
            || e.name == SIGNATURE
            || check_return_entry_name(&e.name).is_err()
        {
            return Err(bad(format!(
                "lists an entry that is not allowed: {:?}",
                e.name
            )));
        }
        if !listed.insert(e.name.as_str()) {
            return Err(bad(format!("lists {:?} twice", e.name)));
        }
        if !crate::Sha256Digest::is_valid(&e.sha256) {
            return Err(bad(format!(
                "sha256 of {:?} is not 64 lowercase hex digits",
                e.name
            )));
        }
        let max = match photo_sha_of(&e.name) {
            Some(sha) => {
                if sha != e.sha256 {
                    return Err(bad(format!("{:?} is listed with another SHA-256", e.name)));
                }
                photo_count += 1;
                limits.max_photo_bytes
            }
            None => limits.max_reports_bytes,
        };
        if e.size > max {
            return Err(SyncError::EntryTooLarge {
                name: e.name.clone(),
                max,
            });
        }
        total = total.saturating_add(e.size);
        if !in_zip.contains(&e.name) {
            return Err(SyncError::MissingEntry {
                name: e.name.clone(),
            });
        }
    }
    if total > limits.max_total_bytes {
        return Err(SyncError::TotalTooLarge {
            max: limits.max_total_bytes,
        });
    }
    if !listed.contains(REPORTS) {
        return Err(bad(format!("does not list {REPORTS}")));
    }
    if photo_count != manifest.photo_count {
        return Err(bad(format!(
            "photo_count is {}, {} photos are listed",
            manifest.photo_count, photo_count
        )));
    }
    if let Some(extra) = in_zip.iter().find(|n| {
        n.as_str() != RETURN_MANIFEST && n.as_str() != SIGNATURE && !listed.contains(n.as_str())
    }) {
        return Err(SyncError::UnlistedEntry {
            name: extra.clone(),
        });
    }
    Ok(())
}
