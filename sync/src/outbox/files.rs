//! Durable, content-addressed photo copies: a photo is copied to a temporary
//! file in the photos folder while it is hashed, the file is fsynced, renamed
//! to `<sha256>.jpg`, and the folder is fsynced, so that once this returns
//! the copy survives a power cut. A photo already present is not copied again.

use std::fs::{self, File};
use std::io::Write;
use std::path::{Path, PathBuf};

use crate::SyncError;
use crate::fileio::{HashReadError, hash_read};

/// Copies `source` into `dir/<sha256>.jpg` durably; returns the SHA-256 and size.
/// Fails when the file is larger than `max` bytes.
pub fn store_photo(dir: &Path, source: &Path, max: u64) -> Result<(String, u64), SyncError> {
    let src = File::open(source)
        .map_err(|e| SyncError::io(format!("open photo {}", source.display()), e))?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".incoming-")
        .tempfile_in(dir)
        .map_err(|e| SyncError::io("create temporary photo file", e))?;
    let hashed = hash_read(src, max, |chunk| tmp.write_all(chunk)).map_err(|e| match e {
        HashReadError::Read(e) => SyncError::io(format!("read photo {}", source.display()), e),
        HashReadError::Sink(e) => SyncError::io("write temporary photo file", e),
        HashReadError::TooLarge => SyncError::Usage(format!(
            "photo {} is larger than {max} bytes",
            source.display()
        )),
    })?;
    let (sha, size) = (hashed.sha256, hashed.size);
    let dest = photo_path(dir, &sha);
    if dest.exists() {
        return Ok((sha, size));
    }
    tmp.as_file()
        .sync_all()
        .map_err(|e| SyncError::io("fsync photo", e))?;
    tmp.persist(&dest)
        .map_err(|e| SyncError::io(format!("rename photo to {}", dest.display()), e.error))?;
    sync_dir(dir)?;
    Ok((sha, size))
}

/// Path of the stored photo `sha256` in `dir`.
pub fn photo_path(dir: &Path, sha256: &str) -> PathBuf {
    dir.join(format!("{sha256}.jpg"))
}

/// Fsyncs a directory so that a rename in it is durable (a no-op where
/// directories cannot be opened, as on Windows).
pub fn sync_dir(dir: &Path) -> Result<(), SyncError> {
    crate::fileio::fsync_dir(dir)
        .map_err(|e| SyncError::io(format!("fsync folder {}", dir.display()), e))
}

/// Writes `bytes` to `path` atomically and durably (temp file, fsync, rename, dir fsync).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), SyncError> {
    let dir = path.parent().unwrap_or(Path::new("."));
    fs::create_dir_all(dir).map_err(|e| SyncError::io(format!("create {}", dir.display()), e))?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".write-")
        .tempfile_in(dir)
        .map_err(|e| SyncError::io("create temporary file", e))?;
    tmp.write_all(bytes)
        .and_then(|()| tmp.as_file().sync_all())
        .map_err(|e| SyncError::io(format!("write {}", path.display()), e))?;
    tmp.persist(path)
        .map_err(|e| SyncError::io(format!("rename to {}", path.display()), e.error))?;
    sync_dir(dir)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stores_by_content() {
        let dir = tempfile::tempdir().expect("dir");
        let src = dir.path().join("a.jpg");
        fs::write(&src, b"abc").expect("write");
        let photos = dir.path().join("photos");
        fs::create_dir(&photos).expect("mkdir");
        let (sha, size) = store_photo(&photos, &src, 10).expect("store");
        // FIPS 180-2 Appendix B.1: SHA-256("abc").
        assert_eq!(
            sha,
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(size, 3);
        assert_eq!(fs::read(photo_path(&photos, &sha)).expect("read"), b"abc");
        assert!(store_photo(&photos, &src, 2).is_err());
        let names: Vec<_> = fs::read_dir(&photos).expect("ls").collect();
        assert_eq!(names.len(), 1, "no temporary files are left behind");
    }
}
