//! The role of a user account (or of an API token). Storage keeps it as its
//! word; the access matrix (`platform::auth`) gives each role a column.

use serde::Serialize;
use std::fmt;

/// The role of a user account (or of an API token).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Role {
    /// Manages users and teams; may do everything a user may do.
    Admin,
    /// Imports alerts and zones, plans and issues bundles to teams.
    Coordinator,
    /// Reads events and statistics, adjudicates findings.
    Manager,
}

impl Role {
    pub const ALL: [Role; 3] = [Role::Admin, Role::Coordinator, Role::Manager];

    /// The text stored in the database and shown to people.
    pub fn as_str(self) -> &'static str {
        match self {
            Role::Admin => "admin",
            Role::Coordinator => "coordinator",
            Role::Manager => "manager",
        }
    }

    /// Parse `admin`, `coordinator` or `manager` (any case, surrounding
    /// spaces ignored); the error says what was expected.
    pub fn parse(s: &str) -> Result<Role, String> {
        let t = s.trim();
        Role::ALL
            .into_iter()
            .find(|r| r.as_str().eq_ignore_ascii_case(t))
            .ok_or_else(|| {
                format!(
                    "unknown role '{}': expected admin, coordinator or manager",
                    t.chars().take(40).collect::<String>()
                )
            })
    }
}

impl fmt::Display for Role {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}
