//! The station pages and the printed field sheet in Portuguese: the station
//! page and the paper entry page by the browser's `Accept-Language: pt`, and
//! a sheet issued from the command line's path in the organisation's default
//! language (`[organisation] default_language = "pt"` in settings.toml).
//! The expected words are our own catalogue's (`templates/i18n/pt/*.ftl`).

use groundproof::domain::LonLat;
use groundproof::planning::{TripRequest, issue_bundle};
use groundproof::platform::settings::Settings;
use groundproof_e2e::{TestServer, load_scenario, page_in};
use std::io::Read;

/// GET with the admin token and `Accept-Language: pt`: (status, body).
fn page_pt(s: &TestServer, path: &str) -> (u16, String) {
    let r = page_in(s, path, Some("pt"));
    (r.status, r.body)
}

/// The field sheet inside the bundle's ZIP.
fn sheet_of(zip_path: &std::path::Path) -> String {
    let file = std::fs::File::open(zip_path).expect("bundle file");
    let mut zip = zip::ZipArchive::new(file).expect("a ZIP");
    let mut entry = zip
        .by_name("extras/field-sheet.html")
        .expect("the bundle holds its field sheet");
    let mut html = String::new();
    entry.read_to_string(&mut html).expect("UTF-8");
    html
}

#[test]
fn station_pages_and_field_sheet_in_portuguese() {
    let s = TestServer::start();
    load_scenario(&s);
    std::fs::write(
        s.data_dir().join("settings.toml"),
        "[organisation]\ndefault_language = \"pt\"\n",
    )
    .unwrap();
    let settings = Settings::load(s.data_dir()).expect("settings read");
    assert_eq!(settings.organisation.default_language, "pt");
    let scenario = mock_patrols::scenario();
    let (lon, lat) = scenario.station;
    let req = TripRequest {
        zone: Some("Core".into()),
        max: Some(2),
        ..TripRequest::response(&scenario.teams[0], LonLat::new(lon, lat).unwrap())
    };
    let out = issue_bundle(&s.db, &s.data_path(), &settings, &req).expect("issued");

    let sheet = sheet_of(&out.path);
    assert!(sheet.contains("<html lang=\"pt\">"), "{sheet}");
    for words in [
        "Ficha de campo",
        "Segurança em primeiro lugar",
        "Não se aproxime de operações em andamento",
        "Fotos de pessoas precisam do consentimento delas",
        "Posição observada (lat, lon)",
        "Há desmatamento",
        "Alarme falso",
    ] {
        assert!(sheet.contains(words), "sheet lacks {words:?}");
    }
    assert!(!sheet.contains("Safety first"), "sheet still in English");

    let (status, body) = page_pt(&s, "/station");
    assert_eq!(status, 200, "{body}");
    for words in [
        "Recebimento na estação",
        "Enviar um pacote de retorno",
        "Lançar uma viagem a partir da ficha de papel e da câmera",
    ] {
        assert!(body.contains(words), "station page lacks {words:?}");
    }
    let id = &out.bundle.id;
    let (status, body) = page_pt(&s, &format!("/station/trips/{id}"));
    assert_eq!(status, 200, "{body}");
    for words in [
        "1. As fotos da câmera",
        "Salvar os relatos",
        "Há desmatamento",
    ] {
        assert!(body.contains(words), "entry page lacks {words:?}");
    }
}
