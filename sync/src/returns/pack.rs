//! Writing a return: reports sorted by id into `reports.json`, each photo
//! once under `photos/<sha256>.jpg` (stored, since JPEG does not deflate),
//! the manifest listing every entry, and the HMAC-SHA256 signature over the
//! manifest bytes. Entries are sorted by name, dated 1980-01-01 00:00 with
//! permissions 0644, JSON deflated at level 6, so the same inputs (including
//! `created_at`) give the same bytes.

use std::collections::{BTreeMap, BTreeSet};
use std::fs::File;
use std::io::{self, Seek, Write};
use std::path::{Path, PathBuf};

use crate::fileio::{HashReadError, hash_read};
use zip::write::SimpleFileOptions;
use zip::{CompressionMethod, DateTime, System, ZipWriter};

use super::limits::ReturnLimits;
use super::manifest::{RETURN_FORMAT, RETURN_FORMAT_VERSION, ReturnHeader, ReturnManifest};
use super::names::{REPORTS, RETURN_MANIFEST, SIGNATURE, photo_entry_name};
use super::report::Report;
use super::sign::sign_manifest;
use super::validate::check_report_shape;
use crate::SyncError;
use crate::bundle::{ManifestEntry, UploadKey, sha256_hex};

fn options(method: CompressionMethod) -> SimpleFileOptions {
    let o = SimpleFileOptions::default()
        .compression_method(method)
        .last_modified_time(DateTime::DEFAULT)
        .unix_permissions(0o644)
        .system(System::Unix)
        .large_file(false);
    if method == CompressionMethod::Deflated {
        o.compression_level(Some(6))
    } else {
        o
    }
}

/// SHA-256 and size of a photo file, refusing one past `max` bytes.
pub(crate) fn hash_photo(path: &std::path::Path, max: u64) -> Result<(String, u64), SyncError> {
    let file =
        File::open(path).map_err(|e| SyncError::io(format!("open photo {}", path.display()), e))?;
    let hashed = hash_read(file, max, |_| Ok(())).map_err(|e| match e {
        HashReadError::Read(e) | HashReadError::Sink(e) => {
            SyncError::io(format!("read photo {}", path.display()), e)
        }
        HashReadError::TooLarge => SyncError::InvalidInput(format!(
            "photo {} is larger than {max} bytes",
            path.display()
        )),
    })?;
    Ok((hashed.sha256, hashed.size))
}

/// Writes the return of `reports` with the photo files `photos` to `out`, signed
/// with `key`, and returns its manifest. Every report must belong to
/// `header.bundle_id`, pass [`check_report_shape`], and have a distinct id; every
/// photo a report names must be among `photos` (matched by SHA-256) and every
/// photo given must be named by some report. Photos given twice are stored once.
pub fn pack_return<W: Write + Seek>(
    out: W,
    header: &ReturnHeader,
    key: &UploadKey,
    reports: &[Report],
    photos: &[PathBuf],
) -> Result<ReturnManifest, SyncError> {
    let limits = ReturnLimits::default();
    let bad = |m: String| SyncError::InvalidInput(m);
    let (sorted, referenced) = checked_reports(header, reports, &limits)?;
    let photo_files = photo_files(photos, &referenced, &limits)?;

    let reports_json =
        serde_json::to_vec_pretty(&sorted).map_err(|e| bad(format!("reports: {e}")))?;
    if reports_json.len() as u64 > limits.max_reports_bytes {
        return Err(bad(format!(
            "reports.json would have {} bytes, more than {}",
            reports_json.len(),
            limits.max_reports_bytes
        )));
    }
    let mut entries: Vec<ManifestEntry> = photo_files
        .iter()
        .map(|(sha, (_, size))| ManifestEntry {
            name: photo_entry_name(sha),
            sha256: sha.clone(),
            size: *size,
        })
        .collect();
    entries.push(ManifestEntry {
        name: REPORTS.into(),
        sha256: sha256_hex(&reports_json),
        size: reports_json.len() as u64,
    });
    entries.sort_by(|a, b| a.name.cmp(&b.name));
    let count = |n: usize| u32::try_from(n).map_err(|_| bad("too many items".into()));
    let manifest = ReturnManifest {
        format: RETURN_FORMAT.into(),
        format_version: RETURN_FORMAT_VERSION,
        bundle_id: header.bundle_id,
        upload_key_id: key.key_id.clone(),
        team: header.team.clone(),
        created_at: header.created_at,
        checklist_version: header.checklist_version,
        report_count: count(sorted.len())?,
        photo_count: count(photo_files.len())?,
        entries,
        camera_zone: header.camera_zone.clone(),
    };
    let manifest_json =
        serde_json::to_vec_pretty(&manifest).map_err(|e| bad(format!("manifest: {e}")))?;
    let signature = sign_manifest(&key.key_id, &key.key, &manifest_json);
    let signature_json =
        serde_json::to_vec_pretty(&signature).map_err(|e| bad(format!("signature: {e}")))?;

    let mut zip = ZipWriter::new(out);
    for (sha, (path, size)) in &photo_files {
        copy_photo(&mut zip, sha, path, *size)?;
    }
    for (name, bytes) in [
        (REPORTS, &reports_json),
        (RETURN_MANIFEST, &manifest_json),
        (SIGNATURE, &signature_json),
    ] {
        zip.start_file(name, options(CompressionMethod::Deflated))
            .map_err(|e| SyncError::zip(format!("start entry {name:?}"), e))?;
        zip.write_all(bytes)
            .map_err(|e| SyncError::io(format!("write entry {name:?}"), e))?;
    }
    let mut out = zip
        .finish()
        .map_err(|e| SyncError::zip("finish return", e))?;
    out.flush().map_err(|e| SyncError::io("flush return", e))?;
    Ok(manifest)
}

/// The reports sorted by id, each checked (its bundle, its shape, no id twice),
/// and the SHA-256 of every photo they name.
fn checked_reports<'a>(
    header: &ReturnHeader,
    reports: &'a [Report],
    limits: &ReturnLimits,
) -> Result<(Vec<&'a Report>, BTreeSet<String>), SyncError> {
    let bad = |m: String| SyncError::InvalidInput(m);
    if reports.len() > limits.max_reports {
        return Err(bad(format!(
            "{} reports, more than a return holds ({})",
            reports.len(),
            limits.max_reports
        )));
    }
    let mut sorted: Vec<&Report> = reports.iter().collect();
    sorted.sort_by_key(|r| r.report_id);
    let mut referenced = BTreeSet::new();
    for (i, r) in sorted.iter().enumerate() {
        if i > 0 && sorted[i - 1].report_id == r.report_id {
            return Err(bad(format!("report {} given twice", r.report_id)));
        }
        if r.bundle_id != header.bundle_id {
            return Err(bad(format!(
                "report {} belongs to bundle {}, not {}",
                r.report_id, r.bundle_id, header.bundle_id
            )));
        }
        check_report_shape(r).map_err(|m| bad(format!("report {}: {m}", r.report_id)))?;
        referenced.extend(r.photos.iter().map(|p| p.sha256.clone()));
    }
    Ok((sorted, referenced))
}

/// The photo files by SHA-256 with their sizes: each named by a report, every
/// named photo given, and not more than a return holds.
fn photo_files(
    photos: &[PathBuf],
    referenced: &BTreeSet<String>,
    limits: &ReturnLimits,
) -> Result<BTreeMap<String, (PathBuf, u64)>, SyncError> {
    let bad = |m: String| SyncError::InvalidInput(m);
    let mut photo_files: BTreeMap<String, (PathBuf, u64)> = BTreeMap::new();
    for path in photos {
        let (sha, size) = hash_photo(path, limits.max_photo_bytes)?;
        if !referenced.contains(&sha) {
            return Err(bad(format!(
                "photo {} (SHA-256 {sha}) is not named by any report",
                path.display()
            )));
        }
        photo_files.insert(sha, (path.clone(), size));
    }
    if let Some(missing) = referenced.iter().find(|s| !photo_files.contains_key(*s)) {
        return Err(bad(format!(
            "a report names photo {missing}, but no such photo file was given"
        )));
    }
    if photo_files.len() + 3 > limits.max_entries {
        return Err(bad(format!(
            "{} photos, more than a return holds",
            photo_files.len()
        )));
    }

    Ok(photo_files)
}

/// Copies one photo into the ZIP as a stored entry, hashing it again on the way.
fn copy_photo<W: Write + Seek>(
    zip: &mut ZipWriter<W>,
    sha: &str,
    path: &Path,
    size: u64,
) -> Result<(), SyncError> {
    let name = photo_entry_name(sha);
    zip.start_file(name.as_str(), options(CompressionMethod::Stored))
        .map_err(|e| SyncError::zip(format!("start entry {name:?}"), e))?;
    let file =
        File::open(path).map_err(|e| SyncError::io(format!("open photo {}", path.display()), e))?;
    // Hash again while copying: a photo changed since it was hashed must not slip in.
    let changed = || {
        SyncError::io(
            format!("photo {}", path.display()),
            io::Error::other("changed while the return was packed"),
        )
    };
    let copied = hash_read(file, size, |c| zip.write_all(c)).map_err(|e| match e {
        HashReadError::Read(e) => SyncError::io(format!("read photo {}", path.display()), e),
        HashReadError::Sink(e) => SyncError::io(format!("write entry {name:?}"), e),
        HashReadError::TooLarge => changed(),
    })?;
    if copied.size != size || copied.sha256 != sha {
        return Err(changed());
    }
    Ok(())
}

/// SHA-256 (lowercase hex) and size of the file at `path`.
pub fn sha256_file(path: &std::path::Path) -> Result<(String, u64), SyncError> {
    hash_photo(path, u64::MAX - 1)
}
