//! Random secrets and their stored form.
//!
//! Every secret comes from the operating system's CSPRNG (`getrandom`).
//! The server keeps only the SHA-256 of a token (hex), so a copy of the
//! database does not hand out working credentials; a token is shown once,
//! when it is made. Lookups are by that hash: a guess that differs in any
//! bit hashes to an unrelated value, so comparing hashes leaks nothing
//! useful about the token (common practice).
//!
//! Sizes: session tokens 128 bits (ASVS 5.0 7.2.3: at least 128 bits from a
//! CSPRNG), API and team tokens 256 bits (they live for months).

use crate::error::{Error, Result};
use sha2::{Digest, Sha256};

/// Prefix of API tokens, so scripts and secret scanners can tell them apart.
pub const API_TOKEN_PREFIX: &str = "gp_";

/// Hex length of a session token (16 bytes).
pub(crate) const SESSION_TOKEN_HEX: usize = 32;
/// Hex length of the random part of API and team tokens (32 bytes).
pub(crate) const LONG_TOKEN_HEX: usize = 64;

/// `N` bytes from the operating system's random source.
pub(crate) fn random_bytes<const N: usize>() -> Result<[u8; N]> {
    let mut buf = [0u8; N];
    getrandom::fill(&mut buf).map_err(|e| {
        Error::io(
            "reading the operating system's random source",
            std::io::Error::other(e.to_string()),
        )
    })?;
    Ok(buf)
}

/// Lower-case hex SHA-256 of `s`: the stored form of every token.
pub fn sha256_hex(s: &str) -> String {
    hex::encode(Sha256::digest(s.as_bytes()))
}

/// A new browser session token: 128 random bits as 32 hex characters.
pub fn new_session_token() -> Result<String> {
    Ok(hex::encode(random_bytes::<16>()?))
}

/// A new API token: `gp_` and 256 random bits as 64 hex characters.
pub fn new_api_token() -> Result<String> {
    Ok(format!(
        "{API_TOKEN_PREFIX}{}",
        hex::encode(random_bytes::<32>()?)
    ))
}

/// A new team token: 256 random bits as 64 hex characters.
pub fn new_team_token() -> Result<String> {
    Ok(hex::encode(random_bytes::<32>()?))
}

fn is_lower_hex(s: &str, len: usize) -> bool {
    s.len() == len && s.bytes().all(|b| matches!(b, b'0'..=b'9' | b'a'..=b'f'))
}

/// Whether `s` has the shape of a session token (so junk is refused before
/// any hashing or lookup).
pub(crate) fn is_session_token(s: &str) -> bool {
    is_lower_hex(s, SESSION_TOKEN_HEX)
}

/// Whether `s` has the shape of an API token.
pub(crate) fn is_api_token(s: &str) -> bool {
    s.strip_prefix(API_TOKEN_PREFIX)
        .is_some_and(|rest| is_lower_hex(rest, LONG_TOKEN_HEX))
}

/// Whether `s` has the shape of a team token.
pub(crate) fn is_team_token(s: &str) -> bool {
    is_lower_hex(s, LONG_TOKEN_HEX)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_matches_the_published_vector() {
        // FIPS 180-2 Appendix B.1 test vector for "abc".
        assert_eq!(
            sha256_hex("abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn tokens_have_their_shapes_and_differ() {
        let s1 = new_session_token().unwrap();
        let s2 = new_session_token().unwrap();
        assert!(is_session_token(&s1) && is_session_token(&s2));
        assert_ne!(s1, s2);
        let a = new_api_token().unwrap();
        assert!(a.starts_with("gp_") && a.len() == 3 + 64 && is_api_token(&a));
        assert!(!is_team_token(&a));
        let t = new_team_token().unwrap();
        assert!(is_team_token(&t) && !is_api_token(&t) && !is_session_token(&t));
        // Shape checks refuse near misses.
        assert!(!is_session_token(&s1.to_uppercase()));
        assert!(!is_session_token(&s1[1..]));
        assert!(!is_api_token(&format!("gp_{}", &t[1..])));
        assert!(!is_team_token(""));
    }
}
