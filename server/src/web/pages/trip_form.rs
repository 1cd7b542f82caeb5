//! The issue form of `/trips` and of the preview, as typed: every field the
//! command line's `bundle issue` has (dates, source, confidence, minimum
//! area, reconciled status, an extent, due and expiry, walking speed), the
//! events kept, added and removed by hand, and the order the preview showed.
//! It is turned into the API's [`IssueBody`] and through the same
//! [`crate::web::api::bundles::trip_request`] into a trip request, so the
//! page, the API and the command line check a request the same way.

use super::common::{PageError, non_empty, opt_number};
use crate::domain::{Day, EventStatus};
use crate::planning::TripRequest;
use crate::planning::select::parse_event_ref;
use crate::web::api::bundles::{IssueBody, Start, trip_request as api_trip_request};

/// Largest urlencoded issue form, bytes (the access layer's form bound; an
/// extent larger than this is refused with a message).
pub const MAX_FORM_BYTES: usize = 64 * 1024;

/// The issue form as typed: its fields in order (`status` and `event` may repeat).
#[derive(Debug, Default, Clone)]
pub struct IssueForm {
    pairs: Vec<(String, String)>,
}

impl IssueForm {
    /// Reads an urlencoded body.
    pub fn from_body(body: &[u8]) -> Result<IssueForm, PageError> {
        if body.len() > MAX_FORM_BYTES {
            return Err(PageError::bad_request(format!(
                "The form is larger than {MAX_FORM_BYTES} bytes (an extent that large: simplify it)."
            )));
        }
        let text = std::str::from_utf8(body)
            .map_err(|_| PageError::bad_request("The form is not UTF-8 text."))?;
        let pairs = actix_web::web::Query::<Vec<(String, String)>>::from_query(text)
            .map_err(|e| PageError::bad_request(format!("The form could not be read: {e}")))?
            .into_inner();
        Ok(IssueForm { pairs })
    }

    /// The first non-blank value of a field, trimmed.
    pub fn text(&self, k: &str) -> Option<String> {
        self.pairs
            .iter()
            .filter(|(n, _)| n == k)
            .find_map(|(_, v)| non_empty(&Some(v.clone())))
    }

    /// Every non-blank value of a field, trimmed, in order.
    pub fn all(&self, k: &str) -> Vec<String> {
        self.pairs
            .iter()
            .filter(|(n, _)| n == k)
            .filter_map(|(_, v)| non_empty(&Some(v.clone())))
            .collect()
    }

    /// Sets a field (replacing every value it had).
    pub fn set(&mut self, k: &str, v: &str) {
        self.pairs.retain(|(n, _)| n != k);
        self.pairs.push((k.to_string(), v.to_string()));
    }

    /// Removes a field.
    pub fn remove(&mut self, k: &str) {
        self.pairs.retain(|(n, _)| n != k);
    }

    /// The fields the preview carries unchanged (the filters and settings),
    /// as (name, value) for hidden inputs.
    pub fn carried(&self) -> Vec<(String, String)> {
        const OWN: [&str; 9] = [
            "csrf_token",
            "event",
            "add",
            "hand",
            "order",
            "expect",
            "start_lat",
            "start_lon",
            "seed",
        ];
        self.pairs
            .iter()
            .filter(|(n, v)| !OWN.contains(&n.as_str()) && !v.trim().is_empty())
            .cloned()
            .collect()
    }
}

fn opt_text(f: &IssueForm, k: &str) -> Option<String> {
    f.text(k)
}

fn num<T: std::str::FromStr>(f: &IssueForm, k: &str, label: &str) -> Result<Option<T>, PageError> {
    opt_number::<T>(label, &f.text(k))
}

/// The extent field: a GeoJSON Polygon or MultiPolygon, a Feature holding
/// one, or a FeatureCollection of exactly one such Feature.
fn extent(f: &IssueForm) -> Result<Option<serde_json::Value>, PageError> {
    let Some(t) = f.text("extent") else {
        return Ok(None);
    };
    let v: serde_json::Value = serde_json::from_str(&t)
        .map_err(|e| PageError::bad_request(format!("Extent: not GeoJSON ({e}).")))?;
    let v = match v["type"].as_str() {
        Some("Feature") => v["geometry"].clone(),
        Some("FeatureCollection") => match v["features"].as_array().map(Vec::as_slice) {
            Some([one]) => one["geometry"].clone(),
            _ => {
                return Err(PageError::bad_request(
                    "Extent: a FeatureCollection must hold exactly one polygon feature.",
                ));
            }
        },
        _ => v,
    };
    Ok(Some(v))
}

/// The events kept by hand: the ticked `event` ids in the order the plan
/// was solved in (`order`), then any the form names that `order` does not.
fn kept_events(f: &IssueForm) -> Result<Option<Vec<String>>, PageError> {
    if f.text("hand").is_none() {
        return Ok(None);
    }
    let ticked = f.all("event");
    let order: Vec<String> = f
        .text("order")
        .unwrap_or_default()
        .split(',')
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect();
    let mut out: Vec<String> = order.into_iter().filter(|o| ticked.contains(o)).collect();
    for t in ticked {
        if !out.contains(&t) {
            out.push(t);
        }
    }
    Ok(Some(out))
}

/// The events typed into "add by code" (codes or ids, separated by commas
/// or spaces), as ids.
pub fn added_events(f: &IssueForm) -> Result<Vec<i64>, PageError> {
    f.text("add")
        .unwrap_or_default()
        .split(|c: char| c == ',' || c == ';' || c.is_whitespace())
        .filter(|s| !s.is_empty())
        .map(|s| parse_event_ref(s).map_err(|e| PageError::bad_request(format!("Add events: {e}"))))
        .collect()
}

/// The start as typed, with messages that name the field.
fn start(f: &IssueForm) -> Result<Start, PageError> {
    let lat = num::<f64>(f, "start_lat", "Start latitude")?
        .ok_or_else(|| PageError::bad_request("Start latitude: required (decimal degrees)."))?;
    let lon = num::<f64>(f, "start_lon", "Start longitude")?
        .ok_or_else(|| PageError::bad_request("Start longitude: required (decimal degrees)."))?;
    crate::domain::LonLat::new(lon, lat)
        .map_err(|m| PageError::bad_request(format!("Start: {m}")))?;
    Ok(Start {
        lat,
        lon,
        name: opt_text(f, "start_name"),
    })
}

/// The request body the form stands for (the API's own shape).
fn issue_body(f: &IssueForm) -> Result<IssueBody, PageError> {
    let team = f
        .text("team")
        .ok_or_else(|| PageError::bad_request("Team: choose the team that makes the trip."))?;
    let statuses = f.all("status");
    for s in &statuses {
        if s.parse::<EventStatus>().is_err() {
            return Err(PageError::bad_request(format!(
                "Status: '{s}' is not one of {}.",
                EventStatus::NAMES.join(", ")
            )));
        }
    }
    Ok(IssueBody {
        team,
        start: start(f)?,
        mode: opt_text(f, "mode"),
        zone: opt_text(f, "zone"),
        extent: extent(f)?,
        from: opt_text(f, "from"),
        to: opt_text(f, "to"),
        source: opt_text(f, "source"),
        confidence: opt_text(f, "confidence"),
        min_area_ha: num(f, "min_area_ha", "Minimum area")?,
        status: (!statuses.is_empty()).then_some(statuses),
        max: num(f, "max", "Most events")?,
        margin: num(f, "margin", "Margin of error")?,
        controls: num(f, "controls", "Control points")?,
        control_min_distance_m: None,
        seed: num(f, "seed", "Seed")?,
        walking_kmh: num(f, "walking_kmh", "Walking speed")?,
        due_days: num(f, "due_days", "Due after (days)")?,
        expires_days: num(f, "expires_days", "Expires after (days)")?,
        as_of: None,
        events: kept_events(f)?,
        expect_order: f
            .text("expect")
            .map(|e| e.split_whitespace().map(str::to_string).collect()),
    })
}

/// Turn the form into a trip request; every message names the field.
pub fn trip_request(f: &IssueForm, today: Day) -> Result<TripRequest, PageError> {
    let body = issue_body(f)?;
    if body.max == Some(0) {
        return Err(PageError::bad_request("Most events: at least 1."));
    }
    if let Some(m) = body.margin
        && !(m > 0.0 && m < 0.5)
    {
        return Err(PageError::bad_request(format!(
            "Margin of error: {m} is not between 0 and 0.5 (for example 0.1)."
        )));
    }
    let mut r = api_trip_request(body).map_err(|e| match e {
        crate::Error::Invalid(m) => PageError::bad_request(m),
        other => PageError::from(other),
    })?;
    r.as_of = today;
    Ok(r)
}

/// The typed values shown again in the issue form.
pub struct FormView {
    pub max: String,
    pub margin: String,
    pub controls: String,
    pub seed: String,
    pub start_lat: String,
    pub start_lon: String,
    pub start_name: String,
    pub from: String,
    pub to: String,
    pub min_area: String,
    pub walking_kmh: String,
    pub due_days: String,
    pub expires_days: String,
    pub extent: String,
    pub confidence: String,
}

impl FormView {
    pub fn of(f: &IssueForm) -> FormView {
        let v = |k: &str| f.text(k).unwrap_or_default();
        let or = |k: &str, d: &str| f.text(k).unwrap_or_else(|| d.to_string());
        FormView {
            max: v("max"),
            margin: or("margin", "0.1"),
            controls: v("controls"),
            seed: v("seed"),
            start_lat: v("start_lat"),
            start_lon: v("start_lon"),
            start_name: v("start_name"),
            from: v("from"),
            to: v("to"),
            min_area: v("min_area_ha"),
            walking_kmh: or("walking_kmh", "3"),
            due_days: or("due_days", "7"),
            expires_days: or("expires_days", "30"),
            extent: v("extent"),
            confidence: v("confidence"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::BundleMode;
    use actix_web::http::StatusCode;

    fn form(extra: &str) -> IssueForm {
        IssueForm::from_body(
            format!("team=Team+Amber&start_lat=-3.5&start_lon=-60.25{extra}").as_bytes(),
        )
        .unwrap()
    }

    #[test]
    fn a_minimal_form_is_a_response_trip_with_defaults() {
        let day = Day::parse("2026-03-01").unwrap();
        let r = trip_request(&form(""), day).unwrap();
        assert_eq!(r.mode, BundleMode::Response);
        assert_eq!((r.start.lon(), r.start.lat()), (-60.25, -3.5));
        assert_eq!(r.as_of, day);
        assert_eq!(r.controls, 0);
        assert_eq!(r.max, None);
        assert_eq!(r.events, None);
    }

    #[test]
    fn every_command_line_filter_is_read() {
        let ext = "%7B%22type%22%3A%22Polygon%22%2C%22coordinates%22%3A%5B%5B%5B0%2C0%5D%2C%5B1%2C0%5D%2C%5B1%2C1%5D%2C%5B0%2C0%5D%5D%5D%7D";
        let f = form(&format!(
            "&from=2026-01-01&to=2026-02-01&source=S1&confidence=confirmed&min_area_ha=2.5\
             &status=unvisited&status=disputed&walking_kmh=2.5&due_days=5&expires_days=9&extent={ext}"
        ));
        let r = trip_request(&f, Day::today()).unwrap();
        assert_eq!(r.from, Some(Day::parse("2026-01-01").unwrap()));
        assert_eq!(r.to, Some(Day::parse("2026-02-01").unwrap()));
        assert_eq!(r.source.as_deref(), Some("S1"));
        assert_eq!(r.confidence, Some(crate::domain::Confidence::Confirmed));
        assert_eq!(r.min_area_ha, Some(2.5));
        assert_eq!(r.statuses, vec!["unvisited", "disputed"]);
        assert_eq!((r.walking_kmh, r.due_days, r.expires_days), (2.5, 5, 9));
        assert!(r.extent.is_some());
    }

    #[test]
    fn hand_picked_events_follow_the_solved_order_then_the_new_ones() {
        let f = form("&hand=1&order=5,3,9&event=9&event=12&event=5&expect=A0005+A0009");
        let r = trip_request(&f, Day::today()).unwrap();
        // 3 was unticked; 12 was ticked but not in the solved order.
        assert_eq!(r.events, Some(vec![5, 9, 12]));
        assert_eq!(
            r.expect_order,
            Some(vec!["A0005".to_string(), "A0009".to_string()])
        );
        let f = form("&add=B0417,+%2312+7");
        assert_eq!(added_events(&f).unwrap(), vec![10_417, 12, 7]);
        assert!(
            added_events(&form("&add=Q0001"))
                .unwrap_err()
                .message
                .contains("Q0001")
        );
    }

    #[test]
    fn bad_fields_are_named() {
        let day = Day::today();
        let msg = |extra: &str| trip_request(&form(extra), day).unwrap_err().message;
        let f = IssueForm::from_body(b"team=T&start_lat=95&start_lon=1").unwrap();
        assert!(
            trip_request(&f, day)
                .unwrap_err()
                .message
                .contains("latitude")
        );
        assert!(msg("&margin=0.7").starts_with("Margin of error"));
        assert!(msg("&mode=tour").contains("tour"));
        assert!(msg("&status=lost").starts_with("Status"));
        assert!(msg("&extent=%7Bnope").starts_with("Extent"));
        assert!(msg("&from=2026-13-01").contains("from"));
        let f = IssueForm::from_body(b"team=+&start_lat=1&start_lon=1").unwrap();
        assert!(
            trip_request(&f, day)
                .unwrap_err()
                .message
                .starts_with("Team")
        );
        assert_eq!(
            trip_request(&form("&max=ten"), day).unwrap_err().status,
            StatusCode::BAD_REQUEST
        );
    }
}
