//! A SHA-256 digest written as 64 lowercase hex digits: how photos are
//! named, how manifests list entries and how packages are recorded.

use serde::{Deserialize, Deserializer, Serialize, Serializer};
use sha2::{Digest, Sha256};
use std::fmt;
use std::str::FromStr;

/// A SHA-256 as 64 lowercase hex digits, checked when made.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Sha256Digest(String);

impl Sha256Digest {
    /// `true` for 64 lowercase hex digits.
    pub fn is_valid(s: &str) -> bool {
        s.len() == 64
            && s.bytes()
                .all(|c| c.is_ascii_digit() || (b'a'..=b'f').contains(&c))
    }

    /// The digest of `bytes`.
    pub fn of(bytes: &[u8]) -> Self {
        Sha256Digest(hex::encode(Sha256::digest(bytes)))
    }

    /// The digest a finished hasher holds.
    pub fn from_hasher(hasher: Sha256) -> Self {
        Sha256Digest(hex::encode(hasher.finalize()))
    }

    /// The 64 hex digits.
    pub fn as_str(&self) -> &str {
        &self.0
    }
}

/// Text that is not 64 lowercase hex digits.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct NotADigest;

impl fmt::Display for NotADigest {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("sha256 is not 64 lowercase hex digits")
    }
}

impl std::error::Error for NotADigest {}

impl FromStr for Sha256Digest {
    type Err = NotADigest;
    fn from_str(s: &str) -> Result<Self, NotADigest> {
        if Sha256Digest::is_valid(s) {
            Ok(Sha256Digest(s.to_owned()))
        } else {
            Err(NotADigest)
        }
    }
}

impl fmt::Display for Sha256Digest {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl AsRef<str> for Sha256Digest {
    fn as_ref(&self) -> &str {
        &self.0
    }
}

impl Serialize for Sha256Digest {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.0)
    }
}

impl<'de> Deserialize<'de> for Sha256Digest {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let s = String::deserialize(d)?;
        if Sha256Digest::is_valid(&s) {
            Ok(Sha256Digest(s))
        } else {
            Err(serde::de::Error::custom(NotADigest))
        }
    }
}

impl rusqlite::types::ToSql for Sha256Digest {
    fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
        Ok(rusqlite::types::ToSqlOutput::Borrowed(
            rusqlite::types::ValueRef::Text(self.0.as_bytes()),
        ))
    }
}

impl rusqlite::types::FromSql for Sha256Digest {
    fn column_result(value: rusqlite::types::ValueRef<'_>) -> rusqlite::types::FromSqlResult<Self> {
        value
            .as_str()?
            .parse()
            .map_err(|e| rusqlite::types::FromSqlError::Other(Box::new(e)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const EMPTY: &str = "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855";

    #[test]
    fn text_json_and_sqlite_round_trip() {
        let d = Sha256Digest::of(b"");
        assert_eq!(d.as_str(), EMPTY);
        assert_eq!(EMPTY.parse::<Sha256Digest>(), Ok(d.clone()));
        assert_eq!(d.to_string(), EMPTY);
        let json = serde_json::to_string(&d).expect("json");
        assert_eq!(json, format!("\"{EMPTY}\""));
        assert_eq!(
            serde_json::from_str::<Sha256Digest>(&json).expect("back"),
            d
        );
        let db = rusqlite::Connection::open_in_memory().expect("db");
        let stored: String = db
            .query_row("SELECT ?1", [&d], |r| r.get(0))
            .expect("stored");
        assert_eq!(stored, EMPTY);
        let read: Sha256Digest = db
            .query_row("SELECT ?1", [EMPTY], |r| r.get(0))
            .expect("read");
        assert_eq!(read, d);
        let mut h = Sha256::new();
        h.update(b"");
        assert_eq!(Sha256Digest::from_hasher(h), d);
    }

    #[test]
    fn only_64_lowercase_hex_digits() {
        assert!(Sha256Digest::is_valid(EMPTY));
        assert!(!Sha256Digest::is_valid(&EMPTY.to_uppercase()));
        assert!(!Sha256Digest::is_valid(&EMPTY[1..]));
        assert!(!Sha256Digest::is_valid("../etc/passwd"));
        assert!("AB".repeat(32).parse::<Sha256Digest>().is_err());
        assert!(serde_json::from_str::<Sha256Digest>("\"abc\"").is_err());
        let db = rusqlite::Connection::open_in_memory().expect("db");
        let bad: rusqlite::Result<Sha256Digest> = db.query_row("SELECT 'abc'", [], |r| r.get(0));
        assert!(bad.is_err());
    }
}
