//! Which events (and control points) a trip visits.

use crate::alerts::events::{RankedEvent, ranked_events};
use crate::domain::{BundleMode, Confidence, Day, EventStatus, LonLat};
use crate::error::{Error, Result};
use crate::planning::coords::LatLon;
use crate::planning::{
    DEFAULT_TRIES_PER_POINT, cochran_sample_size, draw_stratified, place_controls,
};
use crate::platform::settings::Settings;
use crate::platform::storage::{Db, EventFilter};
use geo::{Intersects, MultiPolygon};
use serde::Serialize;
use std::collections::BTreeMap;

/// z for a two-sided 95% interval (the 0.975 normal quantile).
const Z95: f64 = 1.959_963_984_540_054;

/// Everything a coordinator says about a trip.
#[derive(Debug, Clone, PartialEq)]
pub struct TripRequest {
    pub team: String,
    pub mode: BundleMode,
    pub zone: Option<String>,
    /// An extent drawn by the coordinator (lon/lat polygon).
    pub extent: Option<MultiPolygon<f64>>,
    pub from: Option<Day>,
    pub to: Option<Day>,
    pub source: Option<String>,
    pub confidence: Option<Confidence>,
    pub min_area_ha: Option<f64>,
    /// Only events whose reconciled status is one of these (e.g.
    /// `unvisited`, `inconclusive`, `disputed`); empty takes any status.
    pub statuses: Vec<String>,
    /// The reconciled status of each event that has one (an event missing
    /// here is `unvisited`). Planning sits below reconciliation, so the
    /// caller computes them (`crate::statistics::kept::event_statuses`);
    /// needed only when `statuses` is not empty.
    pub reconciled: Option<BTreeMap<i64, EventStatus>>,
    /// Most events to take (response mode default 20; in assessment mode a
    /// cap that the sample must fit under).
    pub max: Option<usize>,
    pub start: LonLat,
    pub start_name: String,
    /// Target margin of error of the confirmation rate, per stratum, in (0, 0.5).
    pub margin: f64,
    pub controls: usize,
    pub control_min_distance_m: f64,
    pub seed: Option<u64>,
    pub walking_kmh: f64,
    pub due_days: i64,
    pub expires_days: i64,
    pub as_of: Day,
    /// Issue time to record instead of now (for recording a trip made
    /// earlier, and for the demo's past trips); due and expiry count from it.
    pub issued_at: Option<chrono::DateTime<chrono::Utc>>,
    /// Events chosen by hand (ids, in this order), instead of the filters'
    /// choice: what a coordinator kept, added and removed in the preview.
    /// Response mode only (a hand-edited sample has no inclusion
    /// probabilities).
    pub events: Option<Vec<i64>>,
    /// The stop codes in visiting order that the coordinator saw in the
    /// preview; issuing refuses (a conflict, nothing stored) when the plan
    /// made now differs, because the facts changed in between.
    pub expect_order: Option<Vec<String>>,
}

impl TripRequest {
    /// A response trip with the documented defaults.
    pub fn response(team: &str, start: LonLat) -> TripRequest {
        TripRequest {
            team: team.to_string(),
            mode: BundleMode::Response,
            zone: None,
            extent: None,
            from: None,
            to: None,
            source: None,
            confidence: None,
            min_area_ha: None,
            statuses: Vec::new(),
            reconciled: None,
            max: None,
            start,
            start_name: "start".into(),
            margin: 0.1,
            controls: 0,
            control_min_distance_m: 250.0,
            seed: None,
            walking_kmh: 3.0,
            due_days: 7,
            expires_days: 30,
            as_of: Day::today(),
            issued_at: None,
            events: None,
            expect_order: None,
        }
    }
}

/// One chosen event.
#[derive(Debug, Clone, PartialEq)]
pub struct Chosen {
    pub event: RankedEvent,
    pub stratum: Option<String>,
    pub stratum_population: Option<u64>,
    pub inclusion_probability: Option<f64>,
}

/// The sample plan of one stratum.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StratumPlan {
    pub stratum: String,
    pub population: u64,
    pub sample: u64,
    pub inclusion_probability: f64,
}

/// What a trip visits.
#[derive(Debug, Clone, PartialEq)]
pub struct Selection {
    pub events: Vec<Chosen>,
    pub controls: Vec<LatLon>,
    pub strata: Vec<StratumPlan>,
    pub seed: Option<u64>,
}

/// The default stratum of an event: its sources × its highest confidence.
pub fn stratum_of(e: &RankedEvent) -> String {
    let sources: Vec<&str> = e
        .record
        .attrs
        .per_source
        .keys()
        .map(String::as_str)
        .collect();
    format!(
        "{}|{}",
        sources.join("+"),
        e.record.attrs.highest_confidence
    )
}

/// Choose the events and control points of a trip.
pub fn select(db: &Db, settings: &Settings, req: &TripRequest) -> Result<Selection> {
    check_request(req)?;
    let zone_shape = zone_shape(db, req)?;
    let pool = match &req.events {
        Some(ids) => hand_picked(db, settings, req, ids)?,
        None => candidate_pool(db, settings, req)?,
    };
    if pool.is_empty() && (req.mode == BundleMode::Response || req.controls == 0) {
        return Err(Error::Invalid(
            "the selection holds no events: widen the zone, dates, source or minimum area".into(),
        ));
    }
    let seed = req.seed.unwrap_or_else(|| rand::random::<u64>() >> 1);
    let (events, strata) = match req.mode {
        BundleMode::Response if req.events.is_some() => {
            (response_events(pool, Some(usize::MAX)), Vec::new())
        }
        BundleMode::Response => (response_events(pool, req.max), Vec::new()),
        BundleMode::Assessment => sample(pool, req, seed)?,
    };
    let controls = controls(db, req, zone_shape.as_ref(), seed)?;
    Ok(Selection {
        events,
        controls,
        strata,
        seed: (req.mode == BundleMode::Assessment).then_some(seed),
    })
}

/// The request's own numbers: a margin in (0, 0.5) and a maximum of at least 1.
fn check_request(req: &TripRequest) -> Result<()> {
    if !(req.margin > 0.0 && req.margin < 0.5) {
        return Err(Error::Invalid(format!(
            "margin of error {}: expected a number in (0, 0.5), e.g. 0.1 for ±10 points",
            req.margin
        )));
    }
    if req.max == Some(0) {
        return Err(Error::Invalid("--max must be at least 1".into()));
    }
    if let Some(ids) = &req.events {
        if req.mode == BundleMode::Assessment {
            return Err(Error::Invalid(
                "events chosen by hand: only a response trip can be edited by hand (an assessment sample is drawn at random so that its inclusion probabilities hold)".into(),
            ));
        }
        if ids.len() > MAX_HAND_PICKED {
            return Err(Error::Invalid(format!(
                "{} events chosen by hand: at most {MAX_HAND_PICKED} per trip",
                ids.len()
            )));
        }
    }
    Ok(())
}

/// Most events a coordinator may choose by hand for one trip (our choice:
/// more than a field team visits in a fortnight, and the route stays quick).
pub const MAX_HAND_PICKED: usize = 200;

/// The events named by hand, in the order given, each resolved through
/// merges (an event merged into one already named is taken once) and ranked
/// on the request's day. An id that names no event is an error that says
/// which.
fn hand_picked(
    db: &Db,
    settings: &Settings,
    req: &TripRequest,
    ids: &[i64],
) -> Result<Vec<RankedEvent>> {
    let mut out: Vec<RankedEvent> = Vec::new();
    for &id in ids {
        let rec = db.read(|r| r.event_resolved(id))?.ok_or_else(|| {
            Error::NotFound(format!(
                "event {} (#{id}) chosen by hand does not exist",
                crate::planning::codes::event_code(id)
            ))
        })?;
        if out.iter().any(|e| e.record.id == rec.id) {
            continue;
        }
        let priority = crate::alerts::events::priority_of(&rec, &settings.priority, req.as_of);
        out.push(RankedEvent {
            record: rec,
            priority,
        });
    }
    Ok(out)
}

/// An event named as a coordinator types it: its short code (`K0417`),
/// its id (`417`) or `#417`. Codes wrap past 220,000 ids; the smallest id
/// with the code is meant.
pub fn parse_event_ref(raw: &str) -> Result<i64> {
    let s = raw.trim();
    let bad = || {
        Error::Invalid(format!(
            "'{raw}' is not an event code (a letter and four digits, such as K0417) or an event id"
        ))
    };
    let digits = s.strip_prefix('#').unwrap_or(s);
    if !digits.is_empty() && digits.len() <= 12 && digits.bytes().all(|b| b.is_ascii_digit()) {
        return digits.parse::<i64>().map_err(|_| bad());
    }
    let up = s.to_ascii_uppercase();
    // Byte slicing only after the first character is known to be ASCII:
    // typed text may start with any character.
    let letter = up.bytes().next().filter(u8::is_ascii).ok_or_else(bad)?;
    let num = up.get(1..).ok_or_else(bad)?;
    if num.len() != 4 || !num.bytes().all(|b| b.is_ascii_digit()) {
        return Err(bad());
    }
    let k = crate::planning::codes::LETTERS
        .iter()
        .position(|&l| l == letter)
        .ok_or_else(bad)?;
    let id = k as i64 * 10_000 + num.parse::<i64>().map_err(|_| bad())?;
    Ok(id)
}

/// The shape of the requested zone, if one was named (an unknown name is an error).
fn zone_shape(db: &Db, req: &TripRequest) -> Result<Option<MultiPolygon<f64>>> {
    let Some(z) = &req.zone else {
        return Ok(None);
    };
    let zone = db
        .read(|r| r.zones())?
        .into_iter()
        .find(|k| &k.name == z)
        .ok_or_else(|| Error::NotFound(format!("unknown zone '{z}'")))?;
    Ok(crate::alerts::events::parse_multipolygon(&zone.geometry))
}

/// The ranked events that pass every filter of the request, in priority order.
fn candidate_pool(db: &Db, settings: &Settings, req: &TripRequest) -> Result<Vec<RankedEvent>> {
    let filter = EventFilter {
        zone: req.zone.clone(),
        from: req.from,
        to: req.to,
        source: req.source.clone(),
        min_area_ha: req.min_area_ha,
        limit: None,
    };
    let mut pool = ranked_events(db, &filter, &settings.priority, req.as_of)?;
    if let Some(c) = req.confidence {
        pool.retain(|e| e.record.attrs.highest_confidence == c);
    }
    if !req.statuses.is_empty() {
        keep_wanted_statuses(&mut pool, req)?;
    }
    if let Some(extent) = &req.extent {
        pool.retain(|e| {
            crate::alerts::events::parse_multipolygon(&e.record.attrs.footprint)
                .is_some_and(|fp| fp.intersects(extent))
        });
    }
    Ok(pool)
}

/// Keeps the events whose reconciled status (unvisited when none) is one the request names.
fn keep_wanted_statuses(pool: &mut Vec<RankedEvent>, req: &TripRequest) -> Result<()> {
    let wanted = req
        .statuses
        .iter()
        .map(|s| {
            s.parse::<EventStatus>().map_err(|_| {
                Error::Invalid(format!(
                    "status '{s}': expected one of {}",
                    EventStatus::NAMES.join(", ")
                ))
            })
        })
        .collect::<Result<Vec<_>>>()?;
    let reconciled = req.reconciled.as_ref().ok_or_else(|| {
        Error::Internal("a status filter needs the reconciled statuses of the events".into())
    })?;
    pool.retain(|e| {
        let s = reconciled
            .get(&e.record.id)
            .copied()
            .unwrap_or(EventStatus::Unvisited);
        wanted.contains(&s)
    });
    Ok(())
}

/// A response trip: the first `max` events (default 20) of the ranked pool, unweighted.
fn response_events(mut pool: Vec<RankedEvent>, max: Option<usize>) -> Vec<Chosen> {
    pool.truncate(max.unwrap_or(20));
    pool.into_iter()
        .map(|event| Chosen {
            event,
            stratum: None,
            stratum_population: None,
            inclusion_probability: None,
        })
        .collect()
}

/// The control points of the trip, placed in the extent (or else the zone)
/// away from every stored alert; none when none were asked for.
fn controls(
    db: &Db,
    req: &TripRequest,
    zone_shape: Option<&MultiPolygon<f64>>,
    seed: u64,
) -> Result<Vec<LatLon>> {
    if req.controls == 0 {
        return Ok(Vec::new());
    }
    let area = match (&req.extent, zone_shape) {
        (Some(e), _) => e.clone(),
        (None, Some(z)) => z.clone(),
        (None, None) => {
            return Err(Error::Invalid(
                "control points need a zone or an extent to be placed in".into(),
            ));
        }
    };
    let alerts: Vec<LatLon> = db
        .read(|r| r.alert_positions_in(bbox(&area)))?
        .into_iter()
        .map(|(lon, lat)| LatLon::new(lat, lon))
        .collect();
    place_controls(
        &area,
        &alerts,
        req.controls,
        req.control_min_distance_m,
        seed ^ 0x5eed,
        DEFAULT_TRIES_PER_POINT,
    )
    .map_err(|e| Error::Invalid(format!("control points: {e}")))
}

fn bbox(m: &MultiPolygon<f64>) -> (f64, f64, f64, f64) {
    use geo::BoundingRect;
    m.bounding_rect()
        .map(|r| (r.min().x, r.min().y, r.max().x, r.max().y))
        .unwrap_or((0.0, 0.0, 0.0, 0.0))
}

/// Stratified sample: per stratum, Cochran's sample size for the margin
/// with the finite population correction and the conservative p = 0.5.
fn sample(
    pool: Vec<RankedEvent>,
    req: &TripRequest,
    seed: u64,
) -> Result<(Vec<Chosen>, Vec<StratumPlan>)> {
    let mut strata: BTreeMap<String, Vec<RankedEvent>> = BTreeMap::new();
    for e in pool {
        strata.entry(stratum_of(&e)).or_default().push(e);
    }
    for members in strata.values_mut() {
        members.sort_by_key(|e| e.record.id);
    }
    let populations: Vec<u64> = strata.values().map(|m| m.len() as u64).collect();
    let allocation = populations
        .iter()
        .map(|&n| cochran_sample_size(Z95, 0.5, req.margin, Some(n)).map(|s| s.min(n)))
        .collect::<std::result::Result<Vec<u64>, _>>()
        .map_err(|e| Error::Invalid(e.to_string()))?;
    let total: u64 = allocation.iter().sum();
    if let Some(max) = req.max.filter(|&m| total > m as u64) {
        return Err(Error::Invalid(format!(
            "a margin of ±{} in each of {} strata needs {total} visits, more than --max {max}: raise the margin or the maximum",
            req.margin,
            populations.len()
        )));
    }
    let draws = draw_stratified(&populations, &allocation, seed)
        .map_err(|e| Error::Invalid(e.to_string()))?;
    let mut chosen = Vec::new();
    let mut plans = Vec::new();
    for (draw, (name, members)) in draws.iter().zip(strata.iter()) {
        plans.push(StratumPlan {
            stratum: name.clone(),
            population: draw.population,
            sample: draw.indices.len() as u64,
            inclusion_probability: draw.inclusion_probability,
        });
        for &i in &draw.indices {
            chosen.push(Chosen {
                event: members[i as usize].clone(),
                stratum: Some(name.clone()),
                stratum_population: Some(draw.population),
                inclusion_probability: Some(draw.inclusion_probability),
            });
        }
    }
    Ok((chosen, plans))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::planning::codes::event_code;

    #[test]
    fn an_event_is_named_by_its_code_or_its_id() {
        // The codes' own table (planning::codes): A0001 is 1, B0417 is 10,417.
        assert_eq!(parse_event_ref("B0417").unwrap(), 10_417);
        assert_eq!(parse_event_ref(" b0417 ").unwrap(), 10_417);
        assert_eq!(parse_event_ref("#12").unwrap(), 12);
        assert_eq!(parse_event_ref("417").unwrap(), 417);
        for id in [0, 1, 9_999, 10_000, 219_999] {
            assert_eq!(parse_event_ref(&event_code(id)).unwrap(), id);
        }
        for bad in [
            "",
            "#",
            "C0001",
            "Q0001",
            "B041",
            "B04170",
            "B04x7",
            "ÄÖ123",
            "1234567890123",
        ] {
            let e = parse_event_ref(bad).unwrap_err().to_string();
            assert!(e.contains("not an event code"), "{bad}: {e}");
        }
    }

    #[test]
    fn a_hand_edited_assessment_or_too_many_events_are_refused() {
        let start = LonLat::new(-60.0, -3.0).unwrap();
        let mut r = TripRequest::response("T", start);
        r.events = Some(vec![1, 2]);
        assert!(check_request(&r).is_ok());
        r.mode = BundleMode::Assessment;
        assert!(
            check_request(&r)
                .unwrap_err()
                .to_string()
                .contains("only a response trip")
        );
        r.mode = BundleMode::Response;
        r.events = Some((0..=MAX_HAND_PICKED as i64).collect());
        assert!(
            check_request(&r)
                .unwrap_err()
                .to_string()
                .contains("at most")
        );
    }

    #[test]
    fn events_named_by_hand_are_taken_in_order_once_and_unknown_ones_named() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let settings = Settings::default();
        let r = TripRequest::response("T", LonLat::new(-60.0, -3.0).unwrap());
        let e = hand_picked(&db, &settings, &r, &[417])
            .unwrap_err()
            .to_string();
        assert!(e.contains("A0417") && e.contains("#417"), "{e}");
        assert!(hand_picked(&db, &settings, &r, &[]).unwrap().is_empty());
    }
}
