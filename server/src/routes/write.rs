//! Write endpoints (bearer token checked by the router). Each checks its body completely with
//! the model's parsers, stores it as a new version in one transaction, and changes nothing
//! served: only a successful refit does. A gauge's uploads and refits run one at a time
//! through its queue; parsing, storing and fitting run in `spawn_blocking`.

use std::sync::Arc;

use axum::Json;
use axum::body::Bytes;
use axum::extract::rejection::{BytesRejection, QueryRejection};
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use serde::Deserialize;

use crate::api;
use crate::error::AppError;
use crate::etag::etag_of;
use crate::merge;
use crate::state::{self, AppState, ModelSource, RefitError, build_entry};
use crate::store::{self, SeriesKey, SeriesKind, SeriesRecord, StoredGaugeRow};
use crate::upload::{self, CsvKind, UploadError};

fn body_of(body: Result<Bytes, BytesRejection>) -> Result<Bytes, AppError> {
    body.map_err(|rejection| {
        if rejection.status() == StatusCode::PAYLOAD_TOO_LARGE {
            AppError::PayloadTooLarge(
                "the request body is larger than this endpoint accepts".into(),
            )
        } else {
            AppError::BadRequest(format!(
                "the request body could not be read: {}",
                rejection.body_text()
            ))
        }
    })
}

fn query_of<T>(query: Result<Query<T>, QueryRejection>) -> Result<T, AppError> {
    query
        .map(|Query(q)| q)
        .map_err(|err| AppError::BadRequest(format!("bad query string: {}", err.body_text())))
}

/// Runs blocking work (parsing, SQLite, fitting) off the async runtime.
async fn blocking<T: Send + 'static>(
    state: &Arc<AppState>,
    work: impl FnOnce(&AppState) -> Result<T, AppError> + Send + 'static,
) -> Result<T, AppError> {
    let state = Arc::clone(state);
    tokio::task::spawn_blocking(move || work(&state)).await?
}

/// Runs a write of gauge `id` in its turn on the gauge's queue.
async fn in_turn<T: Send + 'static>(
    state: &Arc<AppState>,
    id: &str,
    work: impl FnOnce(&AppState) -> Result<T, AppError> + Send + 'static,
) -> Result<T, AppError> {
    let queue = state.gauge_queue(id);
    let _turn = queue.lock().await;
    blocking(state, work).await
}

/// After an upload: a gauge that serves no model shows its newest inputs (there is nothing
/// served to protect); one with a model keeps serving exactly what it was fitted on.
fn refresh_unfitted(state: &AppState, id: &str) -> Result<(), AppError> {
    let fitted = state.catalog.get(id).is_some_and(|e| e.model.is_ok());
    if !fitted && let Some(entry) = build_entry(&state.store, id, ModelSource::Unfitted)? {
        state.catalog.swap_in(entry);
    }
    Ok(())
}

/// The stored, not retired, gauge `id`.
fn stored_gauge(state: &AppState, id: &str) -> Result<StoredGaugeRow, AppError> {
    state
        .store
        .call_blocking(|c| store::get_gauge(c, id))?
        .ok_or_else(|| {
            AppError::NotFound(format!(
                "no gauge named {id:?}; PUT /api/v1/gauges/{id} with its TOML first"
            ))
        })
}

fn refit_note(id: &str) -> String {
    format!("stored as a new version; nothing served changes until POST /api/v1/gauges/{id}/refit")
}

fn receipt(
    stored: &str,
    gauge: Option<&str>,
    rows: u64,
    content: &[u8],
    note: String,
) -> api::UploadReceipt {
    api::UploadReceipt {
        stored: stored.to_owned(),
        gauge: gauge.map(str::to_owned),
        rows,
        bytes: content.len() as u64,
        content_hash: etag_of(content),
        note,
        version: None,
        added: None,
        changed: None,
        unchanged: None,
    }
}

#[utoipa::path(
    put,
    path = "/api/v1/gauges/{id}",
    operation_id = "putGauge",
    tag = "uploads",
    summary = "Create or replace a gauge from its TOML",
    security(("bearer" = [])),
    request_body(content = String, content_type = "application/toml", description = "The gauge TOML; its `id` matches the path"),
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin")),
    responses(
        (status = 201, description = "Gauge created", body = crate::api::UploadReceipt),
        (status = 200, description = "Gauge replaced", body = crate::api::UploadReceipt),
        (status = 400, description = "Bad body", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The upload failed validation (the problem names the line and field)", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 413, description = "The body is too large", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `PUT /api/v1/gauges/{id}`: a gauge TOML whose `id` matches the path.
pub async fn put_gauge(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    body: Result<Bytes, BytesRejection>,
) -> Result<(StatusCode, Json<api::UploadReceipt>), AppError> {
    let body = body_of(body)?;
    let key = id.clone();
    let receipt = in_turn(&state, &key, move |state| {
        let text = std::str::from_utf8(&body).map_err(|_| UploadError::Document {
            what: "gauge TOML".into(),
            message: "not UTF-8 text".into(),
        })?;
        let meta = upload::parse_gauge_toml(text)?;
        if meta.id != id {
            return Err(AppError::BadRequest(format!(
                "the TOML's id {:?} does not match the path's {id:?}",
                meta.id
            )));
        }
        let record = StoredGaugeRow {
            id: meta.id.clone(),
            toml: text.to_owned(),
            name: meta.name.clone(),
            latitude: meta.latitude,
            longitude: meta.longitude,
            updated_at: store::now_rfc3339(),
        };
        let version = state.store.call_blocking(|c| {
            store::put_gauge(c, &record)?;
            store::latest_gauge_version(c, &id)
        })?;
        refresh_unfitted(state, &id)?;
        let mut r = receipt("gauge", Some(&id), 0, &body, refit_note(&id));
        r.version = version;
        Ok(r)
    })
    .await?;
    Ok((StatusCode::OK, Json(receipt)))
}

/// Query of the level upload: `mode=merge` (default) or `replace`, and `confirm=shrink`.
#[derive(Debug, Deserialize)]
pub struct LevelsQuery {
    mode: Option<String>,
    confirm: Option<String>,
}

#[utoipa::path(
    put,
    path = "/api/v1/gauges/{id}/levels",
    operation_id = "putLevels",
    tag = "uploads",
    summary = "Merge water levels (CSV, plain or gzip) into the gauge's record, or replace it",
    security(("bearer" = [])),
    request_body(content = Vec<u8>, content_type = "text/csv", description = "Water-level CSV, plain or gzip (`Content-Encoding: gzip` or gzip bytes)"),
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("mode" = Option<String>, Query, description = "`merge` (default: new readings added, changed ones replaced) or `replace`", example = "merge"), ("confirm" = Option<String>, Query, description = "`shrink`: needed by a replace that keeps less than half of the record's days", example = "shrink")),
    responses(
        (status = 200, description = "Levels stored", body = crate::api::UploadReceipt),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 409, description = "A replace would shrink the record without `confirm=shrink`", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The upload failed validation (the problem names the line and field)", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 413, description = "The body is too large", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `PUT /api/v1/gauges/{id}/levels`: a water-level CSV, plain or gzip, merged into the
/// stored record by default.
pub async fn put_levels(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    query: Result<Query<LevelsQuery>, QueryRejection>,
    body: Result<Bytes, BytesRejection>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let query = query_of(query)?;
    let replace = match query.mode.as_deref() {
        None | Some("merge") => false,
        Some("replace") => true,
        Some(other) => {
            return Err(AppError::BadRequest(format!(
                "mode {other:?} must be merge or replace"
            )));
        }
    };
    let shrink_confirmed = match query.confirm.as_deref() {
        None => false,
        Some("shrink") => true,
        Some(other) => {
            return Err(AppError::BadRequest(format!(
                "confirm {other:?} must be shrink"
            )));
        }
    };
    let body = body_of(body)?;
    let key = id.clone();
    let receipt = in_turn(&state, &key, move |state| {
        let gauge = stored_gauge(state, &id)?;
        let meta = upload::parse_gauge_toml(&gauge.toml)?;
        let upload = upload::decode_body(
            CsvKind::Levels.describe(),
            &body,
            upload::MAX_DECOMPRESSED_BYTES,
        )?;
        upload::scan_levels(&upload, &meta.ingest)?;
        let stored = state.store.call_blocking(|c| store::get_levels(c, &id))?;
        let (csv, counts) = match (&stored, replace) {
            (Some(old), false) => {
                let merged = merge::merge_levels(&old.csv, &upload);
                (
                    merged.csv,
                    Some((merged.added, merged.changed, merged.unchanged)),
                )
            }
            (Some(old), true) => {
                let before = merge::days_with_data(&old.csv);
                let after = merge::days_with_data(&upload);
                if after * 2 < before && !shrink_confirmed {
                    return Err(AppError::Conflict(format!(
                        "replacing gauge {id}'s record would keep {after} of its {before} days \
                         with data; add &confirm=shrink to replace it anyway (the current \
                         record stays recoverable under GET /api/v1/gauges/{id}/versions)"
                    )));
                }
                (upload, None)
            }
            (None, _) => (upload, None),
        };
        let summary = upload::scan_levels(&csv, &meta.ingest)?;
        let record = store::LevelsRecord {
            gauge_id: id.clone(),
            content_hash: etag_of(&csv),
            readings: summary.rows,
            first_time: summary.first,
            last_time: summary.last,
            uploaded_at: store::now_rfc3339(),
            csv,
        };
        let unchanged = stored
            .as_ref()
            .is_some_and(|old| old.content_hash == record.content_hash);
        let version = if unchanged {
            None
        } else {
            Some(
                state
                    .store
                    .call_blocking(|c| store::put_levels(c, &record))?,
            )
        };
        refresh_unfitted(state, &id)?;
        let mut r = receipt(
            "levels",
            Some(&id),
            record.readings,
            &record.csv,
            refit_note(&id),
        );
        r.version = version;
        if let Some((added, changed, same)) = counts {
            (r.added, r.changed, r.unchanged) = (Some(added), Some(changed), Some(same));
        }
        if unchanged {
            r.note = "the record already holds these readings; nothing stored".into();
        }
        Ok(r)
    })
    .await?;
    Ok(Json(receipt))
}

#[utoipa::path(
    delete,
    path = "/api/v1/gauges/{id}",
    operation_id = "retireGauge",
    tag = "uploads",
    summary = "Retire a gauge: hidden from the lists, its data kept",
    security(("bearer" = [])),
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin")),
    responses(
        (status = 200, description = "Retired", body = crate::openapi::Retired),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `DELETE /api/v1/gauges/{id}`: retires the gauge (hidden, its data kept).
pub async fn retire_gauge(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
) -> Result<Json<serde_json::Value>, AppError> {
    let key = id.clone();
    in_turn(&state, &key, move |state| {
        stored_gauge(state, &id)?;
        let now = store::now_rfc3339();
        state.store.call_blocking(|c| store::retire_gauge(c, &id, &now))?;
        state.catalog.remove(&id);
        Ok(Json(serde_json::json!({
            "retired": id,
            "note": format!("hidden from the lists; its data are kept (GET /api/v1/gauges/{id}/versions); PUT its TOML again to bring it back"),
        })))
    })
    .await
}

#[utoipa::path(
    post,
    path = "/api/v1/gauges/{id}/versions/{input}/{version}/restore",
    operation_id = "restoreGaugeVersion",
    tag = "uploads",
    summary = "Store an earlier version of the gauge's TOML or levels as its newest",
    security(("bearer" = [])),
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("input" = String, Path, description = "`toml` or `levels`", example = "levels"), ("version" = i64, Path, description = "Version id", example = 1)),
    responses(
        (status = 200, description = "Restored", body = crate::api::UploadReceipt),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The upload failed validation (the problem names the line and field)", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `POST /api/v1/gauges/{id}/versions/{input}/{version}/restore`: stores an earlier version
/// of the gauge's TOML (`toml`) or level record (`levels`) as its newest.
pub async fn restore_version(
    State(state): State<Arc<AppState>>,
    Path((id, input, version)): Path<(String, String, i64)>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let key = id.clone();
    let receipt = in_turn(&state, &key, move |state| {
        let gauge = stored_gauge(state, &id)?;
        let missing = || AppError::NotFound(format!("gauge {id} has no {input} version {version}"));
        let r = match input.as_str() {
            "levels" => {
                let mut old = state
                    .store
                    .call_blocking(|c| store::get_levels_at(c, &id, version))?
                    .ok_or_else(missing)?;
                old.uploaded_at = store::now_rfc3339();
                let new = state.store.call_blocking(|c| store::put_levels(c, &old))?;
                let mut r = receipt("levels", Some(&id), old.readings, &old.csv, refit_note(&id));
                r.version = Some(new);
                r
            }
            "toml" => {
                let toml = state
                    .store
                    .call_blocking(|c| store::get_gauge_version(c, &id, version))?
                    .ok_or_else(missing)?;
                let meta = upload::parse_gauge_toml(&toml)?;
                let record = StoredGaugeRow {
                    toml: toml.clone(),
                    name: meta.name,
                    latitude: meta.latitude,
                    longitude: meta.longitude,
                    updated_at: store::now_rfc3339(),
                    ..gauge
                };
                let new = state.store.call_blocking(|c| {
                    store::put_gauge(c, &record)?;
                    store::latest_gauge_version(c, &id)
                })?;
                let mut r = receipt("gauge", Some(&id), 0, toml.as_bytes(), refit_note(&id));
                r.version = new;
                r
            }
            other => {
                return Err(AppError::NotFound(format!(
                    "no input {other:?}; restorable inputs are toml and levels"
                )));
            }
        };
        refresh_unfitted(state, &id)?;
        Ok(r)
    })
    .await?;
    Ok(Json(receipt))
}

/// Query of the prune endpoint.
#[derive(Debug, Deserialize)]
pub struct PruneQuery {
    keep: Option<usize>,
}

#[utoipa::path(
    post,
    path = "/api/v1/gauges/{id}/versions/prune",
    operation_id = "pruneGaugeVersions",
    tag = "uploads",
    summary = "Delete all but the newest versions of the gauge's TOML and levels",
    security(("bearer" = [])),
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("keep" = Option<u64>, Query, description = "How many newest versions to keep, count (default 1)", example = 1)),
    responses(
        (status = 200, description = "Pruned", body = crate::openapi::Pruned),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `POST /api/v1/gauges/{id}/versions/prune?keep=N`: deletes all but the newest `N`
/// (default 1) versions of the gauge's TOML and level record, never those the serving model
/// was fitted on.
pub async fn prune_versions(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    query: Result<Query<PruneQuery>, QueryRejection>,
) -> Result<Json<serde_json::Value>, AppError> {
    let keep = query_of(query)?.keep.unwrap_or(1).max(1);
    let key = id.clone();
    in_turn(&state, &key, move |state| {
        stored_gauge(state, &id)?;
        let pinned: Vec<i64> = state
            .catalog
            .get(&id)
            .map(|e| {
                [e.inputs.gauge, e.inputs.levels]
                    .into_iter()
                    .flatten()
                    .collect()
            })
            .unwrap_or_default();
        let deleted = state
            .store
            .call_blocking(|c| store::prune_gauge_versions(c, &id, keep, &pinned))?;
        Ok(Json(
            serde_json::json!({ "gauge": id, "deleted": deleted, "kept_newest": keep }),
        ))
    })
    .await
}

#[utoipa::path(
    put,
    path = "/api/v1/drivers/{kind}/{name}",
    operation_id = "putDriverSeries",
    tag = "uploads",
    summary = "Store a new version of a named driver series",
    security(("bearer" = [])),
    request_body(content = Vec<u8>, content_type = "text/csv", description = "The series CSV (`enso` monthly, `rmm` daily, `wind`), plain or gzip"),
    params(("kind" = String, Path, description = "Series kind: `enso`, `rmm` or `wind`", example = "enso"), ("name" = String, Path, description = "Series name (a gauge TOML chooses it by file stem)", example = "port-tamsin-wind")),
    responses(
        (status = 200, description = "Series stored", body = crate::api::UploadReceipt),
        (status = 404, description = "No such driver kind", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 400, description = "Bad series name", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The upload failed validation (the problem names the line and field)", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 413, description = "The body is too large", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `PUT /api/v1/drivers/{kind}/{name}`: a new version of a named driver series (`enso`
/// monthly CSV, `rmm` daily CSV, `wind` CSV). Gauges whose TOML chooses it use it at their
/// next refit; no other gauge sees it.
pub async fn put_series(
    State(state): State<Arc<AppState>>,
    Path((kind, name)): Path<(String, String)>,
    body: Result<Bytes, BytesRejection>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let kind = match kind.as_str() {
        "enso" => SeriesKind::Enso,
        "rmm" => SeriesKind::Rmm,
        "wind" => SeriesKind::Wind,
        other => {
            return Err(AppError::NotFound(format!(
                "no driver kind {other:?}; kinds are enso, rmm and wind (forecasts go to /api/v1/forecasts/enso/{{name}})"
            )));
        }
    };
    let key = series_key(kind, &name)?;
    let body = body_of(body)?;
    let receipt = blocking(&state, move |state| {
        let csv_kind = state::csv_kind(kind).unwrap_or(CsvKind::Enso);
        let csv = upload::decode_body(csv_kind.describe(), &body, upload::MAX_DECOMPRESSED_BYTES)?;
        let rows = upload::scan_csv(csv_kind, &csv)?.rows;
        store_series(state, key, csv, rows)
    })
    .await?;
    Ok(Json(receipt))
}

#[utoipa::path(
    put,
    path = "/api/v1/forecasts/enso/{name}",
    operation_id = "putEnsoForecast",
    tag = "uploads",
    summary = "Store an ENSO forecast for a target season as a new version of a named forecast series",
    security(("bearer" = [])),
    request_body(content = crate::api::EnsoForecast, content_type = "application/json", description = "The ENSO forecast"),
    params(("name" = String, Path, description = "Forecast series name", example = "demo-enso-forecast")),
    responses(
        (status = 200, description = "Forecast stored", body = crate::api::UploadReceipt),
        (status = 400, description = "Bad series name", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The upload failed validation (the problem names the line and field)", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `PUT /api/v1/forecasts/enso/{name}`: an ENSO forecast JSON for a target season, as a new
/// version of the named forecast series.
pub async fn put_enso_forecast(
    State(state): State<Arc<AppState>>,
    Path(name): Path<String>,
    body: Result<Bytes, BytesRejection>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let key = series_key(SeriesKind::EnsoForecast, &name)?;
    let body = body_of(body)?;
    let receipt = blocking(&state, move |state| {
        let forecast = upload::parse_enso_forecast(&body)?;
        // Stored as uploaded (checked JSON, so UTF-8): the free-text `note` survives.
        let mut r = store_series(state, key, body.to_vec(), 0)?;
        r.stored = format!("{}:{}", r.stored, forecast.season);
        Ok(r)
    })
    .await?;
    Ok(Json(receipt))
}

fn series_key(kind: SeriesKind, name: &str) -> Result<SeriesKey, AppError> {
    if !store::valid_series_name(name) {
        return Err(AppError::BadRequest(format!(
            "series name {name:?} must be 1 to 64 letters, digits, '-', '_' or '.', starting with a letter or digit"
        )));
    }
    Ok(SeriesKey::new(kind, name))
}

fn store_series(
    state: &AppState,
    key: SeriesKey,
    content: Vec<u8>,
    rows: u64,
) -> Result<api::UploadReceipt, AppError> {
    let users = users_of(state, &key)?;
    let note = if users.is_empty() {
        format!(
            "stored; no gauge chooses {} yet (a gauge TOML chooses it by a [drivers] file named {}.csv or .json)",
            key.describe(),
            key.name
        )
    } else {
        format!(
            "stored; used at their next refit by the gauges whose TOML chooses it: {}",
            users.join(", ")
        )
    };
    let record = SeriesRecord {
        content_hash: etag_of(&content),
        rows,
        uploaded_at: store::now_rfc3339(),
        csv: content,
        key,
    };
    let version = state
        .store
        .call_blocking(|c| store::put_series(c, &record))?;
    let mut r = receipt(
        &format!("driver:{}", record.key.describe()),
        None,
        record.rows,
        &record.csv,
        note,
    );
    r.version = Some(version);
    Ok(r)
}

/// The stored gauges whose current TOML chooses `key`.
pub fn users_of(state: &AppState, key: &SeriesKey) -> Result<Vec<String>, AppError> {
    let gauges = state.store.call_blocking(|c| store::list_gauges(c))?;
    Ok(gauges
        .into_iter()
        .filter(|g| {
            upload::parse_gauge_toml(&g.toml)
                .is_ok_and(|meta| state::chosen_series(&meta).iter().any(|(k, _, _)| k == key))
        })
        .map(|g| g.id)
        .collect())
}

#[utoipa::path(
    post,
    path = "/api/v1/drivers/{kind}/{name}/versions/{version}/restore",
    operation_id = "restoreDriverSeriesVersion",
    tag = "uploads",
    summary = "Store an earlier version of a named series as its newest",
    security(("bearer" = [])),
    params(("kind" = String, Path, description = "Series kind: `enso`, `rmm`, `wind` or `enso_forecast`", example = "enso"), ("name" = String, Path, description = "Series name (a gauge TOML chooses it by file stem)", example = "port-tamsin-wind"), ("version" = i64, Path, description = "Version id", example = 1)),
    responses(
        (status = 200, description = "Restored", body = crate::api::UploadReceipt),
        (status = 404, description = "No such kind, series or version", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 400, description = "Bad series name", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `POST /api/v1/drivers/{kind}/{name}/versions/{version}/restore`: stores an earlier
/// version of a named series (`kind` also `enso_forecast`) as its newest.
pub async fn restore_series(
    State(state): State<Arc<AppState>>,
    Path((kind, name, version)): Path<(String, String, i64)>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let kind = SeriesKind::parse(&kind).ok_or_else(|| {
        AppError::NotFound(format!(
            "no driver kind {kind:?}; kinds are enso, rmm, wind and enso_forecast"
        ))
    })?;
    let key = series_key(kind, &name)?;
    let receipt = blocking(&state, move |state| {
        let k = key.clone();
        let (_, old) = state
            .store
            .call_blocking(move |c| store::series_versions(c, &k))?
            .into_iter()
            .find(|(v, _)| *v == version)
            .ok_or_else(|| {
                AppError::NotFound(format!(
                    "series {} has no version {version}",
                    key.describe()
                ))
            })?;
        store_series(state, key, old.csv, old.rows)
    })
    .await?;
    Ok(Json(receipt))
}

#[utoipa::path(
    post,
    path = "/api/v1/gauges/{id}/refit",
    operation_id = "refitGauge",
    tag = "uploads",
    summary = "Refit the gauge's model; the old one keeps serving if this fails",
    security(("bearer" = [])),
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin")),
    responses(
        (status = 200, description = "Refitted", body = crate::api::Gauge),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The fit failed; the old model keeps serving", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "A pipeline step is not available", content_type = "application/problem+json", body = crate::api::Problem),
        crate::openapi::WriteAccessProblems
    )
)]
/// `POST /api/v1/gauges/{id}/refit`: rebuilds the gauge's model on its newest inputs; swaps
/// it in only on success. Waits for the gauge's earlier writes, then for a refit permit.
pub async fn refit(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
) -> Result<Json<api::Gauge>, AppError> {
    let queue = state.gauge_queue(&id);
    let _turn = queue.lock().await;
    let _permit = state
        .refit_permits
        .acquire()
        .await
        .map_err(|_| AppError::Internal("refit permits closed".into()))?;
    let gauge = blocking(&state, move |state| {
        if state.catalog.get(&id).is_none() {
            stored_gauge(state, &id)?;
        }
        state::refit(state, &id).map_err(|e| match e {
            RefitError::NoGauge(id) => AppError::NotFound(format!("no gauge named {id:?}")),
            RefitError::Pipeline(why) => AppError::Pipeline(why),
            RefitError::Store(e) => AppError::Store(e),
        })
    })
    .await?;
    Ok(Json(gauge))
}
