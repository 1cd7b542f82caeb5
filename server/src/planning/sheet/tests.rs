//! Tests of the whole sheet and of whole previews: the HTML parses, holds one card per event
//! and per control point with the coordinates that `crate::planning::coords` computes, puts the safety
//! cautions first and refers to nothing outside itself; the previews decode to the requested
//! size with the marker, background, outline and source colours where they belong.

use chrono::{TimeZone, Utc};
use geo::{MultiPolygon, Point, polygon};
use groundproof_sync::bundle::{
    BundleEvent, BundleHeader, Checklist, ControlPoint, MODE_ASSESSMENT, StartPoint,
};
use scraper::{ElementRef, Html, Selector};

use super::palette::SOURCE_COLOURS;
use super::preview::{BACKGROUND, INK, MARKER, OUTLINE, fit_view};
use super::*;
use crate::planning::coords::{MgrsPrecision, format_dd, group_mgrs, to_mgrs, to_utm};

/// Metres to degrees of latitude on the mean sphere (R = 6 371 008.8 m, GRS 80 R₁).
fn dlat(m: f64) -> f64 {
    m / (preview::EARTH_MEAN_RADIUS_M * std::f64::consts::PI / 180.0)
}

/// Metres to degrees of longitude at `lat`.
fn dlon(m: f64, lat: f64) -> f64 {
    dlat(m) / lat.to_radians().cos()
}

/// An invented event: a 200 m × 200 m square footprint around (lon, lat).
fn event(code: &str, order: u32, lon: f64, lat: f64, sources: &[&str]) -> BundleEvent {
    let (a, b) = (dlon(100.0, lat), dlat(100.0));
    BundleEvent {
        code: code.into(),
        event_id: i64::from(order),
        footprint: MultiPolygon::new(vec![polygon![
            (x: lon - a, y: lat - b),
            (x: lon + a, y: lat - b),
            (x: lon + a, y: lat + b),
            (x: lon - a, y: lat + b),
            (x: lon - a, y: lat - b),
        ]]),
        centroid: Point::new(lon, lat),
        area_ha: 4.0,
        first_detected: "2026-10-02".into(),
        last_detected: "2026-10-20".into(),
        sources: sources.iter().map(|s| (*s).to_owned()).collect(),
        confidence: "confirmed".into(),
        corroborated: sources.len() > 1,
        priority: 1.0,
        visit_order: order,
        inclusion_probability: Some(0.25),
        stratum: Some("optical-10m|confirmed".into()),
    }
}

/// Alert pixels of 10 m on a 60 m grid inside the footprint, alternating two sources.
fn pixels(e: &BundleEvent) -> Vec<PreviewPixel> {
    let (lon, lat) = (e.centroid.x(), e.centroid.y());
    let mut out = Vec::new();
    for i in -1i32..=1 {
        for j in -1i32..=1 {
            if i == 0 && j == 0 {
                continue;
            }
            out.push(PreviewPixel {
                lon: lon + dlon(60.0 * f64::from(i), lat),
                lat: lat + dlat(60.0 * f64::from(j)),
                size_m: 10.0,
                source: e.sources[usize::from((i + j).rem_euclid(2) == 1) % e.sources.len()]
                    .clone(),
            });
        }
    }
    out
}

fn input() -> SheetInput {
    let events = vec![
        // Given out of visit order on purpose.
        event("K0417", 3, -60.025, -3.1, &["optical-10m", "radar-10m"]),
        event("K0020", 1, -60.04, -3.08, &["optical-10m"]),
        event("M0101", 2, -59.99, -3.12, &["optical-30m"]),
    ];
    let palette = SourcePalette::for_events(&events);
    let events = events
        .into_iter()
        .map(|e| {
            let png = render_preview_with_palette(&e, &pixels(&e), 240, &palette).expect("renders");
            SheetEvent {
                event: e,
                preview_png: png,
            }
        })
        .collect();
    SheetInput {
        header: BundleHeader {
            bundle_id: uuid::Uuid::from_u128(0x1234),
            team: "east-2".into(),
            mode: MODE_ASSESSMENT.into(),
            issued_at: Utc
                .with_ymd_and_hms(2026, 11, 1, 6, 0, 0)
                .single()
                .expect("date"),
            due_at: Utc
                .with_ymd_and_hms(2026, 11, 5, 18, 0, 0)
                .single()
                .expect("date"),
            expires_at: Utc
                .with_ymd_and_hms(2026, 11, 30, 0, 0, 0)
                .single()
                .expect("date"),
            upload_key_id: "key-1".into(),
            seed: Some(42),
            camera_zone: None,
        },
        reserve: "Lower Verdant Reserve".into(),
        team_label: "East team 2 <field>".into(),
        start: StartPoint {
            name: "Riverbend post".into(),
            point: Point::new(-60.05, -3.05),
        },
        events,
        controls: vec![
            ControlPoint {
                code: "C0002".into(),
                point: Point::new(-60.0, -3.2),
                visit_order: 5,
                inclusion_probability: Some(0.1),
            },
            ControlPoint {
                code: "C0001".into(),
                point: Point::new(-60.01, -3.15),
                visit_order: 4,
                inclusion_probability: Some(0.1),
            },
        ],
        legs: vec![
            RouteLeg {
                stop: 1,
                code: "K0020".into(),
                leg_km: 3.51,
            },
            RouteLeg {
                stop: 2,
                code: "M0101".into(),
                leg_km: 6.02,
            },
            RouteLeg {
                stop: 3,
                code: "K0417".into(),
                leg_km: 3.63,
            },
            RouteLeg {
                stop: 4,
                code: "C0001".into(),
                leg_km: 5.33,
            },
            RouteLeg {
                stop: 5,
                code: "C0002".into(),
                leg_km: 5.6,
            },
        ],
        checklist: Checklist::default_v1(),
        palette,
        zone: crate::domain::OrgZone::UTC,
        tr: crate::platform::i18n::Tr::default(),
    }
}

fn sel(s: &str) -> Selector {
    Selector::parse(s).expect("valid selector")
}

fn text(e: ElementRef<'_>, s: &str) -> String {
    e.select(&sel(s))
        .next()
        .map(|x| x.text().collect::<String>())
        .unwrap_or_default()
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

/// Checks a card's DD, UTM and MGRS against `crate::planning::coords`.
fn check_position(card: ElementRef<'_>, lon: f64, lat: f64) {
    assert_eq!(text(card, ".dd"), format_dd(lat, lon));
    let utm = to_utm(lat, lon).expect("inside the UTM band");
    assert_eq!(text(card, ".utm-zone"), format!("{:02}", utm.zone));
    let hemi = match utm.hemisphere {
        crate::planning::coords::Hemisphere::North => "north",
        crate::planning::coords::Hemisphere::South => "south",
    };
    assert_eq!(text(card, ".utm-hemisphere"), hemi);
    // Whole metres, truncated like MGRS (see `view::UtmText`).
    assert_eq!(
        text(card, ".utm-easting"),
        format!("{:.0}", utm.easting.floor())
    );
    assert_eq!(
        text(card, ".utm-northing"),
        format!("{:.0}", utm.northing.floor())
    );
    let mgrs = to_mgrs(lat, lon, MgrsPrecision::ONE_METRE).expect("inside the UTM band");
    assert_eq!(text(card, ".mgrs"), group_mgrs(&mgrs));
}

#[test]
fn sheet_parses_with_one_card_per_event_and_control() {
    let input = input();
    let html = render_field_sheet(&input).expect("renders");
    let doc = Html::parse_document(&html);
    assert!(doc.errors.is_empty(), "HTML parse errors: {:?}", doc.errors);

    let cards: Vec<ElementRef<'_>> = doc.select(&sel("article.card.event")).collect();
    assert_eq!(cards.len(), input.events.len());
    // Visit order 1, 2, 3, whatever the input order.
    let codes: Vec<&str> = cards
        .iter()
        .filter_map(|c| c.value().attr("data-code"))
        .collect();
    assert_eq!(codes, ["K0020", "M0101", "K0417"]);
    for card in &cards {
        let code = card.value().attr("data-code").expect("data-code");
        let e = &input
            .events
            .iter()
            .find(|e| e.event.code == code)
            .expect("known code")
            .event;
        assert_eq!(text(*card, ".code"), code);
        check_position(*card, e.centroid.x(), e.centroid.y());
        assert_eq!(text(*card, ".area"), "4.00 ha");
        assert_eq!(text(*card, ".dates"), "2026-10-02 to 2026-10-20");
        for s in &e.sources {
            assert!(text(*card, ".sources").contains(s.as_str()));
        }
        let img = card.select(&sel("img.preview")).next().expect("preview");
        assert!(
            img.value()
                .attr("src")
                .is_some_and(|s| s.starts_with("data:image/png;base64,"))
        );
        // Tick boxes: 4 outcomes + 5 + 3 reasons + 9 causes (DESIGN.md "Outcomes of a
        // visit") + photos + position.
        assert_eq!(card.select(&sel(".box")).count(), 4 + 5 + 3 + 9 + 2);
        assert!(text(*card, ".checklist").contains("photos taken (min 2)"));
        assert!(text(*card, ".checklist").contains("position recorded"));
    }

    let controls: Vec<ElementRef<'_>> = doc.select(&sel("article.card.control")).collect();
    assert_eq!(controls.len(), input.controls.len());
    let codes: Vec<&str> = controls
        .iter()
        .filter_map(|c| c.value().attr("data-code"))
        .collect();
    assert_eq!(codes, ["C0001", "C0002"]);
    for card in &controls {
        let code = card.value().attr("data-code").expect("data-code");
        let c = input
            .controls
            .iter()
            .find(|c| c.code == code)
            .expect("known code");
        assert_eq!(text(*card, ".code"), code);
        check_position(*card, c.point.x(), c.point.y());
    }
    assert_eq!(doc.select(&sel("article.card")).count(), 5);

    // Start point and route table.
    let route = doc.select(&sel("#route")).next().expect("route section");
    check_position(route, -60.05, -3.05);
    let rows: Vec<String> = route
        .select(&sel("table.route tbody tr"))
        .map(|r| r.text().collect::<Vec<_>>().join("|"))
        .collect();
    assert_eq!(rows.len(), 5);
    assert_eq!(rows[0], "1|K0020|3.5 km");
    // 3.51 + 6.02 + 3.63 + 5.33 + 5.6 = 24.09 km.
    assert_eq!(text(route, "tfoot td.num"), "24.1 km");
}

// Check values: `Etc/GMT+4` is four hours behind UTC (IANA tz database,
// file `etcetera`, POSIX sign); due 2026-11-05 18:00 UTC is 14:00 there.
#[test]
fn the_sheet_shows_times_in_the_organisations_zone() {
    let utc = render_field_sheet(&input()).expect("renders");
    assert!(utc.contains("2026-11-05 18:00 (UTC+00:00)"), "due in UTC");
    let mut local = input();
    local.zone = crate::domain::OrgZone::parse("Etc/GMT+4").expect("zone");
    let html = render_field_sheet(&local).expect("renders");
    assert!(html.contains("2026-11-05 14:00 (UTC-04:00)"), "due, local");
    assert!(
        html.contains("2026-11-01 02:00 (UTC-04:00)"),
        "issued, local"
    );
    assert!(!html.contains("18:00 (UTC"), "no UTC time left");
}

#[test]
fn cautions_come_first() {
    let html = render_field_sheet(&input()).expect("renders");
    let doc = Html::parse_document(&html);
    let body = doc.select(&sel("body")).next().expect("body");
    let first = body
        .children()
        .filter_map(ElementRef::wrap)
        .next()
        .expect("body has elements");
    assert_eq!(first.value().attr("class"), Some("cautions"));
    let t = first.text().collect::<String>();
    for phrase in [
        "Do not approach active operations",
        "armed people",
        "safety protocol and local law",
        "Photos of people need their consent",
        "Evidence handling for legal cases follows local rules and licensed practice",
    ] {
        assert!(t.contains(phrase), "cautions lack {phrase:?}");
    }
    let cautions_at = html.find("class=\"cautions\"").expect("cautions");
    let first_card = html.find("class=\"card").expect("cards");
    assert!(cautions_at < first_card);
}

/// UTM and MGRS metres on the sheet are truncated (MGRS names the square that holds the point,
/// NGA.SIG.0012; the UTM text truncates the same way so the digits agree), and the sheet says so
/// beside each, so a reader does not take them for rounded values.
#[test]
fn the_sheet_says_its_metres_are_truncated() {
    let html = render_field_sheet(&input()).expect("renders");
    let doc = Html::parse_document(&html);
    let labels: Vec<String> = doc
        .select(&sel("dt"))
        .map(|e| e.text().collect::<String>())
        .collect();
    assert!(
        labels
            .iter()
            .any(|l| l.starts_with("UTM") && l.contains("truncated")),
        "{labels:?}"
    );
    assert!(
        labels
            .iter()
            .any(|l| l.starts_with("MGRS") && l.contains("truncated")),
        "{labels:?}"
    );
}

#[test]
fn sheet_is_self_contained_and_escaped() {
    let html = render_field_sheet(&input()).expect("renders");
    assert!(!html.contains("http://") && !html.contains("https://"));
    assert!(!html.contains("<link") && !html.contains("@import") && !html.contains("url("));
    assert!(!html.contains("<script"));
    let doc = Html::parse_document(&html);
    for img in doc.select(&sel("img")) {
        let src = img.value().attr("src").unwrap_or_default();
        assert!(src.starts_with("data:image/png;base64,"), "{src:.40}");
    }
    // The team label "<field>" is text, not markup (askama escapes .html templates).
    assert!(html.contains("East team 2 &#60;field&#62;"));
    assert!(html.contains("break-inside: avoid"));
    assert!(html.contains("@page"));
}

#[test]
fn bad_input_is_refused() {
    let mut i = input();
    i.events[0].event.code = "k417".into();
    assert!(matches!(
        render_field_sheet(&i),
        Err(SheetError::InvalidInput(_))
    ));
    let mut i = input();
    i.legs[1].leg_km = -1.0;
    assert!(matches!(
        render_field_sheet(&i),
        Err(SheetError::InvalidInput(_))
    ));
    let mut i = input();
    i.legs[1].leg_km = f64::NAN;
    assert!(render_field_sheet(&i).is_err());
    let mut i = input();
    i.events[0].preview_png = b"<svg onload=x>".to_vec();
    assert!(matches!(
        render_field_sheet(&i),
        Err(SheetError::InvalidInput(_))
    ));
    let mut i = input();
    i.controls[0].code = "C00001".into();
    assert!(render_field_sheet(&i).is_err());
    // No preview is allowed and says so.
    let mut i = input();
    i.events[0].preview_png.clear();
    let html = render_field_sheet(&i).expect("renders");
    assert!(html.contains("No preview."));
}

fn decode(png: &[u8]) -> image::RgbImage {
    image::load_from_memory_with_format(png, image::ImageFormat::Png)
        .expect("a PNG")
        .to_rgb8()
}

#[test]
fn preview_marks_centroid_outline_pixels_and_background() {
    let e = event("K0417", 1, -60.025, -3.1, &["optical-10m", "radar-10m"]);
    let px = pixels(&e);
    let size = 320;
    let png = render_preview(&e, &px, size).expect("renders");
    let img = decode(&png);
    assert_eq!(img.dimensions(), (size, size));
    // Centroid at the image centre carries the marker colour.
    assert_eq!(img.get_pixel(size / 2, size / 2).0, MARKER);
    // Far from the footprint (left edge, mid height, inside the frame): background.
    assert_eq!(img.get_pixel(4, size / 2).0, BACKGROUND);

    let view = fit_view(&e, &px, size);
    // The footprint reaches 100 m, the alert pixels 65 m: the half-width is 125 m
    // (MARGIN_FACTOR 1.25), so 250 m / 320 px = 0.78125 m per pixel.
    assert!((view.metres_per_px() - 0.781_25).abs() < 1e-9);
    // West edge of the footprint at row of the centroid: outline colour.
    let (wx, wy) = view.to_px(e.footprint.0[0].exterior().0[0].x, e.centroid.y());
    assert_eq!(
        img.get_pixel(wx.floor() as u32, wy.floor() as u32).0,
        OUTLINE
    );
    // Centre of the alert pixel 60 m east and 60 m north: its source's colour or tint.
    let palette = SourcePalette::new(&e.sources);
    for p in &px {
        let (x, y) = view.to_px(p.lon, p.lat);
        let (x, y) = (x.floor() as i64, y.floor() as i64);
        let style = palette.style(&p.source);
        let got = img.get_pixel(x as u32, y as u32).0;
        assert_eq!(got, style.paint(x, y), "{}", p.source);
        // In this two-source palette optical-10m is first (blue) and radar-10m second
        // (orange), Okabe-Ito order as in Wong 2011.
        let expect = if p.source == "optical-10m" {
            SOURCE_COLOURS[0]
        } else {
            SOURCE_COLOURS[1]
        };
        assert_eq!(style.colour, expect);
    }
    // North arrow (top right) and scale bar (bottom left) are drawn in ink.
    let inked = |x0: u32, y0: u32, x1: u32, y1: u32| {
        (y0..y1).any(|y| (x0..x1).any(|x| img.get_pixel(x, y).0 == INK))
    };
    assert!(inked(size - 40, 0, size, 50), "north arrow");
    assert!(inked(0, size - 40, 120, size), "scale bar");
    // Same input, same bytes.
    assert_eq!(png, render_preview(&e, &px, size).expect("renders"));
}

#[test]
fn preview_refuses_bad_sizes_and_skips_bad_pixels() {
    let e = event("K0417", 1, -60.025, -3.1, &["optical-10m"]);
    assert!(render_preview(&e, &[], 10).is_err());
    assert!(render_preview(&e, &[], 100_000).is_err());
    let junk = vec![
        PreviewPixel {
            lon: f64::NAN,
            lat: 0.0,
            size_m: 10.0,
            source: "x".into(),
        },
        PreviewPixel {
            lon: 170.0,
            lat: 80.0,
            size_m: f64::INFINITY,
            source: "x".into(),
        },
        PreviewPixel {
            lon: -60.025,
            lat: -3.1,
            size_m: -5.0,
            source: "optical-10m".into(),
        },
    ];
    let img = decode(&render_preview(&e, &junk, 64).expect("renders"));
    assert_eq!(img.dimensions(), (64, 64));
    let mut bad = e.clone();
    bad.centroid = Point::new(f64::NAN, 0.0);
    assert!(render_preview(&bad, &[], 64).is_err());
}

/// Issue 13: every stop card (events and control points) has room for what
/// the station enters from paper (observed position, time, photo numbers,
/// observer) and names the sheet the operator copies back.
#[test]
fn every_stop_card_has_room_for_the_station_entry() {
    let inp = input();
    let html = render_field_sheet(&inp).expect("renders");
    let doc = Html::parse_document(&html);
    let id = crate::domain::sheet::sheet_id(&inp.header.bundle_id.to_string());
    assert_eq!(text(doc.root_element(), ".meta .sheet-id"), id);
    let cards: Vec<ElementRef<'_>> = doc.select(&sel("article.card")).collect();
    assert_eq!(cards.len(), inp.events.len() + inp.controls.len());
    for card in cards {
        let labels: Vec<String> = card
            .select(&sel(".record-label"))
            .map(|e| e.text().collect())
            .collect();
        for want in [
            "Observed position (lat, lon)",
            "Date and time (local)",
            "Photo numbers",
            "Observer",
            "Sheet",
        ] {
            assert!(labels.iter().any(|l| l == want), "{want} in {labels:?}");
        }
        assert_eq!(text(card, ".record-sheet"), id);
    }
}

#[test]
fn control_cards_ask_for_their_own_outcomes_from_checklist_2() {
    let mut i = input();
    i.checklist = Checklist::default_v2();
    let html = render_field_sheet(&i).expect("renders");
    let doc = Html::parse_document(&html);
    let cards: Vec<ElementRef<'_>> = doc.select(&sel("article.card.control")).collect();
    assert_eq!(cards.len(), 2);
    for card in &cards {
        let t = text(*card, ".checklist");
        // The outcomes in the field app's words (templates/i18n/en/field.ftl).
        for word in [
            "No clearing here",
            "Clearing found (no alert here)",
            "If clearing found, cause",
            "estimated area",
            "If not reached",
        ] {
            assert!(t.contains(word), "{word:?} missing from {t:?}");
        }
        assert!(!t.contains("False alarm"), "{t:?}");
        // The name the bundle's GPX gives the control point's waypoint.
        let code = card.value().attr("data-code").expect("code");
        let want = groundproof_sync::bundle::control_waypoint_name(&i.header.bundle_id, code);
        assert_eq!(text(*card, ".gps-name .mono"), want);
        // Tick boxes: 4 control outcomes + 9 causes (DESIGN.md) + 3 not-reached
        // reasons + photos + position.
        assert_eq!(card.select(&sel(".box")).count(), 4 + 9 + 3 + 2);
    }
    // The event cards keep the event outcomes.
    let ev = doc
        .select(&sel("article.card.event"))
        .next()
        .expect("event");
    assert!(text(ev, ".checklist").contains("False alarm"));
    // A checklist 1 trip's control card is as it was: the event outcomes.
    let v1 = render_field_sheet(&input()).expect("renders");
    let doc = Html::parse_document(&v1);
    let card = doc
        .select(&sel("article.card.control"))
        .next()
        .expect("card");
    assert!(text(card, ".checklist").contains("False alarm"));
    assert_eq!(card.select(&sel(".box")).count(), 4 + 2);
}

/// The sheet in the coordinator's language: Portuguese words from our own
/// catalogue (templates/i18n/pt/*.ftl), the safety cautions first and
/// translated, no English caution left.
#[test]
fn the_sheet_speaks_the_issuers_language() {
    let mut i = input();
    i.tr = crate::platform::i18n::Tr::new("pt");
    let html = render_field_sheet(&i).expect("renders");
    let doc = Html::parse_document(&html);
    let cautions = text(doc.root_element(), "section.cautions");
    assert!(
        cautions.contains("Segurança em primeiro lugar"),
        "{cautions}"
    );
    assert!(cautions.contains("Não se aproxime"), "{cautions}");
    assert!(!html.contains("Safety first"));
    assert!(html.contains("<html lang=\"pt\">"));
    assert!(html.contains("Alarme falso"));
}

/// Alert confidence reads "high" or "low" on the sheet, in the card's header
/// and in its stratum: "confirmed" is only ever a visit's outcome (issue 14).
#[test]
fn the_sheet_says_high_or_low_alert_confidence() {
    let mut i = input();
    i.events[1].event.confidence = "tentative".into();
    i.events[1].event.stratum = Some("radar-10m|tentative".into());
    let html = render_field_sheet(&i).expect("renders");
    let doc = Html::parse_document(&html);
    let levels: Vec<String> = doc
        .select(&sel("article.card.event .confidence"))
        .map(|c| c.text().collect())
        .collect();
    assert_eq!(levels.len(), 3);
    assert!(
        levels
            .iter()
            .all(|l| l == "Alert confidence: high" || l == "Alert confidence: low"),
        "{levels:?}"
    );
    assert_eq!(levels.iter().filter(|l| l.ends_with("low")).count(), 1);
    for card in doc.select(&sel("article.card.event")) {
        let facts = text(card, ".facts-list");
        assert!(facts.contains("· Alert confidence: "), "{facts}");
        assert!(
            !facts.contains("confirmed") && !facts.contains("tentative"),
            "{facts}"
        );
    }
    i.tr = crate::platform::i18n::Tr::new("pt");
    let html = render_field_sheet(&i).expect("renders");
    assert!(html.contains("Confiança do alerta: baixa"));
}
