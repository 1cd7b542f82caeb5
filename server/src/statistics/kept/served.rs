//! Answers kept as bytes: what many readers ask for on the same facts is
//! serialised once, compressed once, and named by a digest (the HTTP
//! entity tag), so that serving it again costs a copy of a pointer.
//!
//! Nothing here is stored (invariant 2): an entry belongs to one stamp (a
//! [`FactStamp`], or a stamp and a day) and is dropped, with every other
//! entry of that stamp, as soon as the stamp moves.

use sha2::{Digest, Sha256};
use std::collections::VecDeque;
use std::io::Write;
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

/// Bodies shorter than this are not compressed (the gzip header and the
/// extra header lines would eat what it saves).
const GZIP_FROM_BYTES: usize = 1024;

/// One answer as bytes: the JSON, its gzip form, and its entity tag.
#[derive(Debug)]
pub struct Served {
    /// The body as the handler would have written it.
    pub json: Arc<[u8]>,
    /// The same body compressed with gzip (RFC 1952), when it is long
    /// enough to gain from it.
    pub gzip: Option<Arc<[u8]>>,
    /// A weak entity tag (RFC 9110 §8.8.3) from the SHA-256 of the JSON:
    /// weak, because the same tag names the identity and the gzip form.
    pub etag: String,
    made: Instant,
}

impl Served {
    /// Keep `json`, compressed once and tagged by its digest.
    pub fn new(json: Vec<u8>) -> Served {
        let digest = Sha256::digest(&json);
        let etag = format!("W/\"{}\"", hex::encode(&digest[..16]));
        let gzip = (json.len() >= GZIP_FROM_BYTES)
            .then(|| gzip(&json))
            .flatten()
            .map(Arc::from);
        Served {
            json: Arc::from(json),
            gzip,
            etag,
            made: Instant::now(),
        }
    }

    /// How long ago the answer was made.
    pub fn age(&self) -> Duration {
        self.made.elapsed()
    }

    /// Whether an `If-None-Match` header value names this answer (weak
    /// comparison, RFC 9110 §13.1.2; `*` matches any).
    pub fn matches(&self, if_none_match: &str) -> bool {
        let ours = self.etag.trim_start_matches("W/");
        if_none_match
            .split(',')
            .map(str::trim)
            .any(|tag| tag == "*" || tag.trim_start_matches("W/") == ours)
    }
}

/// `bytes` compressed with gzip at the default level; `None` if the
/// encoder fails (then the answer is sent uncompressed).
fn gzip(bytes: &[u8]) -> Option<Vec<u8>> {
    let mut e = flate2::write::GzEncoder::new(
        Vec::with_capacity(bytes.len() / 4),
        flate2::Compression::default(),
    );
    e.write_all(bytes).ok()?;
    e.finish().ok()
}

/// The stamp the entries belong to, and the entries (key, value).
type Entries<S, K, V> = (Option<S>, VecDeque<(K, V)>);

/// Values kept for one stamp under keys, at most `capacity` of them, the
/// most recently used last.
pub(super) struct PerStamp<S, K, V> {
    inner: Mutex<Entries<S, K, V>>,
    capacity: usize,
}

impl<S: PartialEq + Copy, K: PartialEq, V: Clone> PerStamp<S, K, V> {
    pub(super) fn new(capacity: usize) -> Self {
        PerStamp {
            inner: Mutex::new((None, VecDeque::new())),
            capacity: capacity.max(1),
        }
    }

    /// The value kept for `key` at `stamp`.
    pub(super) fn get(&self, stamp: S, key: &K) -> Option<V> {
        let mut g = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        if g.0 != Some(stamp) {
            return None;
        }
        let i = g.1.iter().position(|(k, _)| k == key)?;
        let entry = g.1.remove(i)?;
        let v = entry.1.clone();
        g.1.push_back(entry);
        Some(v)
    }

    /// Keep `value` for `key` at `stamp`; every value of another stamp is
    /// dropped.
    pub(super) fn put(&self, stamp: S, key: K, value: V) {
        let mut g = self.inner.lock().unwrap_or_else(|p| p.into_inner());
        if g.0 != Some(stamp) {
            *g = (Some(stamp), VecDeque::new());
        }
        if let Some(i) = g.1.iter().position(|(k, _)| *k == key) {
            g.1.remove(i);
        }
        if g.1.len() >= self.capacity {
            g.1.pop_front();
        }
        g.1.push_back((key, value));
    }

    #[cfg(test)]
    pub(super) fn len(&self) -> usize {
        self.inner.lock().unwrap_or_else(|p| p.into_inner()).1.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Read;

    #[test]
    fn the_gzip_form_inflates_to_the_json_and_the_tag_follows_the_bytes() {
        let json = serde_json::to_vec(&vec!["a confirmed clearing"; 200]).unwrap();
        let s = Served::new(json.clone());
        let mut back = Vec::new();
        flate2::read::GzDecoder::new(&s.gzip.as_ref().unwrap()[..])
            .read_to_end(&mut back)
            .unwrap();
        assert_eq!(back, json);
        assert!(s.gzip.as_ref().unwrap().len() < json.len() / 10);
        // The tag is the first 16 bytes of the SHA-256 of the body (FIPS
        // 180-4; sha2 crate): equal bodies, equal tags; one byte, another.
        assert_eq!(Served::new(json.clone()).etag, s.etag);
        let mut other = json;
        other[3] = b'b';
        assert_ne!(Served::new(other).etag, s.etag);
        assert!(
            Served::new(b"{}".to_vec()).gzip.is_none(),
            "too short to gain"
        );
    }

    #[test]
    fn if_none_match_uses_the_weak_comparison() {
        let s = Served::new(b"{\"a\":1}".to_vec());
        let strong = s.etag.trim_start_matches("W/").to_string();
        assert!(s.matches(&s.etag));
        assert!(s.matches(&strong), "weak comparison ignores W/");
        assert!(s.matches(&format!("\"x\", {}", s.etag)));
        assert!(s.matches("*"));
        assert!(!s.matches("\"x\""));
        assert!(!s.matches(""));
    }

    #[test]
    fn a_new_stamp_drops_what_was_kept_and_the_count_is_bounded() {
        let k: PerStamp<u32, u32, &str> = PerStamp::new(2);
        k.put(1, 10, "a");
        k.put(1, 11, "b");
        assert_eq!(k.get(1, &10), Some("a"));
        k.put(1, 12, "c");
        assert_eq!(k.len(), 2);
        assert_eq!(k.get(1, &11), None, "the least recently used went");
        assert_eq!(k.get(2, &10), None, "another stamp finds nothing");
        k.put(2, 10, "d");
        assert_eq!(k.get(1, &12), None);
        assert_eq!(k.get(2, &10), Some("d"));
        assert_eq!(k.len(), 1);
    }
}
