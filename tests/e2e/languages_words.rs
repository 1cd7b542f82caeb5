//! The sentences the figures pages build from numbers, and the words inside
//! their SVG charts, in Portuguese (`Accept-Language: pt`): the targets,
//! the time-to-visit notes, the charts' titles, axes, legends, notes and
//! tooltips, the causes, a dispute's status note and report cards, and the
//! events map's title and legend. The words are those
//! of `templates/i18n/pt/pages.ftl`, block "figures' sentences and chart
//! words". English stays as the other tests expect.

use groundproof_e2e::{
    TestServer, admin_token, get, get_bytes, load_scenario, post_bytes, post_json,
};
use serde_json::json;

/// A page as the admin, in `lang` (None: no Accept-Language): the body of a 200.
fn page(s: &TestServer, path: &str, lang: Option<&str>) -> String {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .build()
        .into();
    let mut r = agent
        .get(&s.url(path))
        .header("Authorization", format!("Bearer {}", admin_token(s)));
    if let Some(l) = lang {
        r = r.header("Accept-Language", l);
    }
    let mut r = r.call().expect("request reaches the server");
    let status = r.status().as_u16();
    let body = r.body_mut().read_to_string().unwrap_or_default();
    assert_eq!(status, 200, "{path}: {body}");
    body
}

/// Alerts, one trip to the core zone and its returns, two of whose
/// reports disagree on one event (a dispute).
fn with_visits_and_a_dispute(s: &TestServer) {
    load_scenario(s);
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 8,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let link = r.json()["download"]
        .as_str()
        .expect("a download link")
        .to_string();
    let (status, bytes) = get_bytes(&s.url(&link));
    assert_eq!(status, 200);
    let work = tempfile::tempdir().expect("temp dir");
    let bundle = work.path().join("bundle.zip");
    std::fs::write(&bundle, &bytes).expect("bundle written");
    let plan = mock_patrols::field::TripPlan {
        disputed_pair: true,
        ..Default::default()
    };
    let trip =
        mock_patrols::field::make_trip_return(&bundle, &work.path().join("field"), &plan, 11)
            .expect("the field kit records the trip");
    for ret in &trip.returns {
        let zip = std::fs::read(&ret.zip).expect("return read");
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
