//! The upload endpoints and the multipart forms of the real server under
//! damaged requests: a bounded number of random bodies and headers made
//! from valid ones (a signed return, the resumable protocol's requests, the
//! import and station forms, the seeds in `tests/corpus/`). Every answer is
//! a success or a 4xx, never a 5xx, and the server stays up and keeps
//! answering correctly afterwards.

use groundproof_e2e::{TestServer, admin_token, get, get_bytes, load_scenario, post_json};
use groundproof_sync::bundle::{UploadKey, open_bundle, sha256_hex};
use groundproof_sync::returns::{
    Position, PositionSource, REPORTS, RETURN_MANIFEST, Report, ReportPhoto, ReturnHeader,
    SIGNATURE, Target, pack_return, sign_manifest,
};
use mock_patrols::damage::{damage_bytes, damage_csv, damage_json};
use mock_patrols::photos::{PhotoMetaIn, make_photo};
use proptest::prelude::*;
use proptest::test_runner::{Config, TestRunner};
use serde_json::json;
use std::io::{Cursor, Read, Write};

use std::path::PathBuf;

/// Cases per endpoint group (the whole file runs in well under a minute).
const CASES: u32 = 96;

const BOUNDARY: &str = "----groundproof-robust-boundary";

/// A request with the admin's token and the given headers; the status and
/// body, or `None` when the client refused to send it (a header value it
/// cannot write), which tells nothing about the server. No answer within
/// 20 seconds (a handler that hangs) fails the test.
fn exchange(
    s: &TestServer,
    method: &str,
    path: &str,
    headers: &[(&str, String)],
    body: &[u8],
) -> Option<(u16, String)> {
    let agent: ureq::Agent = ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(std::time::Duration::from_secs(20)))
        .build()
        .into();
    let mut req = ureq::http::Request::builder()
        .method(method)
        .uri(s.url(path))
        .header("Authorization", format!("Bearer {}", admin_token(s)));
    for (k, v) in headers {
        req = req.header(*k, v.as_str());
    }
    let req = req.body(body.to_vec()).ok()?;
    let res = agent.run(req);
    match res {
        Ok(mut r) => {
            let text = r.body_mut().read_to_string().unwrap_or_default();
            Some((r.status().as_u16(), text))
        }
        Err(ureq::Error::Http(_) | ureq::Error::BadUri(_)) => None,
        Err(e) => panic!("{method} {path}: the server did not answer: {e}"),
    }
}

/// The status of [`exchange`].
fn send(
    s: &TestServer,
    method: &str,
    path: &str,
    headers: &[(&str, String)],
    body: &[u8],
) -> Option<u16> {
    exchange(s, method, path, headers, body).map(|(status, _)| status)
}

/// No 5xx.
fn judged(status: Option<u16>, what: &str) -> Result<(), TestCaseError> {
    if let Some(st) = status {
        prop_assert!(st < 500, "{what}: status {st}");
    }
    Ok(())
}

/// A multipart/form-data body (RFC 7578).
fn multipart(texts: &[(&str, &str)], files: &[(&str, &str, &[u8])]) -> Vec<u8> {
    let mut b = Vec::new();
    for (name, value) in texts {
        b.extend_from_slice(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"\r\n\r\n{value}\r\n"
            )
            .as_bytes(),
        );
    }
    for (name, file_name, bytes) in files {
        b.extend_from_slice(
            format!("--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"; filename=\"{file_name}\"\r\nContent-Type: application/octet-stream\r\n\r\n")
                .as_bytes(),
        );
        b.extend_from_slice(bytes);
        b.extend_from_slice(b"\r\n");
    }
    b.extend_from_slice(format!("--{BOUNDARY}--\r\n").as_bytes());
    b
}

fn corpus(target: &str) -> Vec<Vec<u8>> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("corpus")
        .join(target);
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("corpus {}: {e}", dir.display()))
        .map(|e| e.expect("entry").path())
        .collect();
    files.sort();
    files
        .iter()
        .map(|p| std::fs::read(p).expect("seed"))
        .collect()
}

/// A bundle issued over the API and a valid return for it (one confirmed
/// visit to its first event with a real photo), with the bundle's upload
/// key and id.
fn valid_return(s: &TestServer) -> (Vec<u8>, UploadKey, String) {
    let station = mock_patrols::scenario().station;
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": mock_patrols::scenario().teams[0], "zone": "Core", "max": 3,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 201, "{}", r.body);
    let (status, zip) = get_bytes(&s.url(r.json()["download"].as_str().expect("download")));
    assert_eq!(status, 200);
    let dir = tempfile::tempdir().expect("dir");
    let path = dir.path().join("bundle.zip");
    std::fs::write(&path, &zip).expect("bundle");
    let bundle = open_bundle(&path, chrono::Utc::now()).expect("bundle opens");
    let e = &bundle.events[0];
    let now = chrono::Utc::now();
    let photo = make_photo(
        3,
        64,
        48,
        &PhotoMetaIn {
            taken_at_rfc3339: now.to_rfc3339(),
            lat: e.centroid.y(),
            lon: e.centroid.x(),
            direction_deg: 10.0,
        },
    );
    let photo_path = dir.path().join("p.jpg");
    std::fs::write(&photo_path, &photo).expect("photo");
    let report = Report {
        report_id: uuid::Uuid::from_u128(0x7000_0000_0000_4000_8000_0000_0000_0001),
        bundle_id: bundle.manifest.bundle_id,
        target: Target::Event {
            code: e.code.clone(),
            event_id: e.event_id,
        },
        supersedes: None,
        outcome: "confirmed".into(),
        reason: None,
        cause: Some("smallholder_clearing".into()),
        position: Some(Position {
            lat: e.centroid.y(),
            lon: e.centroid.x(),
            accuracy_m: Some(5.0),
            source: PositionSource::Manual,
        }),
        observed_at: now,
        recorded_at: now,
        area_ha: Some(1.0),
        notes: String::new(),
        photos: vec![ReportPhoto {
            sha256: sha256_hex(&photo),
            original_name: "IMG_0001.jpg".into(),
            taken_at: Some(now),
            lat: Some(e.centroid.y()),
            lon: Some(e.centroid.x()),
            direction_deg: Some(10.0),
        }],
    };
    let header = ReturnHeader {
        bundle_id: bundle.manifest.bundle_id,
        team: bundle.manifest.team.clone(),
        checklist_version: 1,
        created_at: now,
        camera_zone: None,
    };
    let mut out = Cursor::new(Vec::new());
    pack_return(
        &mut out,
        &header,
        &bundle.upload_key,
        &[report],
        &[photo_path],
    )
    .expect("pack");
    (
        out.into_inner(),
        bundle.upload_key.clone(),
        bundle.manifest.bundle_id.to_string(),
    )
}

fn entries(zip: &[u8]) -> Vec<(String, Vec<u8>)> {
    let mut z = zip::ZipArchive::new(Cursor::new(zip)).expect("valid zip");
    (0..z.len())
        .map(|i| {
            let mut f = z.by_index(i).expect("entry");
            let mut b = Vec::new();
            f.read_to_end(&mut b).expect("read");
            (f.name().expect("name").into_owned(), b)
        })
        .collect()
}

/// The return with one content entry (`reports.json` or the photo) damaged,
/// listed again and signed again, so the damage reaches intake's checks.
fn signed_damage(valid: &[u8], key: &UploadKey, entry: usize, seed: u64) -> Vec<u8> {
    let mut all = entries(valid);
    let content: Vec<usize> = (0..all.len())
        .filter(|&i| all[i].0 != RETURN_MANIFEST && all[i].0 != SIGNATURE)
        .collect();
    let i = content[entry % content.len()];
    let new = if all[i].0 == REPORTS {
        damage_json(&all[i].1, seed)
    } else {
        damage_bytes(&all[i].1, seed)
    };
    let name = all[i].0.clone();
    all[i].1 = new.clone();
    let m = all
        .iter()
        .position(|(n, _)| n == RETURN_MANIFEST)
        .expect("manifest");
    let mut manifest: serde_json::Value = serde_json::from_slice(&all[m].1).expect("manifest");
    for e in manifest["entries"].as_array_mut().expect("entries") {
        if e["name"] == name.as_str() {
            e["size"] = json!(new.len());
            e["sha256"] = json!(sha256_hex(&new));
        }
    }
    all[m].1 = serde_json::to_vec(&manifest).expect("manifest");
    let sig = sign_manifest(&key.key_id, &key.key, &all[m].1);
    for (n, b) in &mut all {
        if n == SIGNATURE {
            *b = serde_json::to_vec(&sig).expect("signature");
        }
    }
    let mut z = zip::ZipWriter::new(Cursor::new(Vec::new()));
    let opts =
        zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
    for (n, b) in &all {
        z.start_file(n.as_str(), opts).expect("start");
        z.write_all(b).expect("write");
    }
    z.finish().expect("finish").into_inner()
}

/// Header values a sender may get wrong: numbers out of range, negative,
/// not numbers, empty, long.
fn odd_value() -> impl Strategy<Value = String> {
    prop_oneof![
        any::<u64>().prop_map(|n| n.to_string()),
        Just("-1".to_string()),
        Just("18446744073709551616".to_string()),
        Just("1e3".to_string()),
        Just(String::new()),
        Just(" 0 ".to_string()),
        "[ -~]{0,64}",
        Just("9".repeat(5000)),
    ]
}

fn content_type() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("application/partial-upload".to_string()),
        Just("application/offset+octet-stream".to_string()),
        Just("application/json".to_string()),
        Just(format!("multipart/form-data; boundary={BOUNDARY}")),
        Just("multipart/form-data".to_string()),
        Just("multipart/form-data; boundary=".to_string()),
        Just(format!(
            "multipart/form-data; boundary={}",
            "b".repeat(4000)
        )),
        "[ -~]{0,40}",
    ]
}

/// The resumable upload of a (damaged) package: create, append in pieces
/// (some with wrong offsets or types), head, complete.
fn resumable(
    s: &TestServer,
    bundle_id: &str,
    package: &[u8],
    cuts: &[prop::sample::Index],
    odd: Option<(String, String)>,
) -> Result<(), TestCaseError> {
    let body =
        json!({"bundle_id": bundle_id, "size": package.len(), "sha256": sha256_hex(package)});
    let ct = vec![("Content-Type", "application/json".to_string())];
    let created = exchange(
        s,
        "POST",
        "/api/v1/uploads",
        &ct,
        body.to_string().as_bytes(),
    );
    judged(created.as_ref().map(|(st, _)| *st), "create")?;
    let Some(id) = created
        .and_then(|(_, text)| serde_json::from_str::<serde_json::Value>(&text).ok())
        .and_then(|v| v["upload_id"].as_str().map(str::to_string))
    else {
        return Ok(());
    };
    let path = format!("/api/v1/uploads/{id}");
    let mut points: Vec<usize> = cuts.iter().map(|c| c.index(package.len() + 1)).collect();
    points.push(0);
    points.push(package.len());
    points.sort_unstable();
    points.dedup();
    for w in points.windows(2) {
        let mut headers = vec![
            ("Upload-Offset", w[0].to_string()),
            ("Content-Type", "application/partial-upload".to_string()),
        ];
        if let Some((offset, kind)) = &odd {
            let odd_headers = [
                ("Upload-Offset", offset.clone()),
                ("Content-Type", kind.clone()),
            ];
            judged(
                send(s, "PATCH", &path, &odd_headers, &package[w[0]..w[1]]),
                "odd patch",
            )?;
            headers.push(("Upload-Length", offset.clone()));
        }
        judged(
            send(s, "PATCH", &path, &headers, &package[w[0]..w[1]]),
            "patch",
        )?;
    }
    judged(send(s, "HEAD", &path, &[], b""), "head")?;
    judged(
        send(s, "POST", &format!("{path}/complete"), &[], b""),
        "complete",
    )?;
    Ok(())
}

#[test]
fn damaged_uploads_and_forms_get_4xx_never_5xx_and_the_server_stays_up() {
    let s = TestServer::start();
    load_scenario(&s);
    let (valid, key, bundle_id) = valid_return(&s);
    let config = Config {
        cases: mock_patrols::damage::cases(CASES),
        failure_persistence: None,
        // A hang costs a client timeout per try: report the case found.
        max_shrink_iters: 0,
        ..Config::default()
    };

    // Whole packages: damaged anywhere, or damaged inside and signed again.
    let mut runner = TestRunner::new(config.clone());
    runner
        .run(
            &(any::<u64>(), any::<usize>(), any::<bool>()),
            |(seed, entry, signed)| {
                let package = if signed {
                    signed_damage(&valid, &key, entry, seed)
                } else {
                    damage_bytes(&valid, seed)
                };
                let ct = vec![("Content-Type", "application/zip".to_string())];
                judged(
                    send(&s, "POST", "/api/v1/returns", &ct, &package),
                    "whole return",
                )
            },
        )
        .unwrap_or_else(|e| panic!("whole returns: {e}"));

    // The resumable protocol with damaged packages, pieces and headers.
    let mut runner = TestRunner::new(config.clone());
    let odd = prop::option::weighted(0.3, (odd_value(), content_type()));
    runner
        .run(
            &(
                any::<u64>(),
                prop::collection::vec(any::<prop::sample::Index>(), 0..3),
                odd,
            ),
            |(seed, cuts, odd)| {
                let package = damage_bytes(&valid, seed);
                resumable(&s, &bundle_id, &package, &cuts, odd)
            },
        )
        .unwrap_or_else(|e| panic!("resumable uploads: {e}"));

    // The create body and odd upload ids.
    let mut runner = TestRunner::new(config.clone());
    let create = json!({"bundle_id": bundle_id, "size": valid.len(), "sha256": sha256_hex(&valid)});
    runner
        .run(
            &(any::<u64>(), "[!-~]{1,80}", content_type()),
            |(seed, id, kind)| {
                let body = damage_json(create.to_string().as_bytes(), seed);
                judged(
                    send(
                        &s,
                        "POST",
                        "/api/v1/uploads",
                        &[("Content-Type", kind.clone())],
                        &body,
                    ),
                    "create",
                )?;
                let ct = vec![("Content-Type", "application/json".to_string())];
                judged(
                    send(&s, "POST", "/api/v1/uploads", &ct, &body),
                    "create json",
                )?;
                let id = id.replace(['?', '#', '%'], "_");
                judged(
                    send(&s, "HEAD", &format!("/api/v1/uploads/{id}"), &[], b""),
                    "head id",
                )?;
                let patch = vec![("Upload-Offset", "0".to_string()), ("Content-Type", kind)];
                judged(
                    send(
                        &s,
                        "PATCH",
                        &format!("/api/v1/uploads/{id}"),
                        &patch,
                        b"abc",
                    ),
                    "patch id",
                )?;
                judged(
                    send(
                        &s,
                        "POST",
                        &format!("/api/v1/uploads/{id}/complete"),
                        &[],
                        b"",
                    ),
                    "complete id",
                )
            },
        )
        .unwrap_or_else(|e| panic!("create bodies and ids: {e}"));

    // The multipart forms: the import pages and the station, with damaged
    // files inside good forms, damaged forms, and odd content types.
    let csv = corpus("alerts-csv");
    let zones = corpus("zones");
    let source = mock_patrols::scenario().sources[0].name;
    let mut runner = TestRunner::new(config.clone());
    runner
        .run(
            &(
                any::<u64>(),
                any::<prop::sample::Index>(),
                0..4usize,
                any::<bool>(),
                content_type(),
            ),
            |(seed, pick, form, whole, kind)| {
                let (path, body) = match form {
                    0 => (
                        "/import/alerts",
                        multipart(
                            &[("source", source)],
                            &[(
                                "file",
                                "a.csv",
                                &damage_csv(&csv[pick.index(csv.len())], seed),
                            )],
                        ),
                    ),
                    1 => (
                        "/import/zones",
                        multipart(
                            &[],
                            &[(
                                "file",
                                "z.geojson",
                                &damage_json(&zones[pick.index(zones.len())], seed),
                            )],
                        ),
                    ),
                    2 => (
                        "/station",
                        multipart(
                            &[("csrf_token", "")],
                            &[("package", "return.zip", &damage_bytes(&valid, seed))],
                        ),
                    ),
                    _ => (
                        "/station",
                        multipart(
                            &[],
                            &[(
                                "package",
                                "return.zip",
                                &signed_damage(&valid, &key, seed as usize, seed),
                            )],
                        ),
                    ),
                };
                let body = if whole {
                    damage_bytes(&body, seed ^ 1)
                } else {
                    body
                };
                let good = vec![(
                    "Content-Type",
                    format!("multipart/form-data; boundary={BOUNDARY}"),
                )];
                judged(send(&s, "POST", path, &good, &body), path)?;
                judged(
                    send(&s, "POST", path, &[("Content-Type", kind)], &body),
                    path,
                )
            },
        )
        .unwrap_or_else(|e| panic!("multipart forms: {e}"));

    // The JSON API's zone and alert imports with damaged bodies.
    let geojson = corpus("alerts-geojson");
    let mut runner = TestRunner::new(config);
    runner
        .run(
            &(any::<u64>(), any::<prop::sample::Index>(), 0..3usize),
            |(seed, pick, which)| {
                let (path, body) = match which {
                    0 => (
                        "/api/v1/zones".to_string(),
                        damage_json(&zones[pick.index(zones.len())], seed),
                    ),
                    1 => (
                        format!("/api/v1/alerts?source={source}"),
                        damage_csv(&csv[pick.index(csv.len())], seed),
                    ),
                    _ => (
                        format!("/api/v1/alerts?source={source}"),
                        damage_json(&geojson[pick.index(geojson.len())], seed),
                    ),
                };
                let ct = vec![("Content-Type", "text/plain".to_string())];
                judged(send(&s, "POST", &path, &ct, &body), "api import")
            },
        )
        .unwrap_or_else(|e| panic!("API imports: {e}"));

    // Still up, and still right: the valid return is taken in.
    assert_eq!(get(&s.url("/healthz")).status, 200);
    let ct = vec![("Content-Type", "application/zip".to_string())];
    let status = send(&s, "POST", "/api/v1/returns", &ct, &valid);
    assert_eq!(status, Some(200), "the valid return after the damaged ones");
}

/// Found by the zone reader's property test: a GeoJSON position of fewer
/// than two numbers panicked the geojson crate's conversion (geojson 1.0.0,
/// `to_geo_types.rs:310`), here through the zone import and a trip's drawn
/// extent. Both are 4xx that say what is wrong, and the server stays up.
#[test]
fn a_position_without_a_latitude_is_refused_in_zones_and_extents() {
    let s = TestServer::start();
    load_scenario(&s);
    let short =
        r#"{"type":"Polygon","coordinates":[[[-60.9],[-60.8,-3.7],[-60.8,-3.6],[-60.9,-3.7]]]}"#;
    let zones = format!(
        r#"{{"type":"FeatureCollection","features":[{{"type":"Feature","properties":{{"name":"Short"}},"geometry":{short}}}]}}"#
    );
    let ct = vec![("Content-Type", "application/geo+json".to_string())];
    let (status, body) =
        exchange(&s, "POST", "/api/v1/zones", &ct, zones.as_bytes()).expect("sent");
    assert_eq!(status, 400, "{body}");
    assert!(
        body.contains("a position needs a longitude and a latitude"),
        "{body}"
    );

    let station = mock_patrols::scenario().station;
    let extent: serde_json::Value = serde_json::from_str(short).expect("json");
    let r = post_json(
        &s.url("/api/v1/bundles"),
        &json!({"team": mock_patrols::scenario().teams[0], "extent": extent,
                "start": {"lat": station.1, "lon": station.0}}),
    );
    assert_eq!(r.status, 400, "{}", r.body);
    assert!(r.body.contains("field 'extent'"), "{}", r.body);
    assert_eq!(get(&s.url("/healthz")).status, 200);
}

/// Found by the form cases above: a multipart body cut inside its closing
/// boundary left the form handlers waiting for bytes that could not come
/// (actix-multipart 0.7.2; fixed upstream in 0.8, actix-web PR #4255), so
/// the request never got an answer. Each form now answers 400.
#[test]
fn a_form_cut_inside_its_closing_boundary_gets_an_answer() {
    let s = TestServer::start();
    load_scenario(&s);
    let source = mock_patrols::scenario().sources[0].name;
    let ct = vec![(
        "Content-Type",
        format!("multipart/form-data; boundary={BOUNDARY}"),
    )];
    let forms = [
        (
            "/station",
            multipart(
                &[("csrf_token", "")],
                &[("package", "return.zip", b"PK\x03\x04 not a zip")],
            ),
        ),
        (
            "/import/alerts",
            multipart(&[("source", source)], &[("file", "a.csv", b"lon,lat\n")]),
        ),
        (
            "/import/zones",
            multipart(&[], &[("file", "z.geojson", b"{}")]),
        ),
    ];
    for (path, body) in forms {
        for cut in [2, 6, 10, BOUNDARY.len()] {
            let status = send(&s, "POST", path, &ct, &body[..body.len() - cut]);
            assert!(
                status.is_some_and(|st| (400..500).contains(&st)),
                "{path} cut {cut} bytes short: {status:?}"
            );
        }
    }
    assert_eq!(get(&s.url("/healthz")).status, 200);
}
