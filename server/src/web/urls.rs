//! Percent-encoding for the URLs the web layer writes (RFC 3986 §2.1): one
//! encoder, each caller naming which characters besides ASCII letters and
//! digits it keeps.

/// Characters kept in a query value: RFC 3986 §2.3 unreserved.
pub const QUERY_VALUE: &[u8] = b"-_.~";
/// Characters kept in a local path handed on as `?next=`.
pub const PATH: &[u8] = b"/-_.";

/// `s` with every byte but ASCII letters, digits and `keep` written as
/// `%XX` (upper-case hex).
pub fn percent_encode(s: &str, keep: &[u8]) -> String {
    s.bytes()
        .map(|b| {
            if b.is_ascii_alphanumeric() || keep.contains(&b) {
                (b as char).to_string()
            } else {
                format!("%{b:02X}")
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn query_values_and_paths() {
        // RFC 3986 §2.3 unreserved characters stay; a space is %20.
        assert_eq!(
            percent_encode("Core Zone-1.a~", QUERY_VALUE),
            "Core%20Zone-1.a~"
        );
        assert_eq!(percent_encode("a&b=c/d", QUERY_VALUE), "a%26b%3Dc%2Fd");
        assert_eq!(
            percent_encode("/events/7?x=1~", PATH),
            "/events/7%3Fx%3D1%7E"
        );
        assert_eq!(percent_encode("é", QUERY_VALUE), "%C3%A9");
    }
}
