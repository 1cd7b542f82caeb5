//! Checks of one report, on its own and against the bundle's checklist. The
//! server runs them on every received report; the field kit runs them before
//! a report is stored, so that the team hears about a problem on the spot.

use crate::bundle::{Checklist, is_valid_code};

use super::report::{Position, Report, Target};
use crate::vocab::{Outcome, Sha256Digest, TargetKind};

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

/// Checks `r` against `checklist`: the outcome is listed for its target
/// ([`Checklist::outcomes_for`]: a control point's own outcomes from checklist 2
/// on, the event outcomes before; a control-only outcome is never an event's);
/// `false_alarm` and `not_reached` carry a listed reason and other outcomes
/// none; a cause is only given with `confirmed` or `clearing_found` and is
/// listed; `clearing_found` carries a cause and an estimated `area_ha`;
/// `confirmed` and `clearing_found` carry at least `min_photos_confirmed`
/// photos; every field of `required_fields` is filled in (`report_id`,
/// `outcome`, `observed_at` always are; `event_code` for events and control
/// points; `position`, `cause` (for confirmed), `reason`, `notes`, `photos`,
/// `area_ha`; unknown names are ignored); a new clearing is `confirmed` with a
/// position and an area; plus every check of [`check_report_shape`].
pub fn validate_report(r: &Report, checklist: &Checklist) -> Result<(), String> {
    check_report_shape(r)?;
    check_outcome(r, checklist)?;
    let outcome = r.outcome.as_str();
    // A checklist may list an outcome this build has no word for: it is
    // checked like `inconclusive` (no reason, no cause).
    let word = r.outcome.parse::<Outcome>().ok();
    let confirmed = word == Some(Outcome::Confirmed);
    let with_cause = word.is_some_and(Outcome::has_cause);
    let needs_reason = word.is_some_and(Outcome::needs_reason);
    check_reason(r, checklist, word)?;
    match &r.cause {
        Some(cause) if with_cause => one_of("cause", cause, &checklist.causes)?,
        Some(_) => {
            return Err(format!(
                "a cause is only given with confirmed or clearing_found, not {outcome}"
            ));
        }
        None => {}
    }
    if word == Some(Outcome::ClearingFound) && (r.cause.is_none() || r.area_ha.is_none()) {
        return Err("a clearing found at a control point needs a cause and area_ha".into());
    }
    if with_cause && r.photos.len() < checklist.min_photos_confirmed as usize {
        return Err(format!(
            "a {outcome} report needs at least {} photos, this one has {}",
            checklist.min_photos_confirmed,
            r.photos.len()
        ));
    }
    for field in &checklist.required_fields {
        let missing = match field.as_str() {
            "event_code" => false, // every event/control target has a code; new clearings have none
            "position" => r.position.is_none(),
            "cause" => with_cause && r.cause.is_none(),
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

/// The outcome is one the checklist allows for the report's target.
fn check_outcome(r: &Report, checklist: &Checklist) -> Result<(), String> {
    let kind = r.target.kind();
    let allowed = checklist.outcomes_for(kind);
    let control_only = r
        .outcome
        .parse::<Outcome>()
        .is_ok_and(Outcome::control_only);
    if control_only && kind != TargetKind::Control {
        return Err(format!(
            "outcome {:?} is only for control points, this report is about {}",
            r.outcome,
            match kind {
                TargetKind::NewClearing => "a new clearing",
                _ => "an event",
            }
        ));
    }
    if kind == TargetKind::Control && !allowed.contains(&r.outcome) {
        return Err(format!(
            "outcome {:?} is not a control point's outcome in checklist {} (allowed: {})",
            r.outcome,
            checklist.version,
            allowed.join(", ")
        ));
    }
    one_of("outcome", &r.outcome, allowed)
}

/// `false_alarm` and `not_reached` carry a listed reason, other outcomes none.
fn check_reason(r: &Report, checklist: &Checklist, word: Option<Outcome>) -> Result<(), String> {
    let outcome = r.outcome.as_str();
    match (word, &r.reason) {
        (Some(Outcome::FalseAlarm), Some(reason)) => {
            one_of("reason", reason, &checklist.false_alarm_reasons)
        }
        (Some(Outcome::NotReached), Some(reason)) => {
            one_of("reason", reason, &checklist.not_reached_reasons)
        }
        (Some(o), None) if o.needs_reason() => Err(format!("outcome {outcome} needs a reason")),
        (_, Some(_)) => Err(format!(
            "a reason is only given with false_alarm or not_reached, not {outcome}"
        )),
        (_, None) => Ok(()),
    }
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

    fn control(outcome: &str) -> Report {
        let mut r = good();
        r.target = Target::Control {
            code: "C0003".into(),
        };
        r.outcome = outcome.into();
        r.cause = None;
        r.photos.clear();
        r
    }

    #[test]
    fn control_points_have_their_own_outcomes_from_checklist_2() {
        let v2 = Checklist::default_v2();
        assert_eq!(validate_report(&control("no_clearing_found"), &v2), Ok(()));
        let mut found = control("clearing_found");
        found.cause = Some("smallholder_clearing".into());
        found.area_ha = Some(0.6);
        found.photos = vec![photo(1), photo(2)];
        assert_eq!(validate_report(&found, &v2), Ok(()));
        let mut nr = control("not_reached");
        nr.reason = Some("terrain".into());
        assert_eq!(validate_report(&nr, &v2), Ok(()));
        assert_eq!(validate_report(&control("inconclusive"), &v2), Ok(()));

        type Change = Box<dyn Fn(&mut Report)>;
        let refused: Vec<(Change, &str)> = vec![
            // The old answers are not a control point's outcome in checklist 2.
            (
                Box::new(|r| {
                    r.outcome = "false_alarm".into();
                    r.reason = Some("no_change".into());
                }),
                "not a control point's outcome in checklist 2",
            ),
            (Box::new(|r| r.cause = None), "needs a cause and area_ha"),
            (Box::new(|r| r.area_ha = None), "needs a cause and area_ha"),
            (Box::new(|r| r.photos.truncate(1)), "at least 2 photos"),
            (
                Box::new(|r| r.cause = Some("aliens".into())),
                "cause \"aliens\"",
            ),
            (
                Box::new(|r| r.reason = Some("no_change".into())),
                "a reason is only given",
            ),
        ];
        for (change, needle) in refused {
            let mut r = found.clone();
            change(&mut r);
            let err = validate_report(&r, &v2).expect_err(needle);
            assert!(err.contains(needle), "{err:?} should mention {needle:?}");
        }
        let mut no = control("no_clearing_found");
        no.cause = Some("fire".into());
        assert!(validate_report(&no, &v2).is_err());
        // A control-only outcome is never an event's, in either version.
        for c in [&v2, &Checklist::default_v1()] {
            let mut ev = good();
            ev.outcome = "no_clearing_found".into();
            ev.cause = None;
            let err = validate_report(&ev, c).expect_err("event");
            assert!(err.contains("only for control points"), "{err}");
        }
    }

    #[test]
    fn checklist_1_control_answers_are_still_taken_in() {
        // A return made with a bundle of checklist 1 answered control points
        // with the event words; they stay valid against that checklist.
        let v1 = Checklist::default_v1();
        let mut fa = control("false_alarm");
        fa.reason = Some("not_forest".into());
        assert_eq!(validate_report(&fa, &v1), Ok(()));
        let mut conf = control("confirmed");
        conf.cause = Some("mining".into());
        conf.photos = vec![photo(1), photo(2)];
        assert_eq!(validate_report(&conf, &v1), Ok(()));
        // ...but checklist 1 never had the new words.
        let err = validate_report(&control("no_clearing_found"), &v1).expect_err("v1");
        assert!(err.contains("checklist 1"), "{err}");
    }
}
