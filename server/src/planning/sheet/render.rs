//! Renders the field sheet: checks and orders a [`SheetInput`], turns it into the view
//! structs of the askama template `templates/field-sheet.html`, and renders it.

use askama::Template;
use groundproof_sync::bundle::{
    BundleEvent, BundleHeader, CONFIDENCE_HIGH, Checklist, ControlPoint, MODE_ASSESSMENT,
    StartPoint, confidence_level, is_valid_code,
};

use super::SheetError;
use super::base64::png_data_uri;
use super::palette::SourcePalette;
use super::view::{PositionText, area_text, km_text, position_text, token_words};
use crate::platform::i18n::Tr;

/// Most event cards plus control cards on one sheet (our choice: a trip of a few hundred
/// stops; the bundle holds at most 256 ZIP entries anyway).
pub const MAX_SHEET_CARDS: usize = 1000;
/// Largest preview PNG accepted on the sheet, bytes (our choice; a 2048² preview of flat
/// colours compresses far below this).
pub const MAX_PREVIEW_PNG_BYTES: usize = 4 << 20;
/// Size of the legend swatches, pixels.
const SWATCH_PX: u32 = 16;
/// The eight bytes every PNG starts with (PNG specification, 3rd ed., §5.2).
const PNG_SIGNATURE: [u8; 8] = [0x89, b'P', b'N', b'G', 0x0d, 0x0a, 0x1a, 0x0a];

/// One event with its preview image.
#[derive(Debug, Clone, PartialEq)]
pub struct SheetEvent {
    /// The event as shipped in the bundle.
    pub event: BundleEvent,
    /// Its preview PNG (see [`super::render_preview_with_palette`]); empty for none.
    pub preview_png: Vec<u8>,
}

/// One leg of the route, from the previous stop (or the start) to this one.
#[derive(Debug, Clone, PartialEq)]
pub struct RouteLeg {
    /// Stop number along the route (1 = first stop after the start).
    pub stop: u32,
    /// Event or control code of the stop.
    pub code: String,
    /// Distance of the leg, kilometres.
    pub leg_km: f64,
}

/// Everything the sheet shows.
#[derive(Debug, Clone, PartialEq)]
pub struct SheetInput {
    /// The bundle the sheet belongs to.
    pub header: BundleHeader,
    /// Name of the reserve or area of the trip, as shown to the team.
    pub reserve: String,
    /// Team label as shown to the team (may say more than `header.team`).
    pub team_label: String,
    /// Where the trip starts.
    pub start: StartPoint,
    /// Events with previews; shown in visit order whatever order they come in.
    pub events: Vec<SheetEvent>,
    /// Control points; shown in visit order.
    pub controls: Vec<ControlPoint>,
    /// The route, one leg per stop.
    pub legs: Vec<RouteLeg>,
    /// The checklist the tick boxes show.
    pub checklist: Checklist,
    /// Source colours used by the previews, listed as the legend.
    pub palette: SourcePalette,
    /// The organisation's time zone: issue, due and expiry are shown in it.
    pub zone: crate::domain::OrgZone,
    /// The sheet's language: the issuing coordinator's, or the
    /// organisation's default when issued from the command line.
    pub tr: Tr,
}

/// A source named with its legend swatch.
struct LegendEntry {
    name: String,
    hex: String,
    swatch: String,
}

struct EventCard {
    code: String,
    order: u32,
    pos: PositionText,
    area: String,
    first: String,
    last: String,
    /// The stored confidence word, shown only when it has no level.
    confidence: String,
    /// The message id of its level, `confidence-high` or `confidence-low`.
    confidence_level: Option<&'static str>,
    corroborated: bool,
    sources: Vec<LegendEntry>,
    /// The stratum's sources and, apart, its confidence level's message id.
    stratum: Option<(String, Option<&'static str>)>,
    preview: Option<String>,
}

struct ControlCard {
    code: String,
    order: u32,
    pos: PositionText,
    /// The waypoint's name in the bundle's GPX (the bundle's short code
    /// first, so that a handheld unit keeps the control points of two trips apart).
    gps_name: String,
}

struct RouteRow {
    stop: u32,
    code: String,
    leg: String,
}

struct ChecklistView {
    version: u32,
    outcomes: Vec<String>,
    false_alarm_reasons: Vec<String>,
    not_reached_reasons: Vec<String>,
    causes: Vec<String>,
    photos: String,
    /// The outcomes of a control point's card: its own from checklist 2 on.
    control_outcomes: Vec<String>,
    /// The checklist gives control points their own outcomes (then the card
    /// asks for the cause and the estimated area of a clearing found).
    control_own: bool,
}

#[derive(Template)]
#[template(path = "field-sheet.html")]
struct FieldSheetPage {
    tr: Tr,
    bundle_id: String,
    /// The trip's kind in the sheet's language.
    mode_text: String,
    /// The identifier the station operator copies back (`domain::sheet`).
    sheet_id: String,
    team: String,
    team_label: String,
    reserve: String,
    assessment: bool,
    seed: Option<String>,
    issued: String,
    due: String,
    expires: String,
    start_name: String,
    start: PositionText,
    legend: Vec<LegendEntry>,
    route: Vec<RouteRow>,
    total: String,
    events: Vec<EventCard>,
    controls: Vec<ControlCard>,
    checklist: ChecklistView,
}

/// Renders the field sheet of one bundle as a self-contained HTML page.
///
/// Fails when a code is not a valid event/control code, there are more than
/// [`MAX_SHEET_CARDS`] cards, a preview is larger than [`MAX_PREVIEW_PNG_BYTES`] or is not a
/// PNG, or a leg distance is negative or not finite.
pub fn render_field_sheet(input: &SheetInput) -> Result<String, SheetError> {
    let cards = input.events.len() + input.controls.len();
    if cards > MAX_SHEET_CARDS {
        return Err(invalid(format!(
            "{cards} cards, more than {MAX_SHEET_CARDS}"
        )));
    }
    let events = event_cards(input)?;
    let controls = control_cards(&input.controls, &input.header.bundle_id)?;
    let (route, total) = route_rows(&input.legs)?;
    let h = &input.header;
    let when = |t: &chrono::DateTime<chrono::Utc>| input.zone.show(*t);
    let all_sources = input.palette.sources().to_vec();
    let tr = input.tr;
    let page = FieldSheetPage {
        tr,
        bundle_id: h.bundle_id.to_string(),
        mode_text: tr
            .get(&format!("sheet-mode-{}", h.mode))
            .unwrap_or_else(|| h.mode.clone()),
        sheet_id: crate::domain::sheet::sheet_id(&h.bundle_id.to_string()),
        team: h.team.clone(),
        team_label: input.team_label.clone(),
        reserve: input.reserve.clone(),
        assessment: h.mode == MODE_ASSESSMENT,
        seed: h.seed.map(|s| s.to_string()),
        issued: when(&h.issued_at),
        due: when(&h.due_at),
        expires: when(&h.expires_at),
        start_name: input.start.name.clone(),
        start: position_text(input.start.point.y(), input.start.point.x()),
        legend: legend(&input.palette, &all_sources)?,
        route,
        total: km_text(total),
        events,
        controls,
        checklist: checklist_view(&input.checklist, &tr),
    };
    Ok(page.render()?)
}

fn invalid(message: String) -> SheetError {
    SheetError::InvalidInput(message)
}

/// The event cards in visit order.
fn event_cards(input: &SheetInput) -> Result<Vec<EventCard>, SheetError> {
    let mut events: Vec<&SheetEvent> = input.events.iter().collect();
    events.sort_by_key(|e| e.event.visit_order);
    events
        .into_iter()
        .map(|e| event_card(e, &input.palette))
        .collect()
}

fn event_card(e: &SheetEvent, palette: &SourcePalette) -> Result<EventCard, SheetError> {
    let ev = &e.event;
    if !is_valid_code(&ev.code) {
        return Err(invalid(format!(
            "event code {:?} is not a letter and 4 digits",
            ev.code
        )));
    }
    Ok(EventCard {
        code: ev.code.clone(),
        order: ev.visit_order,
        pos: position_text(ev.centroid.y(), ev.centroid.x()),
        area: area_text(ev.area_ha),
        first: ev.first_detected.clone(),
        last: ev.last_detected.clone(),
        confidence: ev.confidence.clone(),
        confidence_level: level_id(&ev.confidence),
        corroborated: ev.corroborated,
        sources: legend(palette, &ev.sources)?,
        stratum: ev.stratum.as_deref().map(stratum_parts),
        preview: preview_uri(&ev.code, &e.preview_png)?,
    })
}

/// The message id of a confidence word's level ("high"/"low" confidence:
/// "confirmed" is only ever a visit's outcome), `None` for another word.
fn level_id(word: &str) -> Option<&'static str> {
    match confidence_level(word)? {
        CONFIDENCE_HIGH => Some("confidence-high"),
        _ => Some("confidence-low"),
    }
}

/// A stratum stored as "sources|confidence" split into its sources and its
/// level's message id; another stratum is kept whole.
fn stratum_parts(stratum: &str) -> (String, Option<&'static str>) {
    match stratum.rsplit_once('|') {
        Some((sources, word)) if level_id(word).is_some() => (sources.to_string(), level_id(word)),
        _ => (stratum.to_string(), None),
    }
}

/// The preview as a data URI; `None` when there is none.
fn preview_uri(code: &str, png: &[u8]) -> Result<Option<String>, SheetError> {
    match png {
        [] => Ok(None),
        png if png.len() > MAX_PREVIEW_PNG_BYTES => Err(invalid(format!(
            "preview of {code} has {} bytes, more than {MAX_PREVIEW_PNG_BYTES}",
            png.len()
        ))),
        png if !png.starts_with(&PNG_SIGNATURE) => {
            Err(invalid(format!("preview of {code} is not a PNG")))
        }
        png => Ok(Some(png_data_uri(png))),
    }
}

/// The control cards in visit order.
fn control_cards(
    controls: &[ControlPoint],
    bundle_id: &uuid::Uuid,
) -> Result<Vec<ControlCard>, SheetError> {
    let mut controls: Vec<&ControlPoint> = controls.iter().collect();
    controls.sort_by_key(|c| c.visit_order);
    controls
        .into_iter()
        .map(|c| {
            if !is_valid_code(&c.code) {
                return Err(invalid(format!(
                    "control code {:?} is not a letter and 4 digits",
                    c.code
                )));
            }
            Ok(ControlCard {
                code: c.code.clone(),
                order: c.visit_order,
                pos: position_text(c.point.y(), c.point.x()),
                gps_name: groundproof_sync::bundle::control_waypoint_name(bundle_id, &c.code),
            })
        })
        .collect()
}

/// The route table and its total distance, kilometres.
fn route_rows(legs: &[RouteLeg]) -> Result<(Vec<RouteRow>, f64), SheetError> {
    let mut route = Vec::with_capacity(legs.len());
    let mut total = 0.0;
    for leg in legs {
        if !(leg.leg_km.is_finite() && leg.leg_km >= 0.0) {
            return Err(invalid(format!(
                "leg to {} has distance {} km",
                leg.code, leg.leg_km
            )));
        }
        total += leg.leg_km;
        route.push(RouteRow {
            stop: leg.stop,
            code: leg.code.clone(),
            leg: km_text(leg.leg_km),
        });
    }
    Ok((route, total))
}

fn checklist_view(cl: &Checklist, tr: &Tr) -> ChecklistView {
    let words = |prefix: &str, tokens: &[String]| -> Vec<String> {
        tokens.iter().map(|t| token_words(tr, prefix, t)).collect()
    };
    ChecklistView {
        version: cl.version,
        outcomes: words("outcome", &cl.outcomes),
        false_alarm_reasons: words("reason", &cl.false_alarm_reasons),
        not_reached_reasons: words("reason", &cl.not_reached_reasons),
        causes: words("cause", &cl.causes),
        photos: tr.t1("sheet-photos-taken", "min", cl.min_photos_confirmed),
        control_outcomes: words(
            "outcome",
            cl.outcomes_for(groundproof_sync::TargetKind::Control),
        ),
        control_own: !cl.control_outcomes.is_empty(),
    }
}

fn legend(palette: &SourcePalette, sources: &[String]) -> Result<Vec<LegendEntry>, SheetError> {
    sources
        .iter()
        .map(|name| {
            let style = palette.style(name);
            Ok(LegendEntry {
                name: name.clone(),
                hex: style.hex(),
                swatch: png_data_uri(&style.swatch_png(SWATCH_PX)?),
            })
        })
        .collect()
}
