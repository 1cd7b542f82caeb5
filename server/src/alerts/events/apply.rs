//! One alert import, applied in one transaction.

use super::ClusterSettings;
use super::zones::{ZoneShape, likely_swapped, load_zone_shapes, zones_hit};
use crate::alerts::cluster::footprint::Footprint;
use crate::alerts::cluster::link::link;
use crate::alerts::cluster::summary::{AlertFact, EventSummary, summarize};
use crate::alerts::cluster::{LinkPoint, UnionFind};
use crate::alerts::import::{
    Format, ImportFailure, MAX_LISTED_ERRORS, Parsed, ParsedAlert, ReadOptions, RowError,
    latest_import_day, parse_alerts,
};
use crate::domain::SourceName;
use crate::domain::geodesy::check_event_footprint;
use crate::error::{Error, Result};
use crate::platform::storage::{Db, EventWrite, NewAlert, Source, StoredAlert, Tx, alerts_cells};
use serde::Serialize;
use std::collections::{BTreeMap, BTreeSet, HashMap, HashSet};

/// What to import.
#[derive(Debug, Clone)]
pub struct ImportRequest<'a> {
    pub source: &'a SourceName,
    pub file_name: &'a str,
    pub bytes: &'a [u8],
    pub format: Format,
    pub read: ReadOptions,
    /// Import the valid rows of a file that has errors.
    pub skip_invalid: bool,
}

/// What an import did.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImportOutcome {
    pub file: String,
    pub source: String,
    pub rows_read: usize,
    pub imported: usize,
    pub duplicates: usize,
    pub skipped: usize,
    /// The skipped rows (first [`MAX_LISTED_ERRORS`]).
    pub skipped_rows: Vec<RowError>,
    pub events_created: usize,
    pub events_grown: usize,
    pub events_merged: usize,
    /// What the file may have wrong though it was imported (a likely swap of
    /// latitude and longitude), each naming the file.
    pub warnings: Vec<String>,
}

impl ImportOutcome {
    /// The outcome of reading `file` before anything is stored: rows read and
    /// skipped, nothing imported yet.
    fn empty(file: &str, source: &str, parsed: &Parsed) -> Self {
        ImportOutcome {
            file: file.to_string(),
            source: source.to_string(),
            rows_read: parsed.rows_read,
            imported: 0,
            duplicates: 0,
            skipped: parsed.errors.len(),
            skipped_rows: parsed
                .errors
                .iter()
                .take(MAX_LISTED_ERRORS)
                .cloned()
                .collect(),
            events_created: 0,
            events_grown: 0,
            events_merged: 0,
            warnings: Vec::new(),
        }
    }
}

/// Parse, validate and store an alert file; events follow in the same
/// transaction.
pub fn import_alerts(
    db: &Db,
    req: &ImportRequest<'_>,
    cfg: &ClusterSettings,
) -> Result<ImportOutcome> {
    let unknown = || {
        Error::NotFound(format!(
            "unknown source '{}': register it first (groundproof sources add {} --pixel-size M --revisit-days D)",
            req.source, req.source
        ))
    };
    db.read(|r| r.source_by_name(req.source.as_str()))?
        .ok_or_else(unknown)?;
    let t0 = std::time::Instant::now();
    let parsed = parse_until_import_day(req);
    let parse_ms = t0.elapsed().as_millis();
    reject_unless_importable(req, &parsed)?;
    db.write(|tx| {
        let source = tx
            .reader()
            .source_by_name(req.source.as_str())?
            .ok_or_else(unknown)?;
        let mut outcome = ImportOutcome::empty(req.file_name, &source.name, &parsed);
        let zones = load_zone_shapes(tx)?;
        outcome
            .warnings
            .extend(swap_warning(req.file_name, &parsed, &zones));
        let nearby = stored_nearby(tx, &source, &parsed.alerts, cfg)?;
        let fresh = fresh_alerts(&nearby, source.id, &parsed.alerts);
        outcome.duplicates = parsed.alerts.len() - fresh.len();
        outcome.imported = fresh.len();
        let import_id = tx.add_import(
            source.id,
            req.file_name,
            [
                outcome.rows_read,
                outcome.imported,
                outcome.duplicates,
                outcome.skipped,
            ],
        )?;
        if fresh.is_empty() {
            return Ok(outcome);
        }
        let batch = Batch {
            source: &source,
            nearby: &nearby,
            fresh: &fresh,
        };
        let t1 = std::time::Instant::now();
        let (groups, link_ms) = batch.linked_groups(cfg);
        let names: HashMap<i64, String> = tx
            .reader()
            .sources()?
            .into_iter()
            .map(|s| (s.id, s.name))
            .collect();
        // Gather each touched set's alerts (reads), summarise them on all
        // cores (pure), then write in one pass.
        let work = batch.gather(tx, &groups)?;
        let summaries = summarize_all(&work);
        let new_rows = batch.write_events(tx, &work, summaries, &names, &zones, &mut outcome)?;
        let events_ms = t1.elapsed().as_millis() - link_ms;
        let t2 = std::time::Instant::now();
        insert_sorted(tx, import_id, new_rows)?;
        tracing::info!(
            file = req.file_name,
            rows = outcome.rows_read,
            parse_ms,
            link_ms,
            events_ms,
            insert_ms = t2.elapsed().as_millis(),
            "alerts imported"
        );
        Ok(outcome)
    })
}

/// The file parsed, refusing detection dates after the import day whatever the caller set.
fn parse_until_import_day(req: &ImportRequest<'_>) -> Parsed {
    let read = ReadOptions {
        not_after: Some(latest_import_day()),
        ..req.read.clone()
    };
    parse_alerts(req.file_name, req.bytes, req.format, &read)
}

/// The warning for a file whose latitude and longitude look exchanged, if they do.
fn swap_warning(file: &str, parsed: &Parsed, zones: &[ZoneShape]) -> Option<String> {
    likely_swapped(&parsed.alerts, zones).then(|| {
        format!(
            "{file}: every alert lies outside every zone, but most would lie inside one with latitude and longitude exchanged: check the column order (or name the columns with the import's column options)"
        )
    })
}

/// Refuses a file with errors, unless `skip_invalid` asks to keep its valid rows
/// and the file as a whole could be read.
fn reject_unless_importable(req: &ImportRequest<'_>, parsed: &Parsed) -> Result<()> {
    let file_level = parsed
        .errors
        .iter()
        .any(|e| e.line == 0 || e.field.starts_with('('));
    if !parsed.errors.is_empty() && (!req.skip_invalid || file_level && parsed.alerts.is_empty()) {
        return Err(Error::ImportRejected(ImportFailure {
            file: req.file_name.to_string(),
            rows_read: parsed.rows_read,
            error_count: parsed.errors.len(),
            errors: parsed
                .errors
                .iter()
                .take(MAX_LISTED_ERRORS)
                .cloned()
                .collect(),
        }));
    }
    Ok(())
}

/// The stored alerts in the link cells around the file's alerts (within the
/// link distance of the largest pixel of any source).
fn stored_nearby(
    tx: &Tx<'_>,
    source: &Source,
    alerts: &[ParsedAlert],
    cfg: &ClusterSettings,
) -> Result<Vec<StoredAlert>> {
    let max_pixel = tx
        .reader()
        .sources()?
        .iter()
        .map(|s| s.pixel_size_m)
        .fold(source.pixel_size_m, f64::max);
    if tx.reader().alert_count()? == 0 {
        return Ok(Vec::new());
    }
    let pts: Vec<(f64, f64)> = alerts.iter().map(|a| (a.at.lon(), a.at.lat())).collect();
    tx.reader()
        .alerts_in_cells(&alerts_cells(&pts, cfg.link_factor * max_pixel))
}

/// The file's alerts that are not duplicates: the same source, pixel and day, in
/// the file or stored.
fn fresh_alerts<'a>(
    nearby: &[StoredAlert],
    source_id: i64,
    alerts: &'a [ParsedAlert],
) -> Vec<&'a ParsedAlert> {
    let key = |lon: f64, lat: f64, day: i32| {
        (
            crate::platform::storage::e7(lon),
            crate::platform::storage::e7(lat),
            day,
        )
    };
    let mut seen: HashSet<(i64, i64, i32)> = nearby
        .iter()
        .filter(|a| a.source_id == source_id)
        .map(|a| key(a.lon, a.lat, a.day.days()))
        .collect();
    alerts
        .iter()
        .filter(|a| seen.insert(key(a.at.lon(), a.at.lat(), a.day.days())))
        .collect()
}

/// One touched set of linked alerts: the stored events in it, the indices of
/// its new alerts in `fresh`, and the facts of all its alerts.
type Work = (BTreeSet<i64>, Vec<usize>, Vec<AlertFact>);

/// The new alerts of one import with the stored alerts near them. Points are
/// numbered stored first (`nearby`), then new (`fresh`).
struct Batch<'a> {
    source: &'a Source,
    nearby: &'a [StoredAlert],
    fresh: &'a [&'a ParsedAlert],
}

impl Batch<'_> {
    /// Links stored neighbours and new alerts; stored alerts of one event stay
    /// together whatever the local subset shows. Returns the sets holding a new
    /// alert and the milliseconds the linking took.
    fn linked_groups(&self, cfg: &ClusterSettings) -> (BTreeMap<u32, Vec<u32>>, u128) {
        let mut points: Vec<LinkPoint> = self
            .nearby
            .iter()
            .map(|a| LinkPoint {
                lon: a.lon,
                lat: a.lat,
                day: a.day.days(),
                pixel_m: a.pixel_m,
            })
            .collect();
        points.extend(self.fresh.iter().map(|a| LinkPoint {
            lon: a.at.lon(),
            lat: a.at.lat(),
            day: a.day.days(),
            pixel_m: self.source.pixel_size_m,
        }));
        let t1 = std::time::Instant::now();
        let mut uf = link(&points, &cfg.rule());
        let link_ms = t1.elapsed().as_millis();
        let mut first_of_event: HashMap<i64, u32> = HashMap::new();
        for (i, a) in self.nearby.iter().enumerate() {
            let first = *first_of_event.entry(a.event_id).or_insert(i as u32);
            uf.union(first, i as u32);
        }
        (groups_with_new(&mut uf, self.nearby.len()), link_ms)
    }

    /// Each set's stored events, new alerts and the facts of all its alerts
    /// (the stored events' alerts read back whole).
    fn gather(&self, tx: &Tx<'_>, groups: &BTreeMap<u32, Vec<u32>>) -> Result<Vec<Work>> {
        let nearby = self.nearby;
        let mut work: Vec<Work> = Vec::with_capacity(groups.len());
        for members in groups.values() {
            let existing: BTreeSet<i64> = members
                .iter()
                .filter(|&&i| (i as usize) < nearby.len())
                .map(|&i| nearby[i as usize].event_id)
                .collect();
            let new_idx: Vec<usize> = members
                .iter()
                .filter(|&&i| (i as usize) >= nearby.len())
                .map(|&i| i as usize - nearby.len())
                .collect();
            let mut facts: Vec<AlertFact> = if existing.is_empty() {
                Vec::new()
            } else {
                let ids: Vec<i64> = existing.iter().copied().collect();
                tx.reader()
                    .alerts_of_events(&ids)?
                    .iter()
                    .map(fact_of)
                    .collect()
            };
            facts.extend(new_idx.iter().map(|&j| AlertFact {
                source_id: self.source.id,
                lon: self.fresh[j].at.lon(),
                lat: self.fresh[j].at.lat(),
                day: self.fresh[j].day,
                confidence: self.fresh[j].confidence,
                pixel_m: self.source.pixel_size_m,
            }));
            work.push((existing, new_idx, facts));
        }
        Ok(work)
    }

    /// Writes each set's event (created, grown, or merged into its oldest) and
    /// its zones; returns the new alert rows, each naming its event.
    fn write_events(
        &self,
        tx: &Tx<'_>,
        work: &[Work],
        summaries: Vec<Option<EventSummary>>,
        names: &HashMap<i64, String>,
        zones: &[ZoneShape],
        outcome: &mut ImportOutcome,
    ) -> Result<Vec<NewAlert>> {
        let mut new_rows = Vec::with_capacity(self.fresh.len());
        for ((existing, new_idx, _), summary) in work.iter().zip(summaries) {
            let Some(summary) = summary else { continue };
            check_event_footprint(&summary.footprint.shape).map_err(|m| {
                let (lon, lat) = summary.footprint.centroid;
                Error::Internal(format!("the event at ({lat}, {lon}): {m}"))
            })?;
            let write = event_write(&summary, names);
            let event_id = write_event(tx, existing, &write, outcome)?;
            let hit = zones_hit(zones, &summary.footprint.shape, summary.bbox);
            if !hit.is_empty() || !existing.is_empty() {
                tx.set_event_zones(event_id, &hit)?;
            }
            new_rows.extend(new_idx.iter().map(|&j| NewAlert {
                source_id: self.source.id,
                lon: self.fresh[j].at.lon(),
                lat: self.fresh[j].at.lat(),
                day: self.fresh[j].day,
                confidence: self.fresh[j].confidence,
                event_id,
            }));
        }
        Ok(new_rows)
    }
}

/// An event's stored attributes from its summary (sources by name).
fn event_write(summary: &EventSummary, names: &HashMap<i64, String>) -> EventWrite {
    EventWrite {
        footprint: footprint_geojson(&summary.footprint),
        area_ha: summary.footprint.area_ha,
        centroid: summary.footprint.centroid,
        bbox: summary.bbox,
        first: summary.first,
        last: summary.last,
        alert_count: summary.alert_count,
        highest_confidence: summary.highest_confidence,
        corroborated: summary.corroborated,
        per_source: summary
            .per_source
            .iter()
            .map(|(id, n)| (names.get(id).cloned().unwrap_or_else(|| id.to_string()), *n))
            .collect(),
    }
}

/// Creates the event of a set with no stored event; otherwise updates the
/// oldest (`existing` is ordered) and merges the others into it. Counts what
/// it did in `outcome` and returns the event's id.
fn write_event(
    tx: &Tx<'_>,
    existing: &BTreeSet<i64>,
    write: &EventWrite,
    outcome: &mut ImportOutcome,
) -> Result<i64> {
    Ok(match existing.first() {
        None => {
            outcome.events_created += 1;
            tx.insert_event(write)?
        }
        Some(&survivor) => {
            let absorbed: Vec<i64> = existing.iter().skip(1).copied().collect();
            if absorbed.is_empty() {
                outcome.events_grown += 1;
            } else {
                outcome.events_merged += absorbed.len();
                tx.reassign_alerts(&absorbed, survivor)?;
                tx.mark_merged(&absorbed, survivor)?;
            }
            tx.update_event(survivor, write)?;
            survivor
        }
    })
}

/// Summaries of every work item, computed on up to two threads (the
/// machine this is sized for has two cores).
fn summarize_all(work: &[Work]) -> Vec<Option<EventSummary>> {
    let threads = std::thread::available_parallelism()
        .map_or(1, |n| n.get())
        .clamp(1, 2);
    if threads == 1 || work.len() < 64 {
        return work.iter().map(|w| summarize(&w.2)).collect();
    }
    let mid = work.len() / 2;
    let (a, b) = work.split_at(mid);
    std::thread::scope(|s| {
        let h = s.spawn(|| b.iter().map(|w| summarize(&w.2)).collect::<Vec<_>>());
        let mut out: Vec<_> = a.iter().map(|w| summarize(&w.2)).collect();
        out.extend(h.join().unwrap_or_default());
        out
    })
}

/// Linked sets that contain at least one new point (index ≥ `n_old`),
/// keyed by root, members in index order.
fn groups_with_new(uf: &mut UnionFind, n_old: usize) -> BTreeMap<u32, Vec<u32>> {
    let n = uf.len();
    let mut has_new: HashSet<u32> = HashSet::new();
    for i in n_old..n {
        has_new.insert(uf.find(i as u32));
    }
    let mut groups: BTreeMap<u32, Vec<u32>> = BTreeMap::new();
    for i in 0..n as u32 {
        let r = uf.find(i);
        if has_new.contains(&r) {
            groups.entry(r).or_default().push(i);
        }
    }
    groups
}

fn fact_of(a: &StoredAlert) -> AlertFact {
    AlertFact {
        source_id: a.source_id,
        lon: a.lon,
        lat: a.lat,
        day: a.day,
        confidence: a.confidence,
        pixel_m: a.pixel_m,
    }
}

/// Insert in the file's order, so alert ids follow the file.
fn insert_sorted(tx: &Tx<'_>, import_id: i64, rows: Vec<NewAlert>) -> Result<()> {
    tx.insert_alerts(import_id, &rows)
}

/// The footprint as a GeoJSON geometry: a Polygon when it is one piece.
pub(crate) fn footprint_geojson(f: &Footprint) -> String {
    let geom = if f.shape.0.len() == 1 {
        geo::Geometry::Polygon(f.shape.0[0].clone())
    } else {
        geo::Geometry::MultiPolygon(f.shape.clone())
    };
    geojson::Geometry::from(&geom).to_string()
}
