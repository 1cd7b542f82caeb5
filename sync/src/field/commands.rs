//! What each `groundproof-field` command does, on the workspace.

use std::collections::BTreeSet;
use std::path::Path;

use chrono::{DateTime, Utc};

use super::cli::{Cli, Command, ReportArgs};
use super::geo_calc::{compass, distance_bearing, parse_lat_lon};
use super::push::pack_workspace;
use super::record::{Trip, build_report};
use super::workspace::{
    BUNDLE_COPY, CAMERA_ZONE, Snapshot, Stop, UNPACKED, camera_zone, parse_offset,
};
use crate::SyncError;
use crate::bundle::{OpenedBundle, open_bundle};
use crate::geodesy::format_dd;
use crate::outbox::{Outbox, PushState, StoredReport, write_atomic};
use crate::returns::{ReturnLimits, Target};

/// Runs one parsed command.
pub fn execute(cli: Cli) -> Result<(), SyncError> {
    let ws = cli.workspace.as_path();
    let now = Utc::now();
    match cli.command {
        Command::Open { bundle } => open(ws, &bundle, now),
        Command::List => list(ws),
        Command::Show { code, from } => show(ws, &code, from.as_deref()),
        Command::Report {
            code,
            new_clearing,
            fields,
        } => report(ws, code.as_deref(), new_clearing, &fields, now),
        Command::Amend { id, fields } => amend(ws, id, &fields, now),
        Command::Pack { out, all } => {
            let s = pack_workspace(ws, &out, all, now)?;
            println!(
                "packed {} reports and {} photos into {}",
                s.manifest.report_count,
                s.manifest.photo_count,
                s.path.display()
            );
            Ok(())
        }
        Command::Push {
            server,
            token,
            chunk_bytes,
            ca_file,
        } => {
            let options = crate::client::PushOptions {
                chunk_bytes,
                ca_file,
                ..crate::client::PushOptions::default()
            };
            let summary = super::push(ws, &server, token.as_deref(), &options)?;
            println!(
                "pushed {} bytes: {} accepted, {} duplicate, {} rejected",
                summary.bytes,
                summary.accepted,
                summary.duplicate,
                summary.rejected.len()
            );
            for (id, reason) in &summary.rejected {
                println!("  rejected {id}: {reason}");
            }
            Ok(())
        }
        Command::Status => status(ws),
        Command::CameraZone { offset } => camera_zone_command(ws, offset.as_deref()),
    }
}

/// Shows the trip's camera zone, or sets it first when `offset` is given.
fn camera_zone_command(ws: &Path, offset: Option<&str>) -> Result<(), SyncError> {
    if let Some(raw) = offset {
        let zone = parse_offset(raw)?;
        Snapshot::load(ws)?;
        write_atomic(&ws.join(CAMERA_ZONE), zone.to_string().as_bytes())?;
    }
    println!(
        "camera zone  UTC{} (for photo times written without an offset or GPS time)",
        camera_zone(ws)?
    );
    Ok(())
}

fn open(ws: &Path, bundle_path: &Path, now: DateTime<Utc>) -> Result<(), SyncError> {
    let bundle = open_bundle(bundle_path, now)?;
    std::fs::create_dir_all(ws)
        .map_err(|e| SyncError::io(format!("create workspace {}", ws.display()), e))?;
    if let Ok(old) = Snapshot::load(ws)
        && old.bundle_id != bundle.manifest.bundle_id
    {
        let outbox = Outbox::open(ws)?;
        let pending = outbox
            .reports()?
            .iter()
            .filter(|r| r.state != PushState::Acknowledged)
            .count();
        if pending > 0 {
            return Err(SyncError::Usage(format!(
                "workspace {} holds {pending} reports of bundle {} not yet acknowledged; push them or use another --workspace",
                ws.display(),
                old.bundle_id
            )));
        }
    }
    unpack(&bundle, ws)?;
    let snapshot = Snapshot::of(&bundle);
    snapshot.save(ws)?;
    Outbox::open(ws)?;
    println!(
        "opened bundle {} for {} ({} events, {} control points), valid until {}",
        snapshot.bundle_id,
        snapshot.team,
        snapshot.events.len(),
        snapshot.controls.len(),
        snapshot.expires_at.to_rfc3339()
    );
    Ok(())
}

/// Copies the bundle and its entries (names already allow-listed by `open_bundle`).
fn unpack(bundle: &OpenedBundle, ws: &Path) -> Result<(), SyncError> {
    let zip_bytes = std::fs::read(bundle.path())
        .map_err(|e| SyncError::io(format!("read {}", bundle.path().display()), e))?;
    write_atomic(&ws.join(BUNDLE_COPY), &zip_bytes)?;
    for name in bundle.entry_names() {
        if name == crate::bundle::UPLOAD_KEY {
            continue; // the key stays in bundle.json only
        }
        let bytes = bundle.entry_bytes(name)?;
        write_atomic(&ws.join(UNPACKED).join(name), &bytes)?;
    }
    Ok(())
}

/// Reports that no other report supersedes.
fn current(reports: &[StoredReport]) -> Vec<&StoredReport> {
    let superseded: BTreeSet<_> = reports.iter().filter_map(|r| r.report.supersedes).collect();
    reports
        .iter()
        .filter(|r| !superseded.contains(&r.report.report_id))
        .collect()
}

fn on_code<'a>(reports: &[&'a StoredReport], code: &str) -> Vec<&'a StoredReport> {
    reports
        .iter()
        .copied()
        .filter(|r| r.report.target.code() == Some(code))
        .collect()
}

fn list(ws: &Path) -> Result<(), SyncError> {
    let snap = Snapshot::load(ws)?;
    let outbox = Outbox::open(ws)?;
    let all = outbox.reports()?;
    let cur = current(&all);
    println!(
        "{:<4} {:<6} {:<8} {:>9} state",
        "#", "code", "kind", "area_ha"
    );
    for (i, stop) in snap.stops().enumerate() {
        let (kind, area) = match stop {
            Stop::Event(e) => ("event", format!("{:.1}", e.area_ha)),
            Stop::Control(_) => ("control", "-".to_owned()),
        };
        let reps = on_code(&cur, stop.code());
        let state = match reps.last() {
            None => "not visited".to_owned(),
            Some(r) => format!("reported: {} ({})", r.report.outcome, r.state.label()),
        };
        println!(
            "{:<4} {:<6} {:<8} {:>9} {state}",
            i + 1,
            stop.code(),
            kind,
            area
        );
    }
    let new: Vec<_> = cur
        .iter()
        .filter(|r| r.report.target == Target::NewClearing)
        .collect();
    if !new.is_empty() {
        println!("new clearings reported: {}", new.len());
    }
    Ok(())
}

fn show(ws: &Path, code: &str, from: Option<&str>) -> Result<(), SyncError> {
    let snap = Snapshot::load(ws)?;
    let stop = snap
        .stop(code)
        .ok_or_else(|| SyncError::Usage(format!("{code} is not in this bundle")))?;
    match stop {
        Stop::Event(e) => {
            println!("event {} (id {})", e.code, e.event_id);
            println!("  position     {}", format_dd(e.lat, e.lon));
            println!("  area         {:.2} ha", e.area_ha);
            println!("  detected     {} .. {}", e.first_detected, e.last_detected);
            println!("  sources      {}", e.sources.join(", "));
            println!(
                "  alert confidence {}",
                crate::bundle::confidence_level(&e.confidence).unwrap_or(&e.confidence)
            );
            println!(
                "  corroborated {}",
                if e.corroborated { "yes" } else { "no" }
            );
            println!("  visit order  {}", e.visit_order);
        }
        Stop::Control(c) => {
            println!("control point {}", c.code);
            println!("  position     {}", format_dd(c.lat, c.lon));
            println!("  visit order  {}", c.visit_order);
        }
    }
    if let Some(from) = from {
        let (lat, lon, _) = parse_lat_lon(from)?;
        let (tlat, tlon) = stop.lat_lon();
        let (d, b) = distance_bearing(lat, lon, tlat, tlon);
        println!("  from you     {d:.0} m, bearing {b:.0}° ({})", compass(b));
    }
    let outbox = Outbox::open(ws)?;
    let all = outbox.reports()?;
    let superseded: BTreeSet<_> = all.iter().filter_map(|r| r.report.supersedes).collect();
    for r in all.iter().filter(|r| r.report.target.code() == Some(code)) {
        let note = if superseded.contains(&r.report.report_id) {
            " [superseded]"
        } else {
            ""
        };
        println!(
            "  report {} {} at {} ({}){note}",
            r.report.report_id,
            r.report.outcome,
            r.report.observed_at.to_rfc3339(),
            r.state.label()
        );
    }
    Ok(())
}

fn report(
    ws: &Path,
    code: Option<&str>,
    new_clearing: bool,
    fields: &ReportArgs,
    now: DateTime<Utc>,
) -> Result<(), SyncError> {
    let snap = Snapshot::load(ws)?;
    let target = match (code, new_clearing) {
        (Some(_), true) => {
            return Err(SyncError::Usage(
                "give either a CODE or --new-clearing, not both".into(),
            ));
        }
        (None, false) => {
            return Err(SyncError::Usage(
                "give the CODE of an event or control point, or --new-clearing".into(),
            ));
        }
        (None, true) => Target::NewClearing,
        (Some(code), false) => match snap.stop(code) {
            Some(Stop::Event(e)) => Target::Event {
                code: e.code.clone(),
                event_id: e.event_id,
            },
            Some(Stop::Control(c)) => Target::Control {
                code: c.code.clone(),
            },
            None => {
                return Err(SyncError::Usage(format!(
                    "{code} is not in this bundle; see `groundproof-field list`"
                )));
            }
        },
    };
    let trip = Trip {
        bundle_id: snap.bundle_id,
        checklist: &snap.checklist,
        camera_zone: camera_zone(ws)?,
    };
    let (r, paths) = build_report(&trip, target, fields, None, Vec::new(), now)?;
    let mut outbox = Outbox::open(ws)?;
    outbox.add_report(&r, &paths, ReturnLimits::default().max_photo_bytes)?;
    println!(
        "recorded report {} ({}, {} photos)",
        r.report_id,
        r.outcome,
        r.photos.len()
    );
    Ok(())
}

fn amend(
    ws: &Path,
    id: uuid::Uuid,
    fields: &ReportArgs,
    now: DateTime<Utc>,
) -> Result<(), SyncError> {
    let snap = Snapshot::load(ws)?;
    let mut outbox = Outbox::open(ws)?;
    let base = outbox
        .report(id)?
        .ok_or_else(|| SyncError::Usage(format!("no report {id} in this workspace")))?;
    if let Some(newer) = outbox.superseded_by(id)? {
        return Err(SyncError::Usage(format!(
            "report {id} is already amended by {newer}; amend that one"
        )));
    }
    let base_paths = base
        .report
        .photos
        .iter()
        .map(|p| outbox.photo_path(&p.sha256))
        .collect();
    let trip = Trip {
        bundle_id: snap.bundle_id,
        checklist: &snap.checklist,
        camera_zone: camera_zone(ws)?,
    };
    let (r, paths) = build_report(
        &trip,
        base.report.target.clone(),
        fields,
        Some(&base.report),
        base_paths,
        now,
    )?;
    outbox.add_report(&r, &paths, ReturnLimits::default().max_photo_bytes)?;
    println!("recorded report {} superseding {id}", r.report_id);
    Ok(())
}

fn status(ws: &Path) -> Result<(), SyncError> {
    let snap = Snapshot::load(ws)?;
    let outbox = Outbox::open(ws)?;
    let all = outbox.reports()?;
    let cur = current(&all);
    let visited = snap
        .stops()
        .filter(|s| !on_code(&cur, s.code()).is_empty())
        .count();
    println!(
        "bundle     {} ({}, {})",
        snap.bundle_id, snap.team, snap.mode
    );
    println!(
        "due        {}; expires {}",
        snap.due_at.to_rfc3339(),
        snap.expires_at.to_rfc3339()
    );
    println!("visited    {visited} of {} stops", snap.route.len());
    let count = |f: &dyn Fn(&PushState) -> bool| all.iter().filter(|r| f(&r.state)).count();
    println!(
        "reports    {} recorded: {} not sent, {} sent, {} acknowledged, {} rejected",
        all.len(),
        count(&|s| *s == PushState::NotSent),
        count(&|s| *s == PushState::Sent),
        count(&|s| *s == PushState::Acknowledged),
        count(&|s| matches!(s, PushState::Rejected(_)))
    );
    for r in &all {
        if let PushState::Rejected(reason) = &r.state {
            println!("  rejected {}: {reason}", r.report.report_id);
        }
    }
    match outbox.last_push()? {
        Some(t) => println!("last push  {}", t.to_rfc3339()),
        None => println!("last push  never"),
    }
    Ok(())
}
