//! Liveness and readiness.

use std::sync::Arc;

use axum::Json;
use axum::extract::State;
use axum::http::header;
use axum::response::IntoResponse;
use serde_json::json;

use crate::error::AppError;
use crate::state::AppState;

#[utoipa::path(
    get,
    path = "/healthz",
    operation_id = "getHealth",
    tag = "health",
    summary = "The process is up",
    responses(
        (status = 200, description = "Alive", content_type = "application/json", body = crate::openapi::Health)
    )
)]
/// `GET /healthz`: the process is up.
pub async fn healthz() -> impl IntoResponse {
    (
        [(header::CACHE_CONTROL, "no-store")],
        Json(json!({"status": "ok"})),
    )
}

#[utoipa::path(
    get,
    path = "/readyz",
    operation_id = "getReady",
    tag = "health",
    summary = "The store is open and the models are loaded",
    responses(
        (status = 200, description = "Ready", content_type = "application/json", body = crate::openapi::Ready),
        (status = 503, description = "Still loading, or the store does not answer", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /readyz`: the store answers and the startup load has finished.
pub async fn readyz(State(state): State<Arc<AppState>>) -> Result<impl IntoResponse, AppError> {
    state
        .store
        .call(|conn| Ok(conn.query_row("SELECT 1", [], |row| row.get::<_, i64>(0))?))
        .await?;
    if !state.catalog.is_loaded() {
        return Err(AppError::NotReady);
    }
    let entries = state.catalog.list();
    let models = entries.iter().filter(|e| e.model.is_ok()).count();
    Ok((
        [(header::CACHE_CONTROL, "no-store")],
        Json(json!({"status": "ready", "gauges": entries.len(), "models": models})),
    ))
}
