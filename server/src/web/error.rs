//! How errors become HTTP responses: a JSON body `{"error": …}` with the
//! status that says whose fault it was.

use crate::error::Error;
use actix_web::{HttpResponse, ResponseError, http::StatusCode};
use serde_json::json;

/// The HTTP face of [`crate::Error`].
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
        ApiError(Error::Invalid("the server is shutting down".into()))
    }
}

impl ResponseError for ApiError {
    fn status_code(&self) -> StatusCode {
        match &self.0 {
            Error::Invalid(_) => StatusCode::BAD_REQUEST,
            Error::ImportRejected(_) => StatusCode::UNPROCESSABLE_ENTITY,
            Error::NotFound(_) => StatusCode::NOT_FOUND,
            Error::Conflict(_) => StatusCode::CONFLICT,
            Error::SchemaTooNew { .. } | Error::Internal(_) | Error::Db(_) | Error::Io { .. } => {
                StatusCode::INTERNAL_SERVER_ERROR
            }
        }
    }

    fn error_response(&self) -> HttpResponse {
        let status = self.status_code();
        if status.is_server_error() {
            tracing::error!(error = %self.0, "request failed");
            return HttpResponse::build(status)
                .json(json!({"error": "internal error; see the server log"}));
        }
        let body = match &self.0 {
            Error::ImportRejected(f) => json!({"error": self.0.to_string(), "rejected": f}),
            other => json!({"error": other.to_string()}),
        };
        HttpResponse::build(status).json(body)
    }
}

/// A bad query string names the parameter.
pub fn query_error(
    err: actix_web::error::QueryPayloadError,
    _req: &actix_web::HttpRequest,
) -> actix_web::Error {
    ApiError(Error::Invalid(format!("bad query parameter: {err}"))).into()
}
