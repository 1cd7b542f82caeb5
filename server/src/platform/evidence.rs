//! The evidence store: photos, thumbnails, kept return packages, upload
//! chunks and issued bundles, through one object-store interface (the
//! `object_store` crate). Local files under the data directory by default
//! (the keys are the relative paths the data directory always had, so
//! existing data keeps working); any S3-compatible store when the server is
//! started with `--evidence s3://bucket/prefix` (endpoint, region and
//! credentials from the usual `AWS_*` variables).
//!
//! `object_store` is async; intake, planning and the clean-up are blocking
//! code, so this is a small sync facade over one process-wide tokio runtime
//! ([`Evidence::put_bytes`], [`Evidence::copy_to`], …). The web side streams
//! with [`Evidence::open_stream`], which reads on that runtime and hands the
//! chunks over a bounded channel (at most [`STREAM_CHUNKS`] chunks in flight).
//!
//! Durability: a put returns only once the object is stored. For local files
//! the facade also fsyncs the file and its folder after the store's rename
//! (`object_store`'s local store writes a staging file and renames it, without
//! fsync), so the rule of `platform::durable` holds for every backend: write
//! the object, then commit the row that names it.

use crate::error::{Error, Result};
use bytes::Bytes;
use futures_util::{Stream, StreamExt};
use object_store::path::Path as Key;
use object_store::{ObjectStore, PutPayload, WriteMultipart};
use std::path::{Path, PathBuf};
use std::pin::Pin;
use std::sync::{Arc, Mutex, OnceLock};

/// Chunks of a streamed read held between the store and the HTTP answer.
pub const STREAM_CHUNKS: usize = 4;
/// Parts of a multipart put (S3 wants at least 5 MiB but for the last).
const PART_BYTES: usize = 8 << 20;

/// A stream of an object's bytes.
pub type ChunkStream = Pin<Box<dyn Stream<Item = std::io::Result<Bytes>> + Send>>;

/// One object of a listing.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Listed {
    pub key: String,
    pub size: u64,
    pub modified: std::time::SystemTime,
}

/// One evidence store.
pub struct Evidence {
    store: Arc<dyn ObjectStore>,
    /// The folder of a local store (the data directory); `None` for S3.
    local: Option<PathBuf>,
    describe: String,
}

impl std::fmt::Debug for Evidence {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.describe)
    }
}

fn runtime() -> &'static tokio::runtime::Runtime {
    static RT: OnceLock<tokio::runtime::Runtime> = OnceLock::new();
    RT.get_or_init(|| {
        tokio::runtime::Builder::new_multi_thread()
            .worker_threads(2)
            .thread_name("evidence")
            .enable_all()
            .build()
            .expect("the evidence runtime starts (threads and a timer)")
    })
}

/// Runs `f` to its end on the evidence runtime, from blocking code or from
/// inside another runtime (then on a helper thread, as `block_on` may not
/// nest).
fn block<F>(f: F) -> F::Output
where
    F: std::future::Future + Send,
    F::Output: Send,
{
    if tokio::runtime::Handle::try_current().is_ok() {
        std::thread::scope(|s| {
            s.spawn(|| runtime().block_on(f))
                .join()
                .unwrap_or_else(|p| std::panic::resume_unwind(p))
        })
    } else {
        runtime().block_on(f)
    }
}

fn key(k: &str) -> Result<Key> {
    Key::parse(k).map_err(|e| Error::Internal(format!("evidence key {k:?}: {e}")))
}

fn fault(what: impl std::fmt::Display, e: object_store::Error) -> Error {
    Error::Internal(format!("evidence store: {what}: {e}"))
}

/// Where the evidence of a data directory lives, as `--evidence` says it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Location {
    /// Files under the data directory.
    Local,
    /// An S3-compatible bucket and a key prefix (maybe empty).
    S3 { bucket: String, prefix: String },
}

impl Location {
    /// Reads `--evidence`: empty or `local` for the data directory,
    /// `s3://bucket[/prefix]` for an S3-compatible store.
    pub fn parse(s: &str) -> Result<Location> {
        let s = s.trim();
        if s.is_empty() || s == "local" {
            return Ok(Location::Local);
        }
        let Some(rest) = s.strip_prefix("s3://") else {
            return Err(Error::Invalid(format!(
                "--evidence {s:?}: give local or s3://bucket/prefix"
            )));
        };
        let (bucket, prefix) = rest.split_once('/').unwrap_or((rest, ""));
        let ok = |c: char| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-' || c == '.';
        if bucket.len() < 3 || bucket.len() > 63 || !bucket.chars().all(ok) {
            return Err(Error::Invalid(format!(
                "--evidence {s:?}: the bucket name must be 3 to 63 lowercase letters, digits, '-' or '.'"
            )));
        }
        let prefix = prefix.trim_matches('/').to_string();
        if !prefix.is_empty() {
            key(&prefix)
                .map_err(|_| Error::Invalid(format!("--evidence {s:?}: bad key prefix")))?;
        }
        Ok(Location::S3 {
            bucket: bucket.to_string(),
            prefix,
        })
    }
}

/// True for an `http://` endpoint on this machine (plain HTTP is allowed
/// there only, for a test server; anything else needs `AWS_ALLOW_HTTP`).
fn loopback_http(endpoint: &str) -> bool {
    let Some(rest) = endpoint.strip_prefix("http://") else {
        return false;
    };
    let host = rest.split('/').next().unwrap_or("");
    let host = match host.rsplit_once(':') {
        Some((h, p)) if p.chars().all(|c| c.is_ascii_digit()) => h,
        _ => host,
    };
    host == "localhost"
        || host == "[::1]"
        || host
            .parse::<std::net::Ipv4Addr>()
            .is_ok_and(|a| a.is_loopback())
}

impl Evidence {
    /// Files under `root` (the data directory).
    pub fn local(root: &Path) -> Result<Evidence> {
        std::fs::create_dir_all(root)
            .map_err(|e| Error::io(format!("creating {}", root.display()), e))?;
        let root = std::fs::canonicalize(root)
            .map_err(|e| Error::io(format!("finding {}", root.display()), e))?;
        let store = object_store::local::LocalFileSystem::new_with_prefix(&root)
            .map_err(|e| fault(root.display(), e))?;
        Ok(Evidence {
            store: Arc::new(store),
            describe: format!("local files under {}", root.display()),
            local: Some(root),
        })
    }

    /// An S3-compatible bucket, configured from the `AWS_*` variables
    /// (`AWS_ENDPOINT_URL`, `AWS_REGION`/`AWS_DEFAULT_REGION`,
    /// `AWS_ACCESS_KEY_ID`, `AWS_SECRET_ACCESS_KEY`, …). Checked once
    /// (one listing) so that a wrong endpoint or key stops the start.
    pub fn s3(bucket: &str, prefix: &str) -> Result<Evidence> {
        Evidence::s3_with(bucket, prefix, &[])
    }

    /// [`Evidence::s3`] with `config` (`object_store`'s keys, e.g.
    /// `aws_endpoint`, `aws_access_key_id`) over the environment's.
    pub fn s3_with(bucket: &str, prefix: &str, config: &[(&str, &str)]) -> Result<Evidence> {
        let mut b = object_store::aws::AmazonS3Builder::from_env().with_bucket_name(bucket);
        for (k, v) in config {
            let key = k
                .parse()
                .map_err(|e| Error::Invalid(format!("S3 setting {k}: {e}")))?;
            b = b.with_config(key, *v);
        }
        let endpoint = b
            .get_config_value(&object_store::aws::AmazonS3ConfigKey::Endpoint)
            .unwrap_or_default();
        if loopback_http(&endpoint) {
            b = b.with_allow_http(true);
        }
        let s3 = b
            .build()
            .map_err(|e| Error::Invalid(format!("--evidence s3://{bucket}/{prefix}: {e}")))?;
        let store: Arc<dyn ObjectStore> = if prefix.is_empty() {
            Arc::new(s3)
        } else {
            Arc::new(object_store::prefix::PrefixStore::new(s3, key(prefix)?))
        };
        let ev = Evidence {
            store,
            local: None,
            describe: format!("s3://{bucket}/{prefix}"),
        };
        ev.list("evidence/").map_err(|e| {
            Error::Invalid(format!(
                "--evidence s3://{bucket}/{prefix}: the store does not answer a listing ({e}); check AWS_ENDPOINT_URL, the bucket and the credentials"
            ))
        })?;
        Ok(ev)
    }

    /// The store `location` names, for data directory `data_dir`.
    pub fn open(location: &Location, data_dir: &Path) -> Result<Evidence> {
        match location {
            Location::Local => Evidence::local(data_dir),
            Location::S3 { bucket, prefix } => Evidence::s3(bucket, prefix),
        }
    }

    /// True for the data directory's own files.
    pub fn is_local(&self) -> bool {
        self.local.is_some()
    }

    /// Where object `k` is on this machine's disk, for a local store.
    pub fn local_path(&self, k: &str) -> Option<PathBuf> {
        self.local.as_ref().map(|r| r.join(k))
    }

    /// A local store's file of `k`, fsynced with its folder.
    fn settle(&self, k: &str) -> Result<()> {
        let Some(p) = self.local_path(k) else {
            return Ok(());
        };
        std::fs::File::open(&p)
            .and_then(|f| f.sync_all())
            .map_err(|e| Error::io(format!("syncing {}", p.display()), e))?;
        match p.parent() {
            Some(dir) => crate::platform::durable::sync_dir(dir),
            None => Ok(()),
        }
    }

    /// Stores `bytes` as `k` (replacing what was there); durable on return.
    pub fn put_bytes(&self, k: &str, bytes: Vec<u8>) -> Result<()> {
        let p = key(k)?;
        block(self.store.put(&p, PutPayload::from(bytes))).map_err(|e| fault(k, e))?;
        self.settle(k)
    }

    /// Stores the file at `file` as `k`, read in parts (never whole in
    /// memory); durable on return. A local store whose `k` is `file`
    /// already holds it (the caller wrote it durably there).
    pub fn put_file(&self, k: &str, file: &Path) -> Result<()> {
        if let Some(here) = self.local_path(k)
            && (here == file || std::fs::canonicalize(file).is_ok_and(|f| f == here))
        {
            return Ok(());
        }
        let len = std::fs::metadata(file)
            .map_err(|e| Error::io(format!("reading {}", file.display()), e))?
            .len();
        if len <= PART_BYTES as u64 {
            let bytes = std::fs::read(file)
                .map_err(|e| Error::io(format!("reading {}", file.display()), e))?;
            return self.put_bytes(k, bytes);
        }
        let p = key(k)?;
        block(async {
            use tokio::io::AsyncReadExt;
            let io = |e| Error::io(format!("reading {}", file.display()), e);
            let mut f = tokio::fs::File::open(file).await.map_err(io)?;
            let upload = self
                .store
                .put_multipart(&p)
                .await
                .map_err(|e| fault(k, e))?;
            let mut w = WriteMultipart::new_with_chunk_size(upload, PART_BYTES);
            let mut buf = vec![0u8; 1 << 20];
            loop {
                let n = f.read(&mut buf).await.map_err(io)?;
                if n == 0 {
                    break;
                }
                w.wait_for_capacity(2).await.map_err(|e| fault(k, e))?;
                w.write(&buf[..n]);
            }
            w.finish().await.map_err(|e| fault(k, e))?;
            Ok::<_, Error>(())
        })?;
        self.settle(k)
    }

    /// The size of `k`, or `None` when there is no such object.
    pub fn size(&self, k: &str) -> Result<Option<u64>> {
        let p = key(k)?;
        match block(self.store.head(&p)) {
            Ok(m) => Ok(Some(m.size)),
            Err(object_store::Error::NotFound { .. }) => Ok(None),
            Err(e) => Err(fault(k, e)),
        }
    }

    /// True when `k` is stored.
    pub fn exists(&self, k: &str) -> Result<bool> {
        Ok(self.size(k)?.is_some())
    }

    /// Every object under `prefix` (a folder, ending in `/`).
    pub fn list(&self, prefix: &str) -> Result<Vec<Listed>> {
        self.list_where(prefix, |_| true)
    }

    /// The objects under `prefix` that `pick` picks, read one listing page
    /// after another (only the picked ones are kept in memory).
    pub fn list_where(
        &self,
        prefix: &str,
        mut pick: impl FnMut(&Listed) -> bool + Send,
    ) -> Result<Vec<Listed>> {
        let p = key(prefix.trim_end_matches('/'))?;
        block(async {
            let mut out = Vec::new();
            let mut s = self.store.list(Some(&p));
            while let Some(m) = s.next().await {
                let m = m.map_err(|e| fault(format!("listing {prefix}"), e))?;
                let l = Listed {
                    key: m.location.to_string(),
                    size: m.size,
                    modified: std::time::SystemTime::from(m.last_modified),
                };
                if pick(&l) {
                    out.push(l);
                }
            }
            Ok(out)
        })
    }

    /// Removes `k`; an object already gone is fine.
    pub fn delete(&self, k: &str) -> Result<()> {
        let p = key(k)?;
        match block(self.store.delete(&p)) {
            Ok(()) | Err(object_store::Error::NotFound { .. }) => Ok(()),
            Err(e) => Err(fault(format!("removing {k}"), e)),
        }
    }

    /// Removes every object under `prefix` (and, for local files, the
    /// folder when it is left empty); how many.
    pub fn delete_prefix(&self, prefix: &str) -> Result<usize> {
        let found = self.list(prefix)?;
        for l in &found {
            self.delete(&l.key)?;
        }
        if let Some(dir) = self.local_path(prefix.trim_end_matches('/')) {
            let _ = std::fs::remove_dir(dir);
        }
        Ok(found.len())
    }

    /// Moves `from` to `to` (a rename for local files; a copy and a delete
    /// on S3); durable on return.
    pub fn rename(&self, from: &str, to: &str) -> Result<()> {
        let (f, t) = (key(from)?, key(to)?);
        block(self.store.rename(&f, &t)).map_err(|e| fault(format!("moving {from} to {to}"), e))?;
        self.settle(to)?;
        if let Some(p) = self
            .local_path(from)
            .and_then(|p| p.parent().map(Path::to_path_buf))
        {
            crate::platform::durable::sync_dir(&p)?;
        }
        Ok(())
    }

    /// Writes bytes `range` of `k` (all of it when `None`) to `w`, chunk by
    /// chunk; how many bytes. `NotFound` when there is no such object.
    pub fn copy_to(
        &self,
        k: &str,
        range: Option<std::ops::Range<u64>>,
        w: &mut (dyn std::io::Write + Send),
    ) -> Result<u64> {
        let p = key(k)?;
        block(async {
            let opts = object_store::GetOptions {
                range: range.map(Into::into),
                ..Default::default()
            };
            let r = match self.store.get_opts(&p, opts).await {
                Ok(r) => r,
                Err(object_store::Error::NotFound { .. }) => {
                    return Err(Error::NotFound(format!("no evidence object {k}")));
                }
                Err(e) => return Err(fault(k, e)),
            };
            let mut s = r.into_stream();
            let mut n = 0u64;
            while let Some(c) = s.next().await {
                let c = c.map_err(|e| fault(k, e))?;
                w.write_all(&c)
                    .map_err(|e| Error::io(format!("copying {k}"), e))?;
                n += c.len() as u64;
            }
            Ok(n)
        })
    }

    /// Opens `k` for streaming: its size and its bytes, read on the
    /// evidence runtime and handed over at most [`STREAM_CHUNKS`] chunks
    /// ahead; `None` when there is no such object. For async callers.
    pub async fn open_stream(&self, k: &str) -> Result<Option<(u64, ChunkStream)>> {
        let p = key(k)?;
        let store = self.store.clone();
        let (head_tx, head_rx) = tokio::sync::oneshot::channel();
        let (tx, rx) = tokio::sync::mpsc::channel::<std::io::Result<Bytes>>(STREAM_CHUNKS);
        let name = k.to_string();
        runtime().spawn(async move {
            let r = match store.get(&p).await {
                Ok(r) => r,
                Err(object_store::Error::NotFound { .. }) => {
                    let _ = head_tx.send(Ok(None));
                    return;
                }
                Err(e) => {
                    let _ = head_tx.send(Err(fault(&name, e)));
                    return;
                }
            };
            let _ = head_tx.send(Ok(Some(r.meta.size)));
            let mut s = r.into_stream();
            while let Some(c) = s.next().await {
                let c = c.map_err(std::io::Error::other);
                if tx.send(c).await.is_err() {
                    break;
                }
            }
        });
        let head = head_rx
            .await
            .map_err(|_| Error::Internal(format!("evidence store: reading {k} stopped")))??;
        Ok(head.map(|size| {
            let s = futures_util::stream::unfold(rx, |mut rx| async move {
                rx.recv().await.map(|c| (c, rx))
            });
            (size, Box::pin(s) as ChunkStream)
        }))
    }

    /// Removes staging files a crash left in a local store's folders
    /// (`name#123`: the local store writes those and renames them; a
    /// listing does not show them); how many. Nothing to do on S3, where an
    /// object appears whole or not at all.
    pub fn sweep_staging(&self, folders: &[&str]) -> Result<usize> {
        let Some(root) = &self.local else {
            return Ok(0);
        };
        let mut n = 0;
        for f in folders {
            n += sweep_dir(&root.join(f))?;
        }
        Ok(n)
    }
}

fn sweep_dir(dir: &Path) -> Result<usize> {
    let Ok(it) = std::fs::read_dir(dir) else {
        return Ok(0);
    };
    let mut n = 0;
    for e in it.flatten() {
        let p = e.path();
        if p.is_dir() {
            n += sweep_dir(&p)?;
            continue;
        }
        let name = e.file_name().to_string_lossy().into_owned();
        let staging = name
            .split_once('#')
            .is_some_and(|(_, d)| !d.is_empty() && d.bytes().all(|c| c.is_ascii_digit()));
        if staging || name.starts_with(".tmp") {
            match std::fs::remove_file(&p) {
                Ok(()) => n += 1,
                Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
                Err(e) => return Err(Error::io(format!("removing {}", p.display()), e)),
            }
        }
    }
    Ok(n)
}

/// The stores configured for data directories in this process.
static STORES: Mutex<Vec<(PathBuf, Arc<Evidence>)>> = Mutex::new(Vec::new());

fn dir_key(data_dir: &Path) -> PathBuf {
    std::fs::canonicalize(data_dir).unwrap_or_else(|_| data_dir.to_path_buf())
}

/// Sets the evidence store of `data_dir` for this process (the server and
/// the commands call it once at start, from `--evidence`).
pub fn configure(data_dir: &Path, location: &Location) -> Result<Arc<Evidence>> {
    Ok(install(data_dir, Evidence::open(location, data_dir)?))
}

/// Sets `store` as the evidence store of `data_dir` for this process.
pub fn install(data_dir: &Path, store: Evidence) -> Arc<Evidence> {
    let ev = Arc::new(store);
    let dk = dir_key(data_dir);
    let mut g = STORES.lock().unwrap_or_else(|p| p.into_inner());
    g.retain(|(d, _)| d != &dk);
    g.push((dk, ev.clone()));
    ev
}

/// The evidence store of `data_dir`: the configured one, else its local
/// files.
pub fn of(data_dir: &Path) -> Result<Arc<Evidence>> {
    let dk = dir_key(data_dir);
    let mut g = STORES.lock().unwrap_or_else(|p| p.into_inner());
    if let Some((_, ev)) = g.iter().find(|(d, _)| d == &dk) {
        return Ok(ev.clone());
    }
    let ev = Arc::new(Evidence::local(data_dir)?);
    g.push((dir_key(data_dir), ev.clone()));
    Ok(ev)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn locations_read_from_the_option() {
        assert_eq!(Location::parse("").unwrap(), Location::Local);
        assert_eq!(Location::parse("local").unwrap(), Location::Local);
        assert_eq!(
            Location::parse("s3://gp-evidence/station-1/").unwrap(),
            Location::S3 {
                bucket: "gp-evidence".into(),
                prefix: "station-1".into()
            }
        );
        assert!(Location::parse("s3://B").is_err());
        assert!(Location::parse("gs://bucket").is_err());
    }

    #[test]
    fn plain_http_only_on_loopback() {
        assert!(loopback_http("http://127.0.0.1:9000"));
        assert!(loopback_http("http://localhost:9000/"));
        assert!(loopback_http("http://[::1]:9000"));
        assert!(!loopback_http("http://10.0.0.5:9000"));
        assert!(!loopback_http("https://127.0.0.1:9000"));
    }

    #[test]
    fn a_local_store_puts_lists_reads_moves_and_deletes() {
        let dir = tempfile::tempdir().unwrap();
        let ev = Evidence::local(dir.path()).unwrap();
        ev.put_bytes("evidence/ab/x.jpg", b"photo".to_vec())
            .unwrap();
        assert!(dir.path().join("evidence/ab/x.jpg").is_file());
        assert_eq!(ev.size("evidence/ab/x.jpg").unwrap(), Some(5));
        assert_eq!(ev.size("evidence/ab/y.jpg").unwrap(), None);
        let listed = ev.list("evidence/").unwrap();
        assert_eq!(listed.len(), 1);
        assert_eq!(
            (listed[0].key.as_str(), listed[0].size),
            ("evidence/ab/x.jpg", 5)
        );
        let mut out = Vec::new();
        assert_eq!(
            ev.copy_to("evidence/ab/x.jpg", Some(1..4), &mut out)
                .unwrap(),
            3
        );
        assert_eq!(out, b"hot");
        ev.rename("evidence/ab/x.jpg", "evidence/cd/x.jpg").unwrap();
        assert!(!ev.exists("evidence/ab/x.jpg").unwrap());
        let big = dir.path().join("big.bin");
        let bytes: Vec<u8> = (0..(PART_BYTES + 3)).map(|i| (i % 251) as u8).collect();
        std::fs::write(&big, &bytes).unwrap();
        ev.put_file("returns/incoming/b.zip", &big).unwrap();
        assert_eq!(
            std::fs::read(dir.path().join("returns/incoming/b.zip")).unwrap(),
            bytes
        );
        ev.put_bytes("uploads/u1/0", b"a".to_vec()).unwrap();
        ev.put_bytes("uploads/u1/1", b"b".to_vec()).unwrap();
        assert_eq!(ev.delete_prefix("uploads/u1/").unwrap(), 2);
        assert!(!dir.path().join("uploads/u1").exists());
        assert!(matches!(
            ev.copy_to("nothing", None, &mut Vec::new()),
            Err(Error::NotFound(_))
        ));
        std::fs::write(dir.path().join("evidence/cd/x.jpg#7"), b"half").unwrap();
        assert_eq!(ev.sweep_staging(&["evidence"]).unwrap(), 1);
    }
}
