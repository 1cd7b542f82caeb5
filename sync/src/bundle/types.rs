//! The plain input types of a bundle (no server types), the checks every
//! value must pass before it is written, and the normalisation applied to
//! coordinates (rounded to 1e-7 degree, footprints wound by the right-hand
//! rule) so that every entry of a bundle shows the very same numbers.

use chrono::{DateTime, NaiveDate, Utc};
use geo::orient::{Direction, Orient};
use geo::{Coord, LineString, MultiPolygon, Point, Polygon};
use serde::{Deserialize, Serialize};

use crate::SyncError;
use crate::vocab::{BundleMode, Cause, Outcome, Reason};

/// The name of [`BundleMode::Response`].
pub const MODE_RESPONSE: &str = BundleMode::Response.as_str();
/// The name of [`BundleMode::Assessment`].
pub const MODE_ASSESSMENT: &str = BundleMode::Assessment.as_str();

/// Longest free text (team, start name, stratum, confidence) accepted.
pub const MAX_TEXT_CHARS: usize = 128;
/// Longest source name accepted.
pub const MAX_SOURCE_CHARS: usize = 64;
/// Most vertices in one event footprint (all rings together).
pub const MAX_FOOTPRINT_VERTICES: usize = 100_000;

/// One clearing event to visit.
#[derive(Debug, Clone, PartialEq)]
pub struct BundleEvent {
    /// Event code shown to the team: one ASCII capital letter and 4 digits, e.g. `K0417`.
    pub code: String,
    /// Server id of the event.
    pub event_id: i64,
    /// Footprint, longitude/latitude (WGS 84).
    pub footprint: MultiPolygon<f64>,
    /// Point to walk to (longitude/latitude).
    pub centroid: Point<f64>,
    /// Area in hectares.
    pub area_ha: f64,
    /// First detection date, `YYYY-MM-DD`.
    pub first_detected: String,
    /// Last detection date, `YYYY-MM-DD`.
    pub last_detected: String,
    /// Alert sources that saw it, e.g. `optical-10m`.
    pub sources: Vec<String>,
    /// Confidence of the event as the server stores it, `confirmed` or
    /// `tentative` (the alert files' words); people read it as "high" or
    /// "low" confidence ([`BundleEvent::confidence_level`]), written beside it
    /// as `confidence_level`, because "confirmed" is a visit's outcome.
    pub confidence: String,
    /// Whether two or more independent sources agree.
    pub corroborated: bool,
    /// Priority score used for ordering.
    pub priority: f64,
    /// Position in the route (strictly increasing along the route).
    pub visit_order: u32,
    /// Probability of inclusion in an assessment sample.
    pub inclusion_probability: Option<f64>,
    /// Stratum of an assessment sample.
    pub stratum: Option<String>,
}

/// The alert confidence level, `high` or `low`, of a confidence word:
/// `confirmed` (or `high`) is high, `tentative` (or `low`) is low; `None`
/// for any other word. A bundle written before `confidence_level` existed
/// is read through this.
pub fn confidence_level(word: &str) -> Option<&'static str> {
    match word {
        "confirmed" | "high" => Some(CONFIDENCE_HIGH),
        "tentative" | "low" => Some(CONFIDENCE_LOW),
        _ => None,
    }
}

/// The word of a high alert confidence level.
pub const CONFIDENCE_HIGH: &str = "high";
/// The word of a low alert confidence level.
pub const CONFIDENCE_LOW: &str = "low";

impl BundleEvent {
    /// "high" or "low" (see [`confidence_level`]).
    pub fn confidence_level(&self) -> Option<&'static str> {
        confidence_level(&self.confidence)
    }
}

/// A random location with no alert, visited to measure what the alerts miss.
#[derive(Debug, Clone, PartialEq)]
pub struct ControlPoint {
    /// Code: one ASCII capital letter and 4 digits, e.g. `C0003`.
    pub code: String,
    /// Location (longitude/latitude).
    pub point: Point<f64>,
    /// Position in the route.
    pub visit_order: u32,
    /// Probability of inclusion in an assessment sample.
    pub inclusion_probability: Option<f64>,
}

/// Where the trip starts (a camp, a ranger post).
#[derive(Debug, Clone, PartialEq)]
pub struct StartPoint {
    /// Name shown to the team.
    pub name: String,
    /// Location (longitude/latitude).
    pub point: Point<f64>,
}

/// What a report must contain; versioned, shipped in the bundle as `checklist.json`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Checklist {
    /// Version of this checklist.
    pub version: u32,
    /// Allowed visit outcomes.
    pub outcomes: Vec<String>,
    /// Reasons allowed with the outcome `false_alarm`.
    pub false_alarm_reasons: Vec<String>,
    /// Reasons allowed with the outcome `not_reached`.
    pub not_reached_reasons: Vec<String>,
    /// Causes allowed with the outcome `confirmed`.
    pub causes: Vec<String>,
    /// Report fields that must be filled in.
    pub required_fields: Vec<String>,
    /// Fewest photos a `confirmed` (or `clearing_found`) report must carry.
    pub min_photos_confirmed: u32,
    /// Allowed outcomes at a control point (version 2 and later). Empty in
    /// version 1, whose control points took the event outcomes of
    /// `outcomes` (read with [`crate::vocab::Outcome::control_finding`]);
    /// left out of the JSON when empty, so a version 1 checklist is written
    /// as it always was.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub control_outcomes: Vec<String>,
}

/// The checklist version the office issues now.
pub const CHECKLIST_VERSION: u32 = 2;

impl Checklist {
    /// The default checklist, version 1: outcomes, reasons and causes as listed in DESIGN.md
    /// ("Outcomes of a visit"); the required fields and the two-photo rule are our choice
    /// (common practice: one overview, one close-up).
    pub fn default_v1() -> Self {
        let list = |items: &[&str]| items.iter().map(|s| (*s).to_owned()).collect();
        let reasons = |o: Outcome| Reason::of(o).map(|r| r.as_str().to_owned()).collect();
        Checklist {
            version: 1,
            outcomes: Outcome::EVENT
                .iter()
                .map(|o| o.as_str().to_owned())
                .collect(),
            false_alarm_reasons: reasons(Outcome::FalseAlarm),
            not_reached_reasons: reasons(Outcome::NotReached),
            causes: list(Cause::NAMES),
            required_fields: list(&[
                "report_id",
                "event_code",
                "outcome",
                "observed_at",
                "position",
            ]),
            min_photos_confirmed: 2,
            control_outcomes: Vec::new(),
        }
    }

    /// The default checklist, version 2: version 1 with control points
    /// answered by their own outcomes (`no_clearing_found`, `clearing_found`
    /// with a cause and an estimated area, `inconclusive`, `not_reached`)
    /// instead of the event outcomes; events keep theirs.
    pub fn default_v2() -> Self {
        let words = |o: &[Outcome]| o.iter().map(|w| w.as_str().to_owned()).collect();
        Checklist {
            version: 2,
            outcomes: words(Outcome::EVENT),
            control_outcomes: words(Outcome::CONTROL),
            ..Checklist::default_v1()
        }
    }

    /// The checklist the office issues now ([`CHECKLIST_VERSION`]).
    pub fn current() -> Self {
        Checklist::default_v2()
    }

    /// The default checklist of `version`, `None` for a version this build
    /// does not know.
    pub fn for_version(version: u32) -> Option<Self> {
        match version {
            1 => Some(Checklist::default_v1()),
            2 => Some(Checklist::default_v2()),
            _ => None,
        }
    }

    /// The outcomes allowed for a report on `kind`: a control point's own
    /// list when the checklist has one, else `outcomes`.
    pub fn outcomes_for(&self, kind: crate::vocab::TargetKind) -> &[String] {
        match kind {
            crate::vocab::TargetKind::Control if !self.control_outcomes.is_empty() => {
                &self.control_outcomes
            }
            _ => &self.outcomes,
        }
    }

    /// Checks that every list holds distinct lowercase tokens (`[a-z0-9_]`, 1–64 chars)
    /// and that there is at least one outcome.
    pub fn validate(&self) -> Result<(), String> {
        if self.outcomes.is_empty() {
            return Err("checklist has no outcomes".into());
        }
        let lists = [
            ("outcomes", &self.outcomes),
            ("false_alarm_reasons", &self.false_alarm_reasons),
            ("not_reached_reasons", &self.not_reached_reasons),
            ("causes", &self.causes),
            ("required_fields", &self.required_fields),
            ("control_outcomes", &self.control_outcomes),
        ];
        for (label, items) in lists {
            for (i, item) in items.iter().enumerate() {
                if !is_token(item) {
                    return Err(format!(
                        "checklist {label}[{i}] {item:?} is not a lowercase token"
                    ));
                }
                if items[..i].contains(item) {
                    return Err(format!("checklist {label} lists {item:?} twice"));
                }
            }
        }
        Ok(())
    }
}

/// Who the bundle is for, what kind it is and when it is valid.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BundleHeader {
    /// Id of the bundle.
    pub bundle_id: uuid::Uuid,
    /// Team name.
    pub team: String,
    /// [`MODE_RESPONSE`] or [`MODE_ASSESSMENT`].
    pub mode: String,
    /// When the office issued it.
    pub issued_at: DateTime<Utc>,
    /// When the team should be back.
    pub due_at: DateTime<Utc>,
    /// After this the bundle is refused by [`crate::bundle::open_bundle`].
    pub expires_at: DateTime<Utc>,
    /// Id of the upload key (`[A-Za-z0-9_-]`, 1–64 chars).
    pub upload_key_id: String,
    /// Seed of the assessment sample, if any.
    pub seed: Option<u64>,
    /// The organisation's zone on the issue date, the trip's default camera zone.
    pub camera_zone: Option<CameraZone>,
}

/// A camera zone carried by a bundle or a return: the UTC offset that places a
/// photo time written with neither offset nor GPS stamp, and the zone's name
/// for display (an IANA name such as `Etc/GMT+4`, or empty when set by hand).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct CameraZone {
    /// Offset from UTC, `+HH:MM` or `-HH:MM`, within ±14:00.
    pub offset: String,
    /// Name of the zone the offset came from, for display; may be empty.
    #[serde(default)]
    pub name: String,
}

impl CameraZone {
    /// The zone with `offset` formatted as `+HH:MM`.
    pub fn new(offset: chrono::FixedOffset, name: &str) -> Self {
        let secs = offset.local_minus_utc();
        let sign = if secs < 0 { '-' } else { '+' };
        let mins = secs.abs() / 60;
        CameraZone {
            offset: format!("{sign}{:02}:{:02}", mins / 60, mins % 60),
            name: name.chars().take(MAX_TEXT_CHARS).collect(),
        }
    }

    /// The offset, checked: `+HH:MM`/`-HH:MM` within ±14:00; the error says what is wrong.
    pub fn fixed_offset(&self) -> Result<chrono::FixedOffset, String> {
        parse_utc_offset(&self.offset)
    }
}

/// An offset from UTC, `+HH:MM` or `-HH:MM`, within ±14:00 (the zones in use).
pub fn parse_utc_offset(raw: &str) -> Result<chrono::FixedOffset, String> {
    let bad = || {
        format!(
            "camera zone {raw:?} must be an offset from UTC such as +03:00 or -05:30, within ±14:00"
        )
    };
    let (sign, rest) = match raw.as_bytes().first() {
        Some(b'+') => (1, &raw[1..]),
        Some(b'-') => (-1, &raw[1..]),
        _ => return Err(bad()),
    };
    let (h, m) = rest.split_once(':').ok_or_else(bad)?;
    if h.is_empty() || h.len() > 2 || m.len() != 2 {
        return Err(bad());
    }
    let (h, m): (i32, i32) = (h.parse().map_err(|_| bad())?, m.parse().map_err(|_| bad())?);
    if !(0..60).contains(&m) || h * 60 + m > 14 * 60 || h < 0 {
        return Err(bad());
    }
    chrono::FixedOffset::east_opt(sign * (h * 3600 + m * 60)).ok_or_else(bad)
}

impl BundleHeader {
    /// Checks mode, team, key id and the order `issued_at <= due_at <= expires_at`,
    /// with `issued_at < expires_at`.
    pub fn validate(&self) -> Result<(), String> {
        if self.mode.parse::<BundleMode>().is_err() {
            return Err(format!(
                "mode {:?} is neither {MODE_RESPONSE:?} nor {MODE_ASSESSMENT:?}",
                self.mode
            ));
        }
        check_text("team", &self.team)?;
        if !is_key_id(&self.upload_key_id) {
            return Err(format!(
                "upload key id {:?} must be 1-64 chars of [A-Za-z0-9_-]",
                self.upload_key_id
            ));
        }
        if !(self.issued_at <= self.due_at && self.due_at <= self.expires_at)
            || self.issued_at >= self.expires_at
        {
            return Err(
                "times must satisfy issued_at <= due_at <= expires_at, issued_at < expires_at"
                    .into(),
            );
        }
        if let Some(zone) = &self.camera_zone {
            zone.fixed_offset()?;
            if zone.name.chars().count() > MAX_TEXT_CHARS {
                return Err(format!(
                    "camera zone name is over {MAX_TEXT_CHARS} characters"
                ));
            }
        }
        Ok(())
    }
}

/// A file the server renders (field sheet HTML, preview PNG) to ship as-is.
/// Its name must pass [`crate::bundle::is_allowed_extra_name`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ExtraEntry {
    /// Entry name inside the ZIP, e.g. `extras/field-sheet.html`.
    pub name: String,
    /// Content.
    pub bytes: Vec<u8>,
}

/// `true` for an event or control code: one ASCII capital letter then 4 ASCII digits.
pub fn is_valid_code(code: &str) -> bool {
    let b = code.as_bytes();
    b.len() == 5 && b[0].is_ascii_uppercase() && b[1..].iter().all(u8::is_ascii_digit)
}

/// `true` for a calendar date written `YYYY-MM-DD`.
pub fn is_valid_date(date: &str) -> bool {
    date.len() == 10 && NaiveDate::parse_from_str(date, "%Y-%m-%d").is_ok()
}

/// `true` for a lowercase token `[a-z0-9_]{1,64}`.
pub(crate) fn is_token(s: &str) -> bool {
    (1..=64).contains(&s.len())
        && s.bytes()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == b'_')
}

/// `true` for an upload key id `[A-Za-z0-9_-]{1,64}`.
pub(crate) fn is_key_id(s: &str) -> bool {
    (1..=64).contains(&s.len())
        && s.bytes()
            .all(|c| c.is_ascii_alphanumeric() || c == b'_' || c == b'-')
}

/// Free text: 1..=[`MAX_TEXT_CHARS`] chars, no control characters.
fn check_text(label: &str, s: &str) -> Result<(), String> {
    let n = s.chars().count();
    if n == 0 || n > MAX_TEXT_CHARS {
        return Err(format!("{label} must have 1-{MAX_TEXT_CHARS} characters"));
    }
    if s.chars().any(char::is_control) {
        return Err(format!("{label} {s:?} contains control characters"));
    }
    Ok(())
}

/// Rounds a coordinate to 1e-7 degree (about 1 cm; common practice, see
/// formats-and-crates.md §2.3 "7-decimal lat/lon").
pub(crate) fn round7(v: f64) -> f64 {
    (v * 1e7).round() / 1e7
}

/// Checks a position is finite, -180 <= lon <= 180, -90 <= lat <= 90, then rounds it;
/// a longitude that is 180 after rounding becomes -180 (GPX requires lon < 180).
pub(crate) fn normalise_coord(c: Coord<f64>) -> Result<Coord<f64>, String> {
    if !(c.x.is_finite() && c.y.is_finite()) {
        return Err("coordinate is not finite".into());
    }
    if !(-180.0..=180.0).contains(&c.x) || !(-90.0..=90.0).contains(&c.y) {
        return Err(format!(
            "coordinate ({}, {}) is outside lon/lat range",
            c.x, c.y
        ));
    }
    let mut x = round7(c.x);
    if x >= 180.0 {
        x = -180.0;
    }
    Ok(Coord { x, y: round7(c.y) })
}

fn normalise_point(p: Point<f64>) -> Result<Point<f64>, String> {
    normalise_coord(p.0).map(Point)
}

fn normalise_ring(ring: &LineString<f64>) -> Result<LineString<f64>, String> {
    let coords = ring
        .0
        .iter()
        .map(|c| normalise_coord(*c))
        .collect::<Result<Vec<_>, _>>()?;
    let ring = LineString::new(coords);
    if ring.0.len() < 4 || !ring.is_closed() {
        return Err("a ring needs at least 4 positions and must be closed".into());
    }
    Ok(ring)
}

/// Rounds, checks and winds a footprint: exterior rings counter-clockwise, holes clockwise
/// (RFC 7946 §3.1.6).
pub(crate) fn normalise_footprint(mp: &MultiPolygon<f64>) -> Result<MultiPolygon<f64>, String> {
    if mp.0.is_empty() {
        return Err("footprint is empty".into());
    }
    let vertices: usize =
        mp.0.iter()
            .map(|p| p.exterior().0.len() + p.interiors().iter().map(|r| r.0.len()).sum::<usize>())
            .sum();
    if vertices > MAX_FOOTPRINT_VERTICES {
        return Err(format!(
            "footprint has {vertices} vertices, more than {MAX_FOOTPRINT_VERTICES}"
        ));
    }
    let polys =
        mp.0.iter()
            .map(|p| {
                let ext = normalise_ring(p.exterior())?;
                let holes = p
                    .interiors()
                    .iter()
                    .map(normalise_ring)
                    .collect::<Result<Vec<_>, _>>()?;
                Ok(Polygon::new(ext, holes))
            })
            .collect::<Result<Vec<_>, String>>()?;
    Ok(MultiPolygon::new(polys).orient(Direction::Default))
}

fn check_probability(p: Option<f64>) -> Result<(), String> {
    match p {
        Some(v) if !(v > 0.0 && v <= 1.0) => {
            Err(format!("inclusion probability {v} is not in (0, 1]"))
        }
        _ => Ok(()),
    }
}

/// Checks one event and returns it with normalised geometry.
pub(crate) fn normalise_event(e: &BundleEvent) -> Result<BundleEvent, SyncError> {
    let err = |m: String| SyncError::InvalidInput(format!("event {:?}: {m}", e.code));
    if !is_valid_code(&e.code) {
        return Err(err("code must be one capital letter and 4 digits".into()));
    }
    for (label, d) in [
        ("first_detected", &e.first_detected),
        ("last_detected", &e.last_detected),
    ] {
        if !is_valid_date(d) {
            return Err(err(format!("{label} {d:?} is not a YYYY-MM-DD date")));
        }
    }
    if e.first_detected > e.last_detected {
        return Err(err("first_detected is after last_detected".into()));
    }
    if !(e.area_ha.is_finite() && e.area_ha >= 0.0) {
        return Err(err(format!(
            "area_ha {} is not a non-negative number",
            e.area_ha
        )));
    }
    if !e.priority.is_finite() {
        return Err(err("priority is not finite".into()));
    }
    if e.sources.is_empty() {
        return Err(err("sources is empty".into()));
    }
    for s in &e.sources {
        let n = s.chars().count();
        if n == 0 || n > MAX_SOURCE_CHARS || s.contains(',') || s.chars().any(char::is_control) {
            return Err(err(format!(
                "source {s:?} must have 1-{MAX_SOURCE_CHARS} characters, no comma, no control characters"
            )));
        }
    }
    check_text("confidence", &e.confidence).map_err(err)?;
    if let Some(s) = &e.stratum {
        check_text("stratum", s).map_err(err)?;
    }
    check_probability(e.inclusion_probability).map_err(err)?;
    Ok(BundleEvent {
        footprint: normalise_footprint(&e.footprint).map_err(err)?,
        centroid: normalise_point(e.centroid).map_err(err)?,
        ..e.clone()
    })
}

/// Checks one control point and returns it with a rounded position.
pub(crate) fn normalise_control(c: &ControlPoint) -> Result<ControlPoint, SyncError> {
    let err = |m: String| SyncError::InvalidInput(format!("control point {:?}: {m}", c.code));
    if !is_valid_code(&c.code) {
        return Err(err("code must be one capital letter and 4 digits".into()));
    }
    check_probability(c.inclusion_probability).map_err(err)?;
    Ok(ControlPoint {
        point: normalise_point(c.point).map_err(err)?,
        ..c.clone()
    })
}

/// Checks the start point and returns it with a rounded position.
pub(crate) fn normalise_start(s: &StartPoint) -> Result<StartPoint, SyncError> {
    let err = |m: String| SyncError::InvalidInput(format!("start point: {m}"));
    check_text("name", &s.name).map_err(err)?;
    Ok(StartPoint {
        name: s.name.clone(),
        point: normalise_point(s.point).map_err(err)?,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::{Winding, polygon};

    #[test]
    fn codes() {
        // Format from the task brief: letter + 4 digits, e.g. "K0417".
        assert!(is_valid_code("K0417"));
        assert!(!is_valid_code("k0417"));
        assert!(!is_valid_code("K417"));
        assert!(!is_valid_code("K04170"));
        assert!(!is_valid_code("K04a7"));
        assert!(!is_valid_code("É0417"));
    }

    #[test]
    fn dates() {
        assert!(is_valid_date("2026-02-28"));
        // 2026 is not a leap year (Gregorian calendar rule).
        assert!(!is_valid_date("2026-02-29"));
        assert!(!is_valid_date("2026-2-28"));
        assert!(!is_valid_date("2026-02-28T00:00"));
    }

    #[test]
    fn rounding_and_antimeridian() {
        let c = normalise_coord(Coord {
            x: -60.123456789,
            y: -3.00000004,
        })
        .expect("in range");
        assert_eq!((c.x, c.y), (-60.1234568, -3.0));
        let c = normalise_coord(Coord {
            x: 179.99999999,
            y: 0.0,
        })
        .expect("in range");
        assert_eq!(c.x, -180.0);
        assert!(normalise_coord(Coord { x: 181.0, y: 0.0 }).is_err());
        assert!(
            normalise_coord(Coord {
                x: f64::NAN,
                y: 0.0
            })
            .is_err()
        );
    }

    #[test]
    fn footprint_is_wound_counter_clockwise() {
        // Clockwise square (x,y): (0,0) -> (0,1) -> (1,1) -> (1,0).
        let cw = polygon![(x: 0.0, y: 0.0), (x: 0.0, y: 1.0), (x: 1.0, y: 1.0), (x: 1.0, y: 0.0)];
        assert!(cw.exterior().is_cw());
        let out = normalise_footprint(&MultiPolygon::new(vec![cw])).expect("valid");
        assert!(out.0[0].exterior().is_ccw());
        assert!(normalise_footprint(&MultiPolygon::new(vec![])).is_err());
    }

    #[test]
    fn default_checklist_is_valid() {
        let c = Checklist::default_v1();
        assert_eq!(c.validate(), Ok(()));
        // DESIGN.md "Outcomes of a visit": 4 outcomes, 5 false-alarm reasons, 3 not-reached
        // reasons, 9 default causes.
        assert_eq!(
            (
                c.outcomes.len(),
                c.false_alarm_reasons.len(),
                c.not_reached_reasons.len(),
                c.causes.len()
            ),
            (4, 5, 3, 9)
        );
        // Version 1 is written as it was before version 2 existed: no
        // control_outcomes key (bundles issued then still read the same).
        let json = serde_json::to_string(&c).expect("json");
        assert!(!json.contains("control_outcomes"), "{json}");
        let back: Checklist = serde_json::from_str(&json).expect("back");
        assert_eq!(back, c);
        let v2 = Checklist::current();
        assert_eq!((v2.version, CHECKLIST_VERSION), (2, 2));
        assert_eq!(v2.validate(), Ok(()));
        assert_eq!(
            v2.outcomes_for(crate::vocab::TargetKind::Control),
            [
                "no_clearing_found",
                "clearing_found",
                "inconclusive",
                "not_reached"
            ]
        );
        assert_eq!(v2.outcomes_for(crate::vocab::TargetKind::Event), c.outcomes);
        assert_eq!(
            c.outcomes_for(crate::vocab::TargetKind::Control),
            c.outcomes
        );
        assert_eq!(Checklist::for_version(1), Some(c.clone()));
        assert_eq!(Checklist::for_version(3), None);
        let mut bad = c.clone();
        bad.causes.push("fire".into());
        assert!(bad.validate().is_err());
        bad = c;
        bad.outcomes.push("Confirmed!".into());
        assert!(bad.validate().is_err());
    }
}
