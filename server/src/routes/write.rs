//! Write endpoints (bearer token checked by the router). Each checks its body completely,
//! stores it in one transaction, and refreshes the gauge's catalog entry; parsing, storing
//! and fitting run in `spawn_blocking`. Uploads never change the serving model: only a
//! successful refit does.

use std::sync::Arc;

use axum::Json;
use axum::body::Bytes;
use axum::extract::rejection::BytesRejection;
use axum::extract::{Path, State};
use axum::http::StatusCode;

use crate::api;
use crate::error::AppError;
use crate::etag::etag_of;
use crate::pipeline::PipelineError;
use crate::state::{AppState, ModelSource, build_entry};
use crate::store::{self, SeriesKey, SeriesRecord, StoredGaugeRow};
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

/// Runs blocking work (parsing, SQLite, fitting) off the async runtime.
async fn blocking<T: Send + 'static>(
    state: &Arc<AppState>,
    work: impl FnOnce(&AppState) -> Result<T, AppError> + Send + 'static,
) -> Result<T, AppError> {
    let state = Arc::clone(state);
    tokio::task::spawn_blocking(move || work(&state)).await?
}

/// Rebuilds a gauge's entry from the store, keeping the model it served.
fn refresh(state: &AppState, id: &str) -> Result<(), AppError> {
    let keep = match state.catalog.get(id) {
        Some(entry) => entry.model.clone(),
        None => Err(not_fitted(id)),
    };
    if let Some(entry) = build_entry(&state.store, id, ModelSource::Keep(keep))? {
        state.catalog.swap_in(entry);
    }
    Ok(())
}

fn not_fitted(id: &str) -> PipelineError {
    PipelineError::MissingInput(format!(
        "gauge {id} has not been fitted yet; POST /api/v1/gauges/{id}/refit"
    ))
}

fn require_gauge(state: &AppState, id: &str) -> Result<(), AppError> {
    match state.catalog.get(id) {
        Some(_) => Ok(()),
        None => Err(AppError::NotFound(format!(
            "no gauge named {id:?}; PUT /api/v1/gauges/{id} with its TOML first"
        ))),
    }
}

fn refit_note(id: &str) -> String {
    format!("stored; POST /api/v1/gauges/{id}/refit to refit the model on it")
}

/// `PUT /api/v1/gauges/{id}`: a gauge TOML whose `id` matches the path.
pub async fn put_gauge(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    body: Result<Bytes, BytesRejection>,
) -> Result<(StatusCode, Json<api::UploadReceipt>), AppError> {
    let body = body_of(body)?;
    let receipt = blocking(&state, move |state| {
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
        state
            .store
            .call_blocking(|c| store::put_gauge(c, &record))?;
        refresh(state, &id)?;
        Ok(api::UploadReceipt {
            stored: "gauge".into(),
            gauge: Some(id.clone()),
            rows: 0,
            bytes: body.len() as u64,
            content_hash: etag_of(&body),
            note: refit_note(&id),
        })
    })
    .await?;
    Ok((StatusCode::OK, Json(receipt)))
}

/// `PUT /api/v1/gauges/{id}/levels`: a water-level CSV, plain or gzip.
pub async fn put_levels(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    body: Result<Bytes, BytesRejection>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let body = body_of(body)?;
    require_gauge(&state, &id)?;
    let receipt = blocking(&state, move |state| {
        let csv = upload::decode_body(
            CsvKind::Levels.describe(),
            &body,
            upload::MAX_DECOMPRESSED_BYTES,
        )?;
        let summary = upload::scan_csv(CsvKind::Levels, &csv)?;
        let record = store::LevelsRecord {
            gauge_id: id.clone(),
            content_hash: etag_of(&csv),
            readings: summary.rows,
            first_time: summary.first,
            last_time: summary.last,
            uploaded_at: store::now_rfc3339(),
            csv,
        };
        let receipt = api::UploadReceipt {
            stored: "levels".into(),
            gauge: Some(id.clone()),
            rows: record.readings,
            bytes: record.csv.len() as u64,
            content_hash: record.content_hash.clone(),
            note: refit_note(&id),
        };
        state
            .store
            .call_blocking(|c| store::put_levels(c, &record))?;
        refresh(state, &id)?;
        Ok(receipt)
    })
    .await?;
    Ok(Json(receipt))
}

fn put_series(
    state: &AppState,
    key: SeriesKey,
    kind: CsvKind,
    body: &[u8],
) -> Result<api::UploadReceipt, AppError> {
    let csv = upload::decode_body(kind.describe(), body, upload::MAX_DECOMPRESSED_BYTES)?;
    let summary = upload::scan_csv(kind, &csv)?;
    let gauge = match &key {
        SeriesKey::Wind(g) => Some(g.clone()),
        _ => None,
    };
    let record = SeriesRecord {
        content_hash: etag_of(&csv),
        rows: summary.rows,
        uploaded_at: store::now_rfc3339(),
        csv,
        key,
    };
    let receipt = api::UploadReceipt {
        stored: format!("driver:{}", record.key.describe()),
        gauge,
        rows: record.rows,
        bytes: record.csv.len() as u64,
        content_hash: record.content_hash.clone(),
        note: "stored; POST /api/v1/gauges/{id}/refit for each gauge to use it".into(),
    };
    state
        .store
        .call_blocking(|c| store::put_series(c, &record))?;
    Ok(receipt)
}

/// `PUT /api/v1/drivers/{kind}`: `enso` (monthly CSV) or `rmm` (daily CSV).
pub async fn put_driver(
    State(state): State<Arc<AppState>>,
    Path(kind): Path<String>,
    body: Result<Bytes, BytesRejection>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let (key, csv_kind) = match kind.as_str() {
        "enso" => (SeriesKey::Enso, CsvKind::Enso),
        "rmm" => (SeriesKey::Rmm, CsvKind::Rmm),
        other => {
            return Err(AppError::NotFound(format!(
                "no driver kind {other:?}; kinds are enso, rmm and wind/{{gauge}}"
            )));
        }
    };
    let body = body_of(body)?;
    let receipt = blocking(&state, move |state| put_series(state, key, csv_kind, &body)).await?;
    Ok(Json(receipt))
}

/// `PUT /api/v1/drivers/wind/{gauge}`: one gauge's wind CSV.
pub async fn put_wind(
    State(state): State<Arc<AppState>>,
    Path(gauge): Path<String>,
    body: Result<Bytes, BytesRejection>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let body = body_of(body)?;
    require_gauge(&state, &gauge)?;
    let receipt = blocking(&state, move |state| {
        let mut receipt = put_series(state, SeriesKey::Wind(gauge.clone()), CsvKind::Wind, &body)?;
        receipt.note = refit_note(&gauge);
        Ok(receipt)
    })
    .await?;
    Ok(Json(receipt))
}

/// `PUT /api/v1/forecasts/enso`: an ENSO forecast JSON for a target season.
pub async fn put_enso_forecast(
    State(state): State<Arc<AppState>>,
    body: Result<Bytes, BytesRejection>,
) -> Result<Json<api::UploadReceipt>, AppError> {
    let body = body_of(body)?;
    let receipt = blocking(&state, move |state| {
        let forecast = upload::parse_enso_forecast(&body)?;
        // Stored as uploaded (checked JSON, so UTF-8), free-text `note` included.
        let json = String::from_utf8_lossy(&body).into_owned();
        let now = store::now_rfc3339();
        state.store.call_blocking(|c| {
            store::put_forecast(c, &forecast.season, &forecast.issued, &json, &now)
        })?;
        Ok(api::UploadReceipt {
            stored: format!("forecast:enso:{}", forecast.season),
            gauge: None,
            rows: 0,
            bytes: body.len() as u64,
            content_hash: etag_of(&body),
            note: "stored; POST /api/v1/gauges/{id}/refit for each gauge to use it".into(),
        })
    })
    .await?;
    Ok(Json(receipt))
}

/// `POST /api/v1/gauges/{id}/refit`: rebuilds the gauge's model; swaps it in only on success.
pub async fn refit(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
) -> Result<Json<api::Gauge>, AppError> {
    require_gauge(&state, &id)?;
    let _permit = state
        .pipeline_permits
        .acquire()
        .await
        .map_err(|_| AppError::Internal("pipeline permits closed".into()))?;
    let gauge = blocking(&state, move |state| {
        let entry = build_entry(&state.store, &id, ModelSource::Build)?
            .ok_or_else(|| AppError::NotFound(format!("no gauge named {id:?}")))?;
        if let Err(why) = &entry.model {
            return Err(AppError::Pipeline(why.clone()));
        }
        let wire = entry.to_wire();
        state.catalog.swap_in(entry);
        Ok(wire)
    })
    .await?;
    Ok(Json(gauge))
}
