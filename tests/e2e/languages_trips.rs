//! The trips list, a trip page, the events list and an event page in Portuguese
//! (`Accept-Language: pt`, issue 13), and the event page naming alert
//! confidence "high"/"low", never "confirmed"/"tentative" (issue 14).
//! The Portuguese words are this project's own catalogue
//! (`templates/i18n/pt/pages.ftl`).

use groundproof_e2e::{TestServer, load_scenario};
use serde_json::json;

/// GET as the admin with an optional Accept-Language: (status, body).
fn page(s: &TestServer, path: &str, lang: Option<&str>) -> (u16, String) {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .build()
        .into();
    let token = groundproof_e2e::admin_token(s);
    let mut r = agent
        .get(&s.url(path))
        .header("Authorization", format!("Bearer {token}"));
    if let Some(l) = lang {
        r = r.header("Accept-Language", l);
    }
    let mut r = r.call().expect("request reaches the server");
    let status = r.status().as_u16();
    (status, r.body_mut().read_to_string().unwrap_or_default())
}

/// A trip of three Core events issued through the API; its id.
fn issue(s: &TestServer) -> String {
    let (lon, lat) = mock_patrols::scenario().station;
    let r = groundproof_e2e::post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": "Team Amber", "zone": "Core", "max": 3, "start": {"lat": lat, "lon": lon}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    r.json()["bundle"]["bundle"]["id"]
        .as_str()
        .unwrap()
        .to_string()
}

fn assert_has(what: &str, body: &str, words: &[&str]) {
    for w in words {
        assert!(body.contains(w), "{what} lacks {w:?}");
    }
}

#[test]
fn trips_trip_and_event_pages_speak_portuguese_and_name_confidence_high_or_low() {
    let s = TestServer::start();
    load_scenario(&s);
    let id = issue(&s);

    let (status, list) = page(&s, "/trips", Some("pt-BR,pt;q=0.9,en;q=0.5"));
    assert_eq!(status, 200, "{list}");
    assert_has(
        "trips list (pt)",
        &list,
        &[
            "Viagens",
            "Emitir um pacote",
            "Maior confiança do alerta",
            ">alta</option>",
            "emitida",
        ],
    );
    assert!(!list.contains("Issue a bundle"), "no English heading left");

    let (status, trip) = page(&s, &format!("/trips/{id}"), Some("pt"));
    assert_eq!(status, 200, "{trip}");
    assert_has(
        "trip page (pt)",
        &trip,
        &[
            "Paradas na ordem da visita",
            "Devoluções recebidas (0)",
            ">evento<",
            "Situação",
        ],
    );
    assert!(
        !trip.contains("Stops in visit order"),
        "no English heading left"
    );

    let at = trip
        .find("href=\"/events/")
        .expect("the trip links its events")
        + 14;
    let event: String = trip[at..]
        .chars()
        .take_while(char::is_ascii_digit)
        .collect();
    let (status, pt) = page(&s, &format!("/events/{event}"), Some("pt"));
    assert_eq!(status, 200, "{pt}");
    assert_has(
        "event page (pt)",
        &pt,
        &["Maior confiança do alerta", "Dados", "Prioridade hoje"],
    );

    let (status, list) = page(&s, "/events", Some("pt"));
    assert_eq!(status, 200, "{list}");
    assert_has(
        "events list (pt)",
        &list,
        &[
            "Eventos em ordem de prioridade",
            "Confiança do alerta",
            "qualquer situação",
        ],
    );

    let (_, en) = page(&s, &format!("/events/{event}"), None);
    assert_has(
        "event page (en)",
        &en,
        &["Highest alert confidence", "Alert confidence"],
    );
    let level = |body: &str| {
        let at = body
            .find("Highest alert confidence</dt><dd>")
            .map(|i| i + 33);
        at.map(|i| body[i..].split('<').next().unwrap_or("").to_string())
    };
    let shown = level(&en).expect("the event shows its highest confidence");
    assert!(
        shown == "high" || shown == "low",
        "confidence level {shown:?}"
    );
    for word in [
        "<td>confirmed</td>",
        "<td>tentative</td>",
        "<dd>confirmed</dd>",
        "<dd>tentative</dd>",
    ] {
        assert!(!en.contains(word), "alert confidence shown as {word}");
    }
}

/// The preview page and its map's label in Portuguese (issue 13), from the
/// project's own catalogue; English stays the default.
#[test]
fn the_preview_speaks_portuguese() {
    let s = TestServer::start();
    load_scenario(&s);
    let (lon, lat) = mock_patrols::scenario().station;
    let form = format!(
        "team=Team+Amber&mode=response&zone=Core&max=3&start_lat={lat}&start_lon={lon}&walking_kmh=2.5&due_days=5"
    );
    let post = |lang: Option<&str>| {
        let agent: ureq::Agent = ureq::Agent::config_builder()
            .http_status_as_error(false)
            .build()
            .into();
        let token = groundproof_e2e::admin_token(&s);
        let mut r = agent
            .post(&s.url("/trips/preview"))
            .header("Authorization", format!("Bearer {token}"))
            .header("Content-Type", "application/x-www-form-urlencoded");
        if let Some(l) = lang {
            r = r.header("Accept-Language", l);
        }
        let mut r = r.send(form.as_bytes()).expect("request reaches the server");
        let status = r.status().as_u16();
        (status, r.body_mut().read_to_string().unwrap_or_default())
    };
    let (status, pt) = post(Some("pt"));
    assert_eq!(status, 200, "{pt}");
    assert_has(
        "preview (pt)",
        &pt,
        &[
            "Prévia da viagem para Team Amber",
            "Emitir esta viagem",
            "Atualizar a prévia",
            "km em linha reta",
            "mapa para arrastar e aproximar",
        ],
    );
    assert!(!pt.contains("Issue this trip"), "no English button left");
    let (status, en) = post(None);
    assert_eq!(status, 200, "{en}");
    assert_has(
        "preview (en)",
        &en,
        &["Trip preview for Team Amber", "Issue this trip"],
    );
}
