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
//! the control points visited (a clearing found, or `false_alarm` with
//! `no_change`), one amended report, and optionally a second device's return
//! that disagrees with the first on one event a few days later (a dispute).
//!
//! Times come from the bundle (issue and expiry in its manifest), never from
//! the wall clock: field days start at 07:30 local time (the zone is the
//! start point's longitude over 15 degrees, rounded) the day after the issue,
//! stops are 80-120 minutes apart and a day ends at 17:00. The same bundle
//! and seed give the same targets, outcomes, reasons, causes, times and
//! photo bytes; only the report ids (UUID v4 made by the kit) and
//! `recorded_at` (the kit's clock) differ between runs.

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use chrono::{DateTime, Days, Duration, FixedOffset, NaiveDate, NaiveTime, Offset, TimeZone, Utc};
use groundproof_sync::bundle::Checklist;
use groundproof_sync::field::{self, FieldEvent, Snapshot, Stop};
use groundproof_sync::outbox::Outbox;
use groundproof_sync::returns::{
    OUTCOME_CONFIRMED, OUTCOME_FALSE_ALARM, OUTCOME_INCONCLUSIVE, OUTCOME_NOT_REACHED, Report,
    Target,
};
use rand::seq::SliceRandom;
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use uuid::Uuid;

use crate::photos::{PhotoMetaIn, make_photo};

/// Mean Earth radius in metres (IUGG mean radius R1, the one radius the
/// office and the field share; common practice for short spherical offsets).
const EARTH_RADIUS_M: f64 = groundproof_sync::geodesy::MEAN_RADIUS_M;
/// Near photos are taken this far from the event centroid at most (metres).
pub const NEAR_PHOTO_MAX_M: f64 = 30.0;
/// The far photo is taken between these distances from its event (metres).
pub const FAR_PHOTO_RANGE_M: (f64, f64) = (650.0, 900.0);
/// A not-reached team turned back between these distances (metres).
const TURNED_BACK_RANGE_M: (f64, f64) = (1_500.0, 3_000.0);

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
    /// Visit the control points: about one in three shows a clearing (`confirmed`),
    /// the others `false_alarm` with reason `no_change`.
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
    let roles = assign_roles(
        &event_codes,
        &control_codes,
        &snap.checklist,
        plan,
        &mut rng,
    );
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
                    dev.visit_event(e, visit, &mut clock, &mut rng)?;
                }
            }
            Stop::Control(c) => {
                if let Some(visit) = roles.control(&c.code) {
                    let here = (c.lat, c.lon);
                    dev.visit_control(&c.code, here, visit, &mut clock, &mut rng)?;
                }
            }
        }
        if new_clearing_after == Some(i) {
            let from = stop.lat_lon();
            let to = stops.get(i + 1).map(Stop::lat_lon);
            let cause = pick(&mut rng, CAUSE_WEIGHTS, &snap.checklist.causes);
            dev.new_clearing(from, to, cause, &mut clock, &mut rng)?;
        }
    }
    if let Some(code) = &roles.amend {
        dev.amend(code, &snap.checklist)?;
    }
    let first = dev.pack()?;
    let mut returns = vec![first];
    let mut disputed = None;
    if let Some(code) = &roles.dispute {
        let base = returns[0]
            .reports
            .iter()
            .rev()
            .find(|r| r.target.code() == Some(code.as_str()))
            .cloned();
        let event = snap.events.iter().find(|e| &e.code == code);
        if let (Some(base), Some(event)) = (base, event) {
            let mut second = Device::open(bundle_zip, workdir, "device-2", plan, seed ^ 0x2)?;
            second.disagree(event, &base, &mut rng)?;
            returns.push(second.pack()?);
            disputed = Some(code.clone());
        }
    }
    Ok(TripOutcome {
        bundle_id: snap.bundle_id,
        team: snap.team.clone(),
        returns,
        unvisited: roles.unvisited(),
        disputed,
    })
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

// ---------------------------------------------------------------------------
// Roles: who gets which visit (pure, seeded).

/// Invented weights for causes of the mock clearings (our choice, not a statistic).
const CAUSE_WEIGHTS: &[(&str, f64)] = &[
    ("smallholder_clearing", 0.35),
    ("plantation_or_pasture_conversion", 0.20),
    ("logging_road", 0.15),
    ("selective_logging", 0.10),
    ("fire", 0.08),
    ("mining", 0.05),
    ("infrastructure_or_settlement", 0.04),
    ("natural_disturbance", 0.02),
    ("other", 0.01),
];
/// Invented weights for false-alarm reasons (our choice).
const FALSE_ALARM_WEIGHTS: &[(&str, f64)] = &[
    ("no_change", 0.40),
    ("cloud_or_shadow", 0.25),
    ("cleared_before_window", 0.15),
    ("seasonal_water", 0.10),
    ("not_forest", 0.10),
];
/// Not-reached reasons the brief asks for (access or safety), invented weights.
const NOT_REACHED_WEIGHTS: &[(&str, f64)] = &[("access", 0.6), ("safety", 0.4)];

/// What happens at one event.
#[derive(Debug, Clone, PartialEq)]
enum EventVisit {
    NotReached {
        reason: String,
    },
    Confirmed {
        cause: Option<String>,
        near_photos: usize,
        far: bool,
        early: bool,
    },
    FalseAlarm {
        reason: String,
        photos: usize,
    },
    Inconclusive,
}

/// What happens at one control point.
#[derive(Debug, Clone, PartialEq)]
enum ControlVisit {
    NoClearing { reason: String },
    Clearing { cause: Option<String>, area_ha: f64 },
}

/// The roles of a trip.
#[derive(Debug, Clone, PartialEq)]
struct Roles {
    /// Every event code with its visit (`None`: left unvisited).
    events: Vec<(String, Option<EventVisit>)>,
    controls: Vec<(String, ControlVisit)>,
    amend: Option<String>,
    dispute: Option<String>,
    /// Index in the route after which the new clearing is found.
    new_clearing_after: Option<usize>,
}

impl Roles {
    fn event(&self, code: &str) -> Option<&EventVisit> {
        self.events
            .iter()
            .find(|(c, _)| c == code)
            .and_then(|(_, v)| v.as_ref())
    }

    fn control(&self, code: &str) -> Option<&ControlVisit> {
        self.controls
            .iter()
            .find(|(c, _)| c == code)
            .map(|(_, v)| v)
    }

    fn unvisited(&self) -> Vec<String> {
        self.events
            .iter()
            .filter(|(_, v)| v.is_none())
            .map(|(c, _)| c.clone())
            .collect()
    }
}

/// Counts of confirmed, false-alarm and inconclusive visits among `m` by largest
/// remainder, then at least one of each outcome whose share is positive while
/// `m` allows, taken from the largest count.
fn outcome_mix(m: usize, confirmed: f64, false_alarm: f64) -> [usize; 3] {
    let shares = [
        confirmed,
        false_alarm,
        (1.0 - confirmed - false_alarm).max(0.0),
    ];
    let total: f64 = shares.iter().sum();
    if m == 0 || total <= 0.0 {
        return [0, 0, m];
    }
    let targets = shares.map(|s| m as f64 * s / total);
    let mut counts = targets.map(|t| t.floor() as usize);
    let mut left = m - counts.iter().sum::<usize>();
    let mut by_fraction = [0usize, 1, 2];
    // Stable sort: equal fractions keep the order confirmed, false alarm, inconclusive.
    by_fraction.sort_by(|&a, &b| {
        let (fa, fb) = (targets[a].fract(), targets[b].fract());
        fb.partial_cmp(&fa).unwrap_or(std::cmp::Ordering::Equal)
    });
    for &i in by_fraction.iter().cycle() {
        if left == 0 {
            break;
        }
        counts[i] += 1;
        left -= 1;
    }
    let positive = shares.iter().filter(|s| **s > 0.0).count();
    if m >= positive {
        for i in 0..3 {
            if shares[i] > 0.0 && counts[i] == 0 {
                let largest = (0..3).max_by_key(|&j| counts[j]).unwrap_or(0);
                counts[largest] -= 1;
                counts[i] += 1;
            }
        }
    }
    counts
}

/// Picks a name from `allowed` by `weights` (names with no weight count 0; when all
/// weights are 0, uniformly). `None` when `allowed` is empty.
fn pick(rng: &mut ChaCha8Rng, weights: &[(&str, f64)], allowed: &[String]) -> Option<String> {
    if allowed.is_empty() {
        return None;
    }
    let w: Vec<f64> = allowed
        .iter()
        .map(|a| {
            weights
                .iter()
                .find(|(n, _)| n == a)
                .map_or(0.0, |(_, x)| *x)
        })
        .collect();
    let total: f64 = w.iter().sum();
    if total <= 0.0 {
        return allowed.get(rng.random_range(0..allowed.len())).cloned();
    }
    let mut x = rng.random::<f64>() * total;
    for (a, wt) in allowed.iter().zip(&w) {
        if x < *wt {
            return Some(a.clone());
        }
        x -= wt;
    }
    allowed
        .iter()
        .zip(&w)
        .rev()
        .find(|(_, wt)| **wt > 0.0)
        .map(|(a, _)| a.clone())
}

/// `no_change` when the checklist has it, else its first false-alarm reason.
fn no_change(c: &Checklist) -> String {
    c.false_alarm_reasons
        .iter()
        .find(|r| r.as_str() == "no_change")
        .or(c.false_alarm_reasons.first())
        .cloned()
        .unwrap_or_default()
}

/// Decides every stop's visit. `events` and `controls` are codes in route order.
fn assign_roles(
    events: &[String],
    controls: &[String],
    checklist: &Checklist,
    plan: &TripPlan,
    rng: &mut ChaCha8Rng,
) -> Roles {
    let n = events.len();
    let mut order: Vec<usize> = (0..n).collect();
    order.shuffle(rng);
    let skip = plan.unvisited.min(n.saturating_sub(1));
    let not_reached = plan.not_reached.min((n - skip).saturating_sub(1));
    let visited = &order[skip + not_reached..];
    let [kc, kf, _] = outcome_mix(visited.len(), plan.confirmed_share, plan.false_alarm_share);
    let min_confirmed = (checklist.min_photos_confirmed as usize).clamp(1, 19);
    let mut visits: Vec<Option<EventVisit>> = vec![None; n];
    for &i in &order[skip..skip + not_reached] {
        let reason = pick(rng, NOT_REACHED_WEIGHTS, &checklist.not_reached_reasons);
        visits[i] = Some(EventVisit::NotReached {
            reason: reason.unwrap_or_default(),
        });
    }
    let (confirmed, rest) = visited.split_at(kc);
    let (false_alarms, _inconclusive) = rest.split_at(kf);
    for (j, &i) in visited.iter().enumerate() {
        visits[i] = Some(if j < kc {
            EventVisit::Confirmed {
                cause: pick(rng, CAUSE_WEIGHTS, &checklist.causes),
                near_photos: rng.random_range(2..=3usize).max(min_confirmed),
                far: false,
                early: false,
            }
        } else if j < kc + kf {
            EventVisit::FalseAlarm {
                reason: pick(rng, FALSE_ALARM_WEIGHTS, &checklist.false_alarm_reasons)
                    .unwrap_or_default(),
                photos: rng.random_range(1..=2usize),
            }
        } else {
            EventVisit::Inconclusive
        });
    }
    let mut flagged = Vec::new();
    if let Some(&first) = confirmed.first() {
        if plan.far_photo {
            flagged.push(first);
            if let Some(EventVisit::Confirmed { far, .. }) = &mut visits[first] {
                *far = true;
            }
        }
        if plan.early_photo {
            let k = confirmed[usize::from(plan.far_photo) % confirmed.len()];
            flagged.push(k);
            if let Some(EventVisit::Confirmed { early, .. }) = &mut visits[k] {
                *early = true;
            }
        }
    }
    let plain = |i: &&usize| !flagged.contains(*i);
    let dispute = if plan.disputed_pair {
        confirmed
            .iter()
            .find(plain)
            .or(false_alarms.iter().find(plain))
            .copied()
    } else {
        None
    };
    // Amend a report with clean evidence if there is one (a confirmed cause, else a
    // false-alarm reason), so the correction is not mixed up with a flag.
    let amend = if plan.amend {
        let free = |i: &usize| Some(*i) != dispute && !flagged.contains(i);
        confirmed
            .iter()
            .copied()
            .find(free)
            .or(false_alarms.iter().copied().find(free))
            .or(confirmed.iter().copied().find(|i| Some(*i) != dispute))
    } else {
        None
    };
    let route_len = n + controls.len();
    let controls = assign_controls(controls, checklist, plan, rng);
    let new_clearing_after =
        (plan.new_clearing && route_len > 0).then(|| rng.random_range(0..route_len));
    Roles {
        events: events.iter().cloned().zip(visits).collect(),
        controls,
        amend: amend.map(|i| events[i].clone()),
        dispute: dispute.map(|i| events[i].clone()),
        new_clearing_after,
    }
}

fn assign_controls(
    codes: &[String],
    checklist: &Checklist,
    plan: &TripPlan,
    rng: &mut ChaCha8Rng,
) -> Vec<(String, ControlVisit)> {
    if !plan.visit_controls {
        return Vec::new();
    }
    let found = if codes.len() >= 2 {
        ((codes.len() as f64) / 3.0).round().max(1.0) as usize
    } else {
        0
    };
    let mut order: Vec<usize> = (0..codes.len()).collect();
    order.shuffle(rng);
    let mut out: Vec<(String, ControlVisit)> = codes
        .iter()
        .map(|c| {
            (
                c.clone(),
                ControlVisit::NoClearing {
                    reason: no_change(checklist),
                },
            )
        })
        .collect();
    for &i in &order[..found] {
        out[i].1 = ControlVisit::Clearing {
            cause: pick(rng, CAUSE_WEIGHTS, &checklist.causes),
            area_ha: (rng.random_range(20..=150u32) as f64) / 100.0,
        };
    }
    out
}

// ---------------------------------------------------------------------------
// Time and place.

/// The nominal zone of a longitude: round(lon / 15) hours, in -12..=14 (common practice).
fn zone_of(lon: f64) -> FixedOffset {
    let hours = if lon.is_finite() {
        (lon / 15.0).round().clamp(-12.0, 14.0) as i32
    } else {
        0
    };
    FixedOffset::east_opt(hours * 3600).unwrap_or_else(|| Utc.fix())
}

/// The field day clock: visits from 07:30 to 17:00 local time, before expiry.
#[derive(Debug, Clone)]
struct Clock {
    tz: FixedOffset,
    next: DateTime<Utc>,
    expires: DateTime<Utc>,
}

const DAY_START: (u32, u32) = (7, 30);
const DAY_END: (u32, u32) = (17, 0);

impl Clock {
    fn new(
        issued: DateTime<Utc>,
        expires: DateTime<Utc>,
        first_day_after_issue: u32,
        tz: FixedOffset,
    ) -> Self {
        let day = issued.with_timezone(&tz).date_naive() + Days::new(first_day_after_issue.into());
        let start = day_start(tz, day).unwrap_or(issued);
        let next = if start <= issued {
            issued + Duration::minutes(30)
        } else {
            start
        };
        Clock { tz, next, expires }
    }

    /// The time of the next visit; the one after follows `minutes` later, on the next
    /// morning if that is past the end of the field day.
    fn visit(&mut self, minutes: i64) -> Result<DateTime<Utc>, String> {
        let t = self.next;
        if t + Duration::hours(1) >= self.expires {
            return Err(format!(
                "the trip does not fit before the bundle expires at {}",
                self.expires.to_rfc3339()
            ));
        }
        let next = t + Duration::minutes(minutes);
        let local = next.with_timezone(&self.tz);
        let end = NaiveTime::from_hms_opt(DAY_END.0, DAY_END.1, 0).unwrap_or_default();
        self.next =
            if local.time() > end || local.date_naive() != t.with_timezone(&self.tz).date_naive() {
                let day = t.with_timezone(&self.tz).date_naive() + Days::new(1);
                day_start(self.tz, day).unwrap_or(next)
            } else {
                next
            };
        Ok(t)
    }
}

fn day_start(tz: FixedOffset, day: NaiveDate) -> Option<DateTime<Utc>> {
    let time = NaiveTime::from_hms_opt(DAY_START.0, DAY_START.1, 0)?;
    tz.from_local_datetime(&day.and_time(time))
        .single()
        .map(|t| t.with_timezone(&Utc))
}

/// The point `dist_m` from (lat, lon) along initial bearing `bearing_deg` on a sphere
/// of radius [`EARTH_RADIUS_M`] (destination formula, common practice).
fn offset(lat: f64, lon: f64, dist_m: f64, bearing_deg: f64) -> (f64, f64) {
    let (phi1, lambda1) = (lat.to_radians(), lon.to_radians());
    let delta = dist_m / EARTH_RADIUS_M;
    let theta = bearing_deg.to_radians();
    let phi2 = (phi1.sin() * delta.cos() + phi1.cos() * delta.sin() * theta.cos()).asin();
    let lambda2 = lambda1
        + (theta.sin() * delta.sin() * phi1.cos()).atan2(delta.cos() - phi1.sin() * phi2.sin());
    let lon2 = (lambda2.to_degrees() + 540.0).rem_euclid(360.0) - 180.0;
    (phi2.to_degrees(), lon2)
}

/// Direction in [0, 360) from a bearing.
fn direction(bearing_deg: f64) -> f64 {
    let d = bearing_deg.rem_euclid(360.0);
    if d >= 359.99 { 0.0 } else { d }
}

// ---------------------------------------------------------------------------
// The device: a workspace, a camera folder, and the commands.

/// One photo to take.
#[derive(Debug, Clone)]
struct Shot {
    lat: f64,
    lon: f64,
    taken_at: DateTime<Utc>,
    direction_deg: f64,
}

/// One `report` command.
#[derive(Debug, Clone, Default)]
struct Entry {
    code: Option<String>,
    outcome: &'static str,
    reason: Option<String>,
    cause: Option<String>,
    time: Option<DateTime<Utc>>,
    at: Option<(f64, f64, f64)>,
    area_ha: Option<f64>,
    notes: String,
    shots: Vec<Shot>,
}

struct Device {
    ws: PathBuf,
    camera: PathBuf,
    zip: PathBuf,
    snap: Snapshot,
    tz: FixedOffset,
    plan: TripPlan,
    seed: u64,
    photos_taken: u64,
    reports: Vec<RecordedReport>,
}

/// Runs one `groundproof-field` command in `ws`.
fn kit(ws: &Path, args: &[OsString]) -> Result<(), String> {
    let mut all: Vec<OsString> = vec![
        "groundproof-field".into(),
        "--workspace".into(),
        ws.as_os_str().to_owned(),
    ];
    all.extend(args.iter().cloned());
    let shown = || {
        args.iter()
            .map(|a| a.to_string_lossy().into_owned())
            .collect::<Vec<_>>()
            .join(" ")
    };
    match field::run(all) {
        Ok(code) if code == ExitCode::SUCCESS => Ok(()),
        Ok(_) => Err(format!("groundproof-field {}: usage error", shown())),
        Err(e) => Err(format!("groundproof-field {}: {e}", shown())),
    }
}

fn fresh_dir(dir: &Path) -> Result<(), String> {
    if let Ok(mut entries) = std::fs::read_dir(dir)
        && entries.next().is_some()
    {
        return Err(format!(
            "{} already holds files; give an empty work folder",
            dir.display()
        ));
    }
    std::fs::create_dir_all(dir).map_err(|e| format!("create {}: {e}", dir.display()))
}

fn rfc3339(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
}

impl Device {
    fn open(
        bundle_zip: &Path,
        workdir: &Path,
        name: &str,
        plan: &TripPlan,
        seed: u64,
    ) -> Result<Self, String> {
        let ws = workdir.join(name);
        let camera = workdir.join(format!("{name}-camera"));
        fresh_dir(&ws)?;
        fresh_dir(&camera)?;
        kit(&ws, &["open".into(), bundle_zip.as_os_str().to_owned()])?;
        let snap = Snapshot::load(&ws).map_err(|e| e.to_string())?;
        Ok(Device {
            zip: workdir.join(format!("return-{name}.zip")),
            tz: zone_of(snap.start_lon),
            ws,
            camera,
            snap,
            plan: plan.clone(),
            seed,
            photos_taken: 0,
            reports: Vec::new(),
        })
    }

    /// Writes the photo files of `shots` into the camera folder.
    fn take(&mut self, shots: &[Shot]) -> Result<Vec<PathBuf>, String> {
        let mut paths = Vec::new();
        for s in shots {
            self.photos_taken += 1;
            let meta = PhotoMetaIn {
                taken_at_rfc3339: s
                    .taken_at
                    .with_timezone(&self.tz)
                    .to_rfc3339_opts(chrono::SecondsFormat::Secs, false),
                lat: s.lat,
                lon: s.lon,
                direction_deg: s.direction_deg,
            };
            let pixel_seed = self
                .seed
                .wrapping_mul(0x9E37_79B9_7F4A_7C15)
                .wrapping_add(self.photos_taken);
            let bytes = make_photo(
                pixel_seed,
                self.plan.photo_width,
                self.plan.photo_height,
                &meta,
            );
            if bytes.is_empty() {
                return Err("the photo encoder failed".into());
            }
            let path = self
                .camera
                .join(format!("IMG_{:04}.jpg", self.photos_taken));
            std::fs::write(&path, bytes).map_err(|e| format!("write {}: {e}", path.display()))?;
            paths.push(path);
        }
        Ok(paths)
    }

    /// The newest report of the outbox.
    fn last_report(&self) -> Result<Report, String> {
        let outbox = Outbox::open(&self.ws).map_err(|e| e.to_string())?;
        let mut all = outbox.reports().map_err(|e| e.to_string())?;
        all.pop()
            .map(|s| s.report)
            .ok_or_else(|| "the outbox holds no report".to_owned())
    }

    fn record(&mut self, e: Entry) -> Result<&mut RecordedReport, String> {
        let paths = self.take(&e.shots)?;
        let mut args: Vec<OsString> = vec!["report".into()];
        match &e.code {
            Some(code) => args.push(code.into()),
            None => args.push("--new-clearing".into()),
        }
        args.extend(["--outcome".into(), e.outcome.into()]);
        if let Some(r) = &e.reason {
            args.extend(["--reason".into(), r.into()]);
        }
        if let Some(c) = &e.cause {
            args.extend(["--cause".into(), c.into()]);
        }
        if let Some(t) = e.time {
            args.extend(["--time".into(), rfc3339(t).into()]);
        }
        if let Some((lat, lon, acc)) = e.at {
            args.extend(["--at".into(), format!("{lat:.7},{lon:.7},{acc:.0}").into()]);
        }
        if let Some(a) = e.area_ha {
            args.extend(["--area-ha".into(), format!("{a}").into()]);
        }
        if !e.notes.is_empty() {
            args.extend(["--notes".into(), e.notes.clone().into()]);
        }
        for p in &paths {
            args.extend(["--photo".into(), p.as_os_str().to_owned()]);
        }
        kit(&self.ws, &args)?;
        let r = self.last_report()?;
        if r.outcome != e.outcome || r.target.code() != e.code.as_deref() {
            return Err(format!(
                "the kit recorded {:?}, not the report asked for",
                r.target
            ));
        }
        self.reports.push(recorded(&r));
        let last = self.reports.len() - 1;
        Ok(&mut self.reports[last])
    }

    /// `n` photos within [`NEAR_PHOTO_MAX_M`] of `centre`, a few minutes apart from `t`,
    /// each looking towards the centre.
    fn near_shots(
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

    fn visit_event(
        &mut self,
        e: &FieldEvent,
        visit: &EventVisit,
        clock: &mut Clock,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let spent = rng.random_range(80..=120i64);
        let t = clock.visit(spent)?;
        let centre = (e.lat, e.lon);
        let code = Some(e.code.clone());
        match visit {
            EventVisit::NotReached { reason } => {
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
                    code,
                    outcome: OUTCOME_NOT_REACHED,
                    reason: Some(reason.clone()),
                    time: Some(t),
                    at: Some((lat, lon, 10.0)),
                    notes: notes.into(),
                    ..Entry::default()
                })?;
            }
            EventVisit::Confirmed {
                cause,
                near_photos,
                far,
                early,
            } => {
                let mut shots = Self::near_shots(centre, t, *near_photos, rng);
                let mut far_at = None;
                if *far {
                    let d = rng.random_range(FAR_PHOTO_RANGE_M.0..FAR_PHOTO_RANGE_M.1);
                    let b: f64 = rng.random_range(0.0..360.0);
                    let (lat, lon) = offset(e.lat, e.lon, d, b);
                    far_at = Some((shots.len(), d));
                    shots.push(Shot {
                        lat,
                        lon,
                        taken_at: t + Duration::minutes(40),
                        direction_deg: direction(b + 180.0),
                    });
                }
                let mut early_at = None;
                if *early {
                    let detected = NaiveDate::parse_from_str(&e.first_detected, "%Y-%m-%d")
                        .map_err(|_| format!("event {}: bad first_detected", e.code))?;
                    let days_before = rng.random_range(10..=30u64);
                    let day = detected - Days::new(days_before);
                    let taken = day_start(self.tz, day)
                        .map(|s| s + Duration::minutes(150))
                        .ok_or("no local time for the early photo")?;
                    if let Some(last) = shots.last_mut() {
                        last.taken_at = taken;
                        early_at = Some((shots.len() - 1, taken));
                    }
                }
                let notes = cause_note(cause.as_deref());
                let first_detected = e.first_detected.clone();
                let r = self.record(Entry {
                    code,
                    outcome: OUTCOME_CONFIRMED,
                    cause: cause.clone(),
                    time: Some(t),
                    notes: notes.into(),
                    shots,
                    ..Entry::default()
                })?;
                if let Some((i, d)) = far_at {
                    let sha256 = r.photo_sha256.get(i).cloned().unwrap_or_default();
                    r.flags.push(ExpectedFlag::PhotoFar {
                        sha256,
                        distance_m: d,
                    });
                }
                if let Some((i, taken_at)) = early_at {
                    let sha256 = r.photo_sha256.get(i).cloned().unwrap_or_default();
                    r.flags.push(ExpectedFlag::PhotoBeforeDetection {
                        sha256,
                        taken_at,
                        first_detected,
                    });
                }
            }
            EventVisit::FalseAlarm { reason, photos } => {
                let shots = Self::near_shots(centre, t, *photos, rng);
                self.record(Entry {
                    code,
                    outcome: OUTCOME_FALSE_ALARM,
                    reason: Some(reason.clone()),
                    time: Some(t),
                    notes: reason_note(reason).into(),
                    shots,
                    ..Entry::default()
                })?;
            }
            EventVisit::Inconclusive => {
                let shots = Self::near_shots(centre, t, 1, rng);
                let (lat, lon) = offset(e.lat, e.lon, rng.random_range(10.0..60.0), 90.0);
                self.record(Entry {
                    code,
                    outcome: OUTCOME_INCONCLUSIVE,
                    time: Some(t),
                    at: Some((lat, lon, 8.0)),
                    notes: "Dense regrowth and standing dead trees; could not tell if recent."
                        .into(),
                    shots,
                    ..Entry::default()
                })?;
            }
        }
        Ok(())
    }

    fn visit_control(
        &mut self,
        code: &str,
        here: (f64, f64),
        visit: &ControlVisit,
        clock: &mut Clock,
        rng: &mut ChaCha8Rng,
    ) -> Result<(), String> {
        let t = clock.visit(rng.random_range(80..=120i64))?;
        let min = (self.snap.checklist.min_photos_confirmed as usize).clamp(2, 20);
        let entry = match visit {
            ControlVisit::NoClearing { reason } => Entry {
                code: Some(code.to_owned()),
                outcome: OUTCOME_FALSE_ALARM,
                reason: Some(reason.clone()),
                time: Some(t),
                notes: "Control point: intact forest, no clearing.".into(),
                shots: Self::near_shots(here, t, 1, rng),
                ..Entry::default()
            },
            ControlVisit::Clearing { cause, area_ha } => Entry {
                code: Some(code.to_owned()),
                outcome: OUTCOME_CONFIRMED,
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

    fn new_clearing(
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
    /// with a note, on the newest report of event `code`.
    fn amend(&mut self, code: &str, checklist: &Checklist) -> Result<(), String> {
        let Some(base) = self
            .reports
            .iter()
            .rev()
            .find(|r| r.target.code() == Some(code))
            .cloned()
        else {
            return Ok(());
        };
        let mut args: Vec<OsString> = vec!["amend".into(), base.report_id.to_string().into()];
        let note = if base.outcome == OUTCOME_FALSE_ALARM {
            let other = checklist
                .false_alarm_reasons
                .iter()
                .find(|c| Some(c.as_str()) != base.reason.as_deref());
            if let Some(r) = other {
                args.extend(["--reason".into(), r.into()]);
            }
            "Reason corrected at camp after looking at the photos again."
        } else {
            let other = checklist
                .causes
                .iter()
                .find(|c| Some(c.as_str()) != base.cause.as_deref());
            if let Some(c) = other {
                args.extend(["--cause".into(), c.into()]);
            }
            "Cause corrected at camp after talking with the people working the plot."
        };
        args.extend(["--notes".into(), note.into()]);
        kit(&self.ws, &args)?;
        let r = self.last_report()?;
        if r.supersedes != Some(base.report_id) {
            return Err("the amendment does not name the report it corrects".into());
        }
        self.reports.push(recorded(&r));
        Ok(())
    }

    /// The second device's report on `event`, disagreeing with `base` two days later (same
    /// time of day, so inside the field day).
    fn disagree(
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

    /// `pack --out workdir/return-NAME.zip`.
    fn pack(self) -> Result<DeviceReturn, String> {
        kit(
            &self.ws,
            &[
                "pack".into(),
                "--out".into(),
                self.zip.as_os_str().to_owned(),
            ],
        )?;
        Ok(DeviceReturn {
            workspace: self.ws,
            zip: self.zip,
            reports: self.reports,
        })
    }
}

fn recorded(r: &Report) -> RecordedReport {
    RecordedReport {
        report_id: r.report_id,
        target: r.target.clone(),
        outcome: r.outcome.clone(),
        reason: r.reason.clone(),
        cause: r.cause.clone(),
        observed_at: r.observed_at,
        photo_sha256: r.photos.iter().map(|p| p.sha256.clone()).collect(),
        supersedes: r.supersedes,
        flags: Vec::new(),
    }
}

/// An invented field note for a confirmed clearing.
fn cause_note(cause: Option<&str>) -> &'static str {
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
fn reason_note(reason: &str) -> &'static str {
    match reason {
        "no_change" => "Closed canopy, no sign of cutting.",
        "cloud_or_shadow" => "Intact forest; the alert area lies in the shadow of the ridge.",
        "seasonal_water" => "Flooded backswamp, forest standing in the water.",
        "cleared_before_window" => "Old field, secondary growth several years old.",
        "not_forest" => "Natural grassland, never forest.",
        _ => "No forest loss found.",
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::{MultiPolygon, Point, polygon};
    use geographiclib_rs::{Geodesic, InverseGeodesic};
    use groundproof_sync::bundle::{
        BundleEvent, BundleHeader, ControlPoint, StartPoint, open_bundle, write_bundle,
    };
    use groundproof_sync::photo::read_photo_meta;
    use groundproof_sync::returns::{ReturnLimits, open_return, validate_report};
    use std::collections::BTreeSet;

    const KEY: [u8; 32] = [0x3c; 32];

    /// Geodesic distance on WGS 84 (Karney's algorithm, geographiclib-rs 0.2.7).
    fn geodesic_m(a: (f64, f64), b: (f64, f64)) -> f64 {
        Geodesic::wgs84().inverse(a.0, a.1, b.0, b.1)
    }

    /// An invented trip of 10 events and 3 control points around (-3.5, -60.8),
    /// valid around now (coordinates arbitrary, common practice).
    fn write_test_bundle(path: &Path) {
        let now = Utc::now();
        let header = BundleHeader {
            bundle_id: Uuid::from_u128(0x7e57_0000_0000_4000_8000_0000_0000_0001),
            team: "Team Amber".into(),
            mode: "response".into(),
            issued_at: now - Duration::hours(2),
            due_at: now + Duration::days(7),
            expires_at: now + Duration::days(30),
            upload_key_id: "uk-test-1".into(),
            seed: None,
        };
        let events: Vec<BundleEvent> = (0..10)
            .map(|i| {
                let x = -60.9 + 0.02 * f64::from(i);
                let y = -3.5 - 0.01 * f64::from(i % 3);
                BundleEvent {
                    code: format!("K{:04}", 100 + i),
                    event_id: 500 + i64::from(i),
                    footprint: MultiPolygon::new(vec![polygon![
                        (x: x, y: y), (x: x + 0.002, y: y), (x: x + 0.002, y: y + 0.002), (x: x, y: y + 0.002)
                    ]]),
                    centroid: Point::new(x + 0.001, y + 0.001),
                    area_ha: 4.0 + f64::from(i),
                    first_detected: format!("2025-0{}-1{}", 1 + i % 9, i % 10),
                    last_detected: "2025-12-20".into(),
                    sources: vec!["optical-10m".into()],
                    confidence: "confirmed".into(),
                    corroborated: false,
                    priority: 10.0 - f64::from(i),
                    visit_order: 2 * (i as u32) + 1,
                    inclusion_probability: None,
                    stratum: None,
                }
            })
            .collect();
        let controls: Vec<ControlPoint> = (0..3)
            .map(|i| ControlPoint {
                code: format!("C{:04}", i + 1),
                point: Point::new(-60.89 + 0.06 * f64::from(i), -3.53),
                visit_order: 4 + 6 * i as u32,
                inclusion_probability: None,
            })
            .collect();
        let mut route: Vec<(u32, String)> = events
            .iter()
            .map(|e| (e.visit_order, e.code.clone()))
            .chain(controls.iter().map(|c| (c.visit_order, c.code.clone())))
            .collect();
        route.sort();
        let route: Vec<String> = route.into_iter().map(|(_, c)| c).collect();
        let start = StartPoint {
            name: "field station".into(),
            point: Point::new(-60.92, -3.49),
        };
        let mut out = std::io::Cursor::new(Vec::new());
        write_bundle(
            &mut out,
            &header,
            &events,
            &controls,
            &start,
            &route,
            &Checklist::default_v1(),
            &KEY,
            Vec::new(),
        )
        .expect("test bundle is valid");
        std::fs::write(path, out.into_inner()).expect("write bundle");
    }

    fn small_plan() -> TripPlan {
        TripPlan {
            photo_width: 160,
            photo_height: 120,
            ..TripPlan::default()
        }
    }

    fn open(zip: &Path) -> groundproof_sync::returns::OpenedReturn {
        let mut r = open_return(zip, |_, _| Some(KEY), &ReturnLimits::default()).expect("opens");
        r.apply_checklist(&Checklist::default_v1());
        r
    }

    #[test]
    fn trip_return_follows_the_plan() {
        let dir = tempfile::tempdir().expect("tmp");
        let bundle_path = dir.path().join("bundle.zip");
        write_test_bundle(&bundle_path);
        let bundle = open_bundle(&bundle_path, Utc::now()).expect("bundle opens");
        let out = make_trip_return(&bundle_path, &dir.path().join("work"), &small_plan(), 7)
            .expect("trip");
        assert_eq!(out.returns.len(), 2);
        let first = open(&out.returns[0].zip);
        assert!(first.rejected.is_empty(), "{:?}", first.rejected);
        assert_eq!(first.reports.len(), out.returns[0].reports.len());
        let checklist = Checklist::default_v1();
        for r in &first.reports {
            assert_eq!(validate_report(r, &checklist), Ok(()));
            // Observed inside the bundle's window.
            assert!(
                r.observed_at > bundle.manifest.issued_at
                    && r.observed_at < bundle.manifest.expires_at
            );
        }
        let centroid = |code: &str| {
            let e = bundle
                .events
                .iter()
                .find(|e| e.code == code)
                .expect("event");
            (e.centroid.y(), e.centroid.x())
        };
        let flags: Vec<&ExpectedFlag> = out.reports().flat_map(|r| r.flags.iter()).collect();
        // The far photo: > 500 m from its event by its own EXIF (brief's threshold).
        let far = out
            .reports()
            .find(|r| r.flags.iter().any(|f| f.name() == "photo_far_from_target"))
            .expect("a far photo");
        let Some(ExpectedFlag::PhotoFar { sha256, .. }) = far.flags.first() else {
            panic!("far flag first");
        };
        let meta = read_photo_meta(&first.photo_bytes(sha256).expect("photo")).expect("jpeg");
        let d = geodesic_m(
            centroid(far.target.code().expect("code")),
            (meta.lat.expect("lat"), meta.lon.expect("lon")),
        );
        assert!(d > 500.0, "far photo only {d} m away");
        // Every other photo of an event report lies within 30 m (+1 m for the spherical
        // offset against the WGS 84 geodesic) of its centroid.
        for r in first.reports.iter() {
            if let Target::Event { code, .. } = &r.target {
                for p in &r.photos {
                    if &p.sha256 == sha256 {
                        continue;
                    }
                    let d = geodesic_m(centroid(code), (p.lat.expect("lat"), p.lon.expect("lon")));
                    assert!(d < NEAR_PHOTO_MAX_M + 1.0, "{code}: photo {d} m away");
                }
            }
        }
        // The early photo: EXIF time before the first detection (00:00 UTC of that day).
        let early = flags
            .iter()
            .find_map(|f| match f {
                ExpectedFlag::PhotoBeforeDetection { sha256, .. } => Some(sha256.clone()),
                _ => None,
            })
            .expect("an early photo");
        let (r, p) = first
            .reports
            .iter()
            .find_map(|r| r.photos.iter().find(|p| p.sha256 == early).map(|p| (r, p)))
            .expect("early photo in the return");
        let code = r.target.code().expect("code");
        let e = bundle
            .events
            .iter()
            .find(|e| e.code == code)
            .expect("event");
        let detected = NaiveDate::parse_from_str(&e.first_detected, "%Y-%m-%d")
            .expect("date")
            .and_hms_opt(0, 0, 0)
            .expect("midnight")
            .and_utc();
        assert!(p.taken_at.expect("EXIF time") < detected);
        // Not reached: reason access or safety, no photos.
        let nr: Vec<_> = first
            .reports
            .iter()
            .filter(|r| r.outcome == "not_reached")
            .collect();
        assert_eq!(nr.len(), 1);
        assert!(nr[0].photos.is_empty());
        assert!(matches!(nr[0].reason.as_deref(), Some("access" | "safety")));
        // The new clearing, with its area and position.
        let nc: Vec<_> = first
            .reports
            .iter()
            .filter(|r| r.target == Target::NewClearing)
            .collect();
        assert_eq!(nc.len(), 1);
        assert!(nc[0].area_ha.is_some() && nc[0].position.is_some());
        // The amendment supersedes another report of the return, on the same target.
        let amended: Vec<_> = first
            .reports
            .iter()
            .filter(|r| r.supersedes.is_some())
            .collect();
        assert_eq!(amended.len(), 1);
        let base = first
            .reports
            .iter()
            .find(|r| Some(r.report_id) == amended[0].supersedes)
            .expect("superseded report in the return");
        assert_eq!(base.target, amended[0].target);
        assert_eq!(base.outcome, amended[0].outcome);
        assert!(base.cause != amended[0].cause || base.reason != amended[0].reason);
        // Controls: all visited; confirmed = clearing found, else false_alarm/no_change.
        let controls: Vec<_> = first
            .reports
            .iter()
            .filter(|r| matches!(r.target, Target::Control { .. }))
            .collect();
        assert_eq!(controls.len(), 3);
        assert!(controls.iter().any(|r| r.outcome == "confirmed"));
        assert!(controls.iter().all(|r| r.outcome == "confirmed"
            || (r.outcome == "false_alarm" && r.reason.as_deref() == Some("no_change"))));
        // The mix: every outcome present; one event with no report at all.
        let outcomes: BTreeSet<&str> = first.reports.iter().map(|r| r.outcome.as_str()).collect();
        assert_eq!(outcomes.len(), 4, "{outcomes:?}");
        assert_eq!(out.unvisited.len(), 1);
        assert!(
            !first
                .reports
                .iter()
                .any(|r| r.target.code() == Some(out.unvisited[0].as_str()))
        );
        // The dispute: the second device disagrees with the first's counted report
        // (the one no amendment supersedes) within a few days.
        let code = out.disputed.clone().expect("disputed event");
        let second = open(&out.returns[1].zip);
        assert!(second.rejected.is_empty(), "{:?}", second.rejected);
        assert_eq!(second.reports.len(), 1);
        let theirs = &second.reports[0];
        let superseded: BTreeSet<_> = first.reports.iter().filter_map(|r| r.supersedes).collect();
        let ours = first
            .reports
            .iter()
            .find(|r| r.target.code() == Some(code.as_str()) && !superseded.contains(&r.report_id))
            .expect("first device's report");
        let pair: BTreeSet<&str> = [ours.outcome.as_str(), theirs.outcome.as_str()].into();
        assert_eq!(pair, BTreeSet::from(["confirmed", "false_alarm"]));
        let gap = theirs.observed_at - ours.observed_at;
        assert!(gap > Duration::zero() && gap <= Duration::days(7));
        assert_eq!(validate_report(theirs, &checklist), Ok(()));
    }

    /// What must not change between runs with the same seed.
    fn shape(o: &TripOutcome) -> Vec<String> {
        o.reports()
            .map(|r| {
                let flags: Vec<_> = r.flags.iter().map(ExpectedFlag::name).collect();
                format!(
                    "{:?} {} {:?} {:?} {} {:?} {} {flags:?}",
                    r.target,
                    r.outcome,
                    r.reason,
                    r.cause,
                    r.observed_at,
                    r.photo_sha256,
                    r.supersedes.is_some()
                )
            })
            .collect()
    }

    #[test]
    fn same_seed_same_reports() {
        let dir = tempfile::tempdir().expect("tmp");
        let bundle_path = dir.path().join("bundle.zip");
        write_test_bundle(&bundle_path);
        let plan = TripPlan {
            disputed_pair: false,
            ..small_plan()
        };
        let a = make_trip_return(&bundle_path, &dir.path().join("a"), &plan, 3).expect("a");
        let b = make_trip_return(&bundle_path, &dir.path().join("b"), &plan, 3).expect("b");
        let c = make_trip_return(&bundle_path, &dir.path().join("c"), &plan, 4).expect("c");
        assert_eq!(shape(&a), shape(&b));
        assert_eq!(a.unvisited, b.unvisited);
        let shas = |o: &TripOutcome| -> BTreeSet<String> {
            o.reports().flat_map(|r| r.photo_sha256.clone()).collect()
        };
        // Different pixel seeds give different photo bytes.
        assert!(shas(&a).is_disjoint(&shas(&c)));
        // A used work folder is refused rather than mixed.
        assert!(make_trip_return(&bundle_path, &dir.path().join("a"), &plan, 3).is_err());
    }

    #[test]
    fn outcome_mix_counts() {
        // Hand-computed largest-remainder counts (6 x 0.6/0.3/0.1 = 3.6/1.8/0.6).
        assert_eq!(outcome_mix(6, 0.6, 0.3), [3, 2, 1]);
        // 8 x 0.6/0.3/0.1 = 4.8/2.4/0.8 -> floors 4/2/0, remainders to confirmed and inconclusive.
        assert_eq!(outcome_mix(8, 0.6, 0.3), [5, 2, 1]);
        assert_eq!(outcome_mix(2, 0.6, 0.3), [1, 1, 0]);
        assert_eq!(outcome_mix(0, 0.6, 0.3), [0, 0, 0]);
        assert_eq!(outcome_mix(5, 1.0, 0.0), [5, 0, 0]);
        for m in 0..40 {
            assert_eq!(outcome_mix(m, 0.6, 0.3).iter().sum::<usize>(), m);
        }
    }

    #[test]
    fn roles_cover_every_stop() {
        let events: Vec<String> = (0..8).map(|i| format!("K{i:04}")).collect();
        let controls: Vec<String> = (0..3).map(|i| format!("C{i:04}")).collect();
        let c = Checklist::default_v1();
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        let roles = assign_roles(&events, &controls, &c, &TripPlan::default(), &mut rng);
        assert_eq!(roles.events.len(), 8);
        assert_eq!(roles.unvisited().len(), 1);
        let count = |f: &dyn Fn(&EventVisit) -> bool| {
            roles
                .events
                .iter()
                .filter(|(_, v)| v.as_ref().is_some_and(f))
                .count()
        };
        assert_eq!(count(&|v| matches!(v, EventVisit::NotReached { .. })), 1);
        // 6 visited: 3/2/1 as in outcome_mix_counts.
        assert_eq!(count(&|v| matches!(v, EventVisit::Confirmed { .. })), 3);
        assert_eq!(count(&|v| matches!(v, EventVisit::FalseAlarm { .. })), 2);
        assert_eq!(
            count(&|v| matches!(v, EventVisit::Confirmed { far: true, .. })),
            1
        );
        assert_eq!(
            count(&|v| matches!(v, EventVisit::Confirmed { early: true, .. })),
            1
        );
        let dispute = roles.dispute.clone().expect("dispute");
        assert!(matches!(
            roles.event(&dispute),
            Some(EventVisit::Confirmed {
                far: false,
                early: false,
                ..
            })
        ));
        // The three confirmed events carry the far photo, the early photo and the
        // dispute, so the amendment goes to a false alarm.
        let amend = roles.amend.clone().expect("amend");
        assert_ne!(amend, dispute);
        assert!(matches!(
            roles.event(&amend),
            Some(EventVisit::FalseAlarm { .. })
        ));
        let found = roles
            .controls
            .iter()
            .filter(|(_, v)| matches!(v, ControlVisit::Clearing { .. }))
            .count();
        assert_eq!(found, 1); // round(3 / 3)
        assert!(roles.new_clearing_after.is_some_and(|i| i < 11));
    }

    #[test]
    fn spherical_offset_matches_the_geodesic() {
        // The spherical destination against Karney's WGS 84 inverse (geographiclib-rs
        // 0.2.7). Over short distances the ellipsoid's radius of curvature lies between
        // the meridian radius at the equator, a(1 - e^2) = 6,335,439 m, and the radius at
        // the poles, a / sqrt(1 - e^2) = 6,399,594 m (WGS 84 a = 6,378,137 m,
        // f = 1/298.257223563), i.e. -0.56% to +0.45% of the 6,371,008.8 m sphere;
        // hence a 0.6% bound.
        for (d, b) in [(30.0, 0.0), (800.0, 37.0), (2500.0, 250.0), (700.0, 90.0)] {
            let (lat, lon) = offset(-3.5, -60.8, d, b);
            let g = geodesic_m((-3.5, -60.8), (lat, lon));
            assert!((g - d).abs() < 0.006 * d, "{d} m at {b}: geodesic {g}");
        }
    }

    #[test]
    fn clock_keeps_to_field_days() {
        let tz = zone_of(-60.8);
        assert_eq!(tz.local_minus_utc(), -4 * 3600); // -60.8 / 15 = -4.05 -> -4 h
        let issued = Utc
            .with_ymd_and_hms(2026, 3, 2, 15, 0, 0)
            .single()
            .expect("t");
        let mut clock = Clock::new(issued, issued + Duration::days(30), 1, tz);
        let first = clock.visit(100).expect("visit");
        // 07:30 at -04:00 on 2026-03-03 is 11:30 UTC.
        assert_eq!(
            first,
            Utc.with_ymd_and_hms(2026, 3, 3, 11, 30, 0)
                .single()
                .expect("t")
        );
        let end = NaiveTime::from_hms_opt(17, 0, 0).expect("t");
        for _ in 0..20 {
            let t = clock.visit(100).expect("visit").with_timezone(&tz).time();
            assert!(t >= NaiveTime::from_hms_opt(7, 30, 0).expect("t") && t <= end);
        }
        let mut short = Clock::new(issued, issued + Duration::hours(20), 1, tz);
        assert!(short.visit(100).is_err());
    }
}
