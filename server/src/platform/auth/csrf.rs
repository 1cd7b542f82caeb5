//! Cross-site request forgery defences for cookie-authenticated requests.
//!
//! Two layers, both required on every state change (OWASP CSRF Prevention
//! Cheat Sheet; ASVS 5.0 3.5.1-3.5.3):
//!
//! 1. [`is_same_origin`]: Fetch Metadata first (`Sec-Fetch-Site`), falling
//!    back to `Origin`, then `Referer`, compared with `Host`. Requests that
//!    carry none of them are refused (fail closed): every current browser
//!    sends `Origin` on a POST.
//! 2. A synchronizer token: each session has a 256-bit secret; forms carry
//!    [`csrf_token`] (field [`CSRF_FIELD`] or header [`CSRF_HEADER`]) and
//!    the server checks it with [`verify_csrf`] in constant time. The token
//!    is masked afresh each time it is rendered (`mask || mask XOR
//!    secret`), so a compressed page never repeats the same secret bytes
//!    (the BREACH attack on gzip-compressed responses; common practice).
//!
//! Requests authenticated by a bearer token (API and team tokens) carry no
//! ambient credential, so these checks are for the browser session only.

use super::tokens::random_bytes;
use crate::error::{Error, Result};
use subtle::ConstantTimeEq;

/// Form field that carries the CSRF token.
pub const CSRF_FIELD: &str = "csrf_token";
/// Request header that carries the CSRF token (for `fetch` calls).
pub const CSRF_HEADER: &str = "x-csrf-token";

const SECRET_LEN: usize = 32;

/// A new per-session CSRF secret (256 bits, hex); stored with the session.
pub fn new_csrf_secret() -> Result<String> {
    Ok(hex::encode(random_bytes::<SECRET_LEN>()?))
}

fn decode_secret(secret_hex: &str) -> Option<[u8; SECRET_LEN]> {
    let mut out = [0u8; SECRET_LEN];
    hex::decode_to_slice(secret_hex, &mut out).ok()?;
    Some(out)
}

/// A CSRF token for a page of the session whose secret is `secret_hex`.
/// Each call gives a different string; all of them verify.
pub fn csrf_token(secret_hex: &str) -> Result<String> {
    let secret = decode_secret(secret_hex)
        .ok_or_else(|| Error::Invalid("malformed CSRF secret in the session".into()))?;
    let mask = random_bytes::<SECRET_LEN>()?;
    let mut out = Vec::with_capacity(2 * SECRET_LEN);
    out.extend_from_slice(&mask);
    out.extend(mask.iter().zip(secret.iter()).map(|(m, s)| m ^ s));
    Ok(hex::encode(out))
}

/// Whether `presented` is a token made by [`csrf_token`] for this secret.
/// The comparison of secret bytes is constant-time.
pub fn verify_csrf(secret_hex: &str, presented: &str) -> bool {
    let Some(secret) = decode_secret(secret_hex) else {
        return false;
    };
    let mut raw = [0u8; 2 * SECRET_LEN];
    if hex::decode_to_slice(presented.trim(), &mut raw).is_err() {
        return false;
    }
    let (mask, masked) = raw.split_at(SECRET_LEN);
    let unmasked: Vec<u8> = mask.iter().zip(masked).map(|(m, x)| m ^ x).collect();
    bool::from(unmasked.as_slice().ct_eq(&secret))
}

/// Scheme and authority (lower case, default port removed) of an absolute
/// `http(s)` URL or of an `Origin` value.
fn origin_of(url: &str) -> Option<(&'static str, String)> {
    let url = url.trim();
    let (scheme, rest) = url.split_once("://")?;
    let scheme = if scheme.eq_ignore_ascii_case("https") {
        "https"
    } else if scheme.eq_ignore_ascii_case("http") {
        "http"
    } else {
        return None;
    };
    let authority = rest.split(['/', '?', '#']).next().unwrap_or("");
    if authority.is_empty() || authority.contains('@') {
        return None;
    }
    Some((
        scheme,
        strip_default_port(&authority.to_ascii_lowercase(), scheme),
    ))
}

fn strip_default_port(authority: &str, scheme: &str) -> String {
    let default = if scheme == "https" { ":443" } else { ":80" };
    authority
        .strip_suffix(default)
        .unwrap_or(authority)
        .to_string()
}

/// Whether a state-changing request comes from this site's own pages.
///
/// - `Sec-Fetch-Site: same-origin` is accepted; `cross-site` and
///   `same-site` (another subdomain) are refused. The browser sets this
///   header and pages cannot forge it.
/// - Otherwise (`none`, absent, unknown) the `Origin` header must name this
///   host; without `Origin`, the `Referer` must. `Origin: null` (sandboxed
///   frames, some redirects) is refused.
/// - No `Host`, or none of `Origin`/`Referer`: refused.
pub fn is_same_origin(
    origin: Option<&str>,
    referer: Option<&str>,
    host: Option<&str>,
    sec_fetch_site: Option<&str>,
) -> bool {
    match sec_fetch_site
        .map(|s| s.trim().to_ascii_lowercase())
        .as_deref()
    {
        Some("same-origin") => return true,
        Some("cross-site") | Some("same-site") => return false,
        _ => {}
    }
    let Some(host) = host.map(str::trim).filter(|h| !h.is_empty()) else {
        return false;
    };
    let claimed = match origin.map(str::trim) {
        Some(o) if o.eq_ignore_ascii_case("null") => return false,
        Some(o) if !o.is_empty() => origin_of(o),
        _ => match referer {
            Some(r) => origin_of(r),
            None => return false,
        },
    };
    match claimed {
        Some((scheme, authority)) => {
            authority == strip_default_port(&host.to_ascii_lowercase(), scheme)
        }
        None => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tokens_verify_for_their_session_only() {
        let s = new_csrf_secret().unwrap();
        let other = new_csrf_secret().unwrap();
        let t1 = csrf_token(&s).unwrap();
        let t2 = csrf_token(&s).unwrap();
        assert_ne!(t1, t2, "masked afresh each time");
        assert!(verify_csrf(&s, &t1) && verify_csrf(&s, &t2));
        assert!(!verify_csrf(&other, &t1));
        // The raw secret is not a token, nor is an empty or altered string.
        assert!(!verify_csrf(&s, &s));
        assert!(!verify_csrf(&s, ""));
        let mut flipped = t1.clone().into_bytes();
        let last = flipped.len() - 1;
        flipped[last] = if flipped[last] == b'0' { b'1' } else { b'0' };
        assert!(!verify_csrf(&s, std::str::from_utf8(&flipped).unwrap()));
        assert!(!verify_csrf(&s, &t1[..t1.len() - 2]));
        assert!(!verify_csrf("not hex", &t1));
        assert!(csrf_token("not hex").is_err());
    }

    #[test]
    fn fetch_metadata_decides_when_present() {
        let h = Some("gp.example:8080");
        assert!(is_same_origin(None, None, h, Some("same-origin")));
        assert!(!is_same_origin(
            Some("http://gp.example:8080"),
            None,
            h,
            Some("cross-site")
        ));
        assert!(!is_same_origin(None, None, h, Some("same-site")));
        assert!(!is_same_origin(None, None, h, Some("CROSS-SITE")));
    }

    #[test]
    fn origin_then_referer_fallback() {
        let h = Some("gp.example:8080");
        assert!(is_same_origin(
            Some("http://gp.example:8080"),
            None,
            h,
            None
        ));
        assert!(is_same_origin(
            Some("HTTP://GP.Example:8080"),
            None,
            h,
            Some("none")
        ));
        assert!(!is_same_origin(
            Some("http://evil.example:8080"),
            None,
            h,
            None
        ));
        assert!(!is_same_origin(
            Some("http://gp.example:8081"),
            None,
            h,
            None
        ));
        assert!(!is_same_origin(
            Some("http://gp.example:8080.evil.example"),
            None,
            h,
            None
        ));
        assert!(!is_same_origin(
            Some("null"),
            Some("http://gp.example:8080/x"),
            h,
            None
        ));
        // Origin wins over a matching Referer.
        assert!(!is_same_origin(
            Some("http://evil.example"),
            Some("http://gp.example:8080/events"),
            h,
            None
        ));
        assert!(is_same_origin(
            None,
            Some("http://gp.example:8080/events?z=1"),
            h,
            None
        ));
        assert!(!is_same_origin(
            None,
            Some("http://evil.example/gp.example:8080"),
            h,
            None
        ));
        assert!(!is_same_origin(
            None,
            Some("http://user@gp.example:8080/"),
            h,
            None
        ));
        // Nothing to go on, or no Host: refused.
        assert!(!is_same_origin(None, None, h, None));
        assert!(!is_same_origin(
            Some("http://gp.example:8080"),
            None,
            None,
            None
        ));
        assert!(!is_same_origin(
            Some("ftp://gp.example:8080"),
            None,
            h,
            None
        ));
    }

    #[test]
    fn default_ports_are_the_same_origin() {
        // RFC 6454 section 4: an absent port means the scheme's default.
        assert!(is_same_origin(
            Some("https://gp.example"),
            None,
            Some("gp.example:443"),
            None
        ));
        assert!(is_same_origin(
            Some("https://gp.example:443"),
            None,
            Some("gp.example"),
            None
        ));
        assert!(is_same_origin(
            Some("http://gp.example"),
            None,
            Some("gp.example:80"),
            None
        ));
        assert!(!is_same_origin(
            Some("http://gp.example"),
            None,
            Some("gp.example:443"),
            None
        ));
        assert!(is_same_origin(
            Some("http://[::1]:8080"),
            None,
            Some("[::1]:8080"),
            None
        ));
    }
}
