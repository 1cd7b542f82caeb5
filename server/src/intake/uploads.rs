//! Resumable uploads (RETURN-SPEC "Resumable push", after the IETF draft
//! "Resumable Uploads for HTTP"): create with the declared size and SHA-256,
//! ask the offset, append at the offset, complete, or end it (`DELETE`,
//! the draft's upload cancellation).
//!
//! Each append is stored as its own object of the evidence store,
//! `uploads/<id>/<offset>`, before the new offset is stored and
//! acknowledged; so any server instance on the same database and store can
//! take the next append or complete the upload. Bytes stored but never
//! acknowledged (a crash between the put and the commit) are replaced by the
//! next append at the stored offset, or cut off by the chunk after them when
//! the chunks are put together ([`plan_chunks`]). The offset comes from the
//! database row and never decreases.
//!
//! An upload belongs to the team of its bundle: a team token creates
//! uploads only for its own team's bundles, and another team's token gets
//! 404 for the upload (ask, append, complete, end), as for an upload that
//! does not exist. Coordinators and admins (who may upload a return for any
//! team) reach every upload.
//!
//! # Bounds (documented limits, reliability.md §3)
//!
//! | bound | value | anchor |
//! |---|---|---|
//! | one package (declared size) | 1 GiB | `ReturnLimits::max_file_bytes`, resumable `max-size` |
//! | declared size for a bundle of n stops | 256 MiB + n x 128 MiB (at most 1 GiB) | our choice: 20 photos of 6 MB per stop, and room for new clearings |
//! | one append (PATCH body) | 8 MiB | RETURN-SPEC, `max-append-size` |
//! | open uploads, whole server | 64, 8 GiB declared | our choice (Slowloris mitigation of the draft; disk reserve for 8 full packages) |
//! | open uploads per sender (a team, a user, an API token) | 4, 2 GiB declared | our choice: a quarter of the server's, so no sender can block another |
//! | open uploads per bundle | 4 | reliability.md §3 "Concurrent resumable uploads per user" |
//! | an idle open upload | removed after 12 hours untouched | our choice (the draft leaves it to the server; reliability.md §3 said 7 days, which let a full budget block others for a week) |

use super::layout::{
    INCOMING_DIR, UPLOAD_IDLE_HOURS, UPLOADS_DIR, chunk_key, chunk_of, incoming_key, incoming_path,
    intake_lock, legacy_part_key, upload_prefix,
};
use super::pipeline::{ReturnDocument, return_document, take_in};
use super::{IntakeError, IntakeOptions};
use crate::platform::auth::Identity;
use crate::platform::evidence::Evidence;
use crate::platform::storage::{BundleRecord, Db, UploadRecord};
use sha2::{Digest, Sha256};
use std::collections::HashSet;
use std::io::Write;
use std::path::Path;
use std::sync::Mutex;

/// Largest append (PATCH body), bytes.
pub const MAX_APPEND_BYTES: usize = 8 << 20;
/// Most open uploads on the server.
pub const MAX_OPEN_UPLOADS: u64 = 64;
/// Most open uploads for one bundle.
pub const MAX_OPEN_UPLOADS_PER_BUNDLE: u64 = 4;
/// Most declared bytes over all open uploads.
pub const MAX_OPEN_UPLOAD_BYTES: u64 = 8 << 30;
/// Most open uploads of one sender.
pub const MAX_OPEN_UPLOADS_PER_SENDER: u64 = 4;
/// Most declared bytes of one sender's open uploads.
pub const MAX_OPEN_BYTES_PER_SENDER: u64 = 2 << 30;
/// The declared size any bundle may return: reports, manifest, new clearings.
pub const PLAUSIBLE_BASE_BYTES: u64 = 256 << 20;
/// The declared size each stop of the bundle adds.
pub const PLAUSIBLE_BYTES_PER_STOP: u64 = 128 << 20;

/// Who sends a return: a field team (its token) or someone of the office
/// allowed to upload for any team.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Sender {
    /// A team token: its own team's bundles and uploads only.
    Team(String),
    /// A signed-in user or an API token; the key its open uploads are
    /// counted under (`user:<id>`, `token:<id>`).
    Office(String),
}

impl Sender {
    /// The sender a request's identity stands for (`None` for nobody).
    pub fn of(identity: &Identity) -> Option<Sender> {
        match identity {
            Identity::Team { team_name, .. } => Some(Sender::Team(team_name.clone())),
            Identity::User { user_id, .. } => Some(Sender::Office(format!("user:{user_id}"))),
            Identity::ApiToken { token_id, .. } => {
                Some(Sender::Office(format!("token:{token_id}")))
            }
            Identity::Anonymous => None,
        }
    }

    /// The key its open uploads are counted under.
    pub fn owner_key(&self) -> String {
        match self {
            Sender::Team(t) => format!("team:{t}"),
            Sender::Office(k) => k.clone(),
        }
    }

    /// Whether it may see what was sent for a bundle of team `team`.
    pub fn may_see(&self, team: &str) -> bool {
        match self {
            Sender::Team(t) => t == team,
            Sender::Office(_) => true,
        }
    }
}

/// The largest package a bundle of `stops` stops could plausibly return.
pub fn plausible_size(stops: usize, max_file_bytes: u64) -> u64 {
    PLAUSIBLE_BYTES_PER_STOP
        .saturating_mul(stops as u64)
        .saturating_add(PLAUSIBLE_BASE_BYTES)
        .min(max_file_bytes)
}

/// Uploads with an append in progress (one at a time per upload).
static APPENDING: Mutex<Option<HashSet<String>>> = Mutex::new(None);

struct AppendGuard(String);

impl AppendGuard {
    fn take(id: &str) -> Option<AppendGuard> {
        let mut g = APPENDING.lock().unwrap_or_else(|p| p.into_inner());
        let set = g.get_or_insert_with(HashSet::new);
        set.insert(id.to_string())
            .then(|| AppendGuard(id.to_string()))
    }
}

impl Drop for AppendGuard {
    fn drop(&mut self) {
        let mut g = APPENDING.lock().unwrap_or_else(|p| p.into_inner());
        if let Some(set) = g.as_mut() {
            set.remove(&self.0);
        }
    }
}

/// True for a server-made upload id (32 lowercase hex digits).
pub fn is_upload_id(s: &str) -> bool {
    s.len() == 32
        && s.bytes()
            .all(|c| c.is_ascii_digit() || (b'a'..=b'f').contains(&c))
}

/// The result of [`create`]: the upload, and whether it was made now.
#[derive(Debug, Clone, PartialEq)]
pub struct Created {
    pub upload: UploadRecord,
    pub new: bool,
}

/// Creates an upload for a package of `size` bytes with SHA-256 `sha256`,
/// or finds the one made before for the same bundle and SHA-256. Open
/// uploads idle for [`UPLOAD_IDLE_HOURS`] are removed first.
pub fn create(
    db: &Db,
    data_dir: &Path,
    options: &IntakeOptions,
    sender: &Sender,
    bundle_id: &str,
    size: u64,
    sha256: &str,
) -> Result<Created, IntakeError> {
    if !crate::domain::Sha256Digest::is_valid(sha256) {
        return Err(IntakeError::Invalid(
            "sha256 must be 64 lowercase hex digits".into(),
        ));
    }
    let max = options.return_limits.max_file_bytes;
    if size == 0 || size > max {
        return Err(IntakeError::TooLarge(format!(
            "a return package must be 1 to {max} bytes, not {size}"
        )));
    }
    let bundle = bundle_for(db, sender, bundle_id)?;
    let stops = db.read(|r| r.bundle_items(bundle_id))?.len();
    let plausible = plausible_size(stops, max);
    if size > plausible {
        return Err(IntakeError::TooLarge(format!(
            "a return for bundle {bundle_id} ({stops} stops) is at most {plausible} bytes, not {size}"
        )));
    }
    let _guard = intake_lock();
    expire_idle(db, data_dir)?;
    if let Some(u) = db.read(|r| r.upload_by_sha(bundle_id, sha256))? {
        if u.size != size {
            return Err(IntakeError::Invalid(format!(
                "an upload of this return was made with size {}, not {size}",
                u.size
            )));
        }
        return Ok(Created {
            upload: u,
            new: false,
        });
    }
    let upload = UploadRecord {
        id: uuid::Uuid::new_v4().simple().to_string(),
        bundle_id: bundle.id.clone(),
        sha256: sha256.to_string(),
        size,
        offset: 0,
        state: "open".into(),
        return_id: None,
        error: None,
        error_status: None,
        created_at: chrono::Utc::now().to_rfc3339(),
        owner: Some(sender.owner_key()),
    };
    let taken = db.read(|r| r.return_by_sha(sha256))?;
    if taken.is_none() {
        check_budgets(db, sender, bundle_id, size)?;
    }
    db.write_bookkeeping(|tx| {
        tx.insert_upload(&upload)?;
        if let Some(r) = &taken {
            // Taken in already (e.g. through the browser): nothing to send.
            tx.finish_upload(&upload.id, r.id)?;
        }
        Ok(())
    })?;
    let upload = db
        .read(|r| r.upload(&upload.id))?
        .ok_or_else(|| IntakeError::Internal("upload vanished".into()))?;
    Ok(Created { upload, new: true })
}

/// Bundle `bundle_id`, when `sender` may send a return for it.
fn bundle_for(db: &Db, sender: &Sender, bundle_id: &str) -> Result<BundleRecord, IntakeError> {
    let bundle = db
        .read(|r| r.bundle(bundle_id))?
        .ok_or_else(|| IntakeError::NotFound(format!("no bundle {bundle_id}")))?;
    if !sender.may_see(&bundle.team) {
        return Err(IntakeError::Refused(format!(
            "bundle {bundle_id} is not issued to your team"
        )));
    }
    if bundle.cancelled_at.is_some() {
        return Err(IntakeError::Refused(format!(
            "bundle {bundle_id} was cancelled: its upload key is revoked"
        )));
    }
    Ok(bundle)
}

/// Refuses a new upload of `size` bytes that would pass the server's, the
/// sender's or the bundle's open-upload budget.
fn check_budgets(db: &Db, sender: &Sender, bundle_id: &str, size: u64) -> Result<(), IntakeError> {
    let open = db.read(|r| r.open_uploads(bundle_id, &sender.owner_key()))?;
    if open.for_owner >= MAX_OPEN_UPLOADS_PER_SENDER
        || open.owner_bytes.saturating_add(size) > MAX_OPEN_BYTES_PER_SENDER
    {
        return Err(IntakeError::Limit(format!(
            "you hold {} open uploads ({} bytes declared; at most {MAX_OPEN_UPLOADS_PER_SENDER} and {MAX_OPEN_BYTES_PER_SENDER}); finish or end (DELETE) one first",
            open.for_owner, open.owner_bytes
        )));
    }
    if open.for_bundle >= MAX_OPEN_UPLOADS_PER_BUNDLE {
        return Err(IntakeError::Limit(format!(
            "bundle {bundle_id} already has {} open uploads; finish or end one first",
            open.for_bundle
        )));
    }
    if open.count >= MAX_OPEN_UPLOADS || open.bytes.saturating_add(size) > MAX_OPEN_UPLOAD_BYTES {
        return Err(IntakeError::Limit(format!(
            "the server holds {} open uploads ({} bytes); try again later",
            open.count, open.bytes
        )));
    }
    Ok(())
}

/// Removes open uploads untouched for [`UPLOAD_IDLE_HOURS`] and their data;
/// how many. The caller holds the intake lock.
pub(crate) fn expire_idle(db: &Db, data_dir: &Path) -> Result<usize, IntakeError> {
    let cutoff = chrono::Utc::now() - chrono::Duration::hours(UPLOAD_IDLE_HOURS);
    let expired = db.write_bookkeeping(|tx| tx.expire_uploads(&cutoff.to_rfc3339()))?;
    let store = crate::platform::evidence::of(data_dir)?;
    for id in &expired {
        remove_chunks(&store, id)?;
    }
    Ok(expired.len())
}

/// Removes the stored chunks of upload `id`.
pub(crate) fn remove_chunks(store: &Evidence, id: &str) -> Result<(), IntakeError> {
    store.delete_prefix(&upload_prefix(id))?;
    store.delete(&legacy_part_key(id))?;
    Ok(())
}

/// The upload `id`, when `sender` may reach it (otherwise, as for an
/// upload that does not exist, `NotFound`).
pub fn get(db: &Db, sender: &Sender, id: &str) -> Result<UploadRecord, IntakeError> {
    let missing = || IntakeError::NotFound(format!("no upload {id}"));
    if !is_upload_id(id) {
        return Err(missing());
    }
    let u = db.read(|r| r.upload(id))?.ok_or_else(missing)?;
    if let Sender::Team(_) = sender {
        let team = db.read(|r| r.bundle(&u.bundle_id))?.map(|b| b.team);
        if !team.is_some_and(|t| sender.may_see(&t)) {
            return Err(missing());
        }
    }
    Ok(u)
}

/// Ends upload `id` (the client gave up on it): an open upload and its data
/// are removed; a finished one cannot be ended (`Conflict`).
pub fn end(db: &Db, data_dir: &Path, sender: &Sender, id: &str) -> Result<(), IntakeError> {
    let u = get(db, sender, id)?;
    let Some(_append) = AppendGuard::take(id) else {
        return Err(IntakeError::Busy { offset: u.offset });
    };
    let _guard = intake_lock();
    if !db.write_bookkeeping(|tx| tx.delete_open_upload(id))? {
        return Err(IntakeError::Conflict(format!(
            "upload {id} is finished; there is nothing to end"
        )));
    }
    remove_chunks(&*crate::platform::evidence::of(data_dir)?, id)
}

/// Appends `bytes` at `offset` to upload `id`; returns the new offset.
pub fn append(
    db: &Db,
    data_dir: &Path,
    sender: &Sender,
    id: &str,
    offset: u64,
    bytes: &[u8],
) -> Result<u64, IntakeError> {
    let u = get(db, sender, id)?;
    let Some(_guard) = AppendGuard::take(id) else {
        return Err(IntakeError::Busy { offset: u.offset });
    };
    // Read again under the guard: another append may just have finished.
    let u = get(db, sender, id)?;
    if u.state != "open" {
        return if offset == u.size && bytes.is_empty() {
            Ok(u.size)
        } else {
            Err(IntakeError::OffsetMismatch {
                offset: u.size,
                sent: offset,
            })
        };
    }
    if offset != u.offset {
        return Err(IntakeError::OffsetMismatch {
            offset: u.offset,
            sent: offset,
        });
    }
    if bytes.len() > MAX_APPEND_BYTES {
        return Err(IntakeError::TooLarge(format!(
            "an append is at most {MAX_APPEND_BYTES} bytes"
        )));
    }
    let end = offset.saturating_add(bytes.len() as u64);
    if end > u.size {
        return Err(IntakeError::Invalid(format!(
            "{} bytes at offset {offset} go past the declared size {}",
            bytes.len(),
            u.size
        )));
    }
    if bytes.is_empty() {
        return Ok(offset);
    }
    // The chunk is stored (durably) before the offset moves.
    let store = crate::platform::evidence::of(data_dir)?;
    store.put_bytes(&chunk_key(id, offset), bytes.to_vec())?;
    db.write_bookkeeping(|tx| tx.set_upload_offset(id, end))?;
    Ok(end)
}

/// How stored chunks make an upload of `size` bytes: `chunks` are (start,
/// length) sorted by start; each chunk is read from its start up to the
/// next chunk's start (bytes past it were never acknowledged). The answer
/// is (start, bytes of that chunk to read) in order, or the first offset
/// no chunk holds.
pub fn plan_chunks(chunks: &[(u64, u64)], size: u64) -> Result<Vec<(u64, u64)>, u64> {
    let mut pos = 0u64;
    let mut out = Vec::new();
    for (i, &(start, len)) in chunks.iter().enumerate() {
        if start >= size || start < pos {
            continue;
        }
        if start > pos {
            return Err(pos);
        }
        let next = chunks.get(i + 1).map_or(size, |c| c.0.min(size));
        let end = start.saturating_add(len).min(next);
        if end > start {
            out.push((start, end - start));
            pos = end;
        }
    }
    if pos < size { Err(pos) } else { Ok(out) }
}

/// Puts the chunks of upload `u` together into `returns/incoming/` on this
/// machine, checking the size and SHA-256 (`Gone`, and the upload removed,
/// when bytes are missing or differ).
fn assemble(
    db: &Db,
    store: &Evidence,
    data_dir: &Path,
    u: &UploadRecord,
) -> Result<(), IntakeError> {
    let id = &u.id;
    let mut chunks: Vec<(u64, u64)> = store
        .list(&upload_prefix(id))?
        .into_iter()
        .filter_map(|l| chunk_of(&l.key).map(|(_, start)| (start, l.size)))
        .collect();
    if let Some(len) = store.size(&legacy_part_key(id))?
        && !chunks.iter().any(|c| c.0 == 0)
    {
        chunks.push((0, len));
    }
    chunks.sort_unstable();
    let gone = |why: String| {
        db.write_bookkeeping(|tx| tx.delete_upload(id))?;
        remove_chunks(store, id)?;
        Err(IntakeError::Gone(format!("{why}; start a new upload")))
    };
    let plan = match plan_chunks(&chunks, u.size) {
        Ok(p) => p,
        Err(at) => return gone(format!("the data of upload {id} is lost from byte {at}")),
    };
    let mut file = IncomingFile::new(data_dir, u.size)?;
    for (start, len) in plan {
        let k = if start == 0 && store.size(&chunk_key(id, 0))?.is_none() {
            legacy_part_key(id)
        } else {
            chunk_key(id, start)
        };
        store.copy_to(&k, Some(0..len), &mut file)?;
    }
    let (sha, size) = (file.sha256(), file.size);
    if sha != u.sha256 || size != u.size {
        return gone(format!(
            "the bytes received have SHA-256 {sha}, not the declared {}",
            u.sha256
        ));
    }
    file.finish(data_dir)?;
    Ok(())
}

/// The package of upload `u` on this machine, for parsing: already there,
/// fetched from the store (an instance that took it in before), or put
/// together from its chunks.
fn package_here(
    db: &Db,
    store: &Evidence,
    data_dir: &Path,
    u: &UploadRecord,
) -> Result<std::path::PathBuf, IntakeError> {
    let incoming = incoming_path(data_dir, &u.sha256);
    if incoming.exists() {
        return Ok(incoming);
    }
    if !store.is_local() && store.exists(&incoming_key(&u.sha256))? {
        let mut file = IncomingFile::new(data_dir, u.size)?;
        store.copy_to(&incoming_key(&u.sha256), None, &mut file)?;
        if file.sha256() == u.sha256 {
            return Ok(file.finish(data_dir)?.0);
        }
    }
    assemble(db, store, data_dir, u)?;
    Ok(incoming)
}

fn replay(u: &UploadRecord) -> IntakeError {
    let msg = u
        .error
        .clone()
        .unwrap_or_else(|| "the package was refused".into());
    super::error::replay(u.error_status, msg)
}

/// Completes upload `id`: checks size and SHA-256, takes the return in and
/// answers its results (the same results when called again).
pub fn complete(
    db: &Db,
    data_dir: &Path,
    options: &IntakeOptions,
    sender: &Sender,
    id: &str,
) -> Result<ReturnDocument, IntakeError> {
    let u = get(db, sender, id)?;
    match u.state.as_str() {
        "done" => {
            let rid = u
                .return_id
                .ok_or_else(|| IntakeError::Internal("done upload without return".into()))?;
            return return_document(db, rid);
        }
        "failed" => return Err(replay(&u)),
        _ => {}
    }
    if u.offset != u.size {
        return Err(IntakeError::Invalid(format!(
            "upload {id} holds {} of {} bytes; send the rest first",
            u.offset, u.size
        )));
    }
    let store = crate::platform::evidence::of(data_dir)?;
    let incoming = package_here(db, &store, data_dir, &u)?;
    let out = take_in(
        db,
        data_dir,
        options,
        &incoming,
        &u.sha256,
        u.size,
        Some(&u),
    );
    // The package is kept now (or refused for good): its chunks can go.
    if out.as_ref().err().is_none_or(|e| e.is_final()) {
        remove_chunks(&store, id)?;
    }
    out
}

/// The results of a return, looked up by its receipt (32 hex digits) or,
/// for coordinators and admins only, by its number. A team reaches only
/// its own team's returns; anything else is `NotFound`, as for a return
/// that does not exist.
pub fn return_for(db: &Db, sender: &Sender, key: &str) -> Result<ReturnDocument, IntakeError> {
    let missing = || IntakeError::NotFound(format!("no return {key}"));
    let id = if is_upload_id(key) {
        db.read(|r| r.return_by_receipt(key))?
    } else if let (Sender::Office(_), Ok(n)) = (sender, key.parse::<i64>()) {
        Some(n)
    } else {
        None
    };
    let ret = match id {
        Some(id) => db.read(|r| r.return_by_id(id))?,
        None => None,
    }
    .ok_or_else(missing)?;
    if !sender.may_see(&ret.team) {
        return Err(missing());
    }
    return_document(db, ret.id)
}

/// Folder of upload data (for the clean-up and tests).
pub fn uploads_dir(data_dir: &Path) -> std::path::PathBuf {
    data_dir.join(UPLOADS_DIR)
}

/// A package received in one request body (the browser or USB path),
/// written to a temp file in `returns/incoming/` while its SHA-256 is
/// computed, then fsynced and renamed to `<sha256>.zip`.
pub struct IncomingFile {
    tmp: tempfile::NamedTempFile,
    hasher: Sha256,
    size: u64,
    max: u64,
}

impl IncomingFile {
    /// A new temp file; at most `max` bytes are accepted.
    pub fn new(data_dir: &Path, max: u64) -> Result<IncomingFile, IntakeError> {
        let dir = data_dir.join(INCOMING_DIR);
        std::fs::create_dir_all(&dir)
            .map_err(|e| crate::Error::io(format!("creating {}", dir.display()), e))?;
        let tmp = tempfile::Builder::new()
            .prefix(".receiving-")
            .tempfile_in(&dir)
            .map_err(|e| crate::Error::io("creating a temp file for a package", e))?;
        Ok(IncomingFile {
            tmp,
            hasher: Sha256::new(),
            size: 0,
            max,
        })
    }

    /// Appends `bytes`; refuses to grow past the bound.
    pub fn write(&mut self, bytes: &[u8]) -> Result<(), IntakeError> {
        self.size = self.size.saturating_add(bytes.len() as u64);
        if self.size > self.max {
            return Err(IntakeError::TooLarge(format!(
                "a package is at most {} bytes",
                self.max
            )));
        }
        self.hasher.update(bytes);
        self.tmp
            .as_file_mut()
            .write_all(bytes)
            .map_err(|e| crate::Error::io("writing a received package", e))?;
        Ok(())
    }

    /// The SHA-256 of the bytes so far.
    pub fn sha256(&self) -> String {
        hex::encode(self.hasher.clone().finalize())
    }

    /// Makes the package durable at `returns/incoming/<sha256>.zip`; returns
    /// its path, SHA-256 and size.
    pub fn finish(self, data_dir: &Path) -> Result<(std::path::PathBuf, String, u64), IntakeError> {
        if self.size == 0 {
            return Err(IntakeError::Invalid("the request body is empty".into()));
        }
        let sha = hex::encode(self.hasher.finalize());
        let path = incoming_path(data_dir, &sha);
        self.tmp
            .as_file()
            .sync_all()
            .map_err(|e| crate::Error::io("syncing a received package", e))?;
        if path.exists() {
            return Ok((path, sha, self.size));
        }
        self.tmp
            .persist(&path)
            .map_err(|e| crate::Error::io(format!("renaming into {}", path.display()), e.error))?;
        if let Some(dir) = path.parent() {
            crate::platform::durable::sync_dir(dir)?;
        }
        Ok((path, sha, self.size))
    }
}

impl Write for IncomingFile {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        IncomingFile::write(self, buf).map_err(std::io::Error::other)?;
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

/// Takes in a package received whole (see [`IncomingFile`]).
pub fn take_in_whole(
    db: &Db,
    data_dir: &Path,
    options: &IntakeOptions,
    file: IncomingFile,
) -> Result<ReturnDocument, IntakeError> {
    let (path, sha, size) = file.finish(data_dir)?;
    take_in(db, data_dir, options, &path, &sha, size, None)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn open_upload(db: &Db, data_dir: &Path, id: &str, idle_hours: i64) {
        let now = chrono::Utc::now();
        let u = UploadRecord {
            id: id.to_string(),
            bundle_id: uuid::Uuid::new_v4().to_string(),
            sha256: "ab".repeat(32),
            size: 10,
            offset: 0,
            state: "open".into(),
            return_id: None,
            error: None,
            error_status: None,
            created_at: now.to_rfc3339(),
            owner: Some("team:Team Amber".into()),
        };
        let at = (now - chrono::Duration::hours(idle_hours)).to_rfc3339();
        db.write_bookkeeping(|tx| {
            tx.insert_upload(&u)?;
            tx.touch_upload_at(id, &at)
        })
        .unwrap();
        let store = crate::platform::evidence::of(data_dir).unwrap();
        store
            .put_bytes(&chunk_key(id, 0), b"12345".to_vec())
            .unwrap();
    }

    // Issue 12 item 1: idle uploads held the budget for 7 days. An upload
    // untouched for 13 hours goes (row and data), one of 11 hours stays.
    #[test]
    fn uploads_idle_for_twelve_hours_are_removed() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let (old, recent) = ("a".repeat(32), "b".repeat(32));
        open_upload(&db, dir.path(), &old, 13);
        open_upload(&db, dir.path(), &recent, 11);
        assert_eq!(expire_idle(&db, dir.path()).unwrap(), 1);
        assert!(db.read(|r| r.upload(&old)).unwrap().is_none());
        let store = crate::platform::evidence::of(dir.path()).unwrap();
        assert!(!store.exists(&chunk_key(&old, 0)).unwrap());
        assert!(db.read(|r| r.upload(&recent)).unwrap().is_some());
        assert!(store.exists(&chunk_key(&recent, 0)).unwrap());
    }

    #[test]
    fn chunks_make_the_upload_up_to_the_next_chunk() {
        // Acknowledged 0..100 and 100..180; a crash left 50 unacknowledged
        // bytes after 180 and the client sent 180..200 again.
        let chunks = [(0, 100), (100, 80), (180, 20)];
        assert_eq!(
            plan_chunks(&chunks, 200),
            Ok(vec![(0, 100), (100, 80), (180, 20)])
        );
        // A chunk written longer than acknowledged is cut at the next one.
        assert_eq!(
            plan_chunks(&[(0, 150), (100, 100)], 200),
            Ok(vec![(0, 100), (100, 100)])
        );
        // The last chunk is cut at the declared size.
        assert_eq!(plan_chunks(&[(0, 250)], 200), Ok(vec![(0, 200)]));
        // A gap or a short end: the first offset missing.
        assert_eq!(plan_chunks(&[(0, 90), (100, 100)], 200), Err(90));
        assert_eq!(plan_chunks(&[(0, 100)], 200), Err(100));
        assert_eq!(plan_chunks(&[], 1), Err(0));
    }

    #[test]
    fn a_bundle_returns_at_most_a_plausible_size() {
        let max = 1 << 30;
        assert_eq!(plausible_size(0, max), 256 << 20);
        assert_eq!(plausible_size(2, max), 512 << 20);
        assert_eq!(plausible_size(6, max), 1 << 30);
        assert_eq!(plausible_size(300, max), 1 << 30);
        assert_eq!(plausible_size(usize::MAX, max), 1 << 30);
    }

    #[test]
    fn a_team_sees_only_its_own_uploads_and_returns() {
        let amber = Sender::Team("Team Amber".into());
        assert!(amber.may_see("Team Amber"));
        assert!(!amber.may_see("Team Basalt"));
        let office = Sender::Office("user:1".into());
        assert!(office.may_see("Team Basalt"));
        assert_eq!(amber.owner_key(), "team:Team Amber");
        assert_eq!(office.owner_key(), "user:1");
    }
}
