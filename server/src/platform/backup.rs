//! `groundproof backup` and `restore` for the embedded default: the SQLite
//! database (online backup, consistent while the server runs) and the
//! files of the data directory, in one folder with a manifest of digests.
//!
//! A backup folder holds `groundproof.sqlite3`, copies of [`KEPT`] (the
//! evidence photos and thumbnails, kept and refused returns, issued
//! bundles, open uploads' data, draft photos of the station entry and the
//! copy of the settings, `settings.toml`; the settings themselves are rows
//! of the database) and, written last,
//! `manifest.txt`: a first line `groundproof-backup 1`, then one line per
//! file, `<sha256 hex>  <bytes>  <relative path>`. Without the manifest a
//! folder is not a (complete) backup.
//!
//! The database is copied first, then the files: every file a row of the
//! copied database names was durable before that row committed, and no
//! named file is ever changed or removed, so the files found afterwards
//! include all it needs (newer ones are orphans, removed by the start-up
//! clean-up). A file that vanishes during the copy (an upload finished, a
//! refused package pruned) is left out.
//!
//! Restore checks the whole backup (every digest and size, the manifest's
//! paths, the database's own integrity check) while copying it into a new
//! folder beside the target, and only then renames that folder into
//! place: the target must not exist or be empty, and it is never written
//! half-way. Anything wrong leaves the target as it was and says what.

use crate::error::{Error, Result};
use crate::platform::durable::sync_dir;
use crate::platform::storage::{Db, check_database};
use groundproof_sync::fileio::hash_read;
use std::io::{BufRead, Write};
use std::path::{Component, Path, PathBuf};

/// What a backup copies from the data directory besides the database:
/// folders (walked) and single files.
/// (`drafts`: the station entry's draft photos, whose draft documents are
/// rows of the database.)
pub const KEPT: [&str; 6] = [
    "evidence",
    "returns",
    "bundles",
    "uploads",
    "drafts",
    "settings.toml",
];
/// The database file in a data directory and in a backup.
pub const DATABASE: &str = "groundproof.sqlite3";
/// The manifest, written last.
pub const MANIFEST: &str = "manifest.txt";
const HEADER: &str = "groundproof-backup 1";
/// Longest manifest line read (a digest, a size, a path).
const MAX_LINE: usize = 4096;
/// Largest single file restored (the largest kept file is a return of at
/// most 1 GiB; bundles and photos are smaller).
const MAX_FILE: u64 = 4 << 30;

/// One file of a backup.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    pub sha256: String,
    pub bytes: u64,
    /// Relative, with `/` separators.
    pub path: String,
}

/// What a backup or restore did.
#[derive(Debug, Default)]
pub struct Summary {
    pub files: usize,
    pub bytes: u64,
}

/// Copy `src` to `dst` (new), hashing while copying; fsync `dst`.
fn copy_hashed(src: &Path, dst: &Path, max: u64) -> Result<(String, u64)> {
    let input =
        std::fs::File::open(src).map_err(|e| Error::io(format!("reading {}", src.display()), e))?;
    if let Some(dir) = dst.parent() {
        std::fs::create_dir_all(dir)
            .map_err(|e| Error::io(format!("creating {}", dir.display()), e))?;
    }
    let mut out = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(dst)
        .map_err(|e| Error::io(format!("creating {}", dst.display()), e))?;
    let h = hash_read(input, max, |b| out.write_all(b)).map_err(|e| hash_error(src, e))?;
    out.sync_all()
        .map_err(|e| Error::io(format!("syncing {}", dst.display()), e))?;
    Ok((h.sha256, h.size))
}

fn hash_error(p: &Path, e: groundproof_sync::fileio::HashReadError) -> Error {
    use groundproof_sync::fileio::HashReadError as H;
    match e {
        H::Read(e) => Error::io(format!("reading {}", p.display()), e),
        H::Sink(e) => Error::io(format!("writing the copy of {}", p.display()), e),
        H::TooLarge => Error::Invalid(format!("{} is larger than expected", p.display())),
    }
}

/// Every file under `root/rel` (or `rel` itself when it is a file), as
/// relative paths with `/`; symbolic links are not followed.
fn walk(root: &Path, rel: &str, out: &mut Vec<String>) -> Result<()> {
    let path = root.join(rel);
    let meta = match std::fs::symlink_metadata(&path) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
        Err(e) => return Err(Error::io(format!("reading {}", path.display()), e)),
    };
    if meta.is_file() {
        out.push(rel.to_string());
    } else if meta.is_dir() {
        let it = std::fs::read_dir(&path)
            .map_err(|e| Error::io(format!("listing {}", path.display()), e))?;
        let mut names: Vec<String> = it
            .filter_map(|e| e.ok())
            .map(|e| e.file_name().to_string_lossy().into_owned())
            .filter(|n| !n.starts_with('.'))
            .collect();
        names.sort();
        for n in names {
            walk(root, &format!("{rel}/{n}"), out)?;
        }
    }
    Ok(())
}

/// Back up the data directory of `db` (`data`) into the new folder `out`.
pub fn backup(db: &Db, data: &Path, out: &Path) -> Result<Summary> {
    if out.exists()
        && std::fs::read_dir(out)
            .map(|mut d| d.next().is_some())
            .unwrap_or(true)
    {
        return Err(Error::Invalid(format!(
            "{} exists and is not empty; a backup goes into a new folder",
            out.display()
        )));
    }
    std::fs::create_dir_all(out)
        .map_err(|e| Error::io(format!("creating {}", out.display()), e))?;
    db.backup_into(&out.join(DATABASE))?;
    let (sha256, bytes) = hash_file(&out.join(DATABASE))?;
    let mut entries = vec![Entry {
        sha256,
        bytes,
        path: DATABASE.into(),
    }];
    let mut files = Vec::new();
    for k in KEPT {
        walk(data, k, &mut files)?;
    }
    for rel in files {
        match copy_hashed(&data.join(&rel), &out.join(&rel), u64::MAX) {
            Ok((sha256, bytes)) => entries.push(Entry {
                sha256,
                bytes,
                path: rel,
            }),
            Err(Error::Io { source, .. }) if source.kind() == std::io::ErrorKind::NotFound => {}
            Err(e) => return Err(e),
        }
    }
    write_manifest(out, &entries)?;
    Ok(Summary {
        files: entries.len(),
        bytes: entries.iter().map(|e| e.bytes).sum(),
    })
}

fn hash_file(p: &Path) -> Result<(String, u64)> {
    let f = std::fs::File::open(p).map_err(|e| Error::io(format!("reading {}", p.display()), e))?;
    let h = hash_read(f, u64::MAX, |_| Ok(())).map_err(|e| hash_error(p, e))?;
    Ok((h.sha256, h.size))
}

/// Write the manifest durably (temp file, fsync, rename, folder fsync).
fn write_manifest(out: &Path, entries: &[Entry]) -> Result<()> {
    crate::platform::durable::write_durably(&out.join(MANIFEST), |f| {
        let mut w = std::io::BufWriter::new(f);
        let io = |e| Error::io("writing the manifest".to_string(), e);
        writeln!(w, "{HEADER}").map_err(io)?;
        for e in entries {
            writeln!(w, "{}  {}  {}", e.sha256, e.bytes, e.path).map_err(io)?;
        }
        w.flush().map_err(io)
    })
}

/// Whether `rel` is a path a backup may hold: relative, plain names only,
/// under the database or one of [`KEPT`].
fn safe_path(rel: &str) -> bool {
    let p = Path::new(rel);
    let plain = !rel.is_empty()
        && !rel.contains('\\')
        && p.components().all(|c| matches!(c, Component::Normal(_)));
    let top = rel.split('/').next().unwrap_or("");
    plain && (rel == DATABASE || KEPT.contains(&top))
}

/// One manifest line (number `n`, for the message).
fn parse_line(line: &str, n: usize) -> Result<Entry> {
    let bad = |what: &str| Error::Invalid(format!("{MANIFEST} line {n}: {what}"));
    let mut parts = line.splitn(3, "  ");
    let (Some(sha), Some(bytes), Some(path)) = (parts.next(), parts.next(), parts.next()) else {
        return Err(bad("expected '<sha256>  <bytes>  <path>'"));
    };
    if sha.len() != 64
        || !sha
            .bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
    {
        return Err(bad("the digest is not 64 lowercase hex digits"));
    }
    let bytes: u64 = bytes.parse().map_err(|_| bad("the size is not a number"))?;
    if bytes > MAX_FILE {
        return Err(bad(&format!("{path} is larger than {MAX_FILE} bytes")));
    }
    if !safe_path(path) {
        return Err(bad(&format!("'{path}' is not a path a backup holds")));
    }
    Ok(Entry {
        sha256: sha.to_string(),
        bytes,
        path: path.to_string(),
    })
}

/// Read and check the manifest of the backup folder `from`.
pub fn read_manifest(from: &Path) -> Result<Vec<Entry>> {
    let p = from.join(MANIFEST);
    let f = std::fs::File::open(&p).map_err(|e| {
        Error::Invalid(format!(
            "{} is not a complete backup: {MANIFEST} cannot be read ({e}); a backup writes it last",
            from.display()
        ))
    })?;
    let mut lines = std::io::BufReader::new(f).take(1 << 30).lines();
    let first = lines.next().transpose().ok().flatten().unwrap_or_default();
    if first != HEADER {
        return Err(Error::Invalid(format!(
            "{MANIFEST}: the first line is not '{HEADER}'"
        )));
    }
    let mut entries: Vec<Entry> = Vec::new();
    let mut seen = std::collections::HashSet::new();
    for (i, line) in lines.enumerate() {
        let line = line.map_err(|e| Error::Invalid(format!("{MANIFEST} line {}: {e}", i + 2)))?;
        if line.len() > MAX_LINE {
            return Err(Error::Invalid(format!(
                "{MANIFEST} line {}: too long",
                i + 2
            )));
        }
        let e = parse_line(&line, i + 2)?;
        if !seen.insert(e.path.clone()) {
            return Err(Error::Invalid(format!(
                "{MANIFEST} line {}: '{}' twice",
                i + 2,
                e.path
            )));
        }
        entries.push(e);
    }
    if !entries.iter().any(|e| e.path == DATABASE) {
        return Err(Error::Invalid(format!("{MANIFEST} names no {DATABASE}")));
    }
    Ok(entries)
}

use std::io::Read as _;

/// Restore the backup folder `from` into the data directory `data`, which
/// must not exist or be empty (see the module documentation).
pub fn restore(from: &Path, data: &Path) -> Result<Summary> {
    let occupied = data.exists()
        && std::fs::read_dir(data)
            .map(|mut d| d.next().is_some())
            .unwrap_or(true);
    if occupied {
        return Err(Error::Invalid(format!(
            "{} exists and is not empty; restore into a new data directory (move the old one aside first)",
            data.display()
        )));
    }
    let entries = read_manifest(from)?;
    let parent = data
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    std::fs::create_dir_all(parent)
        .map_err(|e| Error::io(format!("creating {}", parent.display()), e))?;
    let staging = tempfile::Builder::new()
        .prefix(".groundproof-restore-")
        .tempdir_in(parent)
        .map_err(|e| Error::io(format!("creating a folder in {}", parent.display()), e))?;
    let summary = copy_checked(from, staging.path(), &entries)?;
    check_database(&staging.path().join(DATABASE))?;
    place(staging, data, parent)?;
    Ok(summary)
}

/// Copy every entry from `from` into `to`, refusing any that is missing
/// or whose size or digest differs from the manifest.
fn copy_checked(from: &Path, to: &Path, entries: &[Entry]) -> Result<Summary> {
    let mut s = Summary::default();
    for e in entries {
        let src = from.join(&e.path);
        let (sha, bytes) = copy_hashed(&src, &to.join(&e.path), e.bytes).map_err(|err| {
            Error::Invalid(format!(
                "the backup is damaged or partial: {}: {err}",
                e.path
            ))
        })?;
        if bytes != e.bytes || sha != e.sha256 {
            return Err(Error::Invalid(format!(
                "the backup is damaged: {} has {bytes} bytes with SHA-256 {sha}, the manifest says {} bytes with {}",
                e.path, e.bytes, e.sha256
            )));
        }
        s.files += 1;
        s.bytes += bytes;
    }
    for dir in folders_of(to, entries) {
        sync_dir(&dir)?;
    }
    Ok(s)
}

/// Every folder that holds a restored file, deepest first.
fn folders_of(root: &Path, entries: &[Entry]) -> Vec<PathBuf> {
    let mut dirs: Vec<PathBuf> = entries
        .iter()
        .flat_map(|e| {
            Path::new(&e.path)
                .ancestors()
                .skip(1)
                .map(|a| root.join(a))
                .collect::<Vec<_>>()
        })
        .collect();
    dirs.sort_by_key(|d| std::cmp::Reverse(d.components().count()));
    dirs.dedup();
    dirs
}

/// Rename the checked `staging` folder to `data` in one step.
fn place(staging: tempfile::TempDir, data: &Path, parent: &Path) -> Result<()> {
    if data.exists() {
        // Empty (checked before): rename(2) replaces an empty folder, but
        // only if nothing was put there meanwhile.
        std::fs::remove_dir(data).map_err(|e| {
            Error::Invalid(format!(
                "{} is no longer empty ({e}); nothing was restored",
                data.display()
            ))
        })?;
    }
    let kept = staging.keep();
    std::fs::rename(&kept, data).map_err(|e| {
        let _ = std::fs::remove_dir_all(&kept);
        Error::io(
            format!("moving the restored data into {}", data.display()),
            e,
        )
    })?;
    sync_dir(parent)
}
