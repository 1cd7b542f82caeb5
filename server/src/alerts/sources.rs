//! Alert sources registered and edited, each change with its row of the
//! administration log (`platform::admin`). The API, the `/admin/sources`
//! page and the command line call these, so their checks cannot drift.
//!
//! A source's name is fixed once registered (events, exports and reports
//! name it). Its revisit interval may change at any time. Its pixel size may
//! change only while none of its alerts is stored: stored footprints were
//! drawn with it, and a new size would give old and new alerts of one place
//! different squares (our choice; register a new source instead).

use crate::domain::SourceName;
use crate::error::{Error, Fault, Result};
use crate::platform::admin::{Actor, log};
use crate::platform::storage::{Db, Source};

/// Register a source (name and numbers checked first).
pub fn add_source(
    db: &Db,
    actor: &Actor,
    name: &str,
    pixel_size_m: f64,
    revisit_days: i64,
    now: i64,
) -> Result<Source> {
    let name = SourceName::parse(name).map_err(|m| {
        Error::said(
            Fault::Invalid,
            "why-source-name",
            &[("name", &name.trim())],
            m,
        )
    })?;
    super::events::validate_source(pixel_size_m, revisit_days)?;
    db.write(|tx| {
        let s = tx
            .add_source(name.as_str(), pixel_size_m, revisit_days)
            .map_err(|e| e.worded("why-source-exists", &[("name", &name)]))?;
        let detail = format!("{pixel_size_m} m pixels, {revisit_days} day revisit");
        log(
            tx,
            actor,
            now,
            "source.add",
            &format!("source {}", s.name),
            &detail,
        )?;
        Ok(s)
    })
}

/// Change a source's pixel size and revisit interval (see the module
/// documentation for when the pixel size may change).
pub fn edit_source(
    db: &Db,
    actor: &Actor,
    id: i64,
    pixel_size_m: f64,
    revisit_days: i64,
    now: i64,
) -> Result<Source> {
    super::events::validate_source(pixel_size_m, revisit_days)?;
    db.write(|tx| {
        let r = tx.reader();
        let old = r
            .source_by_id(id)?
            .ok_or_else(|| {
                let english = format!("no source with id {id}");
                Error::said(Fault::NotFound, "why-no-source", &[("id", &id)], english)
            })?;
        let mut changes = Vec::new();
        if old.pixel_size_m != pixel_size_m {
            if r.source_has_alerts(id)? {
                let english = format!(
                    "source {}: the pixel size cannot change once alerts are imported (their footprints were drawn with {} m); register a new source instead",
                    old.name, old.pixel_size_m
                );
                let args: [(&str, &dyn std::fmt::Display); 2] =
                    [("name", &old.name), ("size", &old.pixel_size_m)];
                return Err(Error::said(Fault::Conflict, "why-pixel-fixed", &args, english));
            }
            changes.push(format!("pixel size {} m → {pixel_size_m} m", old.pixel_size_m));
        }
        if old.revisit_days != revisit_days {
            changes.push(format!(
                "revisit {} → {revisit_days} days",
                old.revisit_days
            ));
        }
        if changes.is_empty() {
            let english = format!("source {}: nothing changed", old.name);
            let args: [(&str, &dyn std::fmt::Display); 1] = [("name", &old.name)];
            return Err(Error::said(Fault::Conflict, "why-source-same", &args, english));
        }
        tx.update_source(id, pixel_size_m, revisit_days)?;
        let subject = format!("source {}", old.name);
        log(tx, actor, now, "source.edit", &subject, &changes.join("; "))?;
        Ok(Source {
            pixel_size_m,
            revisit_days,
            ..old
        })
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sources_are_added_and_edited_with_their_log() {
        let dir = tempfile::tempdir().unwrap();
        let db = Db::open(dir.path()).unwrap();
        let me = Actor::User("root".into());
        let s = add_source(&db, &me, "optical-10m", 10.0, 5, 1).unwrap();
        assert!(add_source(&db, &me, "bad name!", 10.0, 5, 1).is_err());
        assert!(add_source(&db, &me, "radar", 0.0, 5, 1).is_err());
        let e = edit_source(&db, &me, s.id, 10.0, 400, 2)
            .unwrap_err()
            .to_string();
        assert!(e.contains("revisit interval 400 days"), "{e}");
        let got = edit_source(&db, &me, s.id, 20.0, 6, 2).unwrap();
        assert_eq!((got.pixel_size_m, got.revisit_days), (20.0, 6));
        let log = db.read(|r| r.admin_log(None, 10)).unwrap();
        assert_eq!(log.len(), 2);
        assert_eq!(log[0].detail, "pixel size 10 m → 20 m; revisit 5 → 6 days");
        assert!(
            edit_source(&db, &me, s.id, 20.0, 6, 3).is_err(),
            "no change"
        );
        assert!(edit_source(&db, &me, 99, 20.0, 6, 3).is_err());
    }
}
