//! The device: a field kit workspace and a camera folder, driven through the
//! kit's own commands (`open`, `report`, `amend`, `pack`).

use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use chrono::{DateTime, FixedOffset, Utc};
use groundproof_sync::bundle::Checklist;
use groundproof_sync::field::{self, Snapshot};
use groundproof_sync::outbox::Outbox;
use groundproof_sync::returns::{OUTCOME_FALSE_ALARM, Report};

use super::camera::Shot;
use super::clock::zone_of;
use super::{DeviceReturn, RecordedReport, TripPlan};

/// One `report` command.
#[derive(Debug, Clone, Default)]
pub(super) struct Entry {
    pub(super) code: Option<String>,
    pub(super) outcome: &'static str,
    pub(super) reason: Option<String>,
    pub(super) cause: Option<String>,
    pub(super) time: Option<DateTime<Utc>>,
    pub(super) at: Option<(f64, f64, f64)>,
    pub(super) area_ha: Option<f64>,
    pub(super) notes: String,
    pub(super) shots: Vec<Shot>,
}

pub(super) struct Device {
    pub(super) ws: PathBuf,
    pub(super) camera: PathBuf,
    pub(super) zip: PathBuf,
    pub(super) snap: Snapshot,
    pub(super) tz: FixedOffset,
    pub(super) plan: TripPlan,
    pub(super) seed: u64,
    pub(super) photos_taken: u64,
    pub(super) reports: Vec<RecordedReport>,
}

/// Runs one `groundproof-field` command in `ws`.
pub(super) fn kit(ws: &Path, args: &[OsString]) -> Result<(), String> {
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

pub(super) fn fresh_dir(dir: &Path) -> Result<(), String> {
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

pub(super) fn rfc3339(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
}

impl Device {
    pub(super) fn open(
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

    /// The newest report of the outbox.
    pub(super) fn last_report(&self) -> Result<Report, String> {
        let outbox = Outbox::open(&self.ws).map_err(|e| e.to_string())?;
        let mut all = outbox.reports().map_err(|e| e.to_string())?;
        all.pop()
            .map(|s| s.report)
            .ok_or_else(|| "the outbox holds no report".to_owned())
    }

    pub(super) fn record(&mut self, e: Entry) -> Result<&mut RecordedReport, String> {
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

    /// with a note, on the newest report of event `code`.
    pub(super) fn amend(&mut self, code: &str, checklist: &Checklist) -> Result<(), String> {
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
    /// `pack --out workdir/return-NAME.zip`.
    pub(super) fn pack(self) -> Result<DeviceReturn, String> {
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

pub(super) fn recorded(r: &Report) -> RecordedReport {
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
