//! The router: every path, its layers, and the fallback for unknown paths.

pub(crate) mod calendar;
pub(crate) mod health;
pub(crate) mod read;
mod tables;
pub(crate) mod write;

use std::sync::Arc;

use axum::Router;
use axum::extract::DefaultBodyLimit;
use axum::http::{StatusCode, Uri};
use axum::middleware::{from_fn, from_fn_with_state};
use axum::routing::{get, post, put};
use tower_http::timeout::TimeoutLayer;
use tower_http::trace::TraceLayer;

use crate::error::AppError;
use crate::middleware::{etag_and_cache, problem_shape, request_limits, require_token};
use crate::state::AppState;

/// The largest JSON or TOML body.
pub const MAX_DOCUMENT_BYTES: usize = 1 << 20;
/// The largest upload body as transferred (gzip allowed).
pub const MAX_UPLOAD_BYTES: usize = 64 << 20;

/// Layers that depend on configuration outside [`AppState`].
#[derive(Debug, Clone)]
pub struct HttpOptions {
    /// Per-request timeout.
    pub request_timeout: std::time::Duration,
    /// Allowed CORS origins (`*` for any); empty adds no CORS headers.
    pub cors_origins: Vec<String>,
}

impl Default for HttpOptions {
    fn default() -> Self {
        Self {
            request_timeout: std::time::Duration::from_secs(60),
            cors_origins: Vec::new(),
        }
    }
}

/// The whole service.
pub fn router(state: Arc<AppState>, options: &HttpOptions) -> Router {
    let upload_limit = DefaultBodyLimit::max(MAX_UPLOAD_BYTES);
    let writes = Router::new()
        .route(
            "/api/v1/gauges/{id}",
            put(write::put_gauge).delete(write::retire_gauge),
        )
        .route(
            "/api/v1/gauges/{id}/levels",
            put(write::put_levels).layer(upload_limit),
        )
        .route(
            "/api/v1/drivers/{kind}/{name}",
            put(write::put_series).layer(upload_limit),
        )
        .route(
            "/api/v1/forecasts/enso/{name}",
            put(write::put_enso_forecast),
        )
        .route("/api/v1/gauges/{id}/refit", post(write::refit))
        .route(
            "/api/v1/drivers/{kind}/{name}/versions/{version}/restore",
            post(write::restore_series),
        )
        .route(
            "/api/v1/gauges/{id}/versions/{input}/{version}/restore",
            post(write::restore_version),
        )
        .route(
            "/api/v1/gauges/{id}/versions/prune",
            post(write::prune_versions),
        )
        .route_layer(from_fn_with_state(Arc::clone(&state), require_token));
    let reads = Router::new()
        .route("/api/v1/openapi.json", get(read::openapi))
        .route("/api/v1/clock", get(read::clock))
        .route("/api/v1/gauges", get(read::gauges))
        .route("/api/v1/gauges.geojson", get(read::gauges_geojson))
        .route("/api/v1/gauges/{id}", get(read::gauge))
        .route("/api/v1/gauges/{id}/seasons", get(read::seasons))
        .route("/api/v1/gauges/{id}/outlook", get(read::outlook))
        .route("/api/v1/gauges/{id}/hindcast", get(read::hindcast))
        .route("/api/v1/gauges/{id}/calendar", get(calendar::calendar))
        .route(
            "/api/v1/gauges/{id}/calendar.ics",
            get(calendar::calendar_ics),
        )
        .route("/api/v1/outlooks", get(read::outlooks))
        .route("/api/v1/outlooks/issued", get(read::issued))
        .route("/api/v1/gauges/{id}/versions", get(read::versions))
        .route("/api/v1/drivers", get(read::series))
        .layer(from_fn_with_state(Arc::clone(&state), etag_and_cache));
    let health = Router::new()
        .route("/healthz", get(health::healthz))
        .route("/readyz", get(health::readyz));
    let mut app = Router::new()
        .merge(health)
        .merge(reads)
        .merge(writes)
        .merge(crate::web::router())
        .fallback(unknown_path)
        .layer(DefaultBodyLimit::max(MAX_DOCUMENT_BYTES))
        .layer(TimeoutLayer::with_status_code(
            StatusCode::SERVICE_UNAVAILABLE,
            options.request_timeout,
        ))
        .layer(from_fn(request_limits))
        .layer(from_fn(problem_shape))
        .with_state(state);
    if let Some(cors) = crate::cors::layer(&options.cors_origins) {
        app = app.layer(cors);
    }
    // Failures are logged once, by `AppError` at their own level (a readiness probe's 503 at
    // INFO); the trace layer's own failure line would repeat each at ERROR.
    app.layer(
        TraceLayer::new_for_http()
            .on_failure(tower_http::trace::DefaultOnFailure::new().level(tracing::Level::DEBUG)),
    )
}

async fn unknown_path(uri: Uri) -> AppError {
    AppError::UnknownPath(uri.path().to_owned())
}
