//! The access matrix: which principal may perform which action.
//!
//! One table, deny by default (ASVS 5.0 8.1.1 documented rules, 8.2.1
//! function level; ASVS 4.0.3 4.1.5 fail securely). Roles are checked on
//! every request from the stored user, so a change takes effect on the next
//! request (ASVS 5.0 8.3.2). Data-level rules sit beside the table: a team
//! fetches only its own bundles ([`may_fetch_bundle`]).
//!
//! Choices (project): coordinators run the field work (imports, sources,
//! bundles, teams); managers adjudicate, so the person who plans a trip
//! does not also rule on its findings; admins may do every user action and
//! alone manage user accounts. A team may only fetch its own bundles and
//! upload returns; coordinators may also upload a return in the browser on
//! a team's behalf (the return's HMAC signature still binds it to its
//! bundle). Entering a trip from its paper sheet at the station signs the
//! return with the bundle's key held by the server, so it is a coordinator's
//! (or admin's) action, never a team's. Anonymous requests may do nothing.

use super::Identity;
use std::fmt::Write as _;

/// Something a request may try to do.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Action {
    ImportAlerts,
    ImportZones,
    ManageSources,
    IssueBundle,
    CancelBundle,
    FetchOwnBundle,
    UploadReturn,
    Adjudicate,
    ViewEvents,
    ViewStatistics,
    Export,
    ManageUsers,
    ManageTeams,
    EnterFromPaper,
    Administer,
}

impl Action {
    pub const ALL: [Action; 15] = [
        Action::ImportAlerts,
        Action::ImportZones,
        Action::ManageSources,
        Action::IssueBundle,
        Action::CancelBundle,
        Action::FetchOwnBundle,
        Action::UploadReturn,
        Action::Adjudicate,
        Action::ViewEvents,
        Action::ViewStatistics,
        Action::Export,
        Action::ManageUsers,
        Action::ManageTeams,
        Action::EnterFromPaper,
        Action::Administer,
    ];

    /// What the action covers, for the rendered table.
    pub fn describe(self) -> &'static str {
        match self {
            Action::ImportAlerts => "import alert files",
            Action::ImportZones => "import zone polygons",
            Action::ManageSources => "add and change alert sources",
            Action::IssueBundle => "plan, issue and download bundles",
            Action::CancelBundle => "cancel a bundle (revokes its upload key)",
            Action::FetchOwnBundle => "download a bundle issued to one's own team",
            Action::UploadReturn => "upload a signed return package",
            Action::Adjudicate => "rule on a finding or conflicting reports",
            Action::ViewEvents => "see events, bundles and reports",
            Action::ViewStatistics => "see statistics and figures",
            Action::Export => "export events and statistics",
            Action::ManageUsers => "create, disable and change users; API tokens",
            Action::ManageTeams => "create teams and issue or revoke team tokens",
            Action::EnterFromPaper => {
                "enter a trip's findings at the station from its paper sheet and camera photos"
            }
            Action::Administer => {
                "the administration pages: users, teams, tokens, sources, settings, change log"
            }
        }
    }
}

/// A column of the matrix: a user role, a field team, or nobody.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Principal {
    Admin,
    Coordinator,
    Manager,
    Team,
    Anonymous,
}

impl Principal {
    /// Column order of [`MATRIX`].
    pub const ALL: [Principal; 5] = [
        Principal::Admin,
        Principal::Coordinator,
        Principal::Manager,
        Principal::Team,
        Principal::Anonymous,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            Principal::Admin => "admin",
            Principal::Coordinator => "coordinator",
            Principal::Manager => "manager",
            Principal::Team => "team",
            Principal::Anonymous => "anonymous",
        }
    }

    fn column(self) -> usize {
        match self {
            Principal::Admin => 0,
            Principal::Coordinator => 1,
            Principal::Manager => 2,
            Principal::Team => 3,
            Principal::Anonymous => 4,
        }
    }
}

const Y: bool = true;
const N: bool = false;

/// The access matrix. Columns: admin, coordinator, manager, team, anonymous.
#[rustfmt::skip]
pub const MATRIX: [(Action, [bool; 5]); 15] = [
    //                          admin coord  mgr  team  anon
    (Action::ImportAlerts,     [Y,    Y,     N,   N,    N]),
    (Action::ImportZones,      [Y,    Y,     N,   N,    N]),
    (Action::ManageSources,    [Y,    Y,     N,   N,    N]),
    (Action::IssueBundle,      [Y,    Y,     N,   N,    N]),
    (Action::CancelBundle,     [Y,    Y,     N,   N,    N]),
    (Action::FetchOwnBundle,   [N,    N,     N,   Y,    N]),
    (Action::UploadReturn,     [Y,    Y,     N,   Y,    N]),
    (Action::Adjudicate,       [Y,    N,     Y,   N,    N]),
    (Action::ViewEvents,       [Y,    Y,     Y,   N,    N]),
    (Action::ViewStatistics,   [Y,    Y,     Y,   N,    N]),
    (Action::Export,           [Y,    Y,     Y,   N,    N]),
    (Action::ManageUsers,      [Y,    N,     N,   N,    N]),
    (Action::ManageTeams,      [Y,    Y,     N,   N,    N]),
    (Action::EnterFromPaper,   [Y,    Y,     N,   N,    N]),
    (Action::Administer,       [Y,    N,     N,   N,    N]),
];

/// Whether `principal` may perform `action` (false for anything the table
/// does not list).
pub fn allowed(principal: Principal, action: Action) -> bool {
    MATRIX
        .iter()
        .find(|(a, _)| *a == action)
        .is_some_and(|(_, row)| row[principal.column()])
}

/// Data-level rule for bundle downloads: a team may fetch a bundle issued
/// to its own team and no other; users go through `IssueBundle`.
pub fn may_fetch_bundle(identity: &Identity, bundle_team_name: &str) -> bool {
    match identity {
        Identity::Team { team_name, .. } => {
            allowed(identity.principal(), Action::FetchOwnBundle) && team_name == bundle_team_name
        }
        other => allowed(other.principal(), Action::IssueBundle),
    }
}

/// The matrix as a Markdown table, for the README.
pub fn matrix_markdown() -> String {
    let mut s = String::from("| action | what it covers |");
    for p in Principal::ALL {
        let _ = write!(s, " {} |", p.as_str());
    }
    s.push_str("\n|---|---|");
    s.push_str(&":---:|".repeat(Principal::ALL.len()));
    s.push('\n');
    for (action, row) in MATRIX {
        let _ = write!(s, "| `{action:?}` | {} |", action.describe());
        for cell in row {
            s.push_str(if cell { " yes |" } else { " no |" });
        }
        s.push('\n');
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_action_has_exactly_one_row() {
        for a in Action::ALL {
            assert_eq!(MATRIX.iter().filter(|(x, _)| *x == a).count(), 1, "{a:?}");
        }
        assert_eq!(MATRIX.len(), Action::ALL.len());
    }

    // Expected rows: the brief's access rules (project choice).
    #[test]
    fn manager_cannot_issue_or_cancel_bundles() {
        assert!(!allowed(Principal::Manager, Action::IssueBundle));
        assert!(!allowed(Principal::Manager, Action::CancelBundle));
        assert!(allowed(Principal::Manager, Action::ViewStatistics));
        assert!(allowed(Principal::Manager, Action::Adjudicate));
    }

    #[test]
    fn coordinator_cannot_adjudicate_or_manage_users() {
        assert!(!allowed(Principal::Coordinator, Action::Adjudicate));
        assert!(!allowed(Principal::Coordinator, Action::ManageUsers));
        assert!(allowed(Principal::Coordinator, Action::IssueBundle));
    }

    #[test]
    fn team_may_only_upload_returns_and_fetch_its_bundles() {
        let team: Vec<Action> = Action::ALL
            .into_iter()
            .filter(|a| allowed(Principal::Team, *a))
            .collect();
        assert_eq!(team, vec![Action::FetchOwnBundle, Action::UploadReturn]);
    }

    #[test]
    fn anonymous_may_do_nothing() {
        assert!(
            Action::ALL
                .iter()
                .all(|a| !allowed(Principal::Anonymous, *a))
        );
    }

    #[test]
    fn only_admin_manages_users() {
        let who: Vec<Principal> = Principal::ALL
            .into_iter()
            .filter(|p| allowed(*p, Action::ManageUsers))
            .collect();
        assert_eq!(who, vec![Principal::Admin]);
    }

    // The brief: the administration pages are for admins only.
    #[test]
    fn only_admin_administers() {
        let who: Vec<Principal> = Principal::ALL
            .into_iter()
            .filter(|p| allowed(*p, Action::Administer))
            .collect();
        assert_eq!(who, vec![Principal::Admin]);
    }

    #[test]
    fn teams_fetch_only_their_own_bundles() {
        let north = Identity::Team {
            token_id: 1,
            team_name: "north".into(),
        };
        assert!(may_fetch_bundle(&north, "north"));
        assert!(!may_fetch_bundle(&north, "south"));
        let coord = Identity::User {
            user_id: 1,
            name: "c".into(),
            role: super::super::Role::Coordinator,
        };
        let mgr = Identity::User {
            user_id: 2,
            name: "m".into(),
            role: super::super::Role::Manager,
        };
        assert!(may_fetch_bundle(&coord, "south"));
        assert!(!may_fetch_bundle(&mgr, "south"));
        assert!(!may_fetch_bundle(&Identity::Anonymous, "north"));
    }

    #[test]
    fn markdown_has_a_row_per_action() {
        let md = matrix_markdown();
        let lines: Vec<&str> = md.lines().collect();
        assert_eq!(lines.len(), 2 + Action::ALL.len());
        assert_eq!(
            lines[0],
            "| action | what it covers | admin | coordinator | manager | team | anonymous |"
        );
        let adj = lines.iter().find(|l| l.contains("`Adjudicate`")).unwrap();
        assert!(adj.ends_with("| yes | no | yes | no | no |"), "{adj}");
    }
}
