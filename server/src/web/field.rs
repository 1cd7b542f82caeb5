//! The field app (`templates/field/`), embedded in the binary and served
//! under `/field/`: a phone web app that opens a trip file, records visits
//! offline and makes the signed return. Public: the app shell holds no
//! data (the trip file the team loads into it is what is sensitive), and it
//! must load on a phone that has no session.
//!
//! The service worker (`/field/sw.js`) gets the scope `/field/` by where it
//! is served. Its cache name carries a digest of every file here, so a new
//! build of the server makes phones fetch the new app once and keep it.
//! Nothing is loaded from elsewhere (DESIGN.md invariant 7): the only
//! libraries are vendored in `templates/field/vendor/`; the message
//! catalogues are the Fluent files of `templates/i18n/` the pages read too.

use super::access::Access;
use actix_web::http::header;
use actix_web::{HttpRequest, HttpResponse, web};
use sha2::{Digest, Sha256};
use std::sync::OnceLock;

macro_rules! app_file {
    ($name:literal, $type:expr) => {
        (
            $name,
            $type,
            include_bytes!(concat!("../../../templates/field/", $name)).as_slice(),
        )
    };
}

/// A catalogue of `templates/i18n/` (the pages read the same files).
macro_rules! catalogue {
    ($lang:literal) => {
        (
            concat!("i18n/", $lang, "/field.ftl"),
            FTL,
            include_bytes!(concat!("../../../templates/i18n/", $lang, "/field.ftl")).as_slice(),
        )
    };
}

const JS: &str = "text/javascript; charset=utf-8";
const FTL: &str = "text/plain; charset=utf-8";

/// Every file of the app: path under `/field/`, content type, bytes. The
/// service worker's list (`sw.js`, `FILES`) names the same files.
pub const FILES: &[(&str, &str, &[u8])] = &[
    app_file!("index.html", "text/html; charset=utf-8"),
    app_file!("app.css", "text/css; charset=utf-8"),
    app_file!("app.js", JS),
    app_file!("bundle.js", JS),
    app_file!("coords.js", JS),
    app_file!("crypto.js", JS),
    app_file!("geo.js", JS),
    app_file!("i18n.js", JS),
    app_file!("map.js", JS),
    app_file!("report.js", JS),
    app_file!("returnpkg.js", JS),
    app_file!("send.js", JS),
    app_file!("store.js", JS),
    app_file!("sw.js", JS),
    app_file!("icon.svg", "image/svg+xml"),
    app_file!("manifest.webmanifest", "application/manifest+json"),
    catalogue!("en"),
    catalogue!("es"),
    catalogue!("fr"),
    catalogue!("id"),
    catalogue!("pt"),
    app_file!("vendor/fluent-bundle/builtins.js", JS),
    app_file!("vendor/fluent-bundle/bundle.js", JS),
    app_file!("vendor/fluent-bundle/index.js", JS),
    app_file!("vendor/fluent-bundle/memoizer.js", JS),
    app_file!("vendor/fluent-bundle/resolver.js", JS),
    app_file!("vendor/fluent-bundle/resource.js", JS),
    app_file!("vendor/fluent-bundle/scope.js", JS),
    app_file!("vendor/fluent-bundle/types.js", JS),
    app_file!("vendor/fluent-bundle.LICENSE", "text/plain; charset=utf-8"),
    app_file!("vendor/fflate.js", JS),
    app_file!("vendor/fflate.LICENSE", "text/plain; charset=utf-8"),
    app_file!("vendor/exifr.js", JS),
    app_file!("vendor/exifr.LICENSE", "text/plain; charset=utf-8"),
    app_file!("exif.js", JS),
    app_file!("vendor/leaflet.js", JS),
    app_file!("vendor/leaflet.css", "text/css; charset=utf-8"),
    app_file!("vendor/leaflet.LICENSE", "text/plain; charset=utf-8"),
];

/// The placeholder cache name in `sw.js`, replaced by one naming this build.
const SW_VERSION: &str = "groundproof-field-1";

/// `sw.js` with a cache name made from the digest of every app file.
fn service_worker() -> &'static [u8] {
    static SW: OnceLock<Vec<u8>> = OnceLock::new();
    SW.get_or_init(|| {
        let mut h = Sha256::new();
        for (name, _, bytes) in FILES {
            h.update(name.as_bytes());
            h.update((bytes.len() as u64).to_le_bytes());
            h.update(bytes);
        }
        let digest = hex::encode(h.finalize());
        let sw = FILES
            .iter()
            .find(|(n, _, _)| *n == "sw.js")
            .map(|(_, _, b)| String::from_utf8_lossy(b).into_owned())
            .unwrap_or_default();
        sw.replacen(
            SW_VERSION,
            &format!("groundproof-field-{}", &digest[..16]),
            1,
        )
        .into_bytes()
    })
}

/// `GET /field/{path}` (`/field/` is the app's page).
async fn file(path: web::Path<String>) -> HttpResponse {
    let name = match path.as_str() {
        "" => "index.html",
        p => p,
    };
    let Some((_, content_type, bytes)) = FILES.iter().find(|(n, _, _)| *n == name) else {
        return HttpResponse::NotFound()
            .content_type("text/plain; charset=utf-8")
            .body("no such file");
    };
    let body: &'static [u8] = if name == "sw.js" {
        service_worker()
    } else {
        bytes
    };
    HttpResponse::Ok()
        .content_type(*content_type)
        .insert_header((header::X_CONTENT_TYPE_OPTIONS, "nosniff"))
        // The service worker keeps the app; the network copy is checked on each load.
        .insert_header((header::CACHE_CONTROL, "no-cache"))
        .insert_header((
            header::CONTENT_SECURITY_POLICY,
            "default-src 'self'; img-src 'self' blob:; connect-src 'self'; object-src 'none'; base-uri 'none'; frame-ancestors 'none'",
        ))
        .insert_header((header::REFERRER_POLICY, "no-referrer"))
        .body(body)
}

/// `GET /field`: to the app's page, so that relative links resolve.
async fn to_app(_req: HttpRequest) -> HttpResponse {
    HttpResponse::MovedPermanently()
        .insert_header((header::LOCATION, "/field/"))
        .finish()
}

/// Register the app's routes.
pub fn configure(cfg: &mut web::ServiceConfig) {
    cfg.route("/field", web::get().to(to_app).public())
        .route("/field/{path:.*}", web::get().to(file).public());
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The service worker caches exactly the files the server serves (but
    /// itself and the licence text), and the page `./`, so the app works
    /// offline after one load.
    #[test]
    fn service_worker_lists_every_file() {
        let sw = String::from_utf8_lossy(service_worker()).into_owned();
        // Quoted: the new name may itself start with the old one's digit.
        assert!(
            !sw.contains(&format!("'{SW_VERSION}'")),
            "the cache name is replaced"
        );
        let cached: Vec<&str> = FILES
            .iter()
            .map(|(name, _, _)| *name)
            .filter(|n| *n != "sw.js" && !n.ends_with("LICENSE"))
            .collect();
        for name in &cached {
            assert!(sw.contains(&format!("'./{name}'")), "sw.js caches {name}");
        }
        assert!(sw.contains("'./',"), "sw.js caches the page");
        assert_eq!(sw.matches("  './").count(), cached.len() + 1);
    }

    /// The app's catalogues are those the pages check (`platform::i18n::check`).
    #[test]
    fn the_app_serves_the_shared_catalogues() {
        for lang in crate::platform::i18n::LANGUAGES {
            let name = format!("i18n/{lang}/field.ftl");
            let (_, _, bytes) = FILES
                .iter()
                .find(|(n, _, _)| *n == name)
                .expect("catalogue");
            let shared = crate::platform::i18n::field_catalogue(lang).expect("shared");
            assert_eq!(*bytes, shared.as_bytes(), "{name}");
        }
    }

    /// The app shell with its libraries, as a phone downloads it once,
    /// is at most 500 kB compressed (issue 11's budget). Measured with
    /// DEFLATE at level 9 (what gzip -9 uses) over every file the service
    /// worker caches; printed for the README.
    #[test]
    fn app_shell_is_at_most_500_kb_compressed() {
        use std::io::Write;
        let mut z = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
        let opts = zip::write::SimpleFileOptions::default()
            .compression_method(zip::CompressionMethod::Deflated)
            .compression_level(Some(9));
        let mut raw = 0usize;
        for (name, _, bytes) in FILES.iter().filter(|(n, _, _)| !n.ends_with("LICENSE")) {
            z.start_file(*name, opts).expect("entry");
            z.write_all(bytes).expect("bytes");
            raw += bytes.len();
        }
        let mut archive = zip::ZipArchive::new(z.finish().expect("zip")).expect("read back");
        let compressed: u64 = (0..archive.len())
            .map(|i| archive.by_index(i).expect("entry").compressed_size())
            .sum();
        println!("field app shell: {raw} bytes, {compressed} bytes compressed (DEFLATE 9)");
        assert!(compressed <= 500_000, "{compressed} bytes compressed");
        assert!(compressed > 10_000, "the measure sees the files");
    }
}
