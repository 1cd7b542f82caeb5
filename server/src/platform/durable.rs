//! Durable file writes: write to a temp file in the target folder, fsync
//! it, rename it into place, fsync the folder. A rename without the folder
//! fsync can be lost on ext4/XFS after a power cut (Pillai et al., OSDI '14),
//! and a database row that names a file must only commit after this.

use crate::error::{Error, Result};
use std::io::Write;
use std::path::Path;

/// Fsync a folder so a rename inside it is durable.
pub fn sync_dir(dir: &Path) -> Result<()> {
    groundproof_sync::fileio::fsync_dir(dir)
        .map_err(|e| Error::io(format!("syncing folder {}", dir.display()), e))
}

/// Write `path` durably through `fill`, which gets a temp file in the same
/// folder; nothing appears at `path` unless `fill` succeeds.
pub fn write_durably<T>(
    path: &Path,
    fill: impl FnOnce(&mut std::fs::File) -> Result<T>,
) -> Result<T> {
    let dir = path
        .parent()
        .ok_or_else(|| Error::Invalid(format!("{} has no folder", path.display())))?;
    let name = path
        .file_name()
        .ok_or_else(|| Error::Invalid(format!("{} has no file name", path.display())))?
        .to_owned();
    let (out, _) = write_durably_named(dir, |f| Ok((fill(f)?, name)))?;
    Ok(out)
}

/// [`write_durably`] into folder `dir` under the file name `fill` gives
/// after writing (a content address: the name is known only once the
/// bytes are); the value of `fill` and the file's path.
pub fn write_durably_named<T>(
    dir: &Path,
    fill: impl FnOnce(&mut std::fs::File) -> Result<(T, std::ffi::OsString)>,
) -> Result<(T, std::path::PathBuf)> {
    std::fs::create_dir_all(dir)
        .map_err(|e| Error::io(format!("creating {}", dir.display()), e))?;
    let mut tmp = tempfile::NamedTempFile::new_in(dir)
        .map_err(|e| Error::io(format!("creating a temp file in {}", dir.display()), e))?;
    let (out, name) = fill(tmp.as_file_mut())?;
    let path = dir.join(name);
    tmp.as_file_mut()
        .flush()
        .and_then(|_| tmp.as_file().sync_all())
        .map_err(|e| Error::io(format!("syncing {}", path.display()), e))?;
    tmp.persist(&path)
        .map_err(|e| Error::io(format!("renaming into {}", path.display()), e.error))?;
    sync_dir(dir)?;
    Ok((out, path))
}
