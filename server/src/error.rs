//! The one error type of the HTTP edge. Every failure becomes an RFC 9457
//! `application/problem+json` response, logged once, with no internals in the body.

use axum::http::{HeaderValue, StatusCode, header};
use axum::response::{IntoResponse, Response};

use crate::api::Problem;
use crate::pipeline::PipelineError;
use crate::store::StoreError;
use crate::upload::UploadError;

/// Media type of problem responses.
pub const PROBLEM_JSON: &str = "application/problem+json";

/// Longest `detail` (and logged error) in characters; the rest is counted, not repeated.
pub const MAX_DETAIL_CHARS: usize = 400;

/// `Retry-After` of answers that mean "not yet" (startup, a full on-demand queue), seconds.
pub const RETRY_AFTER_SECS: &str = "5";

/// `text` cut to `max` characters, saying how many more there were.
pub fn clip(text: &str, max: usize) -> String {
    match text.char_indices().nth(max) {
        None => text.to_owned(),
        Some((cut, _)) => {
            let more = text[cut..].chars().count();
            format!("{}... ({more} more characters)", &text[..cut])
        }
    }
}

/// Everything a request can fail with.
#[derive(Debug, thiserror::Error)]
pub enum AppError {
    /// No route matches the request path.
    #[error("no route matches {0}")]
    UnknownPath(String),
    /// A named resource does not exist.
    #[error("{0}")]
    NotFound(String),
    /// The request is malformed (bad query value, bad body).
    #[error("{0}")]
    BadRequest(String),
    /// An upload failed validation.
    #[error(transparent)]
    Upload(#[from] UploadError),
    /// A write without a valid bearer token.
    #[error("this write needs an Authorization: Bearer token")]
    Unauthorized,
    /// Writes are disabled because no token is configured.
    #[error("writes are disabled: the service has no write token configured")]
    WritesDisabled,
    /// The body is larger than this endpoint accepts.
    #[error("{0}")]
    PayloadTooLarge(String),
    /// The body's media type is not accepted here.
    #[error("{0}")]
    UnsupportedMediaType(String),
    /// The endpoint cannot answer in any format the request asks for (`?format=`, `Accept`).
    #[error("{0}")]
    NotAcceptable(String),
    /// A pipeline step failed or is not available.
    #[error(transparent)]
    Pipeline(#[from] PipelineError),
    /// The service is still loading.
    #[error("the service is still loading its store and models; try again shortly")]
    NotReady,
    /// The write conflicts with what is stored (e.g. a replace that would shrink a record
    /// without the confirmation).
    #[error("{0}")]
    Conflict(String),
    /// The on-demand pool's queue is full.
    #[error(transparent)]
    Busy(#[from] crate::pool::PoolFull),
    /// The store failed. Logged in full; the client sees a generic message.
    #[error("store: {0}")]
    Store(#[from] StoreError),
    /// A bug or a lost background task. Logged in full; the client sees a generic message.
    #[error("internal: {0}")]
    Internal(String),
}

impl AppError {
    /// The HTTP status.
    pub fn status(&self) -> StatusCode {
        match self {
            AppError::UnknownPath(_) | AppError::NotFound(_) => StatusCode::NOT_FOUND,
            AppError::BadRequest(_) => StatusCode::BAD_REQUEST,
            AppError::Upload(UploadError::TooLarge { .. }) => StatusCode::PAYLOAD_TOO_LARGE,
            AppError::Upload(_) => StatusCode::UNPROCESSABLE_ENTITY,
            AppError::Unauthorized => StatusCode::UNAUTHORIZED,
            AppError::WritesDisabled => StatusCode::FORBIDDEN,
            AppError::PayloadTooLarge(_) => StatusCode::PAYLOAD_TOO_LARGE,
            AppError::UnsupportedMediaType(_) => StatusCode::UNSUPPORTED_MEDIA_TYPE,
            AppError::NotAcceptable(_) => StatusCode::NOT_ACCEPTABLE,
            AppError::Pipeline(err) => match err {
                PipelineError::NotAvailable(_) => StatusCode::SERVICE_UNAVAILABLE,
                PipelineError::MissingInput(_) | PipelineError::Invalid(_) => {
                    StatusCode::UNPROCESSABLE_ENTITY
                }
                PipelineError::SeasonNotServed { .. } => StatusCode::NOT_FOUND,
            },
            AppError::NotReady | AppError::Busy(_) => StatusCode::SERVICE_UNAVAILABLE,
            AppError::Conflict(_) => StatusCode::CONFLICT,
            AppError::Store(_) | AppError::Internal(_) => StatusCode::INTERNAL_SERVER_ERROR,
        }
    }

    /// The problem type slug, appended to `/problems/`.
    fn slug(&self) -> &'static str {
        match self {
            AppError::UnknownPath(_) => "unknown-path",
            AppError::NotFound(_) => "not-found",
            AppError::BadRequest(_) => "bad-request",
            AppError::Upload(UploadError::TooLarge { .. }) => "payload-too-large",
            AppError::Upload(_) => "invalid-upload",
            AppError::Unauthorized => "unauthorized",
            AppError::WritesDisabled => "writes-disabled",
            AppError::PayloadTooLarge(_) => "payload-too-large",
            AppError::UnsupportedMediaType(_) => "unsupported-media-type",
            AppError::NotAcceptable(_) => "not-acceptable",
            AppError::Pipeline(PipelineError::NotAvailable(_)) => "not-available",
            AppError::Pipeline(PipelineError::SeasonNotServed { .. }) => "not-found",
            AppError::Pipeline(_) => "pipeline-failed",
            AppError::NotReady => "not-ready",
            AppError::Busy(_) => "busy",
            AppError::Conflict(_) => "conflict",
            AppError::Store(_) | AppError::Internal(_) => "internal",
        }
    }

    /// The problem body; `instance` is filled from the request path by the
    /// problem-shape layer (`middleware::problem_shape`).
    pub fn problem(&self) -> Problem {
        let status = self.status();
        let detail = match self {
            AppError::Store(_) | AppError::Internal(_) => {
                "the service failed to answer this request; the error is in its log".to_owned()
            }
            other => clip(&other.to_string(), MAX_DETAIL_CHARS),
        };
        Problem {
            kind: format!("/problems/{}", self.slug()),
            title: status.canonical_reason().unwrap_or("Error").to_owned(),
            status: status.as_u16(),
            detail,
            instance: String::new(),
        }
    }
}

impl IntoResponse for AppError {
    fn into_response(self) -> Response {
        let problem = self.problem();
        let logged = clip(&self.to_string(), MAX_DETAIL_CHARS);
        if matches!(self, AppError::NotReady) {
            // Readiness probes ask until the startup load is done: expected, not an error.
            tracing::info!(status = problem.status, error = %logged, "not ready yet");
        } else if problem.status >= 500 {
            tracing::error!(status = problem.status, error = %logged, "request failed");
        } else {
            tracing::info!(status = problem.status, error = %logged, "request refused");
        }
        let mut response = problem_response(problem);
        if matches!(self, AppError::NotReady | AppError::Busy(_)) {
            response.headers_mut().insert(
                header::RETRY_AFTER,
                HeaderValue::from_static(RETRY_AFTER_SECS),
            );
            response
                .headers_mut()
                .insert(header::CACHE_CONTROL, HeaderValue::from_static("no-store"));
        }
        if matches!(self, AppError::Unauthorized) {
            response.headers_mut().insert(
                header::WWW_AUTHENTICATE,
                HeaderValue::from_static("Bearer realm=\"tidetally\""),
            );
        }
        response
    }
}

/// A problem as a response, with the problem kept as an extension so later layers can fill
/// `instance` without parsing the body.
pub fn problem_response(problem: Problem) -> Response {
    let status = StatusCode::from_u16(problem.status).unwrap_or(StatusCode::INTERNAL_SERVER_ERROR);
    let body = serde_json::to_vec(&problem).unwrap_or_default();
    let mut response = (status, body).into_response();
    response
        .headers_mut()
        .insert(header::CONTENT_TYPE, HeaderValue::from_static(PROBLEM_JSON));
    response.extensions_mut().insert(problem);
    response
}

impl From<tokio::task::JoinError> for AppError {
    fn from(err: tokio::task::JoinError) -> Self {
        AppError::Internal(format!("background task: {err}"))
    }
}

#[cfg(test)]
mod tests {
    use std::io::Write;
    use std::sync::{Arc, Mutex};

    use axum::response::IntoResponse;

    use super::AppError;

    /// Log lines written while `f` runs, as the plain formatter writes them.
    fn logged(f: impl FnOnce()) -> String {
        #[derive(Clone, Default)]
        struct Buffer(Arc<Mutex<Vec<u8>>>);
        impl Write for Buffer {
            fn write(&mut self, bytes: &[u8]) -> std::io::Result<usize> {
                self.0.lock().expect("buffer").extend_from_slice(bytes);
                Ok(bytes.len())
            }
            fn flush(&mut self) -> std::io::Result<()> {
                Ok(())
            }
        }
        let buffer = Buffer::default();
        let writer = buffer.clone();
        let subscriber = tracing_subscriber::fmt()
            .with_ansi(false)
            .with_max_level(tracing::Level::DEBUG)
            .with_writer(move || writer.clone())
            .finish();
        tracing::subscriber::with_default(subscriber, f);
        let bytes = buffer.0.lock().expect("buffer").clone();
        String::from_utf8(bytes).expect("utf-8 log")
    }

    #[test]
    fn a_readiness_503_is_logged_at_info_and_an_internal_error_at_error() {
        let not_ready = logged(|| {
            let response = AppError::NotReady.into_response();
            assert_eq!(response.status(), 503);
        });
        assert!(not_ready.contains(" INFO "), "{not_ready}");
        assert!(!not_ready.contains("ERROR"), "{not_ready}");
        let internal = logged(|| {
            let _ = AppError::Internal("disk on fire".into()).into_response();
        });
        assert!(internal.contains("ERROR"), "{internal}");
    }
}
