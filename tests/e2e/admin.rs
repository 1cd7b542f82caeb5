//! The administration pages over HTTP, driven as an admin in a browser
//! session would (cookie, same origin, the CSRF token of the page): users,
//! teams and tokens, sources, settings, and the change log, which also
//! lists what the command line changed.

use groundproof::platform::auth::{Role, create_user, now_unix};
use groundproof_e2e::{Reply, TestServer, get_as};

const PASSWORD: &str = "a long admin password 2026";

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into()
}

fn reply(r: Result<ureq::http::Response<ureq::Body>, ureq::Error>) -> (Reply, String) {
    let mut r = r.expect("request reaches the server");
    let location = r
        .headers()
        .get("location")
        .and_then(|v| v.to_str().ok())
        .unwrap_or_default()
        .to_string();
    let reply = Reply {
        status: r.status().as_u16(),
        body: r.body_mut().read_to_string().unwrap_or_default(),
    };
    (reply, location)
}

/// Percent-encode a form value.
fn enc(s: &str) -> String {
    s.bytes()
        .map(|b| match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'-' | b'_' | b'.' => (b as char).to_string(),
            _ => format!("%{b:02X}"),
        })
        .collect()
}

/// Log in through the form; the session cookie pair, or `None` when refused.
fn try_login(s: &TestServer, name: &str, password: &str) -> Option<String> {
    let body = format!("name={}&password={}&next=/", enc(name), enc(password));
    let r = agent()
        .post(&s.url("/login"))
        .header("Origin", &s.url(""))
        .header("Content-Type", "application/x-www-form-urlencoded")
        .send(body.as_bytes())
        .expect("login reaches the server");
    if r.status().as_u16() != 303 {
        return None;
    }
    r.headers()
        .get_all("set-cookie")
        .iter()
        .filter_map(|v| v.to_str().ok())
        .find(|c| c.starts_with("gp_session="))
        .map(|c| c.split(';').next().unwrap_or_default().to_string())
}

/// An admin's browser: the session cookie and the page's CSRF token.
struct Browser<'a> {
    s: &'a TestServer,
    cookie: String,
}

impl<'a> Browser<'a> {
    fn admin(s: &'a TestServer, name: &str) -> Browser<'a> {
        create_user(&s.db, name, Role::Admin, PASSWORD, now_unix()).expect("admin user");
        Browser::login(s, name, PASSWORD)
    }

    fn login(s: &'a TestServer, name: &str, password: &str) -> Browser<'a> {
        let cookie = try_login(s, name, password).expect("logged in");
        Browser { s, cookie }
    }

    fn get(&self, path: &str) -> (Reply, String) {
        reply(
            agent()
                .get(&self.s.url(path))
                .header("Cookie", &self.cookie)
                .call(),
        )
    }

    fn token(&self) -> String {
        let page = self.get("/admin").0;
        let doc = scraper::Html::parse_document(&page.body);
        let sel = scraper::Selector::parse("input[type=hidden][name=csrf_token]").unwrap();
        doc.select(&sel)
            .next()
            .and_then(|e| e.value().attr("value"))
            .expect("a CSRF token")
            .to_string()
    }

    /// POST a form (fields given unencoded) with the page's CSRF token.
    fn post(&self, path: &str, fields: &[(&str, &str)]) -> (Reply, String) {
        let mut body = format!("csrf_token={}", enc(&self.token()));
        for (k, v) in fields {
            body.push_str(&format!("&{k}={}", enc(v)));
        }
        self.post_raw(path, &body)
    }

    fn post_raw(&self, path: &str, body: &str) -> (Reply, String) {
        reply(
            agent()
                .post(&self.s.url(path))
                .header("Cookie", &self.cookie)
                .header("Origin", &self.s.url(""))
                .header("Content-Type", "application/x-www-form-urlencoded")
                .send(body.as_bytes()),
        )
    }

    /// POST and expect the redirect of a saved change.
    fn saved(&self, path: &str, fields: &[(&str, &str)], back: &str) {
        let (r, loc) = self.post(path, fields);
        assert_eq!((r.status, loc.as_str()), (303, back), "{path}: {}", r.body);
    }

    /// POST and expect a refusal with `status` that says `why`.
    fn refused(&self, path: &str, fields: &[(&str, &str)], status: u16, why: &str) {
        let (r, _) = self.post(path, fields);
        assert_eq!(r.status, status, "{path}: {}", r.body);
        assert!(r.body.contains("Nothing was changed"), "{}", r.body);
        assert!(
            r.body.contains(why),
            "{path}: expected {why:?} in {}",
            r.body
        );
    }
}

fn user_id(s: &TestServer, name: &str) -> i64 {
    s.db.read(|r| r.user_by_name(name)).unwrap().unwrap().id
}

fn log_len(s: &TestServer) -> usize {
    s.db.read(|r| r.admin_log(None, 10_000)).unwrap().len()
}

#[test]
fn users_are_added_changed_reset_and_disabled_on_the_page() {
    let s = TestServer::start();
    let admin = Browser::admin(&s, "root-admin");
    let pw = "the field lead's password";
    let add = |name: &str, role: &str, p1: &str, p2: &str| {
        vec![
            ("name", name.to_string()),
            ("role", role.to_string()),
            ("password", p1.to_string()),
            ("password_again", p2.to_string()),
        ]
    };
    let post = |fields: Vec<(&str, String)>| {
        let f: Vec<(&str, &str)> = fields.iter().map(|(k, v)| (*k, v.as_str())).collect();
        admin.post("/admin/users", &f)
    };
    // Bad input: a clear message, nothing added, nothing logged.
    let before = log_len(&s);
    for (fields, status, why) in [
        (
            add("lead", "coordinator", pw, "other"),
            400,
            "the two passwords differ",
        ),
        (
            add("lead", "coordinator", "short", "short"),
            400,
            "the password is too short",
        ),
        (
            add("lead", "chief", pw, pw),
            400,
            "unknown role &#39;chief&#39;",
        ),
        (
            add("no spaces", "manager", pw, pw),
            400,
            "user name &#39;no spaces&#39; is not allowed",
        ),
        (add("root-admin", "manager", pw, pw), 409, "already exists"),
    ] {
        let (r, _) = post(fields);
        assert_eq!(r.status, status, "{}", r.body);
        assert!(r.body.contains(why), "expected {why:?}: {}", r.body);
    }
    assert!(s.db.read(|r| r.user_by_name("lead")).unwrap().is_none());
    assert_eq!(log_len(&s), before);

    // Added: they can log in.
    let (r, loc) = post(add("lead", "coordinator", pw, pw));
    assert_eq!(
        (r.status, loc.as_str()),
        (303, "/admin/users?done=1"),
        "{}",
        r.body
    );
    let page = admin.get("/admin/users?done=1").0;
    assert!(
        page.body.contains("Saved: user lead: role coordinator."),
        "{}",
        page.body
    );
    let lead = Browser::login(&s, "lead", pw);
    assert_eq!(lead.get("/import").0.status, 200);
    // Not an admin: the administration refuses them.
    assert_eq!(lead.get("/admin/users").0.status, 403);

    // A new role applies from the next request (managers do not import).
    let id = user_id(&s, "lead");
    admin.saved(
        &format!("/admin/users/{id}/role"),
        &[("role", "manager")],
        "/admin/users?done=1",
    );
    assert_eq!(lead.get("/import").0.status, 403);

    // A reset password ends the sessions; the new one works, the old does not.
    let pw2 = "a brand new password here";
    admin.refused(
        &format!("/admin/users/{id}/password"),
        &[("password", pw2), ("password_again", "typo")],
        400,
        "the two passwords differ",
    );
    admin.saved(
        &format!("/admin/users/{id}/password"),
        &[("password", pw2), ("password_again", pw2)],
        "/admin/users?done=1",
    );
    let (r, loc) = lead.get("/events");
    assert_eq!(
        (r.status, loc.starts_with("/login")),
        (303, true),
        "session ended"
    );
    assert!(try_login(&s, "lead", pw).is_none());
    let lead = Browser::login(&s, "lead", pw2);

    // Disabled: the session ends at once and they cannot log in.
    admin.saved(
        &format!("/admin/users/{id}/disable"),
        &[],
        "/admin/users?done=1",
    );
    assert_eq!(s.db.read(|r| r.session_count(id)).unwrap(), 0);
    let (r, loc) = lead.get("/events");
    assert_eq!(
        (r.status, loc.starts_with("/login")),
        (303, true),
        "session ended"
    );
    assert!(
        try_login(&s, "lead", pw2).is_none(),
        "a disabled user cannot log in"
    );
    admin.refused(
        &format!("/admin/users/{id}/disable"),
        &[],
        409,
        "already disabled",
    );
    admin.saved(
        &format!("/admin/users/{id}/enable"),
        &[],
        "/admin/users?done=1",
    );
    assert!(try_login(&s, "lead", pw2).is_some());

    // The only admin cannot disable themself or step down.
    let me = user_id(&s, "root-admin");
    admin.refused(
        &format!("/admin/users/{me}/disable"),
        &[],
        409,
        "the only enabled admin",
    );
    admin.refused(
        &format!("/admin/users/{me}/role"),
        &[("role", "manager")],
        409,
        "the only enabled admin",
    );
    admin.refused(
        "/admin/users/abc/disable",
        &[],
        400,
        "user id &#39;abc&#39; is not a number",
    );
    admin.refused("/admin/users/999/disable", &[], 404, "no user with id 999");

    // Without the CSRF token the form is refused before anything runs.
    let (r, _) = admin.post_raw(&format!("/admin/users/{id}/disable"), "");
    assert_eq!(r.status, 403, "{}", r.body);
    assert!(!s.db.read(|r| r.user_by_id(id)).unwrap().unwrap().disabled);
}

#[test]
fn a_team_token_is_shown_once_and_revoking_it_makes_it_401() {
    let s = TestServer::start();
    let admin = Browser::admin(&s, "root-admin");
    admin.refused("/admin/teams", &[("name", "   ")], 400, "team name");
    admin.saved(
        "/admin/teams",
        &[("name", "Team Delta")],
        "/admin/teams?done=1",
    );
    admin.refused(
        "/admin/teams",
        &[("name", "Team Delta")],
        409,
        "already exists",
    );
    let team =
        s.db.read(|r| r.team_state_by_name("Team Delta"))
            .unwrap()
            .unwrap();

    // Made: on the answer to the POST only, never on the page again.
    let (r, _) = admin.post(&format!("/admin/teams/{}/tokens", team.id), &[]);
    assert_eq!(r.status, 200, "{}", r.body);
    let doc = scraper::Html::parse_document(&r.body);
    let sel = scraper::Selector::parse("#token-value").unwrap();
    let token = doc
        .select(&sel)
        .next()
        .and_then(|e| e.value().attr("value"))
        .expect("the token is shown")
        .to_string();
    assert_eq!(token.len(), 64);
    assert!(r.body.contains("shown only this once"));
    assert!(
        !admin.get("/admin/teams").0.body.contains(&token),
        "shown once"
    );
    assert!(
        !groundproof_e2e::stored_anywhere(&s, &token),
        "only the hash is stored"
    );
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 200);

    // Revoked: the token is refused (401).
    let id = s.db.read(|r| r.team_tokens()).unwrap()[0].id;
    admin.saved(
        &format!("/admin/tokens/{id}/revoke"),
        &[],
        "/admin/teams?done=1",
    );
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 401);
    admin.refused(
        &format!("/admin/tokens/{id}/revoke"),
        &[],
        409,
        "already revoked",
    );

    // A disabled team loses its tokens and gets no new one.
    let (r, _) = admin.post(&format!("/admin/teams/{}/tokens", team.id), &[]);
    assert_eq!(r.status, 200);
    let second = s.db.read(|r| r.team_tokens()).unwrap();
    assert_eq!(second.iter().filter(|t| t.revoked_at.is_none()).count(), 1);
    admin.saved(
        &format!("/admin/teams/{}/disable", team.id),
        &[],
        "/admin/teams?done=1",
    );
    assert!(
        s.db.read(|r| r.team_tokens())
            .unwrap()
            .iter()
            .all(|t| t.revoked_at.is_some())
    );
    admin.refused(
        &format!("/admin/teams/{}/tokens", team.id),
        &[],
        409,
        "is disabled",
    );
    admin.saved(
        &format!("/admin/teams/{}/enable", team.id),
        &[],
        "/admin/teams?done=1",
    );
}

/// The token on the answer to a make-token form.
fn shown_token(body: &str) -> String {
    let doc = scraper::Html::parse_document(body);
    let sel = scraper::Selector::parse("#token-value").unwrap();
    doc.select(&sel)
        .next()
        .and_then(|e| e.value().attr("value"))
        .expect("the token is shown")
        .to_string()
}

#[test]
fn an_api_token_is_shown_once_works_as_a_bearer_and_revoking_it_makes_it_401() {
    let s = TestServer::start();
    let admin = Browser::admin(&s, "root-admin");
    let n = log_len(&s);
    let tokens = || s.db.read(|r| r.api_tokens()).unwrap();
    let before = tokens().len();
    // Bad input: a clear reason, nothing made, nothing logged.
    admin.refused(
        "/admin/api-tokens",
        &[("label", "weekly export"), ("role", "boss")],
        400,
        "Role:",
    );
    admin.refused(
        "/admin/api-tokens",
        &[("label", "   "), ("role", "coordinator")],
        400,
        "name must be 1 to 100 characters",
    );
    assert_eq!(tokens().len(), before);
    assert_eq!(log_len(&s), n);

    // Made: on the answer to the POST only, never on the page again.
    let (r, _) = admin.post(
        "/admin/api-tokens",
        &[("label", "weekly export"), ("role", "coordinator")],
    );
    assert_eq!(r.status, 200, "{}", r.body);
    let token = shown_token(&r.body);
    assert!(token.starts_with("gp_"), "{token}");
    assert!(r.body.contains("shown only this once"), "{}", r.body);
    let page = admin.get("/admin/api-tokens").0.body;
    assert!(!page.contains(&token), "shown once");
    assert!(page.contains("weekly export") && page.contains("coordinator"));
    assert!(
        !groundproof_e2e::stored_anywhere(&s, &token),
        "only the hash is stored"
    );
    // It works as a bearer token with its role's rights (a coordinator may
    // list bundles but not administer).
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 200);
    assert_eq!(get_as(&s.url("/admin/users"), Some(&token)).status, 403);
    let rec = tokens().pop().expect("the new token");
    assert_eq!(
        (rec.label.as_str(), tokens().len()),
        ("weekly export", before + 1)
    );
    let last = s.db.read(|r| r.admin_log(None, 1)).unwrap().remove(0);
    assert_eq!(
        (
            last.actor.as_str(),
            last.action.as_str(),
            last.subject.clone()
        ),
        (
            "user root-admin",
            "apitoken.create",
            format!("API token {} (weekly export)", rec.id)
        )
    );

    // Without the CSRF token the revoke form is refused and changes nothing.
    let revoke = format!("/admin/api-tokens/{}/revoke", rec.id);
    let (r, _) = admin.post_raw(&revoke, "");
    assert_eq!(r.status, 403, "{}", r.body);
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 200);
    let (r, _) = admin.post_raw("/admin/api-tokens", "label=sneaky&role=admin");
    assert_eq!(r.status, 403, "{}", r.body);
    assert_eq!(tokens().len(), before + 1);

    // Revoked: refused from then on (401); again, or unknown: a reason.
    admin.saved(&revoke, &[], "/admin/api-tokens?done=1");
    assert!(
        admin
            .get("/admin/api-tokens?done=1")
            .0
            .body
            .contains(&format!("API token {} (weekly export): revoked", rec.id))
    );
    assert_eq!(get_as(&s.url("/api/v1/bundles"), Some(&token)).status, 401);
    admin.refused(&revoke, &[], 409, "already revoked");
    admin.refused(
        "/admin/api-tokens/999/revoke",
        &[],
        404,
        "no API token with id 999",
    );
    admin.refused("/admin/api-tokens/x/revoke", &[], 400, "is not a number");

    // A signed-in coordinator is refused the page and its forms (403).
    create_user(&s.db, "ana", Role::Coordinator, PASSWORD, now_unix()).unwrap();
    let ana = Browser::login(&s, "ana", PASSWORD);
    assert_eq!(ana.get("/admin/api-tokens").0.status, 403);
}

/// The admin pages' forms in Portuguese (`Accept-Language: pt`): the words
/// of our catalogue `templates/i18n/pt/pages.ftl`.
#[test]
fn the_admin_pages_speak_portuguese() {
    let s = TestServer::start();
    let token = groundproof_e2e::admin_token(&s);
    let page = |path: &str| -> String {
        let mut r = agent()
            .get(&s.url(path))
            .header("Authorization", format!("Bearer {token}"))
            .header("Accept-Language", "pt")
            .call()
            .expect("reaches the server");
        assert_eq!(r.status().as_u16(), 200, "{path}");
        r.body_mut().read_to_string().unwrap()
    };
    for (path, words) in [
        (
            "/admin/users",
            &["Adicionar um usuário", "Redefinir a senha", "coordenador"][..],
        ),
        (
            "/admin/teams",
            &["Adicionar uma equipe", "Nome da equipe"][..],
        ),
        (
            "/admin/api-tokens",
            &[
                "Chaves de API",
                "Criar uma chave de API",
                "Nome (para que serve",
            ][..],
        ),
        (
            "/admin/sources",
            &["Registrar uma fonte", "Tamanho do pixel (m)"][..],
        ),
        (
            "/admin/settings",
            &[
                "Prioridade dos eventos",
                "Fuso horário",
                "Salvar configurações",
            ][..],
        ),
    ] {
        let body = page(path);
        for w in words {
            assert!(body.contains(w), "{path} lacks {w:?}");
        }
        for english in [
            "Add a user",
            "Save settings",
            "Register a source",
            "Make an API token",
        ] {
            assert!(!body.contains(english), "{path} still says {english:?}");
        }
    }
}

#[test]
fn sources_are_registered_and_edited_and_bad_numbers_change_nothing() {
    let s = TestServer::start();
    let admin = Browser::admin(&s, "root-admin");
    let before = log_len(&s);
    admin.refused(
        "/admin/sources",
        &[
            ("name", "optical-10m"),
            ("pixel_size_m", "0"),
            ("revisit_days", "5"),
        ],
        400,
        "pixel size 0 m",
    );
    admin.refused(
        "/admin/sources",
        &[
            ("name", "optical-10m"),
            ("pixel_size_m", "ten"),
            ("revisit_days", "5"),
        ],
        400,
        "Pixel size (m): &#39;ten&#39; is not a valid number",
    );
    admin.refused(
        "/admin/sources",
        &[
            ("name", "bad name!"),
            ("pixel_size_m", "10"),
            ("revisit_days", "5"),
        ],
        400,
        "bad name!",
    );
    assert!(s.db.read(|r| r.sources()).unwrap().is_empty());
    assert_eq!(log_len(&s), before);
    admin.saved(
        "/admin/sources",
        &[
            ("name", "optical-10m"),
            ("pixel_size_m", "10"),
            ("revisit_days", "5"),
        ],
        "/admin/sources?done=1",
    );
    let id = s.db.read(|r| r.sources()).unwrap()[0].id;
    let edit = format!("/admin/sources/{id}");
    admin.refused(
        &edit,
        &[("pixel_size_m", "10"), ("revisit_days", "0")],
        400,
        "revisit interval 0 days",
    );
    admin.saved(
        &edit,
        &[("pixel_size_m", "20"), ("revisit_days", "6")],
        "/admin/sources?done=1",
    );
    let src = s.db.read(|r| r.source_by_id(id)).unwrap().unwrap();
    assert_eq!((src.pixel_size_m, src.revisit_days), (20.0, 6));

    // Once alerts are stored the pixel size is fixed; the revisit may change.
    let csv = "longitude,latitude,date,confidence\n-60.1,-3.2,2026-01-05,confirmed\n";
    let r = groundproof_e2e::post_bytes(
        &s.url("/api/v1/alerts?source=optical-10m&format=csv"),
        "text/csv",
        csv.as_bytes(),
    );
    assert!(r.status < 300, "{}", r.body);
    admin.refused(
        &edit,
        &[("pixel_size_m", "30"), ("revisit_days", "6")],
        409,
        "cannot change once alerts are imported",
    );
    admin.saved(
        &edit,
        &[("pixel_size_m", "20"), ("revisit_days", "8")],
        "/admin/sources?done=1",
    );
}

#[test]
fn settings_change_at_once_and_a_bad_value_changes_nothing() {
    let s = TestServer::start();
    let admin = Browser::admin(&s, "root-admin");
    let page = admin.get("/admin/settings").0;
    assert!(page.body.contains("value=\"100\""), "tolerance shown");
    let form = |tolerance: &str, area: &str, tz: &str| {
        vec![
            ("area", area.to_string()),
            ("recency", "0.25".to_string()),
            ("corroboration", "0.2".to_string()),
            ("confidence", "0.1".to_string()),
            ("zone", "0.15".to_string()),
            ("area_ref_ha", "10".to_string()),
            ("recency_days", "30".to_string()),
            ("tolerance_m", tolerance.to_string()),
            ("time_zone", tz.to_string()),
            ("default_language", "pt".to_string()),
        ]
    };
    let post = |f: Vec<(&str, String)>| {
        let f: Vec<(&str, &str)> = f.iter().map(|(k, v)| (*k, v.as_str())).collect();
        admin.post("/admin/settings", &f)
    };
    let file = s.data_dir().join("settings.toml");
    let (r, loc) = post(form("250", "0.3", "Etc/GMT+4"));
    assert_eq!(
        (r.status, loc.as_str()),
        (303, "/admin/settings?done=1"),
        "{}",
        r.body
    );
    let text = std::fs::read_to_string(&file).unwrap();
    assert!(text.contains("tolerance_m = 250.0"), "{text}");
    assert!(text.contains("time_zone = \"Etc/GMT+4\""), "{text}");
    assert!(text.contains("default_language = \"pt\""), "{text}");
    // The running server uses them at once: times on pages are local now.
    let page = admin.get("/admin/settings?done=1").0;
    assert!(
        page.body.contains("evidence.tolerance_m 100.0 → 250.0"),
        "{}",
        page.body
    );
    assert!(page.body.contains("(UTC-04:00)"), "local time on the page");

    // Out of bounds, not a number, no such zone: refused, file and values unchanged.
    let bytes = std::fs::read(&file).unwrap();
    let n = log_len(&s);
    for (f, why) in [
        (
            form("250", "2", "Etc/GMT+4"),
            "priority.area must be in [0, 1]",
        ),
        (
            form("-1", "0.3", "Etc/GMT+4"),
            "evidence.tolerance_m must be in (0, 100000] metres",
        ),
        (
            form("lots", "0.3", "Etc/GMT+4"),
            // The page's own check and `platform::admin`'s refusal are in
            // the page's language; `Settings::check`'s bounds stay English.
            "Tolerância das provas (m): &#39;lots&#39; não é um número válido",
        ),
        (
            form("250", "0.3", "Mars/Olympus"),
            "time zone &#39;Mars/Olympus&#39; is not in the IANA tz database",
        ),
        (
            form("250", "0.3", "Etc/GMT+4"),
            "nada mudou: todos os valores já são os que estão em vigor",
        ),
    ] {
        let (r, _) = post(f);
        assert!(r.status == 400 || r.status == 409, "{}", r.body);
        // The organisation's default language is Portuguese now (set above):
        // "Nothing was changed" of templates/i18n/pt/pages.ftl.
        assert!(r.body.contains("Nada foi alterado"), "{}", r.body);
        assert!(r.body.contains(why), "expected {why:?}: {}", r.body);
    }
    assert_eq!(std::fs::read(&file).unwrap(), bytes);
    assert_eq!(log_len(&s), n);
    let page = admin.get("/admin/settings").0;
    assert!(page.body.contains("value=\"250\""), "{}", page.body);
}

#[test]
fn the_change_log_lists_each_change_with_who_and_when_including_the_command_line() {
    let s = TestServer::start();
    let admin = Browser::admin(&s, "root-admin");
    let started = chrono::Utc::now();
    admin.saved(
        "/admin/teams",
        &[("name", "Team Delta")],
        "/admin/teams?done=1",
    );
    let saved = chrono::Utc::now();
    admin.saved(
        "/admin/sources",
        &[
            ("name", "radar-20m"),
            ("pixel_size_m", "20"),
            ("revisit_days", "12"),
        ],
        "/admin/sources?done=1",
    );
    // The command line on the same data directory, while the server runs.
    let out = std::process::Command::new(crate::intake::binary())
        .args(["team", "add", "Team Echo", "--data"])
        .arg(s.data_dir())
        .args(s.database_args())
        .output()
        .expect("the groundproof binary runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = std::process::Command::new(crate::intake::binary())
        .args(["user", "add", "night-shift", "--role", "manager", "--data"])
        .arg(s.data_dir())
        .args(s.database_args())
        .env("GROUNDPROOF_PASSWORD", "the night shift's password")
        .output()
        .expect("the groundproof binary runs");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // An API token registering a source is logged with its label.
    let r = groundproof_e2e::post_json(
        &s.url("/api/v1/sources"),
        &serde_json::json!({"name": "optical-10m", "pixel_size_m": 10, "revisit_days": 5}),
    );
    assert_eq!(r.status, 201, "{}", r.body);

    let page = admin.get("/admin/log").0;
    assert_eq!(page.status, 200);
    let doc = scraper::Html::parse_document(&page.body);
    let sel = scraper::Selector::parse("#change-log tbody tr").unwrap();
    let td = scraper::Selector::parse("td").unwrap();
    let rows: Vec<Vec<String>> = doc
        .select(&sel)
        .map(|tr| {
            tr.select(&td)
                .map(|c| c.text().collect::<String>())
                .collect()
        })
        .collect();
    let find = |action: &str| -> Vec<String> {
        rows.iter()
            .find(|r| r[2] == action && (action != "team.add" || r[3] == "team Team Echo"))
            .cloned()
            .unwrap_or_else(|| panic!("no {action} row in {rows:?}"))
    };
    let echo = find("team.add");
    assert_eq!(
        (echo[1].as_str(), echo[3].as_str()),
        ("command line", "team Team Echo")
    );
    let api = find("source.add");
    assert!(
        api[1].starts_with("API token") && api[1].ends_with("(end-to-end tests)"),
        "{api:?}"
    );
    let user = rows
        .iter()
        .find(|r| r[3] == "team Team Delta")
        .expect("the page's change");
    assert_eq!(user[1], "user root-admin");
    // When: the minute of the change in the organisation's zone (UTC here).
    let stamp = &user[0];
    assert!(stamp.ends_with("(UTC+00:00)"), "{stamp}");
    let minute = |t: chrono::DateTime<chrono::Utc>| t.format("%Y-%m-%d %H:%M").to_string();
    assert!(
        (minute(started)..=minute(saved)).contains(&stamp[..16].to_string()),
        "{stamp} between {started} and {saved}"
    );
    let cli_user = find("user.add");
    assert_eq!(
        (
            cli_user[1].as_str(),
            cli_user[3].as_str(),
            cli_user[4].as_str()
        ),
        ("command line", "user night-shift", "role manager")
    );
    assert_eq!(rows.len(), 5, "{rows:?}");
    // The API keeps RFC 3339: the log is a page, not an API resource.
    assert_eq!(admin.get("/admin/log?before=x").0.status, 400);
}

/// After the organisation's zone is set, the pages show a trip's times in
/// it while the API keeps RFC 3339 (issue 13, "Local time").
#[test]
fn pages_show_local_time_and_the_api_keeps_rfc3339() {
    let s = TestServer::start();
    groundproof_e2e::load_scenario(&s);
    let station = mock_patrols::scenario().station;
    let trip = serde_json::json!({"team": "Team Amber", "zone": "Core", "max": 2,
        "start": {"lat": station.1, "lon": station.0}});
    let r = groundproof_e2e::post_json(&s.url("/api/v1/bundles"), &trip);
    assert_eq!(r.status, 201, "{}", r.body);
    let admin = Browser::admin(&s, "root-admin");
    let trips = admin.get("/trips").0;
    assert!(trips.body.contains("(UTC+00:00)"), "UTC by default");
    let mut fields: Vec<(&str, String)> = vec![];
    let page = admin.get("/admin/settings").0;
    let doc = scraper::Html::parse_document(&page.body);
    let input = scraper::Selector::parse("#settings input[name]:not([type=hidden])").unwrap();
    for e in doc.select(&input) {
        let name = e.value().attr("name").unwrap();
        let value = if name == "time_zone" {
            "Etc/GMT+4"
        } else {
            e.value().attr("value").unwrap_or_default()
        };
        fields.push((name, value.to_string()));
    }
    fields.push(("default_language", "en".to_string()));
    let f: Vec<(&str, &str)> = fields.iter().map(|(k, v)| (*k, v.as_str())).collect();
    admin.saved("/admin/settings", &f, "/admin/settings?done=1");

    // Etc/GMT+4 is UTC-04:00 (IANA tz database, file `etcetera`).
    let bundle = &get_as(
        &s.url("/api/v1/bundles"),
        Some(&groundproof_e2e::admin_token(&s)),
    )
    .json()[0];
    let issued = bundle["issued_at"].as_str().expect("issued_at");
    let at = chrono::DateTime::parse_from_rfc3339(issued).expect("the API keeps RFC 3339");
    let local = (at.with_timezone(&chrono::Utc) - chrono::Duration::hours(4))
        .format("%Y-%m-%d %H:%M (UTC-04:00)")
        .to_string();
    let trips = admin.get("/trips").0;
    assert!(trips.body.contains(&local), "{local} on the trips page");
    assert!(!trips.body.contains("(UTC+00:00)"), "no UTC time left");
}

/// Damaged administration forms (odd values in every field, the valid
/// settings form damaged byte by byte) get an answer below 500, the server
/// stays up, and the settings file always parses.
#[test]
fn damaged_admin_forms_get_4xx_never_5xx() {
    use proptest::prelude::*;
    use proptest::test_runner::{Config, TestRunner};
    let s = TestServer::start();
    groundproof::platform::admin::add_team(
        &s.db,
        &groundproof::platform::admin::Actor::CommandLine,
        "Team Amber",
        now_unix(),
    )
    .unwrap();
    let token = groundproof_e2e::admin_token(&s);
    let post = |path: &str, body: &[u8]| -> u16 {
        agent()
            .post(&s.url(path))
            .header("Authorization", format!("Bearer {token}"))
            .header("Content-Type", "application/x-www-form-urlencoded")
            .send(body)
            .map(|r| r.status().as_u16())
            .unwrap_or(0)
    };
    let valid = "area=0.3&recency=0.25&corroboration=0.2&confidence=0.1&zone=0.15\
                 &area_ref_ha=10&recency_days=30&tolerance_m=100&time_zone=UTC&default_language=en";
    let odd = prop_oneof![
        Just(String::new()),
        Just("NaN".to_string()),
        Just("inf".to_string()),
        Just("-0".to_string()),
        Just("1e400".to_string()),
        Just("%FF%FE".to_string()),
        Just("9".repeat(5000)),
        "[ -~]{0,64}",
    ];
    let paths = [
        "/admin/settings",
        "/admin/users",
        "/admin/users/1/role",
        "/admin/users/1/password",
        "/admin/teams",
        "/admin/sources",
        "/admin/sources/1",
        "/admin/api-tokens",
        "/admin/api-tokens/1/revoke",
    ];
    let fields = [
        "name",
        "role",
        "password",
        "password_again",
        "pixel_size_m",
        "revisit_days",
        "area",
        "tolerance_m",
        "time_zone",
        "default_language",
        "label",
    ];
    let config = Config {
        cases: mock_patrols::damage::cases(96),
        failure_persistence: None,
        max_shrink_iters: 0,
        ..Config::default()
    };
    TestRunner::new(config)
        .run(
            &(
                0..paths.len(),
                prop::collection::vec((0..fields.len(), odd), 0..6),
                any::<u64>(),
                any::<bool>(),
            ),
            |(p, values, seed, damaged)| {
                let body = if damaged {
                    mock_patrols::damage::damage_bytes(valid.as_bytes(), seed)
                } else {
                    values
                        .iter()
                        .map(|(f, v)| format!("{}={}", fields[*f], enc(v)))
                        .collect::<Vec<_>>()
                        .join("&")
                        .into_bytes()
                };
                let path = if damaged { "/admin/settings" } else { paths[p] };
                let st = post(path, &body);
                prop_assert!((1..500).contains(&st), "{path}: status {st}");
                Ok(())
            },
        )
        .unwrap_or_else(|e| panic!("admin forms: {e}"));
    assert_eq!(get_as(&s.url("/healthz"), None).status, 200);
    groundproof::platform::settings::Settings::load(s.data_dir())
        .expect("the settings file parses");
}
