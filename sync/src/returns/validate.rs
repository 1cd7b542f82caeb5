//! Checks of one report, on its own and against the bundle's checklist. The
//! server runs them on every received report; the field kit runs them before
//! a report is stored, so that the team hears about a problem on the spot.

use crate::bundle::{Checklist, is_valid_code};

use super::report::{Position, Report, Target};
use crate::vocab::{Outcome, Sha256Digest};

/// Longest `notes` accepted, in characters (RETURN-SPEC).
pub const MAX_NOTES_CHARS: usize = 4000;
/// Most photos in one report (reliability.md §3 "Photos per report").
pub const MAX_PHOTOS_PER_REPORT: usize = 20;
/// Longest `original_name` of a photo, in characters (common practice: 255, a file name limit).
pub const MAX_ORIGINAL_NAME_CHARS: usize = 255;
/// Largest `area_ha` accepted for one report (our choice: 100 km², far above one clearing).
pub const MAX_AREA_HA: f64 = 10_000.0;

fn check_lat_lon(label: &str, lat: f64, lon: f64) -> Result<(), String> {
    if !(lat.is_finite() && (-90.0..=90.0).contains(&lat)) {
        return Err(format!("{label} latitude {lat} is not in [-90, 90]"));
    }
    if !(lon.is_finite() && (-180.0..=180.0).contains(&lon)) {
        return Err(format!("{label} longitude {lon} is not in [-180, 180]"));
    }
    Ok(())
}

fn check_position(p: &Position) -> Result<(), String> {
    check_lat_lon("position", p.lat, p.lon)?;
    if let Some(a) = p.accuracy_m
        && !(a.is_finite() && a >= 0.0)
    {
        return Err(format!(
            "position accuracy_m {a} is not a non-negative number"
        ));
    }
    Ok(())
}

/// Checks that do not need the checklist: codes, text lengths, ranges, photos.
pub fn check_report_shape(r: &Report) -> Result<(), String> {
    match &r.target {
        Target::Event { code, .. } | Target::Control { code } if !is_valid_code(code) => {
            return Err(format!(
                "target code {code:?} must be one capital letter and 4 digits"
            ));
        }
        _ => {}
    }
    if r.supersedes == Some(r.report_id) {
        return Err("a report cannot supersede itself".into());
    }
    if r.notes.chars().count() > MAX_NOTES_CHARS {
        return Err(format!(
            "notes are longer than {MAX_NOTES_CHARS} characters"
        ));
    }
    if r.notes
        .chars()
        .any(|c| c.is_control() && c != '\n' && c != '\t' && c != '\r')
    {
        return Err("notes contain control characters".into());
    }
    if let Some(p) = &r.position {
        check_position(p)?;
    }
    if let Some(a) = r.area_ha
        && !(a.is_finite() && a > 0.0 && a <= MAX_AREA_HA)
    {
        return Err(format!("area_ha {a} is not in (0, {MAX_AREA_HA}]"));
    }
    if r.photos.len() > MAX_PHOTOS_PER_REPORT {
        return Err(format!(
            "{} photos, more than {MAX_PHOTOS_PER_REPORT}",
            r.photos.len()
        ));
    }
    for (i, p) in r.photos.iter().enumerate() {
        if !Sha256Digest::is_valid(&p.sha256) {
            return Err(format!("photo {i}: sha256 is not 64 lowercase hex digits"));
        }
        if r.photos[..i].iter().any(|q| q.sha256 == p.sha256) {
            return Err(format!("photo {i}: the same photo is listed twice"));
        }
        let n = p.original_name.chars().count();
        if n > MAX_ORIGINAL_NAME_CHARS || p.original_name.chars().any(char::is_control) {
            return Err(format!(
                "photo {i}: original_name must have at most {MAX_ORIGINAL_NAME_CHARS} characters and no control characters"
            ));
        }
        match (p.lat, p.lon) {
            (Some(lat), Some(lon)) => check_lat_lon(&format!("photo {i}"), lat, lon)?,
            (None, None) => {}
            _ => return Err(format!("photo {i}: lat and lon must be given together")),
        }
        if let Some(d) = p.direction_deg
            && !(d.is_finite() && (0.0..=360.0).contains(&d))
        {
            return Err(format!("photo {i}: direction_deg {d} is not in [0, 360]"));
        }
    }
    Ok(())
}

fn one_of(label: &str, value: &str, allowed: &[String]) -> Result<(), String> {
    if allowed.iter().any(|a| a == value) {
        Ok(())
    } else {
        Err(format!(
            "{label} {value:?} is not in the checklist (allowed: {})",
            allowed.join(", ")
        ))
    }
}

/// Checks `r` against `checklist`: the outcome is listed; `false_alarm` and
/// `not_reached` carry a listed reason and other outcomes none; a cause is only
/// given with `confirmed` and is listed; `confirmed` carries at least
/// `min_photos_confirmed` photos; every field of `required_fields` is filled in
/// (`report_id`, `outcome`, `observed_at` always are; `event_code` for events and
/// control points; `position`, `cause` (for confirmed), `reason`, `notes`,
/// `photos`, `area_ha`; unknown names are ignored); a new clearing is `confirmed`
/// with a position and an area; plus every check of [`check_report_shape`].
pub fn validate_report(r: &Report, checklist: &Checklist) -> Result<(), String> {
    check_report_shape(r)?;
    one_of("outcome", &r.outcome, &checklist.outcomes)?;
    let outcome = r.outcome.as_str();
    // A checklist may list an outcome this build has no word for: it is
    // checked like `inconclusive` (no reason, no cause).
    let word = r.outcome.parse::<Outcome>().ok();
    let confirmed = word == Some(Outcome::Confirmed);
    let needs_reason = word.is_some_and(Outcome::needs_reason);
    match (word, &r.reason) {
        (Some(Outcome::FalseAlarm), Some(reason)) => {
            one_of("reason", reason, &checklist.false_alarm_reasons)?
        }
        (Some(Outcome::NotReached), Some(reason)) => {
            one_of("reason", reason, &checklist.not_reached_reasons)?
        }
        (_, None) if needs_reason => {
            return Err(format!("outcome {outcome} needs a reason"));
        }
        (_, Some(_)) => {
            return Err(format!(
                "a reason is only given with false_alarm or not_reached, not {outcome}"
            ));
        }
        (_, None) => {}
    }
    match &r.cause {
        Some(cause) if confirmed => one_of("cause", cause, &checklist.causes)?,
        Some(_) => {
            return Err(format!(
                "a cause is only given with confirmed, not {outcome}"
            ));
        }
        None => {}
    }
    if confirmed && r.photos.len() < checklist.min_photos_confirmed as usize {
        return Err(format!(
            "a confirmed report needs at least {} photos, this one has {}",
            checklist.min_photos_confirmed,
            r.photos.len()
        ));
    }
    for field in &checklist.required_fields {
        let missing = match field.as_str() {
            "event_code" => false, // every event/control target has a code; new clearings have none
            "position" => r.position.is_none(),
            "cause" => confirmed && r.cause.is_none(),
            "reason" => needs_reason && r.reason.is_none(),
            "notes" => r.notes.trim().is_empty(),
            "photos" => r.photos.is_empty(),
            "area_ha" => r.area_ha.is_none(),
            _ => false,
        };
        if missing {
            return Err(format!("the checklist requires {field}, it is missing"));
        }
    }
    if r.target == Target::NewClearing {
        if !confirmed {
            return Err("a new clearing must have the outcome confirmed".into());
        }
        if r.position.is_none() || r.area_ha.is_none() {
            return Err("a new clearing needs a position and area_ha".into());
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::returns::report::{PositionSource, ReportPhoto};
    use chrono::{TimeZone, Utc};
    use uuid::Uuid;

    fn photo(i: u8) -> ReportPhoto {
        ReportPhoto {
            sha256: hex::encode([i; 32]),
            original_name: format!("IMG_{i}.jpg"),
            taken_at: None,
            lat: None,
            lon: None,
            direction_deg: None,
        }
    }

    fn good() -> Report {
        let t = Utc
            .with_ymd_and_hms(2026, 9, 3, 10, 0, 0)
            .single()
            .expect("t");
        Report {
            report_id: Uuid::from_u128(1),
            bundle_id: Uuid::from_u128(2),
            target: Target::Event {
                code: "K0411".into(),
                event_id: 9001,
            },
            supersedes: None,
            outcome: "confirmed".into(),
            reason: None,
            cause: Some("mining".into()),
            position: Some(Position {
                lat: -1.2,
                lon: 23.4,
                accuracy_m: Some(5.0),
                source: PositionSource::Manual,
            }),
            observed_at: t,
            recorded_at: t,
            area_ha: None,
            notes: "pit and tailings".into(),
            photos: vec![photo(1), photo(2)],
        }
    }

    #[test]
    fn checklist_rules() {
        let c = Checklist::default_v1();
        assert_eq!(validate_report(&good(), &c), Ok(()));
        type Change = Box<dyn Fn(&mut Report)>;
        let cases: Vec<(Change, &str)> = vec![
            (Box::new(|r| r.outcome = "maybe".into()), "outcome"),
            (Box::new(|r| r.cause = Some("aliens".into())), "cause"),
            (Box::new(|r| r.photos.truncate(1)), "at least 2 photos"),
            (Box::new(|r| r.reason = Some("access".into())), "reason"),
            (Box::new(|r| r.position = None), "position"),
            (Box::new(|r| r.notes = "x".repeat(4001)), "notes"),
            (
                Box::new(|r| {
                    if let Some(p) = &mut r.position {
                        p.lat = 91.0;
                    }
                }),
                "latitude",
            ),
            (
                Box::new(|r| {
                    r.outcome = "false_alarm".into();
                    r.cause = None;
                }),
                "needs a reason",
            ),
            (
                Box::new(|r| {
                    r.outcome = "not_reached".into();
                    r.cause = None;
                    r.reason = Some("no_change".into());
                }),
                "reason",
            ),
            (
                Box::new(|r| {
                    r.target = Target::NewClearing;
                }),
                "area_ha",
            ),
            (Box::new(|r| r.photos[1] = photo(1)), "twice"),
            (Box::new(|r| r.supersedes = Some(r.report_id)), "itself"),
        ];
        for (change, needle) in cases {
            let mut r = good();
            change(&mut r);
            let err = validate_report(&r, &c).expect_err(needle);
            assert!(err.contains(needle), "{err:?} should mention {needle:?}");
        }
        let mut fa = good();
        fa.outcome = "false_alarm".into();
        fa.cause = None;
        fa.reason = Some("cloud_or_shadow".into());
        fa.photos.clear();
        assert_eq!(validate_report(&fa, &c), Ok(()));
        let mut nc = good();
        nc.target = Target::NewClearing;
        nc.area_ha = Some(2.5);
        assert_eq!(validate_report(&nc, &c), Ok(()));
    }
}
