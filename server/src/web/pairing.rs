//! What the pages and the API share about pairing a phone: the link a QR
//! code opens, the QR code itself as SVG (made on the server with the
//! `qrcode` crate, so the pages load no script for it), and making a code
//! for a bundle with the caller's name.

use crate::error::Result;
use crate::platform::auth::{self, Identity, display_code, issue_pairing};
use actix_web::{HttpMessage, HttpRequest};
use qrcode::render::svg;
use qrcode::{EcLevel, QrCode};

/// A pairing code just made, ready to show.
#[derive(Debug, Clone)]
pub struct ShownPairing {
    /// The code as typed (`XXXXX-XXXXX`).
    pub code: String,
    /// `…/field/#pair=CODE`: what the QR code opens.
    pub link: String,
    /// The QR code of `link`, as an inline SVG element.
    pub qr_svg: String,
    /// Unix seconds.
    pub expires_at: i64,
}

/// `text` as a QR code in SVG (error correction M: a screen photographed
/// at an angle still reads; dark on white with the four-module quiet zone
/// the standard asks for).
pub fn qr_svg(text: &str) -> std::result::Result<String, String> {
    let code = QrCode::with_error_correction_level(text.as_bytes(), EcLevel::M)
        .map_err(|e| format!("the link does not fit a QR code: {e}"))?;
    let svg = code
        .render::<svg::Color<'_>>()
        .min_dimensions(232, 232)
        .dark_color(svg::Color("#000"))
        .light_color(svg::Color("#fff"))
        .quiet_zone(true)
        .build();
    // The renderer starts with an XML declaration; inline SVG takes none.
    Ok(match svg.find("<svg") {
        Some(at) => svg[at..].to_string(),
        None => svg,
    })
}

/// The caller's name for the record (user, token label or team).
fn caller_name(req: &HttpRequest) -> String {
    match req.extensions().get::<Identity>() {
        Some(Identity::User { name, .. }) => name.clone(),
        Some(Identity::ApiToken { label, .. }) => format!("token {label}"),
        Some(Identity::Team { team_name, .. }) => format!("team {team_name}"),
        _ => "unknown".to_string(),
    }
}

/// Make a code for `bundle_id` (blocking: call inside `web::block`), with
/// what the request says about the caller and the server's address.
pub fn make(
    db: &crate::platform::storage::Db,
    bundle_id: &str,
    created_by: &str,
    link_of: impl Fn(&str) -> String,
) -> Result<ShownPairing> {
    let (code, rec) = issue_pairing(db, bundle_id, created_by, auth::now_unix())?;
    let link = link_of(&code);
    let qr_svg = qr_svg(&link).map_err(crate::error::Error::Internal)?;
    Ok(ShownPairing {
        code: display_code(&code),
        link,
        qr_svg,
        expires_at: rec.expires_at,
    })
}

/// [`make`]'s inputs taken from the request (before `web::block`).
pub fn request_parts(req: &HttpRequest) -> (String, impl Fn(&str) -> String + Send + 'static) {
    let info = req.connection_info();
    let base = format!("{}://{}", info.scheme(), info.host());
    (caller_name(req), move |code: &str| {
        format!("{base}/field/#pair={code}")
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_qr_code_is_an_svg_element_of_dark_modules() {
        let svg = qr_svg("http://127.0.0.1:8080/field/#pair=ABCDEFGHJK").unwrap();
        assert!(svg.starts_with("<svg"), "{}", &svg[..40]);
        assert!(svg.contains("#000") && svg.ends_with("</svg>"));
        let doc = roxmltree::Document::parse(&svg).expect("well-formed SVG");
        assert_eq!(doc.root_element().tag_name().name(), "svg");
    }
}
