//! Reading an untrusted ZIP file safely, for returns (and any other package
//! the crate opens). Nothing in the file is trusted: the file size and entry
//! count are capped, every name must pass the caller's allow-list, names must
//! be unique in the central directory, every local header must agree with
//! its central directory record, entries must be regular files that are not
//! encrypted and are stored or deflated, and no two entries may share bytes
//! (ranges from each local header to the end of its data are compared, which
//! defeats the overlapping "kernel" zip bomb). Sizes are counted while
//! decompressing, never taken from headers: every entry is read through a
//! counting reader that stops one byte past the caller's limit, and a ratio
//! check (decompressed bytes over the entry's compressed size) runs on every
//! chunk. The zip crate's `extract` is never used and entry names are never
//! used as paths.

use std::collections::BTreeSet;
use std::fs::File;
use std::io::{BufReader, Read};
use std::ops::Range;
use std::path::{Path, PathBuf};

use zip::{CompressionMethod, ZipArchive};

use crate::SyncError;

/// Decompressed bytes an entry may produce before the ratio check applies
/// (100 KB, the grace threshold of Apache POI `ZipSecureFile`).
pub const RATIO_GRACE_BYTES: u64 = 100_000;
/// The largest ratio DEFLATE can reach without overlap (1032:1, Fifield,
/// "A better zip bomb"); anything beyond is refused whatever the caller says.
pub const HARD_MAX_RATIO: u64 = 1032;

/// What one entry may decompress to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct EntryLimit {
    /// Largest decompressed size in bytes.
    pub max_bytes: u64,
    /// Largest decompressed/compressed ratio once past [`RATIO_GRACE_BYTES`]
    /// (capped at [`HARD_MAX_RATIO`]).
    pub max_ratio: u64,
}

/// An opened, structurally checked ZIP file.
pub struct SafeZip {
    archive: ZipArchive<BufReader<File>>,
    names: BTreeSet<String>,
    path: PathBuf,
    max_total: u64,
    total: u64,
}

impl std::fmt::Debug for SafeZip {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SafeZip")
            .field("path", &self.path)
            .field("entries", &self.names.len())
            .finish()
    }
}

impl SafeZip {
    /// Opens `path` and checks its structure. `allow` says why a name is refused
    /// (`Err(reason)`) or accepts it. `max_total` bounds the decompressed bytes of all
    /// [`SafeZip::read_entry`] calls together.
    pub fn open(
        path: &Path,
        max_file_bytes: u64,
        max_entries: usize,
        max_total: u64,
        allow: &dyn Fn(&str) -> Result<(), String>,
    ) -> Result<Self, SyncError> {
        let file =
            File::open(path).map_err(|e| SyncError::io(format!("open {}", path.display()), e))?;
        let size = file
            .metadata()
            .map_err(|e| SyncError::io(format!("stat {}", path.display()), e))?
            .len();
        if size > max_file_bytes {
            return Err(SyncError::BundleTooLarge {
                size,
                max: max_file_bytes,
            });
        }
        let mut archive = ZipArchive::new(BufReader::new(file))
            .map_err(|e| SyncError::zip("read the ZIP directory", e))?;
        if archive.len() > max_entries {
            return Err(SyncError::TooManyEntries {
                count: archive.len(),
                max: max_entries,
            });
        }
        let names = scan(&mut archive, allow)?;
        Ok(SafeZip {
            archive,
            names,
            path: path.to_owned(),
            max_total,
            total: 0,
        })
    }

    /// Names of all entries, sorted.
    pub fn names(&self) -> &BTreeSet<String> {
        &self.names
    }

    /// The file this was opened from.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Streams entry `name` into `sink`; fails as soon as more than `limit.max_bytes`
    /// come out, the ratio goes past `limit.max_ratio`, or the running total of all
    /// entries read goes past the total limit. Returns the decompressed size.
    pub fn read_entry(
        &mut self,
        name: &str,
        limit: EntryLimit,
        sink: &mut dyn FnMut(&[u8]) -> std::io::Result<()>,
    ) -> Result<u64, SyncError> {
        let entry = self.archive.by_name(name).map_err(|e| match e {
            zip::result::ZipError::FileNotFound => SyncError::MissingEntry {
                name: name.to_owned(),
            },
            other => SyncError::zip(format!("open entry {name:?}"), other),
        })?;
        let compressed = entry.compressed_size().max(1);
        let max_ratio = limit.max_ratio.min(HARD_MAX_RATIO);
        let mut reader = CountingReader {
            inner: entry,
            count: 0,
        }
        .take(limit.max_bytes.saturating_add(1));
        let mut buf = [0u8; 64 * 1024];
        loop {
            let n = reader.read(&mut buf).map_err(|e| {
                SyncError::invalid_entry(name, format!("cannot be decompressed: {e}"))
            })?;
            if n == 0 {
                break;
            }
            let count = reader.get_ref().count;
            if count > limit.max_bytes {
                return Err(SyncError::EntryTooLarge {
                    name: name.to_owned(),
                    max: limit.max_bytes,
                });
            }
            if count > RATIO_GRACE_BYTES && count / compressed > max_ratio {
                return Err(SyncError::EntryNotAllowed {
                    name: name.to_owned(),
                    reason: format!(
                        "decompresses more than {max_ratio}:1 ({count} bytes from {compressed}); possible zip bomb"
                    ),
                });
            }
            self.total = self.total.saturating_add(n as u64);
            if self.total > self.max_total {
                return Err(SyncError::TotalTooLarge {
                    max: self.max_total,
                });
            }
            sink(&buf[..n]).map_err(|e| SyncError::io(format!("copy entry {name:?}"), e))?;
        }
        Ok(reader.get_ref().count)
    }

    /// Reads entry `name` into memory under `limit`.
    pub fn read_to_vec(&mut self, name: &str, limit: EntryLimit) -> Result<Vec<u8>, SyncError> {
        let mut out = Vec::new();
        self.read_entry(name, limit, &mut |c: &[u8]| {
            out.extend_from_slice(c);
            Ok(())
        })?;
        Ok(out)
    }
}

/// Counts the bytes that come out of the decompressor.
struct CountingReader<R> {
    inner: R,
    count: u64,
}

impl<R: Read> Read for CountingReader<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.count += n as u64;
        Ok(n)
    }
}

fn refuse(name: &str, reason: impl Into<String>) -> SyncError {
    SyncError::EntryNotAllowed {
        name: name.to_owned(),
        reason: reason.into(),
    }
}

/// Checks names, kinds, methods, duplicates, header consistency and overlap.
fn scan(
    archive: &mut ZipArchive<BufReader<File>>,
    allow: &dyn Fn(&str) -> Result<(), String>,
) -> Result<BTreeSet<String>, SyncError> {
    if archive.has_duplicate_names() {
        return Err(SyncError::DuplicateEntry {
            name: "(central directory)".into(),
        });
    }
    let mut names = BTreeSet::new();
    let mut ranges: Vec<(Range<u64>, String)> = Vec::with_capacity(archive.len());
    for i in 0..archive.len() {
        let entry = archive
            .by_index_raw(i)
            .map_err(|e| SyncError::zip(format!("read entry {i}"), e))?;
        let raw = entry.name_raw();
        let name = std::str::from_utf8(raw)
            .map_err(|_| refuse(&String::from_utf8_lossy(raw), "name is not UTF-8"))?
            .to_owned();
        allow(&name).map_err(|r| refuse(&name, r))?;
        if entry.is_dir() || entry.is_symlink() || !entry.is_file() {
            return Err(refuse(
                &name,
                "only regular files are allowed, no directories or links",
            ));
        }
        if entry
            .unix_mode()
            .is_some_and(|m| m & 0o170000 != 0 && m & 0o170000 != 0o100000)
        {
            return Err(refuse(&name, "only regular files are allowed (Unix mode)"));
        }
        if entry.encrypted() {
            return Err(refuse(&name, "encrypted entries are not allowed"));
        }
        if !matches!(
            entry.compression(),
            CompressionMethod::Stored | CompressionMethod::Deflated
        ) {
            return Err(refuse(&name, "only stored or deflated entries are allowed"));
        }
        let start = entry.header_start();
        let data_start = entry
            .data_start()
            .ok_or_else(|| refuse(&name, "local header could not be located"))?;
        let end = data_start
            .checked_add(entry.compressed_size())
            .ok_or_else(|| refuse(&name, "data range overflows"))?;
        drop(entry);
        if !names.insert(name.clone()) {
            return Err(SyncError::DuplicateEntry { name });
        }
        ranges.push((start..end, name));
    }
    check_overlap(&mut ranges)?;
    archive
        .validate_header_consistency()
        .map_err(|e| SyncError::zip("local headers disagree with the central directory", e))?;
    Ok(names)
}

/// Refuses entries whose byte ranges (local header to end of data) intersect.
fn check_overlap(ranges: &mut [(Range<u64>, String)]) -> Result<(), SyncError> {
    ranges.sort_by_key(|(r, _)| (r.start, r.end));
    for pair in ranges.windows(2) {
        let (a, an) = &pair[0];
        let (b, bn) = &pair[1];
        if a.end > b.start {
            return Err(refuse(
                bn,
                format!("overlaps entry {an:?} in the ZIP file (possible zip bomb)"),
            ));
        }
    }
    Ok(())
}

/// Checks an entry read whole against what its manifest lists: the size
/// first, then the SHA-256 the reader accumulated.
pub(crate) fn check_digest(
    name: &str,
    expected_size: u64,
    expected: &str,
    size: u64,
    hasher: sha2::Sha256,
) -> Result<(), SyncError> {
    use sha2::Digest;
    if size != expected_size {
        return Err(SyncError::SizeMismatch {
            name: name.to_owned(),
            expected: expected_size,
            actual: size,
        });
    }
    let actual = hex::encode(hasher.finalize());
    if actual != expected {
        return Err(SyncError::ChecksumMismatch {
            name: name.to_owned(),
            expected: expected.to_owned(),
            actual,
        });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn overlap_detection() {
        let mut ok = vec![(0..10, "a".to_owned()), (10..20, "b".to_owned())];
        assert!(check_overlap(&mut ok).is_ok());
        let mut bad = vec![(5..30, "b".to_owned()), (0..10, "a".to_owned())];
        let err = check_overlap(&mut bad).expect_err("overlap");
        assert!(err.to_string().contains("overlaps"), "{err}");
    }
}
