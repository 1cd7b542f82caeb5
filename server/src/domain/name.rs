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

/// The name of a field team, such as `Team One`.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(transparent)]
pub struct TeamName(String);

impl TeamName {
    /// The rules of a zone name (letters, digits, `-`, `_`, `.`, spaces; 1
    /// to 64 characters). The message is the one the CLI and the API have
    /// always given: the zone message with `zone` read as `team`.
    pub fn parse(raw: &str) -> Result<Self, String> {
        check("zone", raw, true)
            .map(TeamName)
            .map_err(|m| m.replace("zone", "team"))
    }
    pub fn as_str(&self) -> &str {
        &self.0
    }
}

impl fmt::Display for TeamName {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::str::FromStr for TeamName {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        TeamName::parse(s)
    }
}

impl<'de> serde::Deserialize<'de> for TeamName {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let s = String::deserialize(d)?;
        TeamName::parse(&s).map_err(serde::de::Error::custom)
    }
}

impl rusqlite::types::ToSql for TeamName {
    fn to_sql(&self) -> rusqlite::Result<rusqlite::types::ToSqlOutput<'_>> {
        Ok(rusqlite::types::ToSqlOutput::Borrowed(
            rusqlite::types::ValueRef::Text(self.0.as_bytes()),
        ))
    }
}

impl rusqlite::types::FromSql for TeamName {
    /// Stored names are taken as they are: they passed [`TeamName::parse`]
    /// when the team was added.
    fn column_result(value: rusqlite::types::ValueRef<'_>) -> rusqlite::types::FromSqlResult<Self> {
        Ok(TeamName(value.as_str()?.to_owned()))
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

    #[test]
    fn team_names_round_trip() {
        let t = TeamName::parse(" Team One ").unwrap();
        assert_eq!(t.as_str(), "Team One");
        assert_eq!("Team One".parse::<TeamName>(), Ok(t.clone()));
        assert_eq!(t.to_string(), "Team One");
        assert_eq!(serde_json::to_string(&t).unwrap(), "\"Team One\"");
        assert_eq!(serde_json::from_str::<TeamName>("\"Team One\"").unwrap(), t);
        assert!(serde_json::from_str::<TeamName>("\"a;b\"").is_err());
        let db = rusqlite::Connection::open_in_memory().unwrap();
        let stored: String = db.query_row("SELECT ?1", [&t], |r| r.get(0)).unwrap();
        assert_eq!(stored, "Team One");
        let read: TeamName = db.query_row("SELECT 'Team One'", [], |r| r.get(0)).unwrap();
        assert_eq!(read, t);
        assert_eq!(
            TeamName::parse("").unwrap_err(),
            "team name must be 1 to 64 characters, found ''"
        );
        assert!(
            TeamName::parse("x;drop")
                .unwrap_err()
                .starts_with("team name 'x;drop'")
        );
    }
}
