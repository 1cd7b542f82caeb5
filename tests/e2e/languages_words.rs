//! The sentences the figures pages build from numbers, and the words inside
//! their SVG charts, in Portuguese (`Accept-Language: pt`): the targets,
//! the time-to-visit notes, the charts' titles, axes, legends, notes and
//! tooltips, the causes, a dispute's status note and report cards, and the
//! events map's title and legend. The words are those
//! of `templates/i18n/pt/pages.ftl`, block "figures' sentences and chart
//! words". English stays as the other tests expect.

use groundproof_e2e::{
    TestServer, admin_token, bearer, disputed_trip_returns, form_body, get, issue_from_station,
    load_scenario, page_in, post_bytes, request,
};
use serde_json::json;

/// A page as the admin, in `lang` (None: no Accept-Language): the body of a 200.
fn page(s: &TestServer, path: &str, lang: Option<&str>) -> String {
    let r = page_in(s, path, lang);
    assert_eq!(r.status, 200, "{path}: {}", r.body);
    r.body
}

/// Alerts, one trip to the core zone and its returns, two of whose
/// reports disagree on one event (a dispute).
fn with_visits_and_a_dispute(s: &TestServer) {
    load_scenario(s);
    let (_, bytes) = issue_from_station(s, json!({"team": "Team Amber", "zone": "Core", "max": 8}));
    let work = tempfile::tempdir().expect("temp dir");
    for zip in disputed_trip_returns(&bytes, work.path()) {
        let r = post_bytes(&s.url("/api/v1/returns"), "application/zip", &zip);
        assert!(r.status == 200 || r.status == 201, "{}", r.body);
    }
    let disputes = get(&s.url("/api/v1/disputes")).json();
    assert!(disputes[0]["event_id"].is_i64(), "one event is disputed");
}

fn has(path: &str, body: &str, words: &[&str], not: &[&str]) {
    for w in words {
        assert!(body.contains(w), "{w:?} missing on {path}");
    }
    for w in not {
        assert!(!body.contains(w), "{w:?} left on {path}");
    }
}

/// Sentences and chart words that are English only.
const ENGLISH: &[&str] = &[
    "of issued events visited within",
    "whose 14 days are over",
    "median time to visit",
    "Time from detection to first visit",
    "days since detection",
    "share not yet visited",
    "censored (not yet visited)",
    "shaded: confidence band",
    "marker: estimate",
    "95% interval",
    "Wilson 95% CI",
    "Events issued, visited and confirmed",
    "events (count)",
    "month of first detection",
    "Confirmation rate by month",
    "Teams over time",
    "all events (n =",
    "issued events (n =",
    "confirmed events",
    "events with status",
    "(CSV)</a>",
    ">no data<",
    "target: ",
];

#[test]
fn figures_sentences_and_chart_words_speak_portuguese() {
    let s = TestServer::start();
    with_visits_and_a_dispute(&s);

    let dash = page(&s, "/dashboard", Some("pt"));
    let mut english = ENGLISH.to_vec();
    english.retain(|w| *w != "(CSV)</a>");
    has(
        "/dashboard",
        &dash,
        &[
            "dos eventos entregues, visitados em até 14 dias desde a detecção:",
            "desde a entrega:",
            "(IC de Wilson 95% ",
            "mediana do tempo até a visita",
            "Tempo da detecção à primeira visita (Kaplan–Meier",
            "dias desde a detecção (dias)",
            "parcela ainda não visitada (0–1)",
            "+ censurado (ainda não visitado); sombreado: faixa de confiança",
            "marcador: estimativa; linha vertical: intervalo de 95%",
            "todos os eventos (n = ",
            "eventos entregues (n = ",
            "meta: 14 dias",
            "Eventos entregues, visitados e confirmados, por mês da primeira detecção",
            "eventos (contagem)",
            "Taxa de confirmação por mês (intervalo de Wilson 95%)",
            "cobertura (CSV)",
            "tempos de resposta (CSV)",
        ],
        &english,
    );
    let summary = page(&s, "/summary", Some("pt"));
    has(
        "/summary",
        &summary,
        &[
            "visitados em até 14 dias desde a detecção:",
            "Tempo da detecção à primeira visita (Kaplan–Meier",
            "Equipes ao longo do tempo",
        ],
        ENGLISH,
    );
    let events = page(&s, "/events", Some("pt"));
    has(
        "/events",
        &events,
        &[
            "Eventos de desmatamento por estado",
            "equirretangular, latitude central ",
            ">ainda não visitado</text>",
        ],
        &[
            "Clearing events by status",
            "equirectangular",
            ">not yet visited</text>",
        ],
    );
    let disputes = page(&s, "/disputes", Some("pt"));
    has(
        "/disputes",
        &disputes,
        &[
            "confirmado e alarme falso em menos de 30 dias; as evidências não resolvem",
            "a 0 m da área; tirada depois da detecção",
            "<option value=\"confirmed\">desmatamento confirmado</option>",
        ],
        &[
            "evidence does not settle it",
            "confirmed and false",
            "from the footprint",
            "taken after detection",
        ],
    );
}

#[test]
fn figures_sentences_stay_english_without_a_language() {
    let s = TestServer::start();
    with_visits_and_a_dispute(&s);
    let dash = page(&s, "/dashboard", None);
    has(
        "/dashboard",
        &dash,
        &[
            "of issued events visited within 14 days from detection:",
            "days are over (",
            "(Wilson 95% CI ",
            "all events (n = ",
            "issued events (n = ",
            "+ censored (not yet visited); shaded: confidence band",
            "target: 14 days",
            "Events issued, visited and confirmed, by month of first detection",
            "coverage (CSV)",
            "events with status (GeoJSON)",
        ],
        &[">fig-", ">chart-", ">note-"],
    );
    let events = page(&s, "/events", None);
    has(
        "/events",
        &events,
        &[
            "Clearing events by status",
            "equirectangular, centre latitude ",
            ">not yet visited</text>",
        ],
        &[">chart-", ">status-"],
    );
    let disputes = page(&s, "/disputes", None);
    has(
        "/disputes",
        &disputes,
        &[
            "confirmed and false alarm within 30 days, evidence does not settle it",
            "0 m from the footprint; taken after detection",
            "<option value=\"confirmed\">confirmed loss</option>",
        ],
        &[">note-", ">photo-check-"],
    );
}

/// A form POSTed as the admin's API token in Portuguese (fields unencoded).
fn post_form_pt(s: &TestServer, path: &str, fields: &[(&str, &str)]) -> (u16, String) {
    let auth = bearer(&admin_token(s));
    let headers = [
        ("Authorization", auth.as_str()),
        ("Accept-Language", "pt"),
        ("Content-Type", "application/x-www-form-urlencoded"),
    ];
    let a = request("POST", &s.url(path), &headers, form_body(fields).as_bytes());
    (a.status, a.text())
}

/// The reason a refused admin form gives (from `platform::admin`,
/// `platform::auth` and `alerts::sources`, which the command line and the
/// API share) and a bad filter's message, in Portuguese: the words of
/// `templates/i18n/pt/pages.ftl`, block "refusals of forms and filters".
/// The API keeps the English sentence.
#[test]
fn a_refused_form_and_a_bad_filter_speak_portuguese() {
    let s = TestServer::start();
    let now = groundproof::platform::auth::now_unix();
    let root = groundproof::platform::auth::create_user(
        &s.db,
        "root-admin",
        groundproof::platform::auth::Role::Admin,
        "a long admin password 2026",
        now,
    )
    .expect("an admin");

    // The only enabled admin cannot be disabled (platform::admin's guard).
    let (status, body) = post_form_pt(&s, &format!("/admin/users/{}/disable", root.id), &[]);
    assert_eq!(status, 409, "{body}");
    has(
        "disable the last admin",
        &body,
        &[
            "Nada foi alterado",
            "root-admin é o único administrador ativo",
        ],
        &[
            "Nothing was changed",
            "is the only enabled admin",
            "would leave nobody",
            "make another admin first",
        ],
    );
    // A name that is taken (storage's refusal, worded by platform::admin),
    // a password too short (platform::auth) and two that differ (the page).
    let add = |name: &'static str, p1: &'static str, p2: &'static str| {
        post_form_pt(
            &s,
            "/admin/users",
            &[
                ("name", name),
                ("role", "manager"),
                ("password", p1),
                ("password_again", p2),
            ],
        )
    };
    let pw = "the field lead's password";
    for ((status, body), want, english) in [
        (
            add("root-admin", pw, pw),
            "já existe um usuário",
            "already exists",
        ),
        (
            add("lead", "short", "short"),
            "a senha é curta demais: 5 caracteres",
            "too short",
        ),
        (
            add("lead", pw, "other"),
            "as duas senhas não são iguais",
            "passwords differ",
        ),
    ] {
        assert!(status == 400 || status == 409, "{status}: {body}");
        has(
            "/admin/users",
            &body,
            &[want, "Nada foi alterado"],
            &[english, "Nothing was changed"],
        );
    }
    // A source form with a word for a number, and one with a pixel size out
    // of range (alerts::sources), each names its field in Portuguese.
    let (status, body) = post_form_pt(
        &s,
        "/admin/sources",
        &[
            ("name", "optical-10m"),
            ("pixel_size_m", "ten"),
            ("revisit_days", "5"),
        ],
    );
    assert_eq!(status, 400, "{body}");
    has(
        "/admin/sources",
        &body,
        &["Tamanho do pixel (m): &#39;ten&#39; não é um número válido"],
        &["is not a valid number", "Pixel size (m)"],
    );
    let (status, body) = post_form_pt(
        &s,
        "/admin/sources",
        &[
            ("name", "optical-10m"),
            ("pixel_size_m", "0"),
            ("revisit_days", "5"),
        ],
    );
    assert_eq!(status, 400, "{body}");
    has(
        "/admin/sources",
        &body,
        &["tamanho do pixel 0 m: é preciso um número de metros"],
        &["expected a number of metres"],
    );
    // The API keeps the English sentence for scripts.
    let r = groundproof_e2e::post_json(
        &s.url("/api/v1/sources"),
        &json!({"name": "optical-10m", "pixel_size_m": 0, "revisit_days": 5}),
    );
    assert_eq!(r.status, 400, "{}", r.body);
    assert!(r.body.contains("expected a number of metres"), "{}", r.body);

    // Bad filters: the error page in Portuguese, heading and message.
    for (path, want, english) in [
        (
            "/events?from=2026-13-01",
            "Detectado desde: &#39;2026-13-01&#39; não é uma data",
            "expected an ISO 8601 date",
        ),
        (
            "/events?min_area_ha=lots",
            "&#39;lots&#39; não é um número válido",
            "is not a valid number",
        ),
        (
            "/events?status=lost",
            "&#39;lost&#39; não é uma situação de evento",
            "is not a status",
        ),
        (
            "/trips?state=lost",
            "&#39;lost&#39; não é uma situação de viagem",
            "is not a trip state",
        ),
        (
            "/dashboard?to=soon",
            "&#39;soon&#39; não é uma data",
            "expected an ISO 8601 date",
        ),
    ] {
        let r = page_in(&s, path, Some("pt"));
        assert_eq!(r.status, 400, "{path}: {}", r.body);
        has(
            path,
            &r.body,
            &[want, "Pedido inválido"],
            &[english, "Bad Request"],
        );
    }
}
