//! The figures pages (dashboard, summary, disputes) and the administration
//! in Portuguese when the browser asks for it (`Accept-Language: pt`).
//! The words are those of `templates/i18n/pt/pages.ftl`, block
//! "dashboard, summary, disputes, admin".

use groundproof::platform::auth::{Role, create_user, now_unix};
use groundproof_e2e::TestServer;

const PASSWORD: &str = "a long test password, 2026";

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .max_redirects(0)
        .build()
        .into()
}

/// Sign in as a new user of `role`: the session cookie.
fn login(s: &TestServer, name: &str, role: Role) -> String {
    create_user(&s.db, name, role, PASSWORD, now_unix()).expect("user");
    let body = format!(
        "name={name}&password={}&next=/",
        PASSWORD.replace(' ', "+").replace(',', "%2C")
    );
    let r = agent()
        .post(&s.url("/login"))
        .header("Origin", &s.url(""))
        .header("Content-Type", "application/x-www-form-urlencoded")
        .send(body.as_bytes())
        .expect("request reaches the server");
    assert_eq!(r.status().as_u16(), 303, "logged in");
    r.headers()
        .get_all("set-cookie")
        .iter()
        .filter_map(|v| v.to_str().ok())
        .find(|c| c.starts_with("gp_session="))
        .and_then(|c| c.split(';').next())
        .expect("session cookie")
        .to_string()
}

/// GET `path` in Portuguese: the body of a 200 answer.
fn portuguese(s: &TestServer, cookie: &str, path: &str) -> String {
    let mut r = agent()
        .get(&s.url(path))
        .header("Cookie", cookie)
        .header("Accept-Language", "pt")
        .call()
        .expect("request reaches the server");
    let status = r.status().as_u16();
    let body = r.body_mut().read_to_string().unwrap_or_default();
    assert_eq!(status, 200, "{path}: {body}");
    assert!(body.contains("<html lang=\"pt\""), "{path} is Portuguese");
    body
}

fn has_all(path: &str, body: &str, words: &[&str], english: &[&str]) {
    for w in words {
        assert!(body.contains(w), "{w:?} on {path}: {body}");
    }
    for w in english {
        assert!(!body.contains(w), "English {w:?} left on {path}");
    }
}

#[test]
fn figures_and_administration_pages_speak_portuguese() {
    let s = TestServer::start();
    let coordinator = login(&s, "figures-coord", Role::Coordinator);
    let dashboard = portuguese(&s, &coordinator, "/dashboard");
    has_all(
        "/dashboard",
        &dashboard,
        &[
            "<h1>Painel</h1>",
            "Taxa de confirmação dos alertas",
            "O que os números querem dizer",
            "Intervalo de Wilson",
            "ainda não visitados",
            "por zona",
            "Tempos de resposta",
        ],
        &[
            "What the figures mean",
            "Confirmation rate of the alerts",
            "First detected from",
        ],
    );
    let summary = portuguese(&s, &coordinator, "/summary?from=2026-01-01");
    has_all(
        "/summary",
        &summary,
        &[
            "Resumo: todas as zonas, detectados pela primeira vez a partir de 2026-01-01",
            "Números principais",
            "Cobertura e tempo até a visita",
        ],
        &["Headline figures", "Print this page"],
    );
    let disputes = portuguese(&s, &coordinator, "/disputes");
    has_all(
        "/disputes",
        &disputes,
        &["<h1>Contestações</h1>", "Nenhum evento contestado."],
        &["No disputed event", "Read the reports side by side"],
    );
    let admin = login(&s, "figures-admin", Role::Admin);
    for (path, words) in [
        (
            "/admin",
            &["<h1>Administração</h1>", "Usuários", "Equipes e chaves"][..],
        ),
        (
            "/admin/log",
            &["Registro de mudanças", "O registro só cresce"][..],
        ),
    ] {
        let body = portuguese(&s, &admin, path);
        has_all(path, &body, words, &["Only admins see", "append-only"]);
    }
}
