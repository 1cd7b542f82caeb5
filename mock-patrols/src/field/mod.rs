//! Field returns for a trip, made through the field kit's own commands.
//!
//! [`make_trip_return`] plays a field team with a bundle: it opens the bundle
//! with `groundproof-field open` (the library entry point
//! [`groundproof_sync::field::run`], so exactly what a team types), walks the
//! route, makes a JPEG with EXIF for every photo ([`crate::photos`]), records
//! each visit with `groundproof-field report`, corrects one report with
//! `amend`, and packs the signed return with `pack`. A [`TripPlan`] says how
//! the visits go; its default makes every page of the demo interesting: most
//! events visited with a mix of confirmed (a cause, 2-3 photos within 30 m of
//! the event), false alarms (a reason, 1-2 photos) and inconclusive visits,
//! one event left unvisited, one not reached (access or safety, no photos),
//! one photo taken far (650-900 m) from its event, one photo whose EXIF time
//! is before the event's first detection, one new clearing found on the way,
//! the control points visited (checklist 2: `clearing_found` with a cause and
//! an area, or `no_clearing_found`; a checklist 1 bundle: `confirmed`, or
//! `false_alarm` with `no_change`), one amended report, and optionally a second device's return
//! that disagrees with the first on one event a few days later (a dispute).
//!
//! Times come from the bundle (issue and expiry in its manifest), never from
//! the wall clock: field days start at 07:30 local time (the zone is the
//! start point's longitude over 15 degrees, rounded) the day after the issue,
//! stops are 80-120 minutes apart and a day ends at 17:00. The same bundle
//! and seed give the same targets, outcomes, reasons, causes, times and
//! photo bytes; only the report ids (UUID v4 made by the kit) and
//! `recorded_at` (the kit's clock) differ between runs.

mod camera;
mod clock;
mod device;
mod place;
mod roles;
#[cfg(test)]
mod tests;
mod visits;

use std::path::{Path, PathBuf};

use chrono::{DateTime, Utc};
use groundproof_sync::bundle::Checklist;
use groundproof_sync::field::{FieldEvent, Snapshot, Stop};
use groundproof_sync::returns::{
    OUTCOME_CONFIRMED, OUTCOME_FALSE_ALARM, OUTCOME_INCONCLUSIVE, OUTCOME_NOT_REACHED, Target,
};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use uuid::Uuid;

use clock::{Clock, zone_of};
use device::Device;
use roles::{CAUSE_WEIGHTS, Roles, assign_roles, pick};

/// Near photos are taken this far from the event centroid at most (metres).
pub const NEAR_PHOTO_MAX_M: f64 = 30.0;
/// The far photo is taken between these distances from its event (metres).
pub const FAR_PHOTO_RANGE_M: (f64, f64) = (650.0, 900.0);

/// How the visits of one trip go. [`TripPlan::default`] gives the demo's mix.
#[derive(Debug, Clone, PartialEq)]
pub struct TripPlan {
    /// Events left unvisited (at most all but one); default 1.
    pub unvisited: usize,
    /// Events the team could not reach (reason `access` or `safety`, no photos); default 1.
    pub not_reached: usize,
    /// Share of the visited events found cleared; default 0.6.
    pub confirmed_share: f64,
    /// Share of the visited events that are false alarms; default 0.3. The rest is
    /// inconclusive; each outcome with a positive share appears at least once when
    /// there are enough events.
    pub false_alarm_share: f64,
    /// One confirmed report carries an extra photo taken 650-900 m from its event.
    pub far_photo: bool,
    /// One confirmed report carries a photo whose EXIF time is 10-30 days before the
    /// event's first detection.
    pub early_photo: bool,
    /// A clearing found on the way between two stops (`report --new-clearing`).
    pub new_clearing: bool,
    /// One confirmed report is corrected afterwards (`amend ID --cause ...`).
    pub amend: bool,
    /// Visit the control points: about one in three shows a clearing
    /// (`clearing_found`, or `confirmed` with a checklist 1 bundle), the others
    /// none (`no_clearing_found`, or `false_alarm` with reason `no_change`).
    pub visit_controls: bool,
    /// Also make a second device's return for the same bundle whose report on one
    /// event disagrees with the first (confirmed against false_alarm, two days later).
    pub disputed_pair: bool,
    /// Photo width in pixels (16..=4000); default 800.
    pub photo_width: u32,
    /// Photo height in pixels (16..=4000); default 600.
    pub photo_height: u32,
    /// Whole days from the issue's local date to the first field day; default 1.
    pub first_day_after_issue: u32,
}

impl Default for TripPlan {
    fn default() -> Self {
        TripPlan {
            unvisited: 1,
            not_reached: 1,
            confirmed_share: 0.6,
            false_alarm_share: 0.3,
            far_photo: true,
            early_photo: true,
            new_clearing: true,
            amend: true,
            visit_controls: true,
            disputed_pair: true,
            photo_width: 800,
            photo_height: 600,
            first_day_after_issue: 1,
        }
    }
}

/// A finding the server's evidence checks are expected to raise on a report.
#[derive(Debug, Clone, PartialEq)]
pub enum ExpectedFlag {
    /// Photo `sha256` was taken about `distance_m` from the report's target.
    PhotoFar {
        /// SHA-256 of the photo (lowercase hex).
        sha256: String,
        /// Spherical distance from the event centroid in metres.
        distance_m: f64,
    },
    /// Photo `sha256` says (EXIF) it was taken at `taken_at`, before the event's
    /// first detection `first_detected` (`YYYY-MM-DD`).
    PhotoBeforeDetection {
        /// SHA-256 of the photo (lowercase hex).
        sha256: String,
        /// Its EXIF time.
        taken_at: DateTime<Utc>,
        /// The event's first detection date.
        first_detected: String,
    },
}

impl ExpectedFlag {
    /// Short name: `photo_far_from_target` or `photo_before_first_detection`.
    pub fn name(&self) -> &'static str {
        match self {
            ExpectedFlag::PhotoFar { .. } => "photo_far_from_target",
            ExpectedFlag::PhotoBeforeDetection { .. } => "photo_before_first_detection",
        }
    }
}

/// One report as recorded by the field kit.
#[derive(Debug, Clone, PartialEq)]
pub struct RecordedReport {
    /// Id the kit gave it (random, UUID v4).
    pub report_id: Uuid,
    /// What was visited.
    pub target: Target,
    /// `confirmed`, `false_alarm`, `inconclusive` or `not_reached`.
    pub outcome: String,
    /// Reason (false_alarm, not_reached).
    pub reason: Option<String>,
    /// Cause (confirmed).
    pub cause: Option<String>,
    /// When the team was there.
    pub observed_at: DateTime<Utc>,
    /// SHA-256 of its photos, in the report's order.
    pub photo_sha256: Vec<String>,
    /// The report this one corrects (`amend`).
    pub supersedes: Option<Uuid>,
    /// What the evidence checks should find.
    pub flags: Vec<ExpectedFlag>,
}

/// One device's workspace and its packed return.
#[derive(Debug, Clone, PartialEq)]
pub struct DeviceReturn {
    /// The field kit workspace (can be pushed with `groundproof_sync::field::push`).
    pub workspace: PathBuf,
    /// The signed return ZIP written by `pack`.
    pub zip: PathBuf,
    /// Its reports in the order they were recorded.
    pub reports: Vec<RecordedReport>,
}

/// What [`make_trip_return`] recorded.
#[derive(Debug, Clone, PartialEq)]
pub struct TripOutcome {
    /// The bundle.
    pub bundle_id: Uuid,
    /// Its team.
    pub team: String,
    /// The first device's return, then (with `disputed_pair`) the second device's.
    pub returns: Vec<DeviceReturn>,
    /// Event codes with no report.
    pub unvisited: Vec<String>,
    /// Event code on which the two devices disagree (with `disputed_pair`).
    pub disputed: Option<String>,
}

impl TripOutcome {
    /// Every report of every return.
    pub fn reports(&self) -> impl Iterator<Item = &RecordedReport> {
        self.returns.iter().flat_map(|r| r.reports.iter())
    }
}

/// Plays a field team with the bundle at `bundle_zip`: opens it in a new
/// workspace `workdir/device-1` with the field kit, records the visits of
/// `plan` (photos made in `workdir/device-1-camera`), amends one report and
/// packs `workdir/return-device-1.zip`. With `plan.disputed_pair`, a second
/// device (`workdir/device-2`) records one disagreeing report and packs
/// `workdir/return-device-2.zip`. `seed` decides outcomes, reasons, causes,
/// positions and photo pixels.
///
/// Fails when a workspace folder already holds files, when the bundle does
/// not open (expired, damaged), when its checklist lacks one of the four
/// outcomes or has no reasons, when the trip does not fit before the bundle
/// expires, or when the kit refuses a command (its message is kept).
pub fn make_trip_return(
    bundle_zip: &Path,
    workdir: &Path,
    plan: &TripPlan,
    seed: u64,
) -> Result<TripOutcome, String> {
    check_plan(plan)?;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut dev = Device::open(bundle_zip, workdir, "device-1", plan, seed)?;
    let snap = dev.snap.clone();
    check_checklist(&snap.checklist)?;
    let (event_codes, control_codes) = route_codes(&snap);
    let roles = assign_roles(
        &event_codes,
        &control_codes,
        &snap.checklist,
        plan,
        &mut rng,
    );
    walk_route(&mut dev, &snap, &roles, plan, &mut rng)?;
    if let Some(code) = &roles.amend {
        dev.amend(code, &snap.checklist)?;
    }
    let first = dev.pack()?;
    let mut returns = vec![first];
    let mut disputed = None;
    if let Some(code) = &roles.dispute
        && let Some((base, event)) = disputed_report(&returns[0], &snap, code)
    {
        let mut second = Device::open(bundle_zip, workdir, "device-2", plan, seed ^ 0x2)?;
        second.disagree(event, &base, &mut rng)?;
        returns.push(second.pack()?);
        disputed = Some(code.clone());
    }
    Ok(TripOutcome {
        bundle_id: snap.bundle_id,
        team: snap.team.clone(),
        returns,
        unvisited: roles.unvisited(),
        disputed,
    })
}

/// The event codes and the control point codes of the bundle, in route order.
fn route_codes(snap: &Snapshot) -> (Vec<String>, Vec<String>) {
    let event_codes: Vec<String> = snap
        .stops()
        .filter_map(|s| match s {
            Stop::Event(e) => Some(e.code.clone()),
            Stop::Control(_) => None,
        })
        .collect();
    let control_codes: Vec<String> = snap
        .stops()
        .filter_map(|s| match s {
            Stop::Control(c) => Some(c.code.clone()),
            Stop::Event(_) => None,
        })
        .collect();
    (event_codes, control_codes)
}

/// Walks the route on field days, recording each stop's visit of `roles` and the
/// new clearing found on the way.
fn walk_route(
    dev: &mut Device,
    snap: &Snapshot,
    roles: &Roles,
    plan: &TripPlan,
    rng: &mut ChaCha8Rng,
) -> Result<(), String> {
    let tz = zone_of(snap.start_lon);
    let mut clock = Clock::new(
        snap.issued_at,
        snap.expires_at,
        plan.first_day_after_issue,
        tz,
    );
    let new_clearing_after = roles.new_clearing_after;
    let stops: Vec<Stop<'_>> = snap.stops().collect();
    for (i, stop) in stops.iter().enumerate() {
        match stop {
            Stop::Event(e) => {
                if let Some(visit) = roles.event(&e.code) {
                    dev.visit_event(e, visit, &mut clock, rng)?;
                }
            }
            Stop::Control(c) => {
                if let Some(visit) = roles.control(&c.code) {
                    let here = (c.lat, c.lon);
                    dev.visit_control(&c.code, here, visit, &mut clock, rng)?;
                }
            }
        }
        if new_clearing_after == Some(i) {
            let from = stop.lat_lon();
            let to = stops.get(i + 1).map(Stop::lat_lon);
            let cause = pick(rng, CAUSE_WEIGHTS, &snap.checklist.causes);
            dev.new_clearing(from, to, cause, &mut clock, rng)?;
        }
    }
    Ok(())
}

/// The first return's newest report on event `code` and the event, which the
/// second device disagrees with; `None` when either is missing.
fn disputed_report<'a>(
    first: &DeviceReturn,
    snap: &'a Snapshot,
    code: &str,
) -> Option<(RecordedReport, &'a FieldEvent)> {
    let base = first
        .reports
        .iter()
        .rev()
        .find(|r| r.target.code() == Some(code))
        .cloned();
    let event = snap.events.iter().find(|e| e.code == code);
    base.zip(event)
}

fn check_plan(plan: &TripPlan) -> Result<(), String> {
    let shares_ok = (0.0..=1.0).contains(&plan.confirmed_share)
        && (0.0..=1.0).contains(&plan.false_alarm_share)
        && plan.confirmed_share + plan.false_alarm_share <= 1.0 + 1e-9;
    if !shares_ok {
        return Err(
            "confirmed_share and false_alarm_share must lie in [0, 1] and sum to at most 1".into(),
        );
    }
    for (label, v) in [
        ("photo_width", plan.photo_width),
        ("photo_height", plan.photo_height),
    ] {
        if !(16..=4000).contains(&v) {
            return Err(format!("{label} {v} is not in 16..=4000"));
        }
    }
    if plan.first_day_after_issue > 365 {
        return Err("first_day_after_issue must be at most 365".into());
    }
    Ok(())
}

fn check_checklist(c: &Checklist) -> Result<(), String> {
    for o in [
        OUTCOME_CONFIRMED,
        OUTCOME_FALSE_ALARM,
        OUTCOME_INCONCLUSIVE,
        OUTCOME_NOT_REACHED,
    ] {
        if !c.outcomes.iter().any(|x| x == o) {
            return Err(format!("the bundle's checklist has no outcome {o}"));
        }
    }
    if c.false_alarm_reasons.is_empty() || c.not_reached_reasons.is_empty() {
        return Err("the bundle's checklist lists no false_alarm or not_reached reasons".into());
    }
    Ok(())
}
