//! Browser test of the printable summary: a manager opens `/summary` for a
//! period and zone in headless Chromium, the page shows the same headline
//! figures as the statistics API, and the browser prints it to PDF on A4
//! (WebDriver's Print Page, as the browser's print): a PDF with one page
//! per section. Chromium compresses the PDF's text streams, so the figures
//! are checked in the printed page's text and the PDF is checked for its
//! pages and paper size.

use super::webdriver::Browser;
use super::{assert_clean, log_in, password_of};
use groundproof::demo::{load, run_trips};
use groundproof::platform::settings::Settings;
use groundproof_e2e::TestServer;

/// Page objects of a PDF ("/Type /Page", not "/Pages"), and the first
/// MediaBox, read from the uncompressed object dictionaries Chromium writes.
fn pdf_pages(pdf: &[u8]) -> (usize, Option<String>) {
    let text = String::from_utf8_lossy(pdf);
    let pages = text
        .match_indices("/Type /Page")
        .filter(|(i, _)| !text[i + 11..].starts_with('s'))
        .count();
    let media = text.find("/MediaBox [").map(|i| {
        let rest = &text[i + 11..];
        rest[..rest.find(']').unwrap_or(0)].trim().to_string()
    });
    (pages, media)
}

#[test]
fn the_summary_prints_one_a4_page_per_section_with_the_figures() {
    let Some(b) = Browser::start_or_skip() else {
        return;
    };
    let s = TestServer::start();
    let work = tempfile::tempdir().expect("work folder");
    let summary = load(&s.db, s.data_dir(), &Settings::default()).expect("demo loads");
    run_trips(&s.db, &summary, &work.path().join("demo"), &s.url("")).expect("demo trips");

    b.goto(&s.url("/dashboard"));
    log_in(&b, "manager", password_of("manager"));
    b.goto(&s.url("/dashboard"));
    b.click_to_navigate("a[href^=\"/summary\"]");
    assert!(b.current_url().contains("/summary"), "{}", b.current_url());
    b.goto(&s.url("/summary?zone=Core"));
    assert_clean(&b, "summary");
    let text = b.text("main, body");
    assert!(text.contains("Summary: Core, all dates"), "{text}");

    // The headline figures are the API's (same selection, a manager's session).
    let events = b
        .script("return document.querySelector('#headline .numbers strong').textContent;")
        .as_str()
        .unwrap_or_default()
        .to_string();
    let rate = b.text("#headline .rate");
    for needle in [
        events.as_str(),
        "events",
        "from detection",
        "from issue",
        "Wilson 95%",
    ] {
        assert!(text.contains(needle), "summary lacks {needle:?}: {text}");
    }
    assert!(rate.contains("Wilson 95%"), "{rate}");
    let api = |path: &str| -> serde_json::Value {
        serde_json::from_slice(&super::download_with_session(&b, &s, path)).expect("JSON")
    };
    let all = |v: &serde_json::Value, key: &str| {
        v[key]
            .as_array()
            .and_then(|g| g.iter().find(|g| g["key"] == "all"))
            .map(|g| g["rows"][0].clone())
            .expect("the 'all' row")
    };
    let coverage = all(&api("/api/v1/stats/coverage?zone=Core"), "coverage");
    assert_eq!(
        events,
        coverage["events"].to_string(),
        "events as the API counts them"
    );
    let conf = all(&api("/api/v1/stats/confirmation?zone=Core"), "confirmation");
    let of = format!(
        "{} of {}",
        conf["rate"]["successes"], conf["rate"]["trials"]
    );
    assert!(
        rate.contains(&of),
        "the rate's counts are the API's: {rate} vs {of}"
    );
    // Four sections, each with its charts or table.
    assert_eq!(b.find_all("section.sheet").len(), 4);
    assert_eq!(b.find_all("#charts svg").len(), 2);
    assert_eq!(b.find_all("#trends svg").len(), 3);
    assert!(!b.find_all("#teams tbody tr").is_empty());

    // Print it: a PDF, A4 (595 × 842 pt, ISO 216 at 72 pt per inch), one
    // page per section.
    let pdf = b.print_pdf();
    assert!(pdf.starts_with(b"%PDF-"), "a PDF");
    let out = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("summary.pdf");
    std::fs::write(&out, &pdf).expect("PDF saved");
    println!("printed: {} ({} bytes)", out.display(), pdf.len());
    let (pages, media) = pdf_pages(&pdf);
    assert_eq!(pages, 4, "one A4 page per section");
    let media = media.expect("a MediaBox");
    let dims: Vec<f64> = media
        .split_whitespace()
        .filter_map(|v| v.parse().ok())
        .collect();
    assert!(
        dims.len() == 4 && (dims[2] - 595.0).abs() < 2.0 && (dims[3] - 842.0).abs() < 2.0,
        "A4 paper: {media}"
    );
}
