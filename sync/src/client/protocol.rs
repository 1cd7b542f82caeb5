//! The HTTP exchanges of a resumable push (RETURN-SPEC "Resumable push"):
//! `POST /api/v1/uploads`, `HEAD` and `PATCH /api/v1/uploads/{id}`,
//! `POST /api/v1/uploads/{id}/complete`, and `DELETE /api/v1/uploads/{id}`
//! when the server refuses the bytes themselves (the upload cannot go on, so
//! it is ended rather than left to hold the team's open-upload budget until
//! the server's idle expiry). A push that gives up because the link keeps
//! failing keeps its upload, to resume it next time. Server answers are
//! bounded: JSON bodies are read up to 1 MiB.

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};
use std::path::Path;

use serde::{Deserialize, Serialize};
use ureq::Agent;
use ureq::http::Response;
use uuid::Uuid;

use super::PushOptions;
use super::retry::Backoff;
use crate::SyncError;

/// Largest server answer read, in bytes.
const MAX_ANSWER_BYTES: u64 = 1 << 20;

/// One report's result from `complete`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ReportResult {
    pub report_id: Uuid,
    /// `accepted`, `duplicate` or `rejected`.
    pub status: String,
    pub reason: Option<String>,
    #[serde(default)]
    pub flags: Vec<String>,
}

/// The answer of `complete` (and of `GET /api/v1/returns/{id}`).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct CompleteResponse {
    pub return_id: i64,
    pub bundle_id: Uuid,
    pub results: Vec<ReportResult>,
}

#[derive(Debug, Deserialize)]
struct Created {
    upload_id: String,
    offset: u64,
    #[serde(default)]
    complete: bool,
}

#[derive(Serialize)]
struct CreateBody<'a> {
    bundle_id: Uuid,
    size: u64,
    sha256: &'a str,
}

/// What went wrong with one request.
enum Failure {
    /// Worth retrying: transport error, 5xx, 408, 429.
    Retry(String),
    /// Not worth retrying: the server refused.
    Fatal(SyncError),
}

/// A push in progress against one server.
pub struct Session {
    agent: Agent,
    base: String,
    token: Option<String>,
    chunk: usize,
    backoff: Backoff,
}

fn header_u64(resp: &Response<ureq::Body>, name: &str) -> Option<u64> {
    resp.headers()
        .get(name)
        .and_then(|v| v.to_str().ok())
        .and_then(|s| s.trim().parse().ok())
}

fn read_body(resp: &mut Response<ureq::Body>) -> String {
    resp.body_mut()
        .with_config()
        .limit(MAX_ANSWER_BYTES)
        .read_to_string()
        .unwrap_or_default()
}

/// Classifies a response that is not the expected success.
fn unexpected(what: &str, mut resp: Response<ureq::Body>) -> Failure {
    let status = resp.status().as_u16();
    let body = read_body(&mut resp);
    let msg = serde_json::from_str::<serde_json::Value>(&body)
        .ok()
        .and_then(|v| v.get("error").and_then(|e| e.as_str()).map(str::to_owned))
        .unwrap_or(body);
    let text = format!("{what}: server answered {status}: {msg}");
    if status >= 500 || status == 408 || status == 429 {
        Failure::Retry(text)
    } else {
        Failure::Fatal(SyncError::Push(text))
    }
}

fn is_upload_id(s: &str) -> bool {
    (1..=128).contains(&s.len())
        && s.bytes()
            .all(|c| c.is_ascii_alphanumeric() || c == b'-' || c == b'_')
}

/// The certificates of a PEM file (at most 1 MiB; our bound), or a clear error.
fn read_ca_file(path: &std::path::Path) -> Result<Vec<ureq::tls::Certificate<'static>>, SyncError> {
    let bad = |why: String| SyncError::Usage(format!("CA file {}: {why}", path.display()));
    let meta = std::fs::metadata(path).map_err(|e| bad(e.to_string()))?;
    if meta.len() > 1 << 20 {
        return Err(bad(
            "larger than 1 MiB; a CA file holds a few certificates".into()
        ));
    }
    let pem = std::fs::read(path).map_err(|e| bad(e.to_string()))?;
    let mut certs = Vec::new();
    for item in ureq::tls::parse_pem(&pem) {
        if let ureq::tls::PemItem::Certificate(c) = item.map_err(|e| bad(e.to_string()))? {
            certs.push(c);
        }
    }
    if certs.is_empty() {
        return Err(bad(
            "no PEM certificate (-----BEGIN CERTIFICATE-----) in it".into(),
        ));
    }
    Ok(certs)
}

impl Session {
    /// A session against `server_url` (`http://host:port`, no trailing path).
    pub fn new(
        server_url: &str,
        token: Option<&str>,
        options: &PushOptions,
    ) -> Result<Self, SyncError> {
        let base = server_url.trim_end_matches('/').to_owned();
        if !base.starts_with("http://") && !base.starts_with("https://") {
            return Err(SyncError::Usage(format!(
                "server {server_url:?} must start with http:// or https://"
            )));
        }
        let mut config = Agent::config_builder()
            .http_status_as_error(false)
            .timeout_per_call(Some(options.call_timeout));
        if let Some(path) = &options.ca_file {
            config = config.tls_config(
                ureq::tls::TlsConfig::builder()
                    .root_certs(ureq::tls::RootCerts::new_with_certs(&read_ca_file(path)?))
                    .build(),
            );
        }
        let agent: Agent = config.build().into();
        Ok(Session {
            agent,
            base,
            token: token.map(str::to_owned),
            chunk: options.chunk_bytes,
            backoff: Backoff::new(
                options.max_failures,
                options.initial_backoff,
                options.max_backoff,
                options.max_total,
            ),
        })
    }

    /// Failed requests so far.
    pub fn failures(&self) -> u32 {
        self.backoff.failures()
    }

    fn auth(&self) -> Option<String> {
        self.token.as_ref().map(|t| format!("Bearer {t}"))
    }

    /// Runs `f` until it succeeds, retrying retryable failures with backoff.
    fn retrying<T>(
        &mut self,
        mut f: impl FnMut(&mut Self) -> Result<T, Failure>,
    ) -> Result<T, SyncError> {
        loop {
            match f(self) {
                Ok(v) => return Ok(v),
                Err(Failure::Fatal(e)) => return Err(e),
                Err(Failure::Retry(msg)) => match self.backoff.fail() {
                    Some(wait) => std::thread::sleep(wait),
                    None => {
                        return Err(SyncError::Push(format!(
                            "giving up after {} failed requests: {msg}",
                            self.backoff.failures()
                        )));
                    }
                },
            }
        }
    }

    fn create(&mut self, bundle_id: Uuid, sha256: &str, size: u64) -> Result<Created, Failure> {
        let body = serde_json::to_vec(&CreateBody {
            bundle_id,
            size,
            sha256,
        })
        .map_err(|e| Failure::Fatal(SyncError::InvalidInput(e.to_string())))?;
        let mut req = self
            .agent
            .post(format!("{}/api/v1/uploads", self.base))
            .header("Content-Type", "application/json");
        if let Some(a) = self.auth() {
            req = req.header("Authorization", a);
        }
        let mut resp = req
            .send(&body)
            .map_err(|e| Failure::Retry(format!("create upload: {e}")))?;
        match resp.status().as_u16() {
            200 | 201 => {
                let text = read_body(&mut resp);
                let c: Created = serde_json::from_str(&text).map_err(|e| {
                    Failure::Fatal(SyncError::Push(format!("create upload: bad answer: {e}")))
                })?;
                if !is_upload_id(&c.upload_id) {
                    return Err(Failure::Fatal(SyncError::Push(
                        "create upload: the server sent an unusable upload_id".into(),
                    )));
                }
                Ok(c)
            }
            _ => Err(unexpected("create upload", resp)),
        }
    }

    fn url(&self, id: &str) -> String {
        format!("{}/api/v1/uploads/{id}", self.base)
    }

    fn head(&mut self, id: &str) -> Result<u64, Failure> {
        let mut req = self.agent.head(self.url(id));
        if let Some(a) = self.auth() {
            req = req.header("Authorization", a);
        }
        let resp = req
            .call()
            .map_err(|e| Failure::Retry(format!("ask offset: {e}")))?;
        match resp.status().as_u16() {
            200 | 204 => header_u64(&resp, "Upload-Offset").ok_or_else(|| {
                Failure::Fatal(SyncError::Push(
                    "ask offset: no Upload-Offset header".into(),
                ))
            }),
            _ => Err(unexpected("ask offset", resp)),
        }
    }

    /// Sends the chunk at `offset`; returns the server's new offset.
    fn patch(&mut self, id: &str, offset: u64, chunk: &[u8]) -> Result<u64, Failure> {
        let mut req = self
            .agent
            .patch(self.url(id))
            .header("Upload-Offset", offset.to_string())
            .header("Content-Type", "application/partial-upload");
        if let Some(a) = self.auth() {
            req = req.header("Authorization", a);
        }
        let resp = req
            .send(chunk)
            .map_err(|e| Failure::Retry(format!("send bytes at {offset}: {e}")))?;
        match resp.status().as_u16() {
            200 | 204 | 409 => header_u64(&resp, "Upload-Offset").ok_or_else(|| {
                Failure::Fatal(SyncError::Push(
                    "send bytes: no Upload-Offset header".into(),
                ))
            }),
            _ => Err(unexpected("send bytes", resp)),
        }
    }

    /// Ends upload `id`, once and without retrying; a failure is ignored
    /// (the server expires idle uploads anyway).
    fn end(&mut self, id: &str) {
        let mut req = self.agent.delete(self.url(id));
        if let Some(a) = self.auth() {
            req = req.header("Authorization", a);
        }
        let _ = req.call();
    }

    fn complete(&mut self, id: &str) -> Result<CompleteResponse, Failure> {
        let mut req = self.agent.post(format!("{}/complete", self.url(id)));
        if let Some(a) = self.auth() {
            req = req.header("Authorization", a);
        }
        let mut resp = req
            .send_empty()
            .map_err(|e| Failure::Retry(format!("complete: {e}")))?;
        match resp.status().as_u16() {
            200 => {
                let text = read_body(&mut resp);
                serde_json::from_str(&text).map_err(|e| {
                    Failure::Fatal(SyncError::Push(format!("complete: bad answer: {e}")))
                })
            }
            _ => Err(unexpected("complete", resp)),
        }
    }

    /// Uploads the file at `path` (of `size` bytes and SHA-256 `sha256`) and completes it.
    pub fn upload(
        &mut self,
        path: &Path,
        bundle_id: Uuid,
        sha256: &str,
        size: u64,
        bar: &indicatif::ProgressBar,
    ) -> Result<(String, CompleteResponse), SyncError> {
        let created = self.retrying(|s| s.create(bundle_id, sha256, size))?;
        let id = created.upload_id;
        let mut offset = created.offset;
        let mut file =
            File::open(path).map_err(|e| SyncError::io(format!("open {}", path.display()), e))?;
        let mut buf = vec![0u8; self.chunk];
        let mut need_head = false;
        while offset < size && !created.complete {
            bar.set_position(offset);
            if need_head {
                offset = self.retrying(|s| s.head(&id))?;
                need_head = false;
                continue;
            }
            let n = usize::try_from((size - offset).min(self.chunk as u64)).unwrap_or(self.chunk);
            file.seek(SeekFrom::Start(offset))
                .and_then(|_| file.read_exact(&mut buf[..n]))
                .map_err(|e| SyncError::io(format!("read {}", path.display()), e))?;
            match self.patch(&id, offset, &buf[..n]) {
                Ok(new) if new > size => {
                    return Err(SyncError::Push(format!(
                        "server offset {new} is past the size {size}"
                    )));
                }
                Ok(new) => offset = new,
                Err(Failure::Fatal(e)) => {
                    self.end(&id);
                    return Err(e);
                }
                Err(Failure::Retry(msg)) => match self.backoff.fail() {
                    Some(wait) => {
                        std::thread::sleep(wait);
                        need_head = true;
                    }
                    None => {
                        return Err(SyncError::Push(format!(
                            "giving up after {} failed requests: {msg}",
                            self.backoff.failures()
                        )));
                    }
                },
            }
        }
        bar.set_position(size);
        let results = self.retrying(|s| s.complete(&id))?;
        Ok((id, results))
    }
}
