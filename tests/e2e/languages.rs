//! The pages in the user's language: the browser's `Accept-Language` by
//! default, the user's own choice (stored with the user) above it, switched
//! by `POST /language` with the CSRF token of a session.

use groundproof::platform::auth::Role;
use groundproof_e2e::TestServer;

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into()
}

/// GET with optional cookie and Accept-Language: (status, body).
fn page(s: &TestServer, path: &str, cookie: Option<&str>, lang: Option<&str>) -> (u16, String) {
    let mut r = agent().get(&s.url(path));
    if let Some(c) = cookie {
        r = r.header("Cookie", c);
    }
    if let Some(l) = lang {
        r = r.header("Accept-Language", l);
    }
    let mut r = r.call().expect("request reaches the server");
    let status = r.status().as_u16();
    (status, r.body_mut().read_to_string().unwrap_or_default())
}

/// POST a form from our own origin: (status, Location, Set-Cookie values).
fn post(
    s: &TestServer,
    path: &str,
    cookie: Option<&str>,
    body: &str,
) -> (u16, String, Vec<String>) {
    let mut r = agent()
        .post(&s.url(path))
        .header("Origin", &s.url(""))
        .header("Content-Type", "application/x-www-form-urlencoded");
    if let Some(c) = cookie {
        r = r.header("Cookie", c);
    }
    let r = r.send(body.as_bytes()).expect("request reaches the server");
    let header = |n: &str| -> Vec<String> {
        r.headers()
            .get_all(n)
            .iter()
            .filter_map(|v| v.to_str().ok().map(str::to_string))
            .collect()
    };
    let location = header("location").pop().unwrap_or_default();
    (r.status().as_u16(), location, header("set-cookie"))
}

fn login(s: &TestServer, name: &str) -> String {
    let password = "a long test password, 2026";
    groundproof::platform::auth::create_user(
        &s.db,
        name,
        Role::Coordinator,
        password,
        groundproof::platform::auth::now_unix(),
    )
    .expect("user");
    let body = format!(
        "name={name}&password={}&next=/",
        password.replace(' ', "+").replace(',', "%2C")
    );
    let (status, _, cookies) = post(s, "/login", None, &body);
    assert_eq!(status, 303, "logged in");
    cookies
        .iter()
        .find(|c| c.starts_with("gp_session="))
        .and_then(|c| c.split(';').next())
        .expect("session cookie")
        .to_string()
}

fn csrf(body: &str) -> String {
    let doc = scraper::Html::parse_document(body);
    let sel =
        scraper::Selector::parse("form[action=\"/language\"] input[name=csrf_token]").unwrap();
    doc.select(&sel)
        .next()
        .and_then(|e| e.value().attr("value"))
        .expect("the language switch carries a CSRF token")
        .to_string()
}

fn html_lang(body: &str) -> String {
    let doc = scraper::Html::parse_document(body);
    let sel = scraper::Selector::parse("html").unwrap();
    doc.select(&sel)
        .next()
        .and_then(|e| e.value().attr("lang"))
        .unwrap_or_default()
        .to_string()
}

#[test]
fn pages_speak_the_browser_language_then_the_users_choice() {
    let s = TestServer::start();

    // The login page, in the layout of every page, follows the browser.
    let (status, en) = page(&s, "/login", None, None);
    assert_eq!(status, 200);
    assert_eq!(html_lang(&en), "en");
    assert!(
        en.contains("Safety first") && en.contains("User name"),
        "{en}"
    );
    let (_, pt) = page(&s, "/login", None, Some("pt-BR,pt;q=0.9,en;q=0.8"));
    assert_eq!(html_lang(&pt), "pt");
    // Texts of templates/i18n/pt/pages.ftl.
    for text in ["Segurança em primeiro lugar", "Nome de usuário", "Senha"] {
        assert!(pt.contains(text), "{text} in {pt}");
    }
    assert!(!pt.contains("User name"));

    // A signed-in user's page follows the browser too...
    let session = login(&s, "ana-coord");
    let (status, import) = page(&s, "/import", Some(&session), Some("pt-BR"));
    assert_eq!(status, 200, "{import}");
    assert_eq!(html_lang(&import), "pt");
    for text in ["Arquivo de alertas", "Importar alertas", "Viagens", "Sair"] {
        assert!(import.contains(text), "{text} in the import page");
    }

    // ...until the user chooses: the switch needs the session's CSRF token.
    let (status, _, _) = post(&s, "/language", Some(&session), "lang=fr&next=/import");
    assert_eq!(status, 403, "no CSRF token, no change");
    let token = csrf(&import);
    let (status, location, _) = post(
        &s,
        "/language",
        Some(&session),
        &format!("csrf_token={token}&lang=fr&next=/import"),
    );
    assert_eq!((status, location.as_str()), (303, "/import"));
    // Stored with the user: no language cookie is sent back, the browser
    // still asks for Portuguese, and the page is French.
    let (_, fr) = page(&s, "/import", Some(&session), Some("pt-BR"));
    assert_eq!(html_lang(&fr), "fr");
    assert!(
        fr.contains("Fichier d'alertes") || fr.contains("Fichier d&#39;alertes"),
        "{fr}"
    );
    // The error page too.
    let (status, missing) = page(&s, "/events/999999", Some(&session), None);
    assert_eq!(status, 404);
    assert!(
        missing.contains("la page d'accueil") || missing.contains("la page d&#39;accueil"),
        "{missing}"
    );

    // An unknown language is refused and changes nothing; "auto" forgets.
    let token = csrf(&fr);
    let (status, _, _) = post(
        &s,
        "/language",
        Some(&session),
        &format!("csrf_token={token}&lang=xx"),
    );
    assert_eq!(status, 400);
    let (_, still) = page(&s, "/import", Some(&session), None);
    assert_eq!(html_lang(&still), "fr");
    let (status, _, _) = post(
        &s,
        "/language",
        Some(&session),
        &format!("csrf_token={token}&lang=auto&next=/import"),
    );
    assert_eq!(status, 303);
    let (_, back) = page(&s, "/import", Some(&session), Some("es-MX"));
    assert_eq!(html_lang(&back), "es");

    // Someone not signed in switches with a cookie only (nothing stored).
    let (status, _, cookies) = post(&s, "/language", None, "lang=id&next=/login");
    assert_eq!(status, 303);
    let c = cookies
        .iter()
        .find(|c| c.starts_with("gp_lang=id"))
        .expect("language cookie");
    let (_, id) = page(
        &s,
        "/login",
        Some(c.split(';').next().unwrap()),
        Some("pt-BR"),
    );
    assert_eq!(html_lang(&id), "id");
    assert!(
        id.contains("Bahasa (id)"),
        "the switch names Indonesian by its code"
    );
}
