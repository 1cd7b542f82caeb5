//! The bundle format, version 1: the ZIP a field team takes offline for one
//! trip. The server writes it with [`write_bundle`]; the field kit opens it
//! with [`open_bundle`]. Both sides use this one definition.
//!
//! # Entries
//!
//! | name | content |
//! |---|---|
//! | `bundle.gpkg` | OGC GeoPackage 1.3: layers `events` (MULTIPOLYGON) and `points` (POINT), EPSG:4326, R-tree index |
//! | `checklist.json` | the [`Checklist`] reports must follow |
//! | `events.geojson` | RFC 7946 FeatureCollection of event footprints with every event property |
//! | `extras/<stem>.<html\|css\|png\|svg>` | server-rendered extras (field sheet, previews), see [`is_allowed_extra_name`] |
//! | `manifest.json` | [`Manifest`]: format, version, header, counts, SHA-256 and size of every other entry |
//! | `points.geojson` | event centroids (`kind` = `event`), control points (`control`), start (`start`) |
//! | `route.gpx` | GPX 1.1: a waypoint per event and control point (name = code), the start, one route |
//! | `upload-key.json` | `{"key_id": …, "key_hex": …}`: the 256-bit key the field kit signs returns with |
//!
//! Entries are sorted by name, deflated (level 6), dated 1980-01-01 00:00 with
//! Unix permissions 0644, so the same inputs give the same bytes. All
//! coordinates are WGS 84 longitude/latitude rounded to 1e-7 degree;
//! footprints are wound by the right-hand rule. Bundles crossing the
//! antimeridian are not supported (longitudes must lie in [-180, 180]).
//!
//! # What the checksums do and do not do
//!
//! The SHA-256 values in the manifest detect corruption and accidental
//! change of an entry; they are not a signature (anyone who can change an
//! entry can change the manifest too). Bundles come to the team over the
//! authenticated team channel; treat them as sensitive, since they hold
//! locations of possibly illegal activity.
//!
//! # The upload key and what the server keeps
//!
//! The caller gives [`write_bundle`] 256 random bits and an id; both go into
//! `upload-key.json`. The field kit signs every return with HMAC-SHA256
//! under this key. HMAC is symmetric, so to verify a return the server must
//! keep **the key itself** (not a hash of it), stored server-side with the
//! bundle id and the key id. When a bundle is cancelled the server deletes
//! the key or marks it revoked, and from then on refuses every return signed
//! with it.

mod geojson;
mod gpkg;
mod gpx;
mod limits;
mod manifest;
mod names;
mod read;
mod types;
mod write;

pub use self::geojson::{KIND_CONTROL, KIND_EVENT, KIND_START};
pub use gpkg::{EVENTS_LAYER, GPKG_APPLICATION_ID, GPKG_USER_VERSION, POINTS_LAYER};
pub use gpx::{GPX_CREATOR, control_waypoint_name, short_bundle_code};
pub use limits::BundleLimits;
pub use manifest::{Manifest, ManifestCounts, ManifestEntry, UploadKey, sha256_hex};
pub use names::{
    CHECKLIST, CORE_ENTRIES, EVENTS_GEOJSON, EXTRA_EXTENSIONS, EXTRA_PREFIX, GEOPACKAGE, MANIFEST,
    MAX_EXTRA_STEM, POINTS_GEOJSON, ROUTE_GPX, UPLOAD_KEY, is_allowed_entry_name,
    is_allowed_extra_name,
};
pub use read::{OpenedBundle, open_bundle, open_bundle_with_limits};
pub use types::{
    BundleEvent, BundleHeader, CHECKLIST_VERSION, CONFIDENCE_HIGH, CONFIDENCE_LOW, CameraZone,
    Checklist, ControlPoint, ExtraEntry, MAX_TEXT_CHARS, MODE_ASSESSMENT, MODE_RESPONSE,
    StartPoint, confidence_level, is_valid_code, is_valid_date, parse_utc_offset,
};
pub use write::write_bundle;
