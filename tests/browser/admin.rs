//! Browser test of the administration pages: the demo's admin walks
//! through users, teams and tokens, sources, settings and the change log in
//! headless Chromium, with the same checks on every page as the main walk
//! (no console error, every control labelled, a screenshot).
//!
//! Fails when `CI` is set and Chromium or ChromeDriver is missing; elsewhere
//! it says SKIP on stderr and passes.

use super::webdriver::Browser;
use super::{Shots, assert_clean, assert_clean_with_status, assert_has, log_in, password_of};
use groundproof::demo::load;
use groundproof::platform::settings::Settings;
use groundproof_e2e::TestServer;

#[test]
fn an_admin_works_through_the_administration_pages_in_chromium() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    let s = TestServer::start();
    load(&s.db, s.data_dir(), &Settings::default()).expect("demo loads");
    let shots = Shots::new();

    b.goto(&s.url("/admin"));
    assert!(b.current_url().contains("/login"), "{}", b.current_url());
    log_in(&b, "admin", password_of("admin"));
    assert!(b.current_url().ends_with("/admin"), "{}", b.current_url());
    assert_has(
        &b,
        "admin",
        &["href=\"/admin\"", "href=\"/admin/users\"", "Change log"],
    );
    assert_clean(&b, "admin");

    // Users: add one; the notice comes from the change log.
    b.click_to_navigate("a[href=\"/admin/users\"]");
    b.type_into("#u-name", "field-lead");
    b.choose("#u-role", "coordinator");
    b.type_into("#u-pw", "a long field lead password");
    b.type_into("#u-pw2", "a long field lead password");
    b.click_to_navigate("#add-user button[type=submit]");
    assert!(
        b.text("#admin-notice")
            .contains("user field-lead: role coordinator"),
        "{}",
        b.text("main")
    );
    assert_has(&b, "users", &["field-lead", "action=\"/admin/users\""]);
    assert_clean(&b, "users");
    shots.take(&b, "admin-users");

    // Teams: add one, make a token (shown once), revoke it.
    b.click_to_navigate(".admin-nav a[href=\"/admin/teams\"]");
    b.type_into("#t-name", "Team Foxglove");
    b.click_to_navigate("#add-team button[type=submit]");
    assert!(b.text("#admin-notice").contains("team Team Foxglove"));
    let row =
        s.db.read(|r| r.team_state_by_name("Team Foxglove"))
            .unwrap()
            .expect("team added");
    b.click_to_navigate(&format!(
        "form[action=\"/admin/teams/{}/tokens\"] button",
        row.id
    ));
    let token = b.script("return document.querySelector('#token-value').value;");
    assert_eq!(token.as_str().map_or(0, str::len), 64, "{token}");
    assert_clean(&b, "teams with a new token");
    shots.take(&b, "admin-team-token");
    let id = s.db.read(|r| r.team_tokens()).unwrap().last().unwrap().id;
    b.click_to_navigate(&format!(
        "form[action=\"/admin/tokens/{id}/revoke\"] button"
    ));
    assert!(
        b.text("#admin-notice")
            .contains(&format!("token {id} revoked"))
    );
    assert!(!b.source().contains(token.as_str().unwrap()), "shown once");
    assert_clean(&b, "teams");

    // API tokens: make one for a script (shown once, works as a bearer
    // token), then revoke it (refused from then on).
    b.click_to_navigate(".admin-nav a[href=\"/admin/api-tokens\"]");
    b.type_into("#k-label", "nightly export");
    b.choose("#k-role", "manager");
    b.click_to_navigate("#add-api-token button[type=submit]");
    let api = b.script("return document.querySelector('#token-value').value;");
    let api = api.as_str().unwrap_or_default().to_string();
    assert!(api.starts_with("gp_"), "{api}");
    assert!(b.text("#new-token").contains("shown only this once"));
    assert_clean(&b, "API tokens with a new token");
    shots.take(&b, "admin-api-token");
    let bearer = |t: &str| groundproof_e2e::get_as(&s.url("/api/v1/events"), Some(t)).status;
    assert_eq!(bearer(&api), 200);
    let id = s.db.read(|r| r.api_tokens()).unwrap().last().unwrap().id;
    b.click_to_navigate(&format!(
        "form[action=\"/admin/api-tokens/{id}/revoke\"] button"
    ));
    assert!(
        b.text("#admin-notice")
            .contains(&format!("API token {id} (nightly export): revoked")),
        "{}",
        b.text("main")
    );
    assert!(!b.source().contains(&api), "shown once");
    assert_eq!(bearer(&api), 401);
    assert_clean(&b, "API tokens");

    // Sources: a bad pixel size is refused with its reason; then edit one.
    b.click_to_navigate(".admin-nav a[href=\"/admin/sources\"]");
    b.type_into("#s-name", "thermal-30m");
    b.type_into("#s-pixel", "0");
    b.type_into("#s-revisit", "8");
    b.click_to_navigate("#add-source button[type=submit]");
    assert!(
        b.text("#admin-error").contains("pixel size 0 m"),
        "{}",
        b.text("main")
    );
    assert_clean_with_status(&b, "sources refused", Some(400));
    b.type_into("#s-pixel", "30");
    b.click_to_navigate("#add-source button[type=submit]");
    assert!(b.text("#admin-notice").contains("source thermal-30m"));
    assert_clean(&b, "sources");
    shots.take(&b, "admin-sources");

    // Settings: a new zone and tolerance, in force at once.
    b.click_to_navigate(".admin-nav a[href=\"/admin/settings\"]");
    b.type_into("#e-tol", "150");
    b.type_into("#o-tz", "Etc/GMT+4");
    b.click_to_navigate("#settings button[type=submit]");
    assert!(
        b.text("#admin-notice")
            .contains("evidence.tolerance_m 100.0 → 150.0"),
        "{}",
        b.text("main")
    );
    assert_clean(&b, "settings");
    shots.take(&b, "admin-settings");

    // The change log: every change above, with who, in local time.
    b.click_to_navigate(".admin-nav a[href=\"/admin/log\"]");
    let log = b.text("#change-log");
    for n in [
        "user admin",
        "user.add",
        "team.add",
        "token.create",
        "token.revoke",
        "apitoken.create",
        "apitoken.revoke",
        "source.add",
        "settings.change",
        "(UTC-04:00)",
    ] {
        assert!(log.contains(n), "the log lacks {n:?}: {log}");
    }
    assert_clean(&b, "change log");
    shots.take(&b, "admin-log");
}
