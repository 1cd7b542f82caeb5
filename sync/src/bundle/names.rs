//! The names of the entries a bundle may hold: seven fixed core entries and
//! server-rendered extras under `extras/` matching one narrow pattern. The
//! pattern leaves no room for path traversal, absolute paths, backslashes,
//! drive letters or hidden files, so a name that passes is safe to join to a
//! directory.

/// The manifest: format, version, header, counts and every other entry's checksum.
pub const MANIFEST: &str = "manifest.json";
/// The upload key `{key_id, key_hex}` the field kit signs returns with.
pub const UPLOAD_KEY: &str = "upload-key.json";
/// The checklist (see [`crate::bundle::Checklist`]).
pub const CHECKLIST: &str = "checklist.json";
/// Event footprints as a GeoJSON FeatureCollection.
pub const EVENTS_GEOJSON: &str = "events.geojson";
/// Event centroids, control points and the start point as a GeoJSON FeatureCollection.
pub const POINTS_GEOJSON: &str = "points.geojson";
/// Waypoints and the route for handheld GPS units (GPX 1.1).
pub const ROUTE_GPX: &str = "route.gpx";
/// GeoPackage 1.3 with the layers `events` and `points`.
pub const GEOPACKAGE: &str = "bundle.gpkg";

/// Every core entry, sorted by name (the order they are written in, with extras between).
pub const CORE_ENTRIES: [&str; 7] = [
    GEOPACKAGE,
    CHECKLIST,
    EVENTS_GEOJSON,
    MANIFEST,
    POINTS_GEOJSON,
    ROUTE_GPX,
    UPLOAD_KEY,
];

/// Folder of server-rendered extras.
pub const EXTRA_PREFIX: &str = "extras/";
/// File extensions an extra may have.
pub const EXTRA_EXTENSIONS: [&str; 4] = ["html", "css", "png", "svg"];
/// Longest stem (name without folder and extension) of an extra.
pub const MAX_EXTRA_STEM: usize = 64;

/// `true` when `name` is `extras/<stem>.<ext>` where stem is 1–64 characters of
/// `[a-z0-9_-]` starting with `[a-z0-9]` and ext is one of [`EXTRA_EXTENSIONS`].
/// Example: `extras/field-sheet.html`, `extras/preview-k0417.png`.
pub fn is_allowed_extra_name(name: &str) -> bool {
    let Some(rest) = name.strip_prefix(EXTRA_PREFIX) else {
        return false;
    };
    let Some((stem, ext)) = rest.split_once('.') else {
        return false;
    };
    let stem_ok = (1..=MAX_EXTRA_STEM).contains(&stem.len())
        && stem
            .bytes()
            .next()
            .is_some_and(|c| c.is_ascii_lowercase() || c.is_ascii_digit())
        && stem
            .bytes()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == b'_' || c == b'-');
    stem_ok && EXTRA_EXTENSIONS.contains(&ext)
}

/// `true` for a core entry name or an allowed extra name.
pub fn is_allowed_entry_name(name: &str) -> bool {
    CORE_ENTRIES.contains(&name) || is_allowed_extra_name(name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn core_entries_are_sorted() {
        let mut sorted = CORE_ENTRIES;
        sorted.sort_unstable();
        assert_eq!(sorted, CORE_ENTRIES);
    }

    #[test]
    fn extras_pattern() {
        assert!(is_allowed_extra_name("extras/field-sheet.html"));
        assert!(is_allowed_extra_name("extras/preview_k0417.png"));
        assert!(is_allowed_extra_name("extras/0.svg"));
        for bad in [
            "field-sheet.html",
            "extras/",
            "extras/.html",
            "extras/-x.html",
            "extras/../manifest.json",
            "extras/a/b.html",
            "extras/a.b.html",
            "extras/A.html",
            "extras/a.exe",
            "extras/a.HTML",
            "/extras/a.html",
            "extras\\a.html",
            "extras/a.html\0",
        ] {
            assert!(!is_allowed_extra_name(bad), "{bad:?} must be refused");
        }
        assert!(is_allowed_entry_name("manifest.json"));
        assert!(!is_allowed_entry_name("./manifest.json"));
        assert!(!is_allowed_entry_name("Manifest.json"));
    }
}
