//! Names given by users to sources and zones.

use serde::Serialize;
use std::fmt;

fn check(kind: &str, raw: &str, allow_space: bool) -> Result<String, String> {
    let s = raw.trim();
    if s.is_empty() || s.chars().count() > 64 {
        return Err(format!(
            "{kind} name must be 1 to 64 characters, found '{s}'"
        ));
    }
    let ok = s
        .chars()
        .all(|c| c.is_alphanumeric() || matches!(c, '-' | '_' | '.') || (allow_space && c == ' '));
    if !ok {
        return Err(format!(
            "{kind} name '{s}' may hold only letters, digits, '-', '_', '.'{}",
            if allow_space { " and spaces" } else { "" }
        ));
    }
    Ok(s.to_string())
}

/// The name of an alert source, such as `optical-10m`.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
pub struct SourceName(String);

impl SourceName {
    pub fn parse(raw: &str) -> Result<Self, String> {
        check("source", raw, false).map(SourceName)
    }
    pub fn as_str(&self) -> &str {
        &self.0
    }
}

impl fmt::Display for SourceName {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

/// The name of a zone, such as `North Buffer`.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
pub struct ZoneName(String);

impl ZoneName {
    pub fn parse(raw: &str) -> Result<Self, String> {
        check("zone", raw, true).map(ZoneName)
    }
    pub fn as_str(&self) -> &str {
        &self.0
    }
}

impl fmt::Display for ZoneName {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names() {
        assert!(SourceName::parse("optical-10m").is_ok());
        assert!(SourceName::parse("a b").is_err());
        assert!(SourceName::parse("").is_err());
        assert!(ZoneName::parse("North Buffer").is_ok());
        assert!(ZoneName::parse("x;drop").is_err());
    }
}
