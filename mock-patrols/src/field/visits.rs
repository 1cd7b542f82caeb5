//! The visits: what the team does and writes down at each stop.

use chrono::{DateTime, Days, Duration, NaiveDate, Utc};
use groundproof_sync::Outcome;
use groundproof_sync::field::FieldEvent;
use groundproof_sync::returns::{
    OUTCOME_CONFIRMED, OUTCOME_FALSE_ALARM, OUTCOME_INCONCLUSIVE, OUTCOME_NOT_REACHED,
};
use rand::RngExt;
use rand_chacha::ChaCha8Rng;

use super::camera::Shot;
use super::clock::{Clock, day_start};
use super::device::{Device, Entry};
use super::place::{direction, offset};
use super::roles::{CAUSE_WEIGHTS, ControlVisit, EventVisit, no_change, pick};
use super::{ExpectedFlag, FAR_PHOTO_RANGE_M, NEAR_PHOTO_MAX_M, RecordedReport};

/// Where the photos an evidence check should flag sit among a report's shots.
#[derive(Debug, Default)]
struct FlaggedShots {
    /// Index of the photo taken far from the event, and its distance in metres.
    far: Option<(usize, f64)>,
    /// Index of the photo dated before the first detection, and its time.
    early: Option<(usize, DateTime<Utc>)>,
}

/// A not-reached team turned back between these distances (metres).
pub(super) const TURNED_BACK_RANGE_M: (f64, f64) = (1_500.0, 3_000.0);

impl Device {
    /// `n` photos within [`NEAR_PHOTO_MAX_M`] of `centre`, a few minutes apart from `t`,
    /// each looking towards the centre.
    pub(super) fn near_shots(
        centre: (f64, f64),
        t: DateTime<Utc>,
        n: usize,
        rng: &mut ChaCha8Rng,
    ) -> Vec<Shot> {
        (0..n)
            .map(|k| {
                let b = rng.random_range(0.0..360.0);
                let d = rng.random_range(5.0..NEAR_PHOTO_MAX_M);
                let (lat, lon) = offset(centre.0, centre.1, d, b);
                let secs = rng.random_range(0..60i64);
                Shot {
                    lat,
                    lon,
                    taken_at: t + Duration::minutes(3 + 4 * k as i64) + Duration::seconds(secs),
                    direction_deg: direction(b + 180.0),
                }
            })
            .collect()
    }

    pub(super) fn visit_event(
        &mut self,
        e: &FieldEvent,
        visit: &EventVisit,
        clock: &mut Clock,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let spent = rng.random_range(80..=120i64);
        let t = clock.visit(spent)?;
        match visit {
            EventVisit::NotReached { reason } => self.not_reached(e, reason, t, rng),
            EventVisit::Confirmed {
                cause,
                near_photos,
                far,
                early,
            } => {
                let (shots, flagged) =
                    self.confirmed_shots(e, *near_photos, *far, *early, t, rng)?;
                self.confirmed(e, cause, t, shots, flagged)
            }
            EventVisit::FalseAlarm { reason, photos } => {
                self.false_alarm(e, reason, *photos, t, rng)
            }
            EventVisit::Inconclusive => self.inconclusive(e, t, rng),
        }
    }

    /// The team turned back some way from the event, with a note why.
    fn not_reached(
        &mut self,
        e: &FieldEvent,
        reason: &str,
        t: DateTime<Utc>,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let (lat, lon) = offset(
            e.lat,
            e.lon,
            rng.random_range(TURNED_BACK_RANGE_M.0..TURNED_BACK_RANGE_M.1),
            rng.random_range(0.0..360.0),
        );
        let notes = if reason == "safety" {
            "Armed group camped on the track; turned back."
        } else {
            "River in flood across the track; no crossing found."
        };
        self.record(Entry {
            code: Some(e.code.clone()),
            outcome: OUTCOME_NOT_REACHED,
            reason: Some(reason.to_owned()),
            time: Some(t),
            at: Some((lat, lon, 10.0)),
            notes: notes.into(),
            ..Entry::default()
        })?;
        Ok(())
    }

    /// The photos of a confirmed visit: `near_photos` near the event, then with `far`
    /// one taken far from it, and with `early` the last one dated before the event's
    /// first detection.
    fn confirmed_shots(
        &self,
        e: &FieldEvent,
        near_photos: usize,
        far: bool,
        early: bool,
        t: DateTime<Utc>,
        rng: &mut ChaCha8Rng,
    ) -> Result<(Vec<Shot>, FlaggedShots), String> {
        let mut shots = Self::near_shots((e.lat, e.lon), t, near_photos, rng);
        let mut flagged = FlaggedShots::default();
        if far {
            let d = rng.random_range(FAR_PHOTO_RANGE_M.0..FAR_PHOTO_RANGE_M.1);
            let b: f64 = rng.random_range(0.0..360.0);
            let (lat, lon) = offset(e.lat, e.lon, d, b);
            flagged.far = Some((shots.len(), d));
            shots.push(Shot {
                lat,
                lon,
                taken_at: t + Duration::minutes(40),
                direction_deg: direction(b + 180.0),
            });
        }
        if early {
            let detected = NaiveDate::parse_from_str(&e.first_detected, "%Y-%m-%d")
                .map_err(|_| format!("event {}: bad first_detected", e.code))?;
            let days_before = rng.random_range(10..=30u64);
            let day = detected - Days::new(days_before);
            let taken = day_start(self.tz, day)
                .map(|s| s + Duration::minutes(150))
                .ok_or("no local time for the early photo")?;
            if let Some(last) = shots.last_mut() {
                last.taken_at = taken;
                flagged.early = Some((shots.len() - 1, taken));
            }
        }
        Ok((shots, flagged))
    }

    /// Records a confirmed visit with `shots` and notes the flags its photos should raise.
    fn confirmed(
        &mut self,
        e: &FieldEvent,
        cause: &Option<String>,
        t: DateTime<Utc>,
        shots: Vec<Shot>,
        flagged: FlaggedShots,
    ) -> Result<(), String> {
        let notes = cause_note(cause.as_deref());
        let first_detected = e.first_detected.clone();
        let r = self.record(Entry {
            code: Some(e.code.clone()),
            outcome: OUTCOME_CONFIRMED,
            cause: cause.clone(),
            time: Some(t),
            notes: notes.into(),
            shots,
            ..Entry::default()
        })?;
        if let Some((i, d)) = flagged.far {
            let sha256 = r.photo_sha256.get(i).cloned().unwrap_or_default();
            r.flags.push(ExpectedFlag::PhotoFar {
                sha256,
                distance_m: d,
            });
        }
        if let Some((i, taken_at)) = flagged.early {
            let sha256 = r.photo_sha256.get(i).cloned().unwrap_or_default();
            r.flags.push(ExpectedFlag::PhotoBeforeDetection {
                sha256,
                taken_at,
                first_detected,
            });
        }
        Ok(())
    }

    fn false_alarm(
        &mut self,
        e: &FieldEvent,
        reason: &str,
        photos: usize,
        t: DateTime<Utc>,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let shots = Self::near_shots((e.lat, e.lon), t, photos, rng);
        self.record(Entry {
            code: Some(e.code.clone()),
            outcome: OUTCOME_FALSE_ALARM,
            reason: Some(reason.to_owned()),
            time: Some(t),
            notes: reason_note(reason).into(),
            shots,
            ..Entry::default()
        })?;
        Ok(())
    }

    fn inconclusive(
        &mut self,
        e: &FieldEvent,
        t: DateTime<Utc>,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let shots = Self::near_shots((e.lat, e.lon), t, 1, rng);
        let (lat, lon) = offset(e.lat, e.lon, rng.random_range(10.0..60.0), 90.0);
        self.record(Entry {
            code: Some(e.code.clone()),
            outcome: OUTCOME_INCONCLUSIVE,
            time: Some(t),
            at: Some((lat, lon, 8.0)),
            notes: "Dense regrowth and standing dead trees; could not tell if recent.".into(),
            shots,
            ..Entry::default()
        })?;
        Ok(())
    }

    pub(super) fn visit_control(
        &mut self,
        code: &str,
        here: (f64, f64),
        visit: &ControlVisit,
        clock: &mut Clock,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let t = clock.visit(rng.random_range(80..=120i64))?;
        let min = (self.snap.checklist.min_photos_confirmed as usize).clamp(2, 20);
        // Checklist 2 gives control points their own outcomes; a bundle of
        // checklist 1 is answered with the event words, as teams did then.
        let own = !self.snap.checklist.control_outcomes.is_empty();
        let entry = match visit {
            ControlVisit::NoClearing { reason } => Entry {
                code: Some(code.to_owned()),
                outcome: if own {
                    Outcome::NoClearingFound.as_str()
                } else {
                    OUTCOME_FALSE_ALARM
                },
                reason: (!own).then(|| reason.clone()),
                time: Some(t),
                notes: "Control point: intact forest, no clearing.".into(),
                shots: Self::near_shots(here, t, 1, rng),
                ..Entry::default()
            },
            ControlVisit::Clearing { cause, area_ha } => Entry {
                code: Some(code.to_owned()),
                outcome: if own {
                    Outcome::ClearingFound.as_str()
                } else {
                    OUTCOME_CONFIRMED
                },
                cause: cause.clone(),
                time: Some(t),
                area_ha: Some(*area_ha),
                notes: "Control point: small clearing under the canopy gap, no alert here.".into(),
                shots: Self::near_shots(here, t, min, rng),
                ..Entry::default()
            },
        };
        self.record(entry)?;
        Ok(())
    }

    pub(super) fn new_clearing(
        &mut self,
        from: (f64, f64),
        to: Option<(f64, f64)>,
        cause: Option<String>,
        clock: &mut Clock,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let t = clock.visit(30)?;
        let base = match to {
            Some(to) => ((from.0 + to.0) / 2.0, (from.1 + to.1) / 2.0),
            None => from,
        };
        let spot = offset(
            base.0,
            base.1,
            rng.random_range(150.0..400.0),
            rng.random_range(0.0..360.0),
        );
        let min = (self.snap.checklist.min_photos_confirmed as usize).clamp(2, 20);
        let area = (rng.random_range(30..=250u32) as f64) / 100.0;
        let shots = Self::near_shots(spot, t, min, rng);
        self.record(Entry {
            code: None,
            outcome: OUTCOME_CONFIRMED,
            cause,
            time: Some(t),
            at: Some((spot.0, spot.1, 6.0)),
            area_ha: Some(area),
            notes: "Fresh clearing beside the track, not in the bundle.".into(),
            shots,
            ..Entry::default()
        })?;
        Ok(())
    }

    /// `amend ID --cause OTHER` (a confirmed report) or `--reason OTHER` (a false alarm),
    /// time of day, so inside the field day).
    pub(super) fn disagree(
        &mut self,
        event: &FieldEvent,
        base: &RecordedReport,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let latest = self.snap.expires_at - Duration::hours(1);
        let t = (base.observed_at + Duration::days(2)).min(latest);
        let centre = (event.lat, event.lon);
        let code = Some(event.code.clone());
        let entry = if base.outcome == OUTCOME_CONFIRMED {
            Entry {
                code,
                outcome: OUTCOME_FALSE_ALARM,
                reason: Some(no_change(&self.snap.checklist)),
                time: Some(t),
                notes: "Second visit: canopy looks intact from the ridge path.".into(),
                shots: Self::near_shots(centre, t, 1, rng),
                ..Entry::default()
            }
        } else {
            let min = (self.snap.checklist.min_photos_confirmed as usize).clamp(2, 20);
            Entry {
                code,
                outcome: OUTCOME_CONFIRMED,
                cause: pick(rng, CAUSE_WEIGHTS, &self.snap.checklist.causes),
                time: Some(t),
                notes: "Second visit: fresh cutting at the north edge.".into(),
                shots: Self::near_shots(centre, t, min, rng),
                ..Entry::default()
            }
        };
        self.record(entry)?;
        Ok(())
    }
}

/// An invented field note for a confirmed clearing.
pub(super) fn cause_note(cause: Option<&str>) -> &'static str {
    match cause {
        Some("smallholder_clearing") => "Slash-and-burn plot with cassava planted at the edge.",
        Some("plantation_or_pasture_conversion") => "Pasture grass sown, new fence posts.",
        Some("logging_road") => "New skid road with fresh tracks of heavy machinery.",
        Some("selective_logging") => "Stumps of large trees, gaps in the canopy.",
        Some("fire") => "Burnt ground and charred trunks; fire crossed from the field.",
        Some("mining") => "Open pit and tailings, water pump left on site.",
        Some("infrastructure_or_settlement") => "New huts and a cleared yard.",
        Some("natural_disturbance") => "Windthrow: trees uprooted in one direction.",
        _ => "Forest loss confirmed on the ground.",
    }
}

/// An invented field note for a false alarm.
pub(super) fn reason_note(reason: &str) -> &'static str {
    match reason {
        "no_change" => "Closed canopy, no sign of cutting.",
        "cloud_or_shadow" => "Intact forest; the alert area lies in the shadow of the ridge.",
        "seasonal_water" => "Flooded backswamp, forest standing in the water.",
        "cleared_before_window" => "Old field, secondary growth several years old.",
        "not_forest" => "Natural grassland, never forest.",
        _ => "No forest loss found.",
    }
}
