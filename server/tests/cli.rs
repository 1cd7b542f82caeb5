//! The `groundproof` binary as a user runs it.

use std::process::Command;

fn groundproof(data: &std::path::Path, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_groundproof"))
        .args(args)
        .arg("--data")
        .arg(data)
        .env("RUST_LOG", "warn")
        .output()
        .expect("binary runs")
}

#[test]
fn malformed_alert_file_exits_non_zero_and_changes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("data");
    let out = groundproof(
        &data,
        &[
            "sources",
            "add",
            "optical-10m",
            "--pixel-size",
            "10",
            "--revisit-days",
            "5",
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );

    let good = dir.path().join("good.csv");
    std::fs::write(
        &good,
        "longitude,latitude,detected_on,confidence\n-60.1,-3.1,2026-02-01,confirmed\n",
    )
    .unwrap();
    let out = groundproof(
        &data,
        &[
            "import",
            "alerts",
            good.to_str().unwrap(),
            "--source",
            "optical-10m",
        ],
    );
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stdout).contains("1 imported"));

    let bad = dir.path().join("bad.csv");
    std::fs::write(
        &bad,
        "longitude,latitude,detected_on,confidence\n-60.2,-3.2,2026-02-01,confirmed\n-60.3,abc,2026-02-01,confirmed\n-60.4,-3.4,2026-02-01,sure\n",
    )
    .unwrap();
    let db_file = data.join("groundproof.sqlite3");
    let count = || {
        let c = rusqlite::Connection::open(&db_file).unwrap();
        c.query_row("SELECT COUNT(*) FROM alerts", [], |r| r.get::<_, i64>(0))
            .unwrap()
    };
    assert_eq!(count(), 1);
    let out = groundproof(
        &data,
        &[
            "import",
            "alerts",
            bad.to_str().unwrap(),
            "--source",
            "optical-10m",
        ],
    );
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("line 3: field 'latitude'"), "{err}");
    assert!(err.contains("line 4: field 'confidence'"), "{err}");
    assert!(err.contains("nothing was imported"), "{err}");
    assert_eq!(count(), 1, "the database is unchanged");

    let out = groundproof(
        &data,
        &[
            "import",
            "alerts",
            bad.to_str().unwrap(),
            "--source",
            "optical-10m",
            "--skip-invalid",
        ],
    );
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("1 imported") && text.contains("2 skipped"),
        "{text}"
    );
    assert_eq!(count(), 2);
}

#[test]
fn unknown_source_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("a.csv");
    std::fs::write(
        &f,
        "longitude,latitude,detected_on,confidence\n-60.1,-3.1,2026-02-01,confirmed\n",
    )
    .unwrap();
    let out = groundproof(
        &dir.path().join("d"),
        &[
            "import",
            "alerts",
            f.to_str().unwrap(),
            "--source",
            "radar-10m",
        ],
    );
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("unknown source 'radar-10m'"));
}
