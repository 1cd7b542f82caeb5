//! The S3 test server that `.ci/run` starts (s3s-fs on loopback,
//! `GROUNDPROOF_TEST_S3`) and the raw HTTP calls of the resumable upload
//! protocol, shared by `evidence_s3` and `two_instances`.

use groundproof::platform::evidence::Evidence;
use std::net::SocketAddr;
use std::path::Path;
use std::process::Child;

pub(crate) const BUCKET: &str = "gp-test";

/// The S3 test server's endpoint and keys, with a prefix of this test's own.
pub(crate) struct S3 {
    endpoint: String,
    key: String,
    secret: String,
    prefix: String,
}

impl S3 {
    /// The test server from the environment, under a new prefix; `None`
    /// (after `missing`, which fails under CI) when there is none.
    pub(crate) fn from_env() -> Option<S3> {
        let Ok(endpoint) = std::env::var("GROUNDPROOF_TEST_S3") else {
            groundproof_e2e::missing(
                "GROUNDPROOF_TEST_S3 is not set (an S3-compatible test server; .ci/run starts s3s-fs)",
            );
            return None;
        };
        let endpoint = if endpoint.starts_with("http") {
            endpoint
        } else {
            format!("http://{endpoint}")
        };
        let var = |k: &str, d: &str| std::env::var(k).unwrap_or_else(|_| d.to_string());
        Some(S3 {
            endpoint,
            key: var("GROUNDPROOF_TEST_S3_KEY", "gp-test-key"),
            secret: var("GROUNDPROOF_TEST_S3_SECRET", "gp-test-secret"),
            prefix: format!("e2e-{}", uuid::Uuid::new_v4().simple()),
        })
    }

    /// `--evidence` for a server on this store.
    pub(crate) fn location(&self) -> String {
        format!("s3://{BUCKET}/{}", self.prefix)
    }

    /// What a server process needs to reach the store. The start-up
    /// clean-up keeps its default grace for young orphans (another instance
    /// may be about to commit their rows).
    pub(crate) fn store_envs(&self) -> Vec<(&'static str, String)> {
        vec![
            ("AWS_ENDPOINT_URL", self.endpoint.clone()),
            ("AWS_ACCESS_KEY_ID", self.key.clone()),
            ("AWS_SECRET_ACCESS_KEY", self.secret.clone()),
            ("AWS_REGION", "us-east-1".into()),
        ]
    }

    /// [`S3::store_envs`] and no grace for orphans, so the start-up clean-up
    /// of a single instance is seen at once.
    pub(crate) fn envs(&self) -> Vec<(&'static str, String)> {
        let mut v = self.store_envs();
        v.push(("GROUNDPROOF_ORPHAN_GRACE_SECS", "0".into()));
        v
    }

    /// The same store, read from this test process.
    pub(crate) fn store(&self) -> Evidence {
        Evidence::s3_with(
            BUCKET,
            &self.prefix,
            &[
                ("aws_endpoint", &self.endpoint),
                ("aws_access_key_id", &self.key),
                ("aws_secret_access_key", &self.secret),
                ("aws_region", "us-east-1"),
            ],
        )
        .expect("the S3 test server answers")
    }

    /// One server process on `data` with this store (no grace for orphans).
    pub(crate) fn spawn(&self, data: &Path) -> (Child, SocketAddr) {
        super::intake::spawn_server_with(data, &["--evidence", &self.location()], &self.envs())
    }
}

/// The whole object `key` of `store`.
pub(crate) fn read(store: &Evidence, key: &str) -> Vec<u8> {
    let mut out = Vec::new();
    store.copy_to(key, None, &mut out).unwrap();
    out
}

/// One request with a bearer token: status, body and `Upload-Offset`.
pub(crate) fn call(
    method: &str,
    url: &str,
    token: &str,
    headers: &[(&str, &str)],
    body: &[u8],
) -> (u16, Vec<u8>, Option<String>) {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .build()
        .into();
    let req = ureq::http::Request::builder()
        .method(method)
        .uri(url)
        .header("Authorization", format!("Bearer {token}"));
    let req = headers.iter().fold(req, |r, (k, v)| r.header(*k, *v));
    let mut resp = agent
        .run(req.body(body.to_vec()).unwrap())
        .expect("request reaches the server");
    let offset = resp
        .headers()
        .get("upload-offset")
        .and_then(|v| v.to_str().ok())
        .map(str::to_string);
    let bytes = resp.body_mut().read_to_vec().unwrap_or_default();
    (resp.status().as_u16(), bytes, offset)
}

/// One PATCH of the resumable protocol: `body` at `at` of upload `id`; the status.
pub(crate) fn patch(base: &str, token: &str, id: &str, at: usize, body: &[u8]) -> u16 {
    let off = at.to_string();
    let h = [
        ("Upload-Offset", off.as_str()),
        ("Content-Type", "application/partial-upload"),
    ];
    call(
        "PATCH",
        &format!("{base}/api/v1/uploads/{id}"),
        token,
        &h,
        body,
    )
    .0
}

/// `POST …/complete` of the upload at `url` (`…/api/v1/uploads/{id}`),
/// asserted 200; the status of each report in the answer.
pub(crate) fn complete(url: &str, token: &str) -> Vec<String> {
    let (st, body, _) = call("POST", &format!("{url}/complete"), token, &[], b"");
    let doc: serde_json::Value = serde_json::from_slice(&body).unwrap();
    assert_eq!(st, 200, "{doc}");
    doc["results"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x["status"].as_str().unwrap().to_string())
        .collect()
}
