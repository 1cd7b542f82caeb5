//! How errors become HTTP responses, in one place: [`status`] maps every
//! [`crate::Error`] to the status that says whose fault it was, [`ApiError`]
//! answers the JSON API with `{"error": …}`, and [`PageError`] carries the
//! message of an HTML error page (rendered by `pages::common::error_page`).
//! A server fault is logged once, here, when its response is made; the
//! caller sees only "internal error; see the server log".

use crate::error::{Error, Fault, Said};
use crate::platform::i18n::Tr;
use actix_web::{HttpResponse, ResponseError, http::StatusCode};
use serde_json::json;

/// The HTTP status of `e`: client faults are 4xx, the machine's are 500.
pub fn status(e: &Error) -> StatusCode {
    match e {
        Error::Invalid(_) => StatusCode::BAD_REQUEST,
        Error::Refused(_) => StatusCode::FORBIDDEN,
        Error::NotFound(_) => StatusCode::NOT_FOUND,
        Error::Conflict(_) | Error::OffsetMismatch { .. } | Error::Busy { .. } => {
            StatusCode::CONFLICT
        }
        Error::Said(fault, _) => match fault {
            Fault::Invalid => StatusCode::BAD_REQUEST,
            Fault::NotFound => StatusCode::NOT_FOUND,
            Fault::Conflict => StatusCode::CONFLICT,
        },
        Error::Gone(_) => StatusCode::GONE,
        Error::TooLarge(_) => StatusCode::PAYLOAD_TOO_LARGE,
        Error::ImportRejected(_) | Error::Package(_) => StatusCode::UNPROCESSABLE_ENTITY,
        Error::Limit(_) => StatusCode::TOO_MANY_REQUESTS,
        Error::SchemaTooNew { .. }
        | Error::Internal(_)
        | Error::Db(_)
        | Error::Postgres(_)
        | Error::Io { .. } => StatusCode::INTERNAL_SERVER_ERROR,
    }
}

/// `e`'s status, logging `e` when it is a server fault (the one place a
/// failed request is logged).
fn status_logged(e: &Error) -> StatusCode {
    let s = status(e);
    if s.is_server_error() {
        tracing::error!(error = %e, "request failed");
    }
    s
}

/// The error of a blocking task that never ran (the thread pool is shutting
/// down): a fault of the server, not of the request.
fn shutting_down() -> Error {
    Error::Internal("the server is shutting down".into())
}

/// The JSON face of [`crate::Error`].
#[derive(Debug)]
pub struct ApiError(pub Error);

impl std::fmt::Display for ApiError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.fmt(f)
    }
}

impl From<Error> for ApiError {
    fn from(e: Error) -> Self {
        ApiError(e)
    }
}

impl From<actix_web::error::BlockingError> for ApiError {
    fn from(_: actix_web::error::BlockingError) -> Self {
        ApiError(shutting_down())
    }
}

impl ResponseError for ApiError {
    fn status_code(&self) -> StatusCode {
        status(&self.0)
    }

    fn error_response(&self) -> HttpResponse {
        let status = status_logged(&self.0);
        let mut b = HttpResponse::build(status);
        if let Error::OffsetMismatch { offset, .. } | Error::Busy { offset } = &self.0 {
            b.insert_header(("Upload-Offset", offset.to_string()));
        }
        if status.is_server_error() {
            return b.json(json!({"error": "internal error; see the server log"}));
        }
        let body = match &self.0 {
            Error::ImportRejected(f) => json!({"error": self.0.to_string(), "rejected": f}),
            other => json!({"error": other.to_string()}),
        };
        b.json(body)
    }
}

/// A JSON body that cannot be read: over its bound (413) or not the
/// expected JSON (400), as the documented JSON error.
pub fn json_body_error(
    err: actix_web::error::JsonPayloadError,
    _req: &actix_web::HttpRequest,
) -> actix_web::Error {
    use actix_web::error::JsonPayloadError as J;
    let e = match &err {
        J::Overflow { .. } | J::OverflowKnownLength { .. } => Error::TooLarge(err.to_string()),
        J::Payload(actix_web::error::PayloadError::Overflow) => Error::TooLarge(err.to_string()),
        _ => Error::Invalid(format!("bad JSON body: {err}")),
    };
    ApiError(e).into()
}

/// The JSON API's answer to a client error that actix made itself (a body
/// over its bound, an unknown method): `{"error": …}` with the same status,
/// rather than actix's `text/plain`. JSON answers pass unchanged.
pub fn json_api_errors<B>(
    res: actix_web::dev::ServiceResponse<B>,
) -> actix_web::Result<actix_web::middleware::ErrorHandlerResponse<B>> {
    use actix_web::middleware::ErrorHandlerResponse;
    let is_json = res
        .headers()
        .get(actix_web::http::header::CONTENT_TYPE)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|c| c.starts_with("application/json"));
    if is_json {
        return Ok(ErrorHandlerResponse::Response(res.map_into_left_body()));
    }
    let status = res.status();
    let message = match res.response().error() {
        Some(e) => e.to_string(),
        None => status
            .canonical_reason()
            .unwrap_or("refused")
            .to_lowercase(),
    };
    let (req, old) = res.into_parts();
    let mut b = HttpResponse::build(status);
    for (name, value) in old.headers() {
        if name != actix_web::http::header::CONTENT_TYPE
            && name != actix_web::http::header::CONTENT_LENGTH
        {
            b.insert_header((name.clone(), value.clone()));
        }
    }
    let resp = b.json(json!({ "error": message }));
    Ok(ErrorHandlerResponse::Response(
        actix_web::dev::ServiceResponse::new(req, resp).map_into_right_body(),
    ))
}

/// A bad query string names the parameter.
pub fn query_error(
    err: actix_web::error::QueryPayloadError,
    _req: &actix_web::HttpRequest,
) -> actix_web::Error {
    ApiError(Error::Invalid(format!("bad query parameter: {err}"))).into()
}

/// Why a page could not be shown; rendered as an HTML page with the status.
#[derive(Debug, thiserror::Error)]
#[error("{message}")]
pub struct PageError {
    pub status: StatusCode,
    /// The English text (what logs and English pages show).
    pub message: String,
    /// More lines (for example the errors of a file, with line numbers).
    pub details: Vec<String>,
    /// The message's id and variables, when the pages translate it.
    pub said: Option<Said>,
}

impl PageError {
    /// A page's own refusal with its status (a form field, a file type).
    pub fn new(status: StatusCode, message: impl Into<String>) -> PageError {
        PageError {
            status,
            message: message.into(),
            details: Vec::new(),
            said: None,
        }
    }

    /// A page's own refusal (400) in words the pages translate: the message
    /// `id` with `args`, and the same sentence in English.
    pub fn said(
        id: &'static str,
        args: &[(&'static str, &dyn std::fmt::Display)],
        english: impl Into<String>,
    ) -> PageError {
        PageError::from(Error::said(Fault::Invalid, id, args, english))
    }

    /// This refusal with a message id (its status and English kept).
    pub fn worded(
        mut self,
        id: &'static str,
        args: &[(&'static str, &dyn std::fmt::Display)],
    ) -> PageError {
        let args = args.iter().map(|(k, v)| (*k, v.to_string())).collect();
        let english = self.message.clone();
        self.said = Some(Said { id, args, english });
        self
    }

    /// The message in the reader's language: the catalogue's sentence when
    /// it has an id, else the English text.
    pub fn text(&self, tr: impl std::borrow::Borrow<Tr>) -> String {
        let tr = tr.borrow();
        match &self.said {
            Some(s) => {
                // A variable named `field` holds the message id of a form
                // label, said in the same language.
                let args: Vec<(&str, String)> = s
                    .args
                    .iter()
                    .map(|(k, v)| (*k, if *k == "field" { tr.t(v) } else { v.clone() }))
                    .collect();
                let vars: Vec<(&str, &dyn crate::platform::i18n::Arg)> = args
                    .iter()
                    .map(|(k, v)| (*k, v as &dyn crate::platform::i18n::Arg))
                    .collect();
                tr.tn(s.id, &vars)
            }
            None => self.message.clone(),
        }
    }

    /// The heading of an error page: the status in the reader's language
    /// (`http-<code>`), else its English reason.
    pub fn reason(&self, tr: &Tr) -> String {
        tr.get(&format!("http-{}", self.status.as_u16()))
            .unwrap_or_else(|| self.status.canonical_reason().unwrap_or("Error").into())
    }

    pub fn bad_request(message: impl Into<String>) -> PageError {
        PageError::from(Error::Invalid(message.into()))
    }

    pub fn too_large(message: impl Into<String>) -> PageError {
        PageError::from(Error::TooLarge(message.into()))
    }
}

impl From<Error> for PageError {
    fn from(e: Error) -> Self {
        let status = status_logged(&e);
        if status.is_server_error() {
            return PageError::new(status, "Internal error; see the server log.")
                .worded("why-internal", &[]);
        }
        match e {
            Error::ImportRejected(f) => PageError {
                status,
                message: format!(
                    "{}: {} error(s) in {} row(s); nothing was imported. Tick \"skip invalid rows\" to import the valid rows.",
                    f.file, f.error_count, f.rows_read
                ),
                details: f.errors.iter().map(|r| r.to_string()).collect(),
                said: None,
            },
            Error::Said(_, said) => PageError {
                status,
                message: said.english.clone(),
                details: Vec::new(),
                said: Some(*said),
            },
            other => PageError::new(status, other.to_string()),
        }
    }
}

impl From<actix_web::error::BlockingError> for PageError {
    fn from(_: actix_web::error::BlockingError) -> Self {
        PageError::from(shutting_down())
    }
}

impl From<askama::Error> for PageError {
    fn from(e: askama::Error) -> Self {
        PageError::from(Error::Internal(format!("template: {e}")))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::alerts::import::ImportFailure;

    fn json_of(resp: HttpResponse) -> serde_json::Value {
        let body = actix_web::body::to_bytes(resp.into_body());
        let bytes = futures_util::FutureExt::now_or_never(body)
            .expect("the body is in memory")
            .expect("the body reads");
        serde_json::from_slice(&bytes).expect("a JSON body")
    }

    fn rejected() -> ImportFailure {
        ImportFailure {
            file: "alerts.csv".into(),
            rows_read: 3,
            error_count: 1,
            errors: Vec::new(),
        }
    }

    // Expected statuses: RFC 9110 section 15 (whose fault), RFC 6585 for 429,
    // and the upload protocol's 409 with Upload-Offset (RETURN-SPEC).
    #[test]
    fn every_error_kind_has_one_status() {
        let cases: Vec<(fn() -> Error, u16)> = vec![
            (|| Error::Invalid("bad".into()), 400),
            (|| Error::Refused("forged".into()), 403),
            (|| Error::NotFound("no event 9".into()), 404),
            (|| Error::Conflict("taken".into()), 409),
            (|| Error::OffsetMismatch { offset: 5, sent: 7 }, 409),
            (|| Error::Busy { offset: 5 }, 409),
            (|| Error::Gone("lost".into()), 410),
            (|| Error::TooLarge("big".into()), 413),
            (|| Error::ImportRejected(rejected()), 422),
            (|| Error::Package("broken zip".into()), 422),
            (|| Error::Limit("too many uploads".into()), 429),
            (
                || Error::SchemaTooNew {
                    found: 9,
                    supported: 8,
                },
                500,
            ),
            (|| Error::Internal("bug".into()), 500),
            (|| Error::Db(rusqlite::Error::InvalidQuery), 500),
            (|| Error::io("writing", std::io::Error::other("disk")), 500),
        ];
        for (make, want) in cases {
            let case = format!("{:?}", make());
            assert_eq!(status(&make()).as_u16(), want, "{case}");
            assert_eq!(
                PageError::from(make()).status.as_u16(),
                want,
                "page: {case}"
            );
            let api = ApiError(make());
            assert_eq!(api.status_code().as_u16(), want, "api: {case}");
            assert_eq!(api.error_response().status().as_u16(), want, "api: {case}");
        }
    }

    #[test]
    fn a_pool_that_is_shutting_down_is_a_server_fault() {
        // `BlockingError` cannot be made outside actix; both `From`s of it
        // are `shutting_down()`.
        let api = ApiError(shutting_down());
        assert_eq!(api.status_code(), StatusCode::INTERNAL_SERVER_ERROR);
        let page = PageError::from(shutting_down());
        assert_eq!(page.status, StatusCode::INTERNAL_SERVER_ERROR);
        assert_eq!(page.message, "Internal error; see the server log.");
    }

    #[test]
    fn bodies_say_what_a_client_did_wrong_and_hide_server_faults() {
        let v = json_of(ApiError(Error::Invalid("field 'x': bad".into())).error_response());
        assert_eq!(v, serde_json::json!({"error": "field 'x': bad"}));
        let v = json_of(ApiError(Error::Internal("secret path".into())).error_response());
        assert_eq!(
            v,
            serde_json::json!({"error": "internal error; see the server log"})
        );
        let v = json_of(ApiError(Error::ImportRejected(rejected())).error_response());
        assert_eq!(v["rejected"]["file"], "alerts.csv");
        let r = ApiError(Error::OffsetMismatch { offset: 5, sent: 7 }).error_response();
        assert_eq!(r.headers().get("Upload-Offset").unwrap(), "5");
        let v = json_of(r);
        assert_eq!(v, serde_json::json!({"error": "upload offset is 5, not 7"}));

        let p = PageError::from(Error::ImportRejected(rejected()));
        assert!(
            p.message.starts_with("alerts.csv: 1 error(s) in 3 row(s)"),
            "{}",
            p.message
        );
        let p = PageError::from(Error::Db(rusqlite::Error::InvalidQuery));
        assert_eq!(p.message, "Internal error; see the server log.");
        let p = PageError::from(Error::Conflict("already cancelled".into()));
        assert_eq!(p.message, "already cancelled");
    }
}
