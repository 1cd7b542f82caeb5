//! Changes an administrator makes, each written with its row of the
//! administration log in the same transaction (no change without its row,
//! no row without its change). The pages under `/admin` and the command line
//! call these same functions, so the two cannot drift apart; the log names
//! who acted ([`Actor`]).
//!
//! Guards (our choice): the last enabled admin can be neither disabled nor
//! given another role, so the organisation cannot lock itself out; a
//! disabled team's tokens are revoked and it gets no new token.

use crate::domain::{Role, TeamName};
use crate::error::{Error, Fault, Result};
use crate::platform::auth::{self, validate_user_name};
use crate::platform::settings::{LiveSettings, Settings};
use crate::platform::storage::{ApiTokenRecord, Db, TeamState, TeamTokenRecord, Tx, User};

/// Who made a change, as the log names them.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Actor {
    /// A user signed in through the browser.
    User(String),
    /// A script with an API token (id and label).
    ApiToken(i64, String),
    /// The `groundproof` command line on the server's machine.
    CommandLine,
}

impl Actor {
    /// The log's text for this actor.
    pub fn text(&self) -> String {
        match self {
            Actor::User(name) => format!("user {name}"),
            Actor::ApiToken(id, label) => format!("API token {id} ({label})"),
            Actor::CommandLine => "command line".to_string(),
        }
    }

    /// The actor of a request's identity (`None` for teams and anonymous
    /// callers, who change nothing here).
    pub fn of(identity: &auth::Identity) -> Option<Actor> {
        match identity {
            auth::Identity::User { name, .. } => Some(Actor::User(name.clone())),
            auth::Identity::ApiToken {
                token_id, label, ..
            } => Some(Actor::ApiToken(*token_id, label.clone())),
            _ => None,
        }
    }
}

/// Append a log row for `actor` inside `tx`.
pub fn log(
    tx: &Tx<'_>,
    actor: &Actor,
    now: i64,
    action: &str,
    subject: &str,
    detail: &str,
) -> Result<i64> {
    tx.append_admin_log(now, &actor.text(), action, subject, detail)
}

/// Add a user (the password checked against the rules and hashed first).
pub fn add_user(
    db: &Db,
    actor: &Actor,
    name: &str,
    role: Role,
    password: &str,
    now: i64,
) -> Result<User> {
    validate_user_name(name)?;
    let phc = auth::hash_password(password)?;
    db.write_bookkeeping(|tx| {
        let u = tx
            .add_user(name, role, &phc, now)
            .map_err(|e| e.worded("why-user-exists", &[("name", &name)]))?;
        log(
            tx,
            actor,
            now,
            "user.add",
            &format!("user {name}"),
            &format!("role {role}"),
        )?;
        Ok(u)
    })
}

fn user(tx: &Tx<'_>, user_id: i64) -> Result<User> {
    tx.reader().user_by_id(user_id)?.ok_or_else(|| {
        let english = format!("no user with id {user_id}");
        Error::said(Fault::NotFound, "why-no-user", &[("id", &user_id)], english)
    })
}

/// Refuse when `u` is the only enabled admin (our lock-out guard); `disabling`
/// says whether the change disables them (else it gives another role).
fn keep_one_admin(tx: &Tx<'_>, u: &User, disabling: bool) -> Result<()> {
    if u.role != Role::Admin || u.disabled {
        return Ok(());
    }
    let admins = tx
        .reader()
        .users()?
        .into_iter()
        .filter(|x| x.role == Role::Admin && !x.disabled)
        .count();
    if admins <= 1 {
        let (id, what) = if disabling {
            ("why-last-admin-disable", "disabling them")
        } else {
            ("why-last-admin-role", "another role")
        };
        let english = format!(
            "{} is the only enabled admin: {what} would leave nobody to manage users; make another admin first",
            u.name
        );
        return Err(Error::said(
            Fault::Conflict,
            id,
            &[("name", &u.name)],
            english,
        ));
    }
    Ok(())
}

/// Give a user another role; it applies from their next request.
pub fn set_role(db: &Db, actor: &Actor, user_id: i64, role: Role, now: i64) -> Result<User> {
    db.write_bookkeeping(|tx| {
        let u = user(tx, user_id)?;
        if u.role == role {
            let english = format!("{} already has the role {role}", u.name);
            let args: [(&str, &dyn std::fmt::Display); 2] = [("name", &u.name), ("role", &role)];
            return Err(Error::said(
                Fault::Conflict,
                "why-same-role",
                &args,
                english,
            ));
        }
        if role != Role::Admin {
            keep_one_admin(tx, &u, false)?;
        }
        tx.set_user_role(user_id, role)?;
        let detail = format!("role {} → {role}", u.role);
        log(
            tx,
            actor,
            now,
            "user.role",
            &format!("user {}", u.name),
            &detail,
        )?;
        Ok(User { role, ..u })
    })
}

/// Set a new password for a user; their sessions end.
pub fn reset_password(
    db: &Db,
    actor: &Actor,
    user_id: i64,
    password: &str,
    now: i64,
) -> Result<User> {
    let phc = auth::hash_password(password)?;
    db.write_bookkeeping(|tx| {
        let u = user(tx, user_id)?;
        tx.set_user_password(user_id, &phc)?;
        let subject = format!("user {}", u.name);
        log(
            tx,
            actor,
            now,
            "user.password",
            &subject,
            "password reset; sessions ended",
        )?;
        Ok(u)
    })
}

/// Disable a user (they cannot log in, their sessions end) or enable them again.
pub fn set_user_disabled(
    db: &Db,
    actor: &Actor,
    user_id: i64,
    disabled: bool,
    now: i64,
) -> Result<User> {
    db.write_bookkeeping(|tx| {
        let u = user(tx, user_id)?;
        if u.disabled == disabled {
            let (id, state) = if disabled {
                ("why-user-already-disabled", "disabled")
            } else {
                ("why-user-already-enabled", "enabled")
            };
            let english = format!("{} is already {state}", u.name);
            return Err(Error::said(
                Fault::Conflict,
                id,
                &[("name", &u.name)],
                english,
            ));
        }
        if disabled {
            keep_one_admin(tx, &u, true)?;
        }
        tx.set_user_disabled(user_id, disabled)?;
        let (action, detail) = if disabled {
            ("user.disable", "disabled; sessions ended")
        } else {
            ("user.enable", "enabled")
        };
        log(tx, actor, now, action, &format!("user {}", u.name), detail)?;
        Ok(User { disabled, ..u })
    })
}

/// Add a field team.
pub fn add_team(db: &Db, actor: &Actor, name: &str, now: i64) -> Result<TeamState> {
    let name = TeamName::parse(name).map_err(|m| {
        Error::said(
            Fault::Invalid,
            "why-team-name",
            &[("name", &name.trim())],
            m,
        )
    })?;
    db.write(|tx| {
        let t = tx
            .add_team(name.as_str())
            .map_err(|e| e.worded("why-team-exists", &[("name", &name)]))?;
        log(
            tx,
            actor,
            now,
            "team.add",
            &format!("team {}", t.name),
            "added",
        )?;
        Ok(TeamState {
            id: t.id,
            name: t.name,
            disabled_at: None,
        })
    })
}

/// Disable a team (its tokens are revoked; no token or trip is issued to
/// it any more) or enable it again.
pub fn set_team_disabled(
    db: &Db,
    actor: &Actor,
    team_id: i64,
    disabled: bool,
    now: i64,
) -> Result<TeamState> {
    db.write(|tx| {
        let t = tx.reader().team_state(team_id)?.ok_or_else(|| {
            let english = format!("no team with id {team_id}");
            Error::said(Fault::NotFound, "why-no-team", &[("id", &team_id)], english)
        })?;
        if !tx.set_team_disabled(team_id, disabled.then_some(now))? {
            let (id, state) = if disabled {
                ("why-team-already-disabled", "disabled")
            } else {
                ("why-team-already-active", "active")
            };
            let english = format!("team {} is already {state}", t.name);
            return Err(Error::said(
                Fault::Conflict,
                id,
                &[("name", &t.name)],
                english,
            ));
        }
        let subject = format!("team {}", t.name);
        if disabled {
            let n = tx.revoke_team_tokens_of(&t.name, now)?;
            let detail = format!("disabled; {n} token(s) revoked");
            log(tx, actor, now, "team.disable", &subject, &detail)?;
        } else {
            log(tx, actor, now, "team.enable", &subject, "enabled")?;
        }
        Ok(TeamState {
            disabled_at: disabled.then_some(now),
            ..t
        })
    })
}

/// A new token for an active team's field kit: the record and the token,
/// which is shown once (only its SHA-256 is stored).
pub fn create_team_token(
    db: &Db,
    actor: &Actor,
    team_name: &str,
    now: i64,
) -> Result<(TeamTokenRecord, String)> {
    let token = auth::new_team_token()?;
    let hash = auth::sha256_hex(&token);
    let rec = db.write_bookkeeping(|tx| {
        let t = tx.reader().team_state_by_name(team_name)?.ok_or_else(|| {
            let english = format!("unknown team '{team_name}': add it first");
            Error::said(
                Fault::NotFound,
                "why-unknown-team",
                &[("name", &team_name)],
                english,
            )
        })?;
        if t.disabled_at.is_some() {
            let english = format!(
                "team {} is disabled: enable it before giving it a token",
                t.name
            );
            let args: [(&str, &dyn std::fmt::Display); 1] = [("name", &t.name)];
            return Err(Error::said(
                Fault::Conflict,
                "why-team-disabled",
                &args,
                english,
            ));
        }
        let rec = tx.insert_team_token(&hash, &t.name, now)?;
        let detail = format!("token {} created", rec.id);
        log(
            tx,
            actor,
            now,
            "token.create",
            &format!("team {}", t.name),
            &detail,
        )?;
        Ok(rec)
    })?;
    Ok((rec, token))
}

/// Revoke a team token; a token already revoked or unknown is refused.
pub fn revoke_team_token(db: &Db, actor: &Actor, token_id: i64, now: i64) -> Result<()> {
    db.write_bookkeeping(|tx| {
        let team = tx
            .reader()
            .team_tokens()?
            .into_iter()
            .find(|t| t.id == token_id)
            .ok_or_else(|| {
                let english = format!("no team token with id {token_id}");
                Error::said(
                    Fault::NotFound,
                    "why-no-team-token",
                    &[("id", &token_id)],
                    english,
                )
            })?
            .team_name;
        if !tx.revoke_team_token(token_id, now)? {
            let english = format!("token {token_id} is already revoked");
            let args: [(&str, &dyn std::fmt::Display); 1] = [("id", &token_id)];
            return Err(Error::said(
                Fault::Conflict,
                "why-token-revoked",
                &args,
                english,
            ));
        }
        let detail = format!("token {token_id} revoked");
        log(
            tx,
            actor,
            now,
            "token.revoke",
            &format!("team {team}"),
            &detail,
        )?;
        Ok(())
    })
}

/// A new API token for scripts, with a role and a label that names it (or
/// its owner): the record and the token, shown once (only its SHA-256 is
/// stored). Logged as `apitoken.create`.
pub fn create_api_token(
    db: &Db,
    actor: &Actor,
    role: Role,
    label: &str,
    now: i64,
) -> Result<(ApiTokenRecord, String)> {
    let label = auth::validate_label(label, "an API token's name").map_err(|e| {
        let max: &dyn std::fmt::Display = &auth::MAX_LABEL_CHARS;
        e.worded("why-api-token-name", &[("max", max)])
    })?;
    let token = auth::new_api_token()?;
    let hash = auth::sha256_hex(&token);
    let rec = db.write_bookkeeping(|tx| {
        let rec = tx.insert_api_token(&hash, role, &label, now)?;
        let subject = format!("API token {} ({label})", rec.id);
        log(
            tx,
            actor,
            now,
            "apitoken.create",
            &subject,
            &format!("role {role}"),
        )?;
        Ok(rec)
    })?;
    Ok((rec, token))
}

/// Revoke an API token (refused with 401 from then on); a token unknown or
/// already revoked is refused. Logged as `apitoken.revoke`.
pub fn revoke_api_token(db: &Db, actor: &Actor, token_id: i64, now: i64) -> Result<ApiTokenRecord> {
    db.write_bookkeeping(|tx| {
        let rec = tx
            .reader()
            .api_tokens()?
            .into_iter()
            .find(|t| t.id == token_id)
            .ok_or_else(|| {
                let english = format!("no API token with id {token_id}");
                Error::said(
                    Fault::NotFound,
                    "why-no-api-token",
                    &[("id", &token_id)],
                    english,
                )
            })?;
        if !tx.revoke_api_token(token_id, now)? {
            let english = format!("API token {token_id} is already revoked");
            let args: [(&str, &dyn std::fmt::Display); 1] = [("id", &token_id)];
            return Err(Error::said(
                Fault::Conflict,
                "why-api-token-revoked",
                &args,
                english,
            ));
        }
        let subject = format!("API token {token_id} ({})", rec.label);
        log(tx, actor, now, "apitoken.revoke", &subject, "revoked")?;
        Ok(ApiTokenRecord {
            revoked_at: Some(now),
            ..rec
        })
    })
}

/// Change the organisation's settings through `live` (see
/// [`LiveSettings::update`]): the log row lists each changed field with its
/// old and new value, in the transaction that stores the new version. A
/// change that changes nothing is refused, so the log holds only real
/// changes.
pub fn change_settings(
    live: &LiveSettings,
    actor: &Actor,
    change: impl FnOnce(&mut Settings) -> Result<()>,
    now: i64,
) -> Result<Settings> {
    let (new, _) = live.update(
        change,
        |tx, old, new| {
            let lines = crate::platform::settings::changes(old, new)?;
            if lines.is_empty() {
                let english = "nothing changed: every value is the one in force";
                return Err(Error::said(
                    Fault::Conflict,
                    "why-settings-same",
                    &[],
                    english,
                ));
            }
            log(
                tx,
                actor,
                now,
                "settings.change",
                "settings",
                &lines.join("; "),
            )
        },
        now,
    )?;
    Ok(new)
}

#[cfg(test)]
mod tests {
    use super::*;

    const PW: &str = "a long enough password";

    fn db() -> (tempfile::TempDir, Db) {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        (dir, db)
    }

    fn last(db: &Db) -> (String, String, String, String) {
        let r = db.read(|r| r.admin_log(None, 1)).unwrap().remove(0);
        (r.actor, r.action, r.subject, r.detail)
    }

    #[test]
    fn user_changes_are_logged_with_who_and_what() {
        let (_d, db) = db();
        let me = Actor::User("root".into());
        let admin = add_user(&db, &Actor::CommandLine, "root", Role::Admin, PW, 1).unwrap();
        assert_eq!(
            last(&db),
            (
                "command line".into(),
                "user.add".into(),
                "user root".into(),
                "role admin".into()
            )
        );
        let ana = add_user(&db, &me, "ana", Role::Coordinator, PW, 2).unwrap();
        set_role(&db, &me, ana.id, Role::Manager, 3).unwrap();
        assert_eq!(last(&db).3, "role coordinator → manager");
        reset_password(&db, &me, ana.id, "another long password", 4).unwrap();
        assert_eq!(last(&db).1, "user.password");
        set_user_disabled(&db, &me, ana.id, true, 5).unwrap();
        assert!(db.read(|r| r.user_by_id(ana.id)).unwrap().unwrap().disabled);
        // Refusals change nothing and log nothing.
        let n = db.read(|r| r.admin_log(None, 100)).unwrap().len();
        assert!(add_user(&db, &me, "bo", Role::Manager, "short", 6).is_err());
        assert!(set_user_disabled(&db, &me, ana.id, true, 6).is_err());
        let e = set_user_disabled(&db, &me, admin.id, true, 6)
            .unwrap_err()
            .to_string();
        assert!(e.contains("only enabled admin"), "{e}");
        assert!(set_role(&db, &me, admin.id, Role::Manager, 6).is_err());
        assert_eq!(db.read(|r| r.admin_log(None, 100)).unwrap().len(), n);
    }

    #[test]
    fn teams_and_tokens() {
        let (_d, db) = db();
        let me = Actor::ApiToken(7, "setup".into());
        let t = add_team(&db, &me, "North", 1).unwrap();
        assert_eq!(last(&db).0, "API token 7 (setup)");
        let (rec, token) = create_team_token(&db, &me, "North", 2).unwrap();
        assert_eq!(token.len(), 64);
        let hash = auth::sha256_hex(&token);
        assert!(db.read(|r| r.team_token_by_hash(&hash)).unwrap().is_some());
        revoke_team_token(&db, &me, rec.id, 3).unwrap();
        assert!(db.read(|r| r.team_token_by_hash(&hash)).unwrap().is_none());
        assert!(revoke_team_token(&db, &me, rec.id, 4).is_err());
        let (_, second) = create_team_token(&db, &me, "North", 5).unwrap();
        set_team_disabled(&db, &me, t.id, true, 6).unwrap();
        assert_eq!(last(&db).3, "disabled; 1 token(s) revoked");
        let h2 = auth::sha256_hex(&second);
        assert!(db.read(|r| r.team_token_by_hash(&h2)).unwrap().is_none());
        assert!(create_team_token(&db, &me, "North", 7).is_err());
        assert!(create_team_token(&db, &me, "South", 7).is_err());
        set_team_disabled(&db, &me, t.id, false, 8).unwrap();
        assert!(create_team_token(&db, &me, "North", 9).is_ok());
    }

    #[test]
    fn api_tokens_are_made_and_revoked_with_their_log_rows() {
        let (_d, db) = db();
        let me = Actor::User("root".into());
        let (rec, token) = create_api_token(&db, &me, Role::Manager, " weekly export ", 1).unwrap();
        assert!(token.starts_with(auth::API_TOKEN_PREFIX), "{token}");
        assert_eq!(rec.label, "weekly export");
        assert_eq!(
            last(&db),
            (
                "user root".into(),
                "apitoken.create".into(),
                format!("API token {} (weekly export)", rec.id),
                "role manager".into()
            )
        );
        let hash = auth::sha256_hex(&token);
        assert!(db.read(|r| r.api_token_by_hash(&hash)).unwrap().is_some());
        let gone = revoke_api_token(&db, &me, rec.id, 2).unwrap();
        assert_eq!(gone.revoked_at, Some(2));
        assert_eq!(last(&db).1, "apitoken.revoke");
        assert!(db.read(|r| r.api_token_by_hash(&hash)).unwrap().is_none());
        // Refusals change nothing and log nothing.
        let n = db.read(|r| r.admin_log(None, 100)).unwrap().len();
        let e = revoke_api_token(&db, &me, rec.id, 3)
            .unwrap_err()
            .to_string();
        assert!(e.contains("already revoked"), "{e}");
        assert!(revoke_api_token(&db, &me, 999, 3).is_err());
        assert!(create_api_token(&db, &me, Role::Admin, "  ", 3).is_err());
        assert_eq!(db.read(|r| r.admin_log(None, 100)).unwrap().len(), n);
        assert_eq!(db.read(|r| r.api_tokens()).unwrap().len(), 1);
    }

    #[test]
    fn settings_changes_list_each_field() {
        let (dir, db) = db();
        let db = std::sync::Arc::new(db);
        let live = LiveSettings::shared(db.clone(), dir.path().to_path_buf(), Settings::default());
        let me = Actor::User("root".into());
        change_settings(
            &live,
            &me,
            |s| {
                s.evidence.tolerance_m = 150.0;
                s.organisation.time_zone = "Etc/GMT+4".into();
                Ok(())
            },
            1,
        )
        .unwrap();
        assert_eq!(
            last(&db).3,
            "evidence.tolerance_m 100.0 → 150.0; organisation.time_zone \"UTC\" → \"Etc/GMT+4\""
        );
        assert_eq!(live.get().zone().name(), "Etc/GMT+4");
        let e = change_settings(&live, &me, |_| Ok(()), 2).unwrap_err();
        assert!(e.to_string().contains("nothing changed"));
        assert_eq!(db.read(|r| r.admin_log(None, 100)).unwrap().len(), 1);
        assert_eq!(db.read(|r| r.settings_version()).unwrap(), 1);
    }

    /// Each refusal carries its message id; the English catalogue says the
    /// English sentence word for word (so an English page reads as the
    /// command line), and Portuguese says it in its own words.
    #[test]
    fn refusals_have_ids_whose_english_is_the_sentence() {
        use crate::platform::i18n::{Arg, Tr};
        let (_d, db) = db();
        let me = Actor::CommandLine;
        let root = add_user(&db, &me, "root", Role::Admin, PW, 1).unwrap();
        let team = add_team(&db, &me, "Team Delta", 1).unwrap();
        let refusals = [
            set_user_disabled(&db, &me, root.id, true, 2).unwrap_err(),
            set_role(&db, &me, root.id, Role::Manager, 2).unwrap_err(),
            set_role(&db, &me, root.id, Role::Admin, 2).unwrap_err(),
            set_user_disabled(&db, &me, root.id, false, 2).unwrap_err(),
            add_user(&db, &me, "root", Role::Manager, PW, 2).unwrap_err(),
            add_user(&db, &me, "no spaces", Role::Manager, PW, 2).unwrap_err(),
            add_user(&db, &me, "lead", Role::Manager, "short", 2).unwrap_err(),
            add_team(&db, &me, "Team Delta", 2).unwrap_err(),
            set_team_disabled(&db, &me, team.id, false, 2).unwrap_err(),
            set_team_disabled(&db, &me, 999, true, 2).unwrap_err(),
            create_team_token(&db, &me, "Team Nobody", 2).unwrap_err(),
            revoke_team_token(&db, &me, 999, 2).unwrap_err(),
            revoke_api_token(&db, &me, 999, 2).unwrap_err(),
            create_api_token(&db, &me, Role::Manager, "  ", 2).unwrap_err(),
        ];
        let (en, pt) = (Tr::new("en"), Tr::new("pt"));
        for e in &refusals {
            let said = e.words().unwrap_or_else(|| panic!("no message id: {e}"));
            let vars: Vec<(&str, &dyn Arg)> =
                said.args.iter().map(|(k, v)| (*k, v as &dyn Arg)).collect();
            assert_eq!(en.tn(said.id, &vars), e.to_string(), "{}", said.id);
            let words = pt.tn(said.id, &vars);
            assert!(
                words != said.id && words != e.to_string(),
                "{}: {words}",
                said.id
            );
        }
    }
}
