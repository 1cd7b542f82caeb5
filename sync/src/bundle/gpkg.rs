//! `bundle.gpkg`: an OGC GeoPackage 1.3 (application_id "GPKG", user_version
//! 10300) written with rusqlite into a temporary file. It holds the required
//! tables and `gpkg_spatial_ref_sys` rows, an `events` MULTIPOLYGON layer and
//! a `points` POINT layer (EPSG:4326) with the properties of
//! `events.geojson`/`points.geojson`, GeoPackageBinary blobs (header plus
//! little-endian ISO WKB), and the R-tree spatial index extension with the
//! 1.2.1–1.3 trigger set. Features and index rows are inserted first, the
//! triggers last, because plain SQLite lacks the `ST_*` functions the
//! triggers call (formats-and-crates.md §1.7). Journal mode DELETE, VACUUMed.

use std::path::Path;

use chrono::{DateTime, Utc};
use geo::{LineString, MultiPolygon, Point};
use rusqlite::types::Value;
use rusqlite::{Connection, params, params_from_iter};

use super::types::{BundleEvent, ControlPoint, StartPoint};
use crate::SyncError;

/// GeoPackage `application_id`: "GPKG" = 0x47504B47 (OGC 12-128r18 Req 2).
pub const GPKG_APPLICATION_ID: i32 = 0x4750_4B47;
/// GeoPackage `user_version` for 1.3.0 (formats-and-crates.md §1.1: GDAL 3.6 warns on 10400).
pub const GPKG_USER_VERSION: i32 = 10300;
/// Feature layer of event footprints.
pub const EVENTS_LAYER: &str = "events";
/// Feature layer of centroids, control points and the start point.
pub const POINTS_LAYER: &str = "points";

/// WGS 84 definition as GDAL 3.6.2 writes it (formats-and-crates.md §1.3).
const WGS84_WKT: &str = "GEOGCS[\"WGS 84\",DATUM[\"WGS_1984\",SPHEROID[\"WGS 84\",6378137,298.257223563,AUTHORITY[\"EPSG\",\"7030\"]],AUTHORITY[\"EPSG\",\"6326\"]],PRIMEM[\"Greenwich\",0,AUTHORITY[\"EPSG\",\"8901\"]],UNIT[\"degree\",0.0174532925199433,AUTHORITY[\"EPSG\",\"9122\"]],AXIS[\"Latitude\",NORTH],AXIS[\"Longitude\",EAST],AUTHORITY[\"EPSG\",\"4326\"]]";

/// Bounding box `[minx, maxx, miny, maxy]` (the GeoPackage envelope order).
type Envelope = [f64; 4];

fn envelope_of(points: impl Iterator<Item = (f64, f64)>) -> Option<Envelope> {
    points.fold(None, |acc, (x, y)| {
        Some(match acc {
            None => [x, x, y, y],
            Some([a, b, c, d]) => [a.min(x), b.max(x), c.min(y), d.max(y)],
        })
    })
}

fn multipolygon_envelope(mp: &MultiPolygon<f64>) -> Option<Envelope> {
    envelope_of(
        mp.0.iter()
            .flat_map(|p| p.exterior().0.iter().map(|c| (c.x, c.y))),
    )
}

fn union(a: Option<Envelope>, b: Option<Envelope>) -> Option<Envelope> {
    match (a, b) {
        (Some(a), Some(b)) => Some([
            a[0].min(b[0]),
            a[1].max(b[1]),
            a[2].min(b[2]),
            a[3].max(b[3]),
        ]),
        (a, None) => a,
        (None, b) => b,
    }
}

/// GeoPackageBinary header (OGC 12-128r18 §2.1.3.1.1): magic "GP", version 0,
/// flags (bit 0 = little-endian, bits 1-3 = envelope code), srs_id, envelope.
fn gpb_header(srs_id: i32, envelope: Option<Envelope>) -> Vec<u8> {
    let mut out = vec![0x47, 0x50, 0x00];
    let flags: u8 = match envelope {
        Some(_) => 0b0000_0011, // LE, envelope code 1 ([minx, maxx, miny, maxy])
        None => 0b0000_0001,    // LE, no envelope
    };
    out.push(flags);
    out.extend_from_slice(&srs_id.to_le_bytes());
    for v in envelope.iter().flatten() {
        out.extend_from_slice(&v.to_le_bytes());
    }
    out
}

fn wkb_ring(out: &mut Vec<u8>, ring: &LineString<f64>) {
    out.extend_from_slice(&(ring.0.len() as u32).to_le_bytes());
    for c in &ring.0 {
        out.extend_from_slice(&c.x.to_le_bytes());
        out.extend_from_slice(&c.y.to_le_bytes());
    }
}

/// GeoPackageBinary of a point, without envelope (as GDAL 3.6.2 writes points).
pub fn gpb_point(p: Point<f64>, srs_id: i32) -> Vec<u8> {
    let mut out = gpb_header(srs_id, None);
    out.push(1); // little-endian WKB
    out.extend_from_slice(&1u32.to_le_bytes()); // wkbPoint
    out.extend_from_slice(&p.x().to_le_bytes());
    out.extend_from_slice(&p.y().to_le_bytes());
    out
}

/// GeoPackageBinary of a multipolygon with an xy envelope.
pub fn gpb_multipolygon(mp: &MultiPolygon<f64>, srs_id: i32) -> Vec<u8> {
    let mut out = gpb_header(srs_id, multipolygon_envelope(mp));
    out.push(1);
    out.extend_from_slice(&6u32.to_le_bytes()); // wkbMultiPolygon
    out.extend_from_slice(&(mp.0.len() as u32).to_le_bytes());
    for poly in &mp.0 {
        out.push(1);
        out.extend_from_slice(&3u32.to_le_bytes()); // wkbPolygon
        out.extend_from_slice(&((1 + poly.interiors().len()) as u32).to_le_bytes());
        wkb_ring(&mut out, poly.exterior());
        for hole in poly.interiors() {
            wkb_ring(&mut out, hole);
        }
    }
    out
}

/// The property columns shared by both layers (GeoPackage column types, Req 5).
const EVENT_COLUMNS: &str = "\"code\" TEXT, \"event_id\" INTEGER, \"area_ha\" DOUBLE, \
    \"first_detected\" DATE, \"last_detected\" DATE, \"sources\" TEXT, \"confidence\" TEXT, \
    \"confidence_level\" TEXT, \"corroborated\" BOOLEAN, \"priority\" DOUBLE, \"visit_order\" INTEGER, \
    \"inclusion_probability\" DOUBLE, \"stratum\" TEXT";

/// How many columns [`EVENT_COLUMNS`] names.
const EVENT_COLUMN_COUNT: usize = 13;

const CORE_DDL: &str = "
CREATE TABLE gpkg_spatial_ref_sys (
  srs_name TEXT NOT NULL, srs_id INTEGER PRIMARY KEY, organization TEXT NOT NULL,
  organization_coordsys_id INTEGER NOT NULL, definition TEXT NOT NULL, description TEXT);
CREATE TABLE gpkg_contents (
  table_name TEXT NOT NULL PRIMARY KEY, data_type TEXT NOT NULL, identifier TEXT UNIQUE,
  description TEXT DEFAULT '',
  last_change DATETIME NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')),
  min_x DOUBLE, min_y DOUBLE, max_x DOUBLE, max_y DOUBLE, srs_id INTEGER,
  CONSTRAINT fk_gc_r_srs_id FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys(srs_id));
CREATE TABLE gpkg_geometry_columns (
  table_name TEXT NOT NULL, column_name TEXT NOT NULL, geometry_type_name TEXT NOT NULL,
  srs_id INTEGER NOT NULL, z TINYINT NOT NULL, m TINYINT NOT NULL,
  CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name),
  CONSTRAINT uk_gc_table_name UNIQUE (table_name),
  CONSTRAINT fk_gc_tn FOREIGN KEY (table_name) REFERENCES gpkg_contents(table_name),
  CONSTRAINT fk_gc_srs FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys (srs_id));
CREATE TABLE gpkg_extensions (
  table_name TEXT, column_name TEXT, extension_name TEXT NOT NULL, definition TEXT NOT NULL,
  scope TEXT NOT NULL,
  CONSTRAINT ge_tce UNIQUE (table_name, column_name, extension_name));
";

/// The R-tree triggers of GeoPackage 1.2.1–1.3, as GDAL 3.6.2 `ogr2ogr -dsco VERSION=1.3`
/// writes them (dumped with `sqlite3 .schema`), for table `t`, geometry `geom`, key `fid`.
fn rtree_triggers(t: &str) -> String {
    let r = format!("rtree_{t}_geom");
    let ins = format!(
        "INSERT OR REPLACE INTO \"{r}\" VALUES (NEW.\"fid\",ST_MinX(NEW.\"geom\"), ST_MaxX(NEW.\"geom\"),ST_MinY(NEW.\"geom\"), ST_MaxY(NEW.\"geom\"));"
    );
    format!(
        "CREATE TRIGGER \"{r}_insert\" AFTER INSERT ON \"{t}\" WHEN (new.\"geom\" NOT NULL AND NOT ST_IsEmpty(NEW.\"geom\")) BEGIN {ins} END;
CREATE TRIGGER \"{r}_update1\" AFTER UPDATE OF \"geom\" ON \"{t}\" WHEN OLD.\"fid\" = NEW.\"fid\" AND (NEW.\"geom\" NOTNULL AND NOT ST_IsEmpty(NEW.\"geom\")) BEGIN {ins} END;
CREATE TRIGGER \"{r}_update2\" AFTER UPDATE OF \"geom\" ON \"{t}\" WHEN OLD.\"fid\" = NEW.\"fid\" AND (NEW.\"geom\" ISNULL OR ST_IsEmpty(NEW.\"geom\")) BEGIN DELETE FROM \"{r}\" WHERE id = OLD.\"fid\"; END;
CREATE TRIGGER \"{r}_update3\" AFTER UPDATE ON \"{t}\" WHEN OLD.\"fid\" != NEW.\"fid\" AND (NEW.\"geom\" NOTNULL AND NOT ST_IsEmpty(NEW.\"geom\")) BEGIN DELETE FROM \"{r}\" WHERE id = OLD.\"fid\"; {ins} END;
CREATE TRIGGER \"{r}_update4\" AFTER UPDATE ON \"{t}\" WHEN OLD.\"fid\" != NEW.\"fid\" AND (NEW.\"geom\" ISNULL OR ST_IsEmpty(NEW.\"geom\")) BEGIN DELETE FROM \"{r}\" WHERE id IN (OLD.\"fid\", NEW.\"fid\"); END;
CREATE TRIGGER \"{r}_delete\" AFTER DELETE ON \"{t}\" WHEN old.\"geom\" NOT NULL BEGIN DELETE FROM \"{r}\" WHERE id = OLD.\"fid\"; END;
"
    )
}

fn e(context: &'static str) -> impl Fn(rusqlite::Error) -> SyncError {
    move |source| SyncError::gpkg(context, source)
}

/// Registers one feature layer: table, contents row, geometry column row, R-tree table.
fn create_layer(
    conn: &Connection,
    table: &str,
    geometry_type: &str,
    extra_columns: &str,
    description: &str,
    last_change: &str,
    bbox: Option<Envelope>,
) -> Result<(), SyncError> {
    conn.execute_batch(&format!(
        "CREATE TABLE \"{table}\" (\"fid\" INTEGER PRIMARY KEY NOT NULL, \"geom\" {geometry_type}, {extra_columns});
         CREATE VIRTUAL TABLE \"rtree_{table}_geom\" USING rtree(id, minx, maxx, miny, maxy);"
    ))
    .map_err(e("create layer table"))?;
    let [min_x, max_x, min_y, max_y] = bbox.map_or([None; 4], |b| b.map(Some));
    conn.execute(
        "INSERT INTO gpkg_contents (table_name, data_type, identifier, description, last_change, \
         min_x, min_y, max_x, max_y, srs_id) VALUES (?1, 'features', ?1, ?2, ?3, ?4, ?5, ?6, ?7, 4326)",
        params![table, description, last_change, min_x, min_y, max_x, max_y],
    )
    .map_err(e("insert gpkg_contents"))?;
    conn.execute(
        "INSERT INTO gpkg_geometry_columns VALUES (?1, 'geom', ?2, 4326, 0, 0)",
        params![table, geometry_type],
    )
    .map_err(e("insert gpkg_geometry_columns"))?;
    conn.execute(
        "INSERT INTO gpkg_extensions VALUES (?1, 'geom', 'gpkg_rtree_index', \
         'http://www.geopackage.org/spec/#extension_rtree', 'write-only')",
        params![table],
    )
    .map_err(e("insert gpkg_extensions"))?;
    Ok(())
}

fn insert_rtree(conn: &Connection, table: &str, fid: i64, b: Envelope) -> Result<(), SyncError> {
    conn.execute(
        &format!("INSERT INTO \"rtree_{table}_geom\" VALUES (?1, ?2, ?3, ?4, ?5)"),
        params![fid, b[0], b[1], b[2], b[3]],
    )
    .map_err(e("insert R-tree row"))?;
    Ok(())
}

/// Values of [`EVENT_COLUMNS`]: the event's properties, or only code, visit order and
/// inclusion probability (control points), NULL elsewhere. Sources are joined by commas.
fn event_columns(
    ev: Option<&BundleEvent>,
    code: &str,
    visit_order: u32,
    prob: Option<f64>,
) -> Vec<Value> {
    let text = |s: &str| Value::Text(s.to_owned());
    let opt = |v: Option<Value>| v.unwrap_or(Value::Null);
    vec![
        text(code),
        opt(ev.map(|e| Value::Integer(e.event_id))),
        opt(ev.map(|e| Value::Real(e.area_ha))),
        opt(ev.map(|e| text(&e.first_detected))),
        opt(ev.map(|e| text(&e.last_detected))),
        opt(ev.map(|e| Value::Text(e.sources.join(",")))),
        opt(ev.map(|e| text(&e.confidence))),
        opt(ev.and_then(|e| e.confidence_level()).map(text)),
        opt(ev.map(|e| Value::Integer(i64::from(e.corroborated)))),
        opt(ev.map(|e| Value::Real(e.priority))),
        Value::Integer(i64::from(visit_order)),
        opt(prob.map(Value::Real)),
        opt(ev.and_then(|e| e.stratum.as_deref()).map(text)),
    ]
}

fn insert_row(conn: &Connection, table: &str, values: Vec<Value>) -> Result<(), SyncError> {
    let marks = vec!["?"; values.len()].join(", ");
    conn.execute(
        &format!("INSERT INTO \"{table}\" VALUES ({marks})"),
        params_from_iter(values),
    )
    .map_err(e("insert feature"))?;
    Ok(())
}

/// Writes the GeoPackage of a bundle to `path` (an existing empty file or a new path).
/// `issued_at` becomes `last_change` of both layers, so the bytes depend only on the inputs.
pub fn write_geopackage(
    path: &Path,
    issued_at: DateTime<Utc>,
    events: &[BundleEvent],
    controls: &[ControlPoint],
    start: &StartPoint,
) -> Result<(), SyncError> {
    let conn = open_geopackage(path)?;
    let last_change = issued_at.format("%Y-%m-%dT%H:%M:%S%.3fZ").to_string();

    conn.execute_batch("BEGIN").map_err(e("begin"))?;
    create_core_tables(&conn)?;
    create_layers(&conn, &last_change, events, controls, start)?;
    insert_event_features(&conn, events)?;
    insert_point_features(&conn, events, controls, start)?;
    finish_geopackage(conn)
}

/// Opens the file and sets the GeoPackage identity pragmas and journal mode DELETE.
fn open_geopackage(path: &Path) -> Result<Connection, SyncError> {
    let conn = Connection::open(path).map_err(e("open temporary GeoPackage"))?;
    conn.pragma_update(None, "application_id", GPKG_APPLICATION_ID)
        .map_err(e("set application_id"))?;
    conn.pragma_update(None, "user_version", GPKG_USER_VERSION)
        .map_err(e("set user_version"))?;
    let mode: String = conn
        .query_row("PRAGMA journal_mode = DELETE", [], |r| r.get(0))
        .map_err(e("set journal_mode"))?;
    if !mode.eq_ignore_ascii_case("delete") {
        return Err(SyncError::InvalidInput(format!(
            "GeoPackage journal mode is {mode}, not delete"
        )));
    }
    Ok(conn)
}

/// Creates the required tables and the three `gpkg_spatial_ref_sys` rows.
fn create_core_tables(conn: &Connection) -> Result<(), SyncError> {
    conn.execute_batch(CORE_DDL)
        .map_err(e("create core tables"))?;
    conn.execute(
        "INSERT INTO gpkg_spatial_ref_sys VALUES \
         ('Undefined Cartesian SRS', -1, 'NONE', -1, 'undefined', 'undefined Cartesian coordinate reference system'), \
         ('Undefined geographic SRS', 0, 'NONE', 0, 'undefined', 'undefined geographic coordinate reference system'), \
         ('WGS 84 geodetic', 4326, 'EPSG', 4326, ?1, 'longitude/latitude coordinates in decimal degrees on the WGS 84 spheroid')",
        params![WGS84_WKT],
    )
    .map_err(e("insert gpkg_spatial_ref_sys"))?;
    Ok(())
}

/// Registers the events and points layers with their bounding boxes.
fn create_layers(
    conn: &Connection,
    last_change: &str,
    events: &[BundleEvent],
    controls: &[ControlPoint],
    start: &StartPoint,
) -> Result<(), SyncError> {
    let events_bbox = events.iter().fold(None, |acc, ev| {
        union(acc, multipolygon_envelope(&ev.footprint))
    });
    create_layer(
        conn,
        EVENTS_LAYER,
        "MULTIPOLYGON",
        EVENT_COLUMNS,
        "Clearing event footprints to visit",
        last_change,
        events_bbox,
    )?;
    let point_iter = events
        .iter()
        .map(|ev| ev.centroid)
        .chain(controls.iter().map(|c| c.point))
        .chain(std::iter::once(start.point));
    let points_bbox = envelope_of(point_iter.map(|p| (p.x(), p.y())));
    create_layer(
        conn,
        POINTS_LAYER,
        "POINT",
        &format!("\"kind\" TEXT NOT NULL, \"name\" TEXT NOT NULL, {EVENT_COLUMNS}"),
        "Event centroids, control points and the start point",
        last_change,
        points_bbox,
    )
}

/// Inserts one events-layer feature and R-tree row per event footprint.
fn insert_event_features(conn: &Connection, events: &[BundleEvent]) -> Result<(), SyncError> {
    for (i, ev) in events.iter().enumerate() {
        let fid = i as i64 + 1;
        let mut values = vec![
            Value::Integer(fid),
            Value::Blob(gpb_multipolygon(&ev.footprint, 4326)),
        ];
        values.extend(event_columns(
            Some(ev),
            &ev.code,
            ev.visit_order,
            ev.inclusion_probability,
        ));
        insert_row(conn, EVENTS_LAYER, values)?;
        if let Some(b) = multipolygon_envelope(&ev.footprint) {
            insert_rtree(conn, EVENTS_LAYER, fid, b)?;
        }
    }
    Ok(())
}

/// Inserts the points-layer features (event centroids, control points, then
/// the start point), each with its R-tree row.
fn insert_point_features(
    conn: &Connection,
    events: &[BundleEvent],
    controls: &[ControlPoint],
    start: &StartPoint,
) -> Result<(), SyncError> {
    let event_points = events.iter().map(|ev| {
        let cols = event_columns(Some(ev), &ev.code, ev.visit_order, ev.inclusion_probability);
        (ev.centroid, "event", ev.code.as_str(), cols)
    });
    let control_points = controls.iter().map(|c| {
        let cols = event_columns(None, &c.code, c.visit_order, c.inclusion_probability);
        (c.point, "control", c.code.as_str(), cols)
    });
    let start_point = (
        start.point,
        "start",
        start.name.as_str(),
        vec![Value::Null; EVENT_COLUMN_COUNT],
    );
    for (i, (p, kind, name, cols)) in event_points
        .chain(control_points)
        .chain(std::iter::once(start_point))
        .enumerate()
    {
        let fid = i as i64 + 1;
        let mut values = vec![
            Value::Integer(fid),
            Value::Blob(gpb_point(p, 4326)),
            Value::Text(kind.to_owned()),
            Value::Text(name.to_owned()),
        ];
        values.extend(cols);
        insert_row(conn, POINTS_LAYER, values)?;
        insert_rtree(conn, POINTS_LAYER, fid, [p.x(), p.x(), p.y(), p.y()])?;
    }
    Ok(())
}

/// Creates the R-tree triggers, commits, vacuums, checks integrity and closes.
fn finish_geopackage(conn: Connection) -> Result<(), SyncError> {
    conn.execute_batch(&rtree_triggers(EVENTS_LAYER))
        .map_err(e("create R-tree triggers"))?;
    conn.execute_batch(&rtree_triggers(POINTS_LAYER))
        .map_err(e("create R-tree triggers"))?;
    conn.execute_batch("COMMIT").map_err(e("commit"))?;
    conn.execute_batch("VACUUM").map_err(e("vacuum"))?;

    let integrity: String = conn
        .query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .map_err(e("integrity check"))?;
    if integrity != "ok" {
        return Err(SyncError::InvalidInput(format!(
            "GeoPackage integrity check: {integrity}"
        )));
    }
    conn.close()
        .map_err(|(_, source)| SyncError::gpkg("close", source))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use geo::polygon;

    #[test]
    fn point_blob_matches_gdal() {
        // Golden bytes: GDAL 3.6.2 `ogr2ogr -f GPKG` of Point(-60.025 -3.1), srs 4326
        // (formats-and-crates.md §1.6, marked verified there).
        let golden = [
            "47500001e6100000",
            "01",
            "01000000",
            "3333333333034ec0",
            "cdcccccccccc08c0",
        ]
        .concat();
        assert_eq!(
            hex::encode(gpb_point(Point::new(-60.025, -3.1), 4326)),
            golden
        );
    }

    #[test]
    fn polygon_blob_matches_gdal() {
        // Golden header + envelope + polygon WKB header: GDAL 3.6.2 for
        // Polygon((-60 -3, -59.99 -3, -59.99 -2.99, -60 -2.99, -60 -3)), flags 0x03
        // (formats-and-crates.md §1.6, marked verified there). We wrap the polygon in a
        // MultiPolygon (WKB type 6, OGC 06-103r4), so its WKB header sits after that wrapper.
        let header = [
            "47500003e6100000",
            "0000000000004ec0",
            "1f85eb51b8fe4dc0",
            "00000000000008c0",
            "ec51b81e85eb07c0",
        ]
        .concat();
        let mp = MultiPolygon::new(vec![polygon![
            (x: -60.0, y: -3.0), (x: -59.99, y: -3.0), (x: -59.99, y: -2.99), (x: -60.0, y: -2.99)
        ]]);
        let blob = gpb_multipolygon(&mp, 4326);
        assert_eq!(hex::encode(&blob[..40]), header);
        let wrapper = ["01", "06000000", "01000000"].concat();
        let polygon_header = ["01", "03000000", "01000000", "05000000"].concat();
        assert_eq!(hex::encode(&blob[40..49]), wrapper);
        assert_eq!(hex::encode(&blob[49..62]), polygon_header);
        assert_eq!(blob.len(), 62 + 5 * 16);
        // First vertex (-60, -3) as little-endian doubles, same bytes as the envelope's.
        assert_eq!(
            hex::encode(&blob[62..78]),
            "0000000000004ec000000000000008c0"
        );
    }

    /// tests/reference/bundle/gdal-golden.txt, made by gdal_golden.sh with GDAL 3.6.2.
    const GOLDEN: &str = include_str!("../../../tests/reference/bundle/gdal-golden.txt");

    fn golden(key: &str) -> &'static str {
        GOLDEN
            .lines()
            .find_map(|l| l.strip_prefix(key).and_then(|r| r.strip_prefix(' ')))
            .unwrap_or_default()
    }

    #[test]
    fn blobs_match_the_gdal_fixture() {
        assert_eq!(
            hex::encode(gpb_point(Point::new(-60.025, -3.1), 4326)),
            golden("point_gpb")
        );
        let mp = MultiPolygon::new(vec![polygon![
            (x: -60.0, y: -3.0), (x: -59.99, y: -3.0), (x: -59.99, y: -2.99), (x: -60.0, y: -2.99)
        ]]);
        let ours = hex::encode(gpb_multipolygon(&mp, 4326));
        let gdal = golden("polygon_gpb");
        // Same header and envelope (40 bytes = 80 hex digits); GDAL wrote a Polygon, we wrap it
        // in a one-part MultiPolygon (9 more bytes), after which the polygon WKB is identical.
        assert_eq!(ours[..80], gdal[..80]);
        assert_eq!(ours[98..], gdal[80..]);
        assert_eq!(golden("user_version"), GPKG_USER_VERSION.to_string());
        assert_eq!(golden("application_id"), GPKG_APPLICATION_ID.to_string());
    }

    #[test]
    fn triggers_match_the_gdal_fixture() {
        let mut gdal: Vec<&str> = GOLDEN
            .lines()
            .filter(|l| l.starts_with("CREATE TRIGGER"))
            .collect();
        let ours_sql = rtree_triggers("pts");
        let mut ours: Vec<&str> = ours_sql.lines().collect();
        gdal.sort_unstable();
        ours.sort_unstable();
        assert_eq!(ours, gdal);
    }

    #[test]
    fn every_row_has_a_value_per_column() {
        assert_eq!(EVENT_COLUMNS.matches('"').count() / 2, EVENT_COLUMN_COUNT);
        assert_eq!(
            event_columns(None, "C0001", 1, None).len(),
            EVENT_COLUMN_COUNT
        );
    }
}
