//! Layers around the routes: the content coding of prepared bodies, strong ETags with
//! `304 Not Modified`, cache headers, problem bodies for every error (filling `instance`), and
//! the bearer-token gate on writes.

use std::sync::Arc;

use axum::body::{Body, Bytes};
use axum::extract::{Request, State};
use axum::http::{HeaderValue, Method, StatusCode, header};
use axum::middleware::Next;
use axum::response::{IntoResponse, Response};

use crate::api::Problem;
use crate::compress::{self, Compressed};
use crate::error::{AppError, problem_response};
use crate::etag::{etag_of, if_none_match_hits};
use crate::state::AppState;

/// The largest response body the ETag layer buffers to hash; bigger ones pass unhashed.
const MAX_HASHED_BODY: usize = 64 << 20;

/// Longest request path repeated in a problem's `instance`.
const MAX_ECHOED_PATH_CHARS: usize = 200;

/// The longest request target (path and query) answered; longer ones get `414`.
pub const MAX_URI_BYTES: usize = 8 << 10;

/// The largest header block (names and values) answered; larger ones get `431`. Beyond the
/// HTTP parser's own buffer (about 400 KiB) the connection gets a bare `431` from the parser.
pub const MAX_HEADER_BYTES: usize = 16 << 10;

/// Answers `414` and `431` as problems for request targets and header blocks over the limits.
pub async fn request_limits(request: Request, next: Next) -> Response {
    let target = request
        .uri()
        .path_and_query()
        .map_or(0, |p| p.as_str().len());
    if target > MAX_URI_BYTES {
        return limit_problem(
            StatusCode::URI_TOO_LONG,
            "uri-too-long",
            format!("the request target has {target} bytes; at most {MAX_URI_BYTES} are answered"),
        );
    }
    let headers: usize = request
        .headers()
        .iter()
        .map(|(name, value)| name.as_str().len() + value.len() + 4)
        .sum();
    if headers > MAX_HEADER_BYTES {
        return limit_problem(
            StatusCode::REQUEST_HEADER_FIELDS_TOO_LARGE,
            "headers-too-large",
            format!(
                "the request headers have {headers} bytes; at most {MAX_HEADER_BYTES} are answered"
            ),
        );
    }
    next.run(request).await
}

fn limit_problem(status: StatusCode, slug: &str, detail: String) -> Response {
    problem_response(Problem {
        kind: format!("/problems/{slug}"),
        title: status.canonical_reason().unwrap_or("Error").to_owned(),
        status: status.as_u16(),
        detail,
        instance: String::new(),
    })
}

/// On successful GETs: sends a prepared body in the coding `Accept-Encoding` asks for (its
/// copy made when the body was built, never compressed here), adds an ETag (hashing the body
/// unless the handler set one) and `Cache-Control`, and answers `304` when `If-None-Match`
/// matches.
pub async fn etag_and_cache(
    State(state): State<Arc<AppState>>,
    request: Request,
    next: Next,
) -> Response {
    let is_read = matches!(*request.method(), Method::GET | Method::HEAD);
    // Only the two headers read below are kept (no allocation when neither is sent).
    let mut conditional = axum::http::HeaderMap::new();
    for name in [header::IF_NONE_MATCH, header::ACCEPT_ENCODING] {
        for value in request.headers().get_all(&name) {
            conditional.append(name.clone(), value.clone());
        }
    }
    let response = next.run(request).await;
    if !is_read || response.status() != StatusCode::OK {
        return response;
    }
    let (mut parts, mut body) = response.into_parts();
    if let Some(copies) = parts.extensions.remove::<Compressed>() {
        body = choose_coding(&mut parts, body, &copies, &conditional);
    }
    let (etag, body) = match parts
        .headers
        .get(header::ETAG)
        .and_then(|v| v.to_str().ok())
    {
        Some(tag) => (tag.to_owned(), body),
        None => match axum::body::to_bytes(body, MAX_HASHED_BODY).await {
            Ok(bytes) => (etag_of(&bytes), Body::from(bytes)),
            Err(err) => {
                tracing::error!(error = %err, "response body could not be read for its ETag");
                return AppError::Internal("response body unreadable".into()).into_response();
            }
        },
    };
    if let Ok(value) = HeaderValue::from_str(&etag) {
        parts.headers.insert(header::ETAG, value);
    }
    if !parts.headers.contains_key(header::CACHE_CONTROL) {
        let value = format!("public, max-age={}", state.cache_max_age.as_secs());
        if let Ok(value) = HeaderValue::from_str(&value) {
            parts.headers.insert(header::CACHE_CONTROL, value);
        }
    }
    if if_none_match_hits(&conditional, &etag) {
        let mut not_modified = Response::new(Body::empty());
        *not_modified.status_mut() = StatusCode::NOT_MODIFIED;
        for name in [header::ETAG, header::CACHE_CONTROL, header::VARY] {
            for value in parts.headers.get_all(&name) {
                not_modified
                    .headers_mut()
                    .append(name.clone(), value.clone());
            }
        }
        return not_modified;
    }
    Response::from_parts(parts, body)
}

/// Puts the copy of the coding the request accepts in place of the plain body, with its
/// `Content-Encoding` and its own strong ETag; every such response varies on
/// `Accept-Encoding`, whichever coding it carries.
fn choose_coding(
    parts: &mut axum::http::response::Parts,
    plain: Body,
    copies: &Compressed,
    request: &axum::http::HeaderMap,
) -> Body {
    parts
        .headers
        .append(header::VARY, HeaderValue::from_static("accept-encoding"));
    let coding = compress::negotiate(request);
    let (Some(bytes), Some(token)) = (copies.bytes(coding), coding.token()) else {
        return plain;
    };
    let plain_tag = parts
        .headers
        .get(header::ETAG)
        .and_then(|v| v.to_str().ok())
        .map(|tag| coding.etag(tag));
    match plain_tag.and_then(|tag| HeaderValue::from_str(&tag).ok()) {
        Some(tag) => parts.headers.insert(header::ETAG, tag),
        // Without the plain body's tag the copy's own bytes are hashed below.
        None => parts.headers.remove(header::ETAG),
    };
    parts
        .headers
        .insert(header::CONTENT_ENCODING, HeaderValue::from_static(token));
    parts.headers.remove(header::CONTENT_LENGTH);
    Body::from(bytes.clone())
}

/// Makes every error response a problem (RFC 9457) and fills its `instance` with the
/// request path. Errors made by other layers (timeouts, 405, body limits) get a problem body
/// named after their status.
pub async fn problem_shape(request: Request, next: Next) -> Response {
    let path = request.uri().path().to_owned();
    let response = next.run(request).await;
    let status = response.status();
    if !(status.is_client_error() || status.is_server_error()) {
        return response;
    }
    let mut problem = match response.extensions().get::<Problem>() {
        Some(problem) => problem.clone(),
        None => {
            // Not shaped by `AppError` (which logs its own): a timeout, a body limit, a
            // rejected method. Server-side ones are logged here, since the trace layer's
            // failure line is quiet.
            if status.is_server_error() {
                tracing::error!(status = status.as_u16(), path = %crate::error::clip(&path, MAX_ECHOED_PATH_CHARS), "request failed");
            }
            generic_problem(status)
        }
    };
    problem.instance = crate::error::clip(&path, MAX_ECHOED_PATH_CHARS);
    let mut shaped = problem_response(problem);
    for name in [header::WWW_AUTHENTICATE, header::ALLOW, header::RETRY_AFTER] {
        if let Some(value) = response.headers().get(&name) {
            shaped.headers_mut().insert(name, value.clone());
        }
    }
    shaped
}

fn generic_problem(status: StatusCode) -> Problem {
    let (slug, detail) = match status {
        StatusCode::METHOD_NOT_ALLOWED => {
            ("method-not-allowed", "this path does not take that method")
        }
        StatusCode::PAYLOAD_TOO_LARGE => (
            "payload-too-large",
            "the request body is larger than this endpoint accepts",
        ),
        StatusCode::REQUEST_TIMEOUT => {
            ("timeout", "the request took longer than the service allows")
        }
        StatusCode::UNSUPPORTED_MEDIA_TYPE => (
            "unsupported-media-type",
            "the request body's media type is not accepted here",
        ),
        StatusCode::SERVICE_UNAVAILABLE => (
            "unavailable",
            "the service could not answer in time; try again later",
        ),
        s if s.is_server_error() => ("internal", "the service failed to answer this request"),
        _ => ("bad-request", "the request could not be understood"),
    };
    Problem {
        kind: format!("/problems/{slug}"),
        title: status.canonical_reason().unwrap_or("Error").to_owned(),
        status: status.as_u16(),
        detail: detail.to_owned(),
        instance: String::new(),
    }
}

/// Lets a write through only with the configured bearer token. Reads (GET, HEAD, OPTIONS)
/// pass to the router, which answers `405` on a write-only path.
pub async fn require_token(
    State(state): State<Arc<AppState>>,
    request: Request,
    next: Next,
) -> Response {
    if matches!(
        *request.method(),
        Method::GET | Method::HEAD | Method::OPTIONS
    ) {
        return next.run(request).await;
    }
    let Some(token) = &state.token else {
        return AppError::WritesDisabled.into_response();
    };
    let authorized = request
        .headers()
        .get(header::AUTHORIZATION)
        .and_then(|v| v.to_str().ok())
        .is_some_and(|v| token.accepts(v));
    if !authorized {
        return AppError::Unauthorized.into_response();
    }
    next.run(request).await
}

/// Bytes of a response body (tests and the bench helper).
pub async fn body_bytes(response: Response) -> Bytes {
    axum::body::to_bytes(response.into_body(), usize::MAX)
        .await
        .unwrap_or_default()
}
