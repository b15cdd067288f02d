//! Read endpoints. SerializedBody bodies are served as cloned `Bytes` with their ETag; only an
//! outlook of a season the fit did not issue is computed (once, off the runtime, then kept).

use std::sync::Arc;

use axum::Json;
use axum::body::Bytes;
use axum::extract::rejection::QueryRejection;
use axum::extract::{Path, Query, State};
use axum::http::{HeaderMap, HeaderValue, header};
use axum::response::{IntoResponse, Response};
use serde::Deserialize;
use tidetally_model::season::Season;

use crate::api;
use crate::catalog::{GaugeEntry, OnDemand, SerializedBody, ServedModel};
use crate::error::AppError;
use crate::outlook_set::{self, SeasonAsked};
use crate::pipeline;
use crate::query;
use crate::state::{self, AppState};
use crate::store;

/// Most issued outlooks one request lists.
const MAX_ISSUED: u32 = 500;

/// A gauge as served; before the startup load has finished, a gauge not loaded yet is "not
/// ready", not "not found" (each gauge is served as soon as it is loaded).
fn gauge_entry(state: &AppState, id: &str) -> Result<Arc<GaugeEntry>, AppError> {
    match state.catalog.get(id) {
        Some(entry) => Ok(entry),
        None if !state.catalog.is_loaded() => Err(AppError::NotReady),
        None => Err(AppError::NotFound(format!("no gauge named {id:?}"))),
    }
}

/// Lists of all gauges are answered only once every gauge is loaded, never partially.
fn require_loaded(state: &AppState) -> Result<(), AppError> {
    if state.catalog.is_loaded() {
        Ok(())
    } else {
        Err(AppError::NotReady)
    }
}

fn query_of<T>(query: Result<Query<T>, QueryRejection>) -> Result<T, AppError> {
    query
        .map(|Query(q)| q)
        .map_err(|err| AppError::BadRequest(format!("bad query string: {}", err.body_text())))
}

/// A prepared JSON body with its ETag, and its compressed copies for the response layer to
/// choose from by `Accept-Encoding`.
fn prepared<T>(p: &SerializedBody<T>, content_type: &'static str) -> Response {
    let mut response = p.body.clone().into_response();
    response.extensions_mut().insert(p.compressed.clone());
    let headers = response.headers_mut();
    headers.insert(header::CONTENT_TYPE, HeaderValue::from_static(content_type));
    if let Ok(tag) = HeaderValue::from_str(&p.etag) {
        headers.insert(header::ETAG, tag);
    }
    response
}

#[utoipa::path(
    get,
    path = "/api/v1/openapi.json",
    operation_id = "getOpenApi",
    tag = "meta",
    summary = "This OpenAPI 3.1 document",
    responses(
        (status = 200, description = "The document", content_type = "application/json", body = crate::openapi::OpenApiDocument)
    )
)]
/// `GET /api/v1/openapi.json`.
pub async fn openapi() -> Response {
    static DOC: std::sync::OnceLock<Bytes> = std::sync::OnceLock::new();
    let body = DOC.get_or_init(|| Bytes::from(crate::openapi::document().to_string()));
    ([(header::CONTENT_TYPE, "application/json")], body.clone()).into_response()
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges",
    operation_id = "listGauges",
    tag = "gauges",
    summary = "All gauges, ordered by id",
    responses(
        (status = 200, description = "The gauges", content_type = "application/json", body = crate::api::GaugeList),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 503, description = "Still loading", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges`.
pub async fn gauges(State(state): State<Arc<AppState>>) -> Result<Json<api::GaugeList>, AppError> {
    require_loaded(&state)?;
    Ok(Json(api::GaugeList {
        gauges: state.catalog.list().iter().map(|e| e.to_wire()).collect(),
    }))
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges.geojson",
    operation_id = "getGaugesGeoJson",
    tag = "gauges",
    summary = "All gauges as a GeoJSON FeatureCollection (RFC 7946)",
    responses(
        (status = 200, description = "The gauges as point features", content_type = "application/geo+json", body = crate::api::FeatureCollection),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 503, description = "Still loading", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges.geojson`.
pub async fn gauges_geojson(State(state): State<Arc<AppState>>) -> Result<Response, AppError> {
    require_loaded(&state)?;
    let gauges: Vec<api::Gauge> = state.catalog.list().iter().map(|e| e.to_wire()).collect();
    let body = serde_json::to_vec(&api::FeatureCollection::of(&gauges)).unwrap_or_default();
    Ok(([(header::CONTENT_TYPE, "application/geo+json")], body).into_response())
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}",
    operation_id = "getGauge",
    tag = "gauges",
    summary = "One gauge",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin")),
    responses(
        (status = 200, description = "The gauge", content_type = "application/json", body = crate::api::Gauge),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}`.
pub async fn gauge(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
) -> Result<Json<api::Gauge>, AppError> {
    Ok(Json(gauge_entry(&state, &id)?.to_wire()))
}

/// Query of the seasons endpoint.
#[derive(Debug, Deserialize)]
pub struct SeasonsQuery {
    format: Option<String>,
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}/seasons",
    operation_id = "getSeasonHistory",
    tag = "gauges",
    summary = "The gauge's season table (JSON, or CSV by `Accept: text/csv` or `?format=csv`)",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("format" = Option<String>, Query, description = "`json` (default) or `csv`", example = "json")),
    responses(
        (status = 200, description = "The season table (as `text/csv` when asked: fixed columns, then one per predictor)", content_type = "application/json", body = crate::api::SeasonHistory),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The gauge has no season table", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}/seasons` (JSON, or CSV by `Accept: text/csv` or `?format=csv`).
pub async fn seasons(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    headers: HeaderMap,
    query: Result<Query<SeasonsQuery>, QueryRejection>,
) -> Result<Response, AppError> {
    let query = query_of(query)?;
    let entry = gauge_entry(&state, &id)?;
    let wants_csv = match query.format.as_deref() {
        Some("csv") => true,
        Some("json") => false,
        Some(other) => {
            return Err(AppError::BadRequest(format!(
                "format {other:?} must be json or csv"
            )));
        }
        None => headers
            .get(header::ACCEPT)
            .and_then(|v| v.to_str().ok())
            .is_some_and(|accept| accept.contains("text/csv")),
    };
    let history = entry
        .history
        .as_ref()
        .map_err(|e| AppError::Pipeline(e.clone()))?;
    let mut response = if wants_csv {
        let csv = season_csv(&history.value).map_err(|e| AppError::Internal(e.to_string()))?;
        ([(header::CONTENT_TYPE, "text/csv; charset=utf-8")], csv).into_response()
    } else {
        prepared(history, "application/json")
    };
    response
        .headers_mut()
        .insert(header::VARY, HeaderValue::from_static("accept"));
    Ok(response)
}

/// The season table as CSV: fixed columns, then one column per predictor sorted by name.
fn season_csv(history: &api::SeasonHistory) -> Result<Vec<u8>, csv::Error> {
    let predictors: std::collections::BTreeSet<&String> = history
        .seasons
        .iter()
        .flat_map(|s| s.predictors.keys())
        .collect();
    let mut writer = csv::Writer::from_writer(Vec::new());
    let mut header = vec![
        "season",
        "first_day",
        "last_day",
        "calendar_days",
        "observed_days",
        "flood_days",
        "completeness",
        "used_in_fit",
    ];
    header.extend(predictors.iter().map(|p| p.as_str()));
    writer.write_record(&header)?;
    for row in &history.seasons {
        let mut record = vec![
            row.season.clone(),
            row.first_day.clone(),
            row.last_day.clone(),
            row.calendar_days.to_string(),
            row.observed_days.to_string(),
            row.flood_days.to_string(),
            row.completeness.to_string(),
            row.used_in_fit.to_string(),
        ];
        record.extend(predictors.iter().map(|p| {
            row.predictors
                .get(*p)
                .map(f64::to_string)
                .unwrap_or_default()
        }));
        writer.write_record(&record)?;
    }
    writer.into_inner().map_err(|e| e.into_error().into())
}

/// Query of the outlook endpoint.
#[derive(Debug, Deserialize)]
pub struct OutlookQuery {
    season: Option<String>,
    k: Option<String>,
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}/outlook",
    operation_id = "getOutlook",
    tag = "outlooks",
    summary = "The gauge's outlook of minor flood days for a season",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("season" = Option<String>, Query, description = "Season label `YEAR-NAME`, named for the year its first month falls in: `1995-DJF` is December 1995 to February 1996. Default: the earliest season served.", example = "2026-DJF"), ("k" = Option<String>, Query, description = "Comma-separated counts of days `k` for `P(N >= k)`, days", example = "5,10")),
    responses(
        (status = 200, description = "The outlook", content_type = "application/json", body = crate::api::Outlook),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 404, description = "No such gauge, or the record cannot support an outlook of that season", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The gauge has no model", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading, no model yet, or the on-demand queue is full", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}/outlook?season=LABEL&k=5,10`.
pub async fn outlook(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    query: Result<Query<OutlookQuery>, QueryRejection>,
) -> Result<Response, AppError> {
    let query = query_of(query)?;
    let entry = gauge_entry(&state, &id)?;
    let model = entry
        .model
        .as_ref()
        .map_err(|e| AppError::Pipeline(e.clone()))?;
    // The season is parsed once; an outlook not issued by the fit is computed for it.
    let (label, target) = match &query.season {
        Some(text) => {
            let target =
                query::parse_season(text, &entry.meta.seasons).map_err(AppError::BadRequest)?;
            (target.label(), Some(target))
        }
        None => (
            first_served_season(model.outlooks.keys(), &entry)
                .ok_or_else(|| AppError::NotFound(format!("gauge {id:?} serves no outlook")))?,
            None,
        ),
    };
    let on_demand;
    let served = match (model.outlooks.get(&label), target) {
        (Some(served), _) => served,
        (None, target) => {
            on_demand = match model.cached(&label) {
                Some(cached) => cached,
                None => {
                    // Without `?season=` the label is one the fit served.
                    let target = target.ok_or_else(|| {
                        AppError::NotFound(format!("gauge {id:?} serves no outlook for {label}"))
                    })?;
                    outlook_on_demand(&state, &entry, Arc::clone(model), target).await?
                }
            }
            .map_err(AppError::Pipeline)?;
            &*on_demand
        }
    };
    match &query.k {
        None => Ok(prepared(served, "application/json")),
        Some(text) => {
            let days = query::parse_k_list(text, served.value.season_days)
                .map_err(AppError::BadRequest)?;
            let mut outlook = served.value.clone();
            outlook.exceedance = api::exceedance_from_pmf(&outlook.pmf, &days);
            Ok(Json(outlook).into_response())
        }
    }
}

/// Whether the record can support an outlook of `target`: a past season with observed days,
/// or the next season of its name after the record.
fn supported(entry: &GaugeEntry, target: &tidetally_model::season::Season) -> Result<(), String> {
    let Ok(history) = &entry.history else {
        return Err("the gauge has no season table".into());
    };
    let label = target.label();
    let name = target.spec().name();
    let seasons = &history.value.seasons;
    if seasons
        .iter()
        .any(|r| r.season == label && r.observed_days > 0)
    {
        return Ok(());
    }
    let last_of_name = seasons
        .iter()
        .filter_map(|r| query::parse_season(&r.season, &entry.meta.seasons).ok())
        .filter(|s| s.spec().name() == name)
        .map(|s| s.year())
        .max();
    match last_of_name {
        Some(year) if target.year() == year + 1 => Ok(()),
        Some(year) => Err(format!(
            "gauge {}'s record supports outlooks of past seasons with data and of the next              season ({}-{name}), not {label}",
            entry.meta.id,
            year + 1
        )),
        None => Err(format!(
            "gauge {}'s record has no {name} season",
            entry.meta.id
        )),
    }
}

/// Computes the outlook of a season the fit did not issue, off the runtime, in the on-demand
/// pool (its own permits and a bounded queue: a full queue answers 503 at once), from the
/// inputs the serving model was fitted on, and keeps it with the serving model.
async fn outlook_on_demand(
    state: &Arc<AppState>,
    entry: &GaugeEntry,
    model: Arc<ServedModel>,
    target: Season,
) -> Result<OnDemand, AppError> {
    let label = target.label();
    supported(entry, &target).map_err(AppError::NotFound)?;
    let _permit = state.on_demand.enter().await?;
    if let Some(cached) = model.cached(&label) {
        return Ok(cached);
    }
    let st = Arc::clone(state);
    let id = entry.meta.id.clone();
    let at = entry.inputs.clone();
    tokio::task::spawn_blocking(move || {
        let (inputs, _) = st
            .store
            .call_blocking(|c| state::load_inputs_at(c, &id, Some(&at)))?
            .ok_or_else(|| AppError::NotFound(format!("no gauge named {id:?}")))?;
        let outcome = pipeline::outlook_for_season(&inputs, &model.results, &target);
        Ok(model.keep(&label, outcome))
    })
    .await?
}

/// The earliest season (by first day) among served labels.
pub(crate) fn first_served_season<'a>(
    labels: impl Iterator<Item = &'a String>,
    entry: &GaugeEntry,
) -> Option<String> {
    labels
        .filter_map(|l| query::parse_season(l, &entry.meta.seasons).ok())
        .min_by_key(|s| s.first_day())
        .map(|s| s.label())
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}/hindcast",
    operation_id = "getHindcast",
    tag = "outlooks",
    summary = "Out-of-sample skill of the gauge's model",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin")),
    responses(
        (status = 200, description = "The hindcast", content_type = "application/json", body = crate::api::Hindcast),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The gauge has no model", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading, or no model yet", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}/hindcast`.
pub async fn hindcast(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
) -> Result<Response, AppError> {
    let entry = gauge_entry(&state, &id)?;
    let model = entry
        .model
        .as_ref()
        .map_err(|e| AppError::Pipeline(e.clone()))?;
    Ok(prepared(&model.hindcast, "application/json"))
}

/// Query of the all-gauges outlook endpoint.
#[derive(Debug, Deserialize)]
pub struct OutlooksQuery {
    season: Option<String>,
}

#[utoipa::path(
    get,
    path = "/api/v1/outlooks",
    operation_id = "listOutlooks",
    tag = "outlooks",
    summary = "Every gauge's outlook for a season, or each gauge's next outlook",
    params(("season" = Option<String>, Query, description = "Season label `YEAR-NAME`, named for the year its first month falls in: `1995-DJF` is December 1995 to February 1996. Without it, each gauge's default (next) outlook, each carrying its own season, and the set's season is null", example = "2026-DJF")),
    responses(
        (status = 200, description = "The outlooks, and the gauges without one", content_type = "application/json", body = crate::api::OutlookSet),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/outlooks[?season=LABEL]`: every gauge's outlook of one season, or without a
/// season each gauge's default (next) outlook; kept serialized and compressed until any gauge
/// changes ([`crate::outlook_set`]).
pub async fn outlooks(
    State(state): State<Arc<AppState>>,
    query: Result<Query<OutlooksQuery>, QueryRejection>,
) -> Result<Response, AppError> {
    let query = query_of(query)?;
    require_loaded(&state)?;
    // Without `?season=`, each gauge's default outlook (the earliest season its fit issued).
    let asked = match &query.season {
        Some(text) => {
            let (year, name) = query::parse_label_shape(text).map_err(AppError::BadRequest)?;
            Some(SeasonAsked {
                label: format!("{year}-{name}"),
                name,
            })
        }
        None => None,
    };
    let set = outlook_set::prepared_set(&state, asked).await?;
    Ok(prepared(&set, "application/json"))
}

/// Query of the issued-outlooks endpoint.
#[derive(Debug, Deserialize)]
pub struct IssuedQuery {
    gauge: Option<String>,
    season: Option<String>,
    limit: Option<u32>,
}

#[utoipa::path(
    get,
    path = "/api/v1/outlooks/issued",
    operation_id = "listIssuedOutlooks",
    tag = "outlooks",
    summary = "Outlooks as issued, with their verification once the season is in",
    params(("gauge" = Option<String>, Query, description = "Only this gauge", example = "port-tamsin"), ("season" = Option<String>, Query, description = "Season label `YEAR-NAME`, named for the year its first month falls in: `1995-DJF` is December 1995 to February 1996. Only this season.", example = "2026-DJF"), ("limit" = Option<u32>, Query, description = "At most this many, newest first (1 to 500, default 100)", example = 100)),
    responses(
        (status = 200, description = "The issued outlooks, newest first", content_type = "application/json", body = crate::api::IssuedOutlookList),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/outlooks/issued?gauge=ID&season=LABEL&limit=N`.
pub async fn issued(
    State(state): State<Arc<AppState>>,
    query: Result<Query<IssuedQuery>, QueryRejection>,
) -> Result<Json<api::IssuedOutlookList>, AppError> {
    let query = query_of(query)?;
    let season = match query.season {
        Some(text) => {
            let (year, name) = query::parse_label_shape(&text).map_err(AppError::BadRequest)?;
            Some(format!("{year}-{name}"))
        }
        None => None,
    };
    let filter = store::IssuedFilter {
        gauge: query.gauge,
        season,
        limit: query.limit.unwrap_or(100).clamp(1, MAX_ISSUED),
    };
    let records = state
        .store
        .call(move |c| store::list_issued(c, &filter))
        .await?;
    let mut issued = Vec::with_capacity(records.len());
    for record in records {
        let outlook: api::Outlook = serde_json::from_str(&record.outlook_json)
            .map_err(|e| AppError::Internal(format!("issued outlook {}: {e}", record.id)))?;
        let driver_inputs = serde_json::from_str(&record.driver_inputs_json)
            .map_err(|e| AppError::Internal(format!("issued outlook {}: {e}", record.id)))?;
        let verification = state.catalog.get(&record.gauge_id).and_then(|entry| {
            let history = entry.history.as_ref().ok()?;
            let row = history
                .value
                .seasons
                .iter()
                .find(|r| r.season == record.season)?;
            pipeline::verify_issued(&outlook, row).ok()
        });
        issued.push(api::IssuedOutlook {
            id: record.id,
            gauge: record.gauge_id,
            season: record.season,
            model_version: record.model_version,
            issued_at: record.issued_at,
            driver_inputs,
            outlook,
            verification,
        });
    }
    Ok(Json(api::IssuedOutlookList { issued }))
}

fn wire_versions(
    versions: Vec<store::VersionInfo>,
    serving: Option<i64>,
) -> Vec<api::InputVersion> {
    versions
        .into_iter()
        .map(|v| api::InputVersion {
            serving: serving == Some(v.version),
            version: v.version,
            uploaded_at: v.uploaded_at,
            rows: v.rows,
            content_hash: v.content_hash,
        })
        .collect()
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}/versions",
    operation_id = "listGaugeVersions",
    tag = "gauges",
    summary = "Every stored version of the gauge's inputs",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin")),
    responses(
        (status = 200, description = "The versions", content_type = "application/json", body = crate::api::VersionList),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 404, description = "No such gauge", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}/versions`: every stored version of the gauge's inputs (retired
/// gauges included), marking those the serving model was fitted on.
pub async fn versions(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
) -> Result<Json<api::VersionList>, AppError> {
    let serving = state
        .catalog
        .get(&id)
        .map(|e| e.inputs.clone())
        .unwrap_or_default();
    let key = id.clone();
    let list = state
        .store
        .call(move |c| {
            let Some(gauge) = store::get_gauge(c, &key)? else {
                return Ok(None);
            };
            let retired = !store::list_gauges(c)?.iter().any(|g| g.id == key);
            let toml = store::list_gauge_versions(c, &key)?;
            let levels = store::list_levels_versions(c, &key)?;
            let mut series = Vec::new();
            if let Ok(meta) = crate::upload::parse_gauge_toml(&gauge.toml) {
                for (k, _, _) in state::chosen_series(&meta) {
                    let versions = store::list_series(c)?
                        .into_iter()
                        .find(|s| s.key == k)
                        .map(|s| s.versions)
                        .unwrap_or_default();
                    series.push((k, versions));
                }
            }
            Ok(Some((retired, toml, levels, series)))
        })
        .await?;
    let Some((retired, toml, levels, series)) = list else {
        return Err(AppError::NotFound(format!("no gauge named {id:?}")));
    };
    Ok(Json(api::VersionList {
        retired,
        toml: wire_versions(toml, serving.gauge),
        levels: wire_versions(levels, serving.levels),
        series: series
            .into_iter()
            .map(|(k, versions)| api::SeriesEntry {
                kind: k.kind.as_str().to_owned(),
                versions: wire_versions(versions, serving.series.get(&k.describe()).copied()),
                name: k.name,
                used_by: vec![id.clone()],
            })
            .collect(),
        gauge: id,
    }))
}

#[utoipa::path(
    get,
    path = "/api/v1/drivers",
    operation_id = "listDriverSeries",
    tag = "uploads",
    summary = "Every stored driver series, its versions and the gauges choosing it",
    responses(
        (status = 200, description = "The series", content_type = "application/json", body = crate::api::SeriesList),
        (status = 304, description = "Not modified: If-None-Match matched the ETag")
    )
)]
/// `GET /api/v1/drivers`: every stored driver series with its versions and the gauges whose
/// TOML chooses it.
pub async fn series(State(state): State<Arc<AppState>>) -> Result<Json<api::SeriesList>, AppError> {
    let (all, gauges) = state
        .store
        .call(|c| Ok((store::list_series(c)?, store::list_gauges(c)?)))
        .await?;
    let chosen: Vec<(String, Vec<store::SeriesKey>)> = gauges
        .iter()
        .filter_map(|g| {
            let meta = crate::upload::parse_gauge_toml(&g.toml).ok()?;
            let keys = state::chosen_series(&meta)
                .into_iter()
                .map(|(k, _, _)| k)
                .collect();
            Some((g.id.clone(), keys))
        })
        .collect();
    let series = all
        .into_iter()
        .map(|s| {
            let used_by = chosen
                .iter()
                .filter(|(_, keys)| keys.contains(&s.key))
                .map(|(id, _)| id.clone())
                .collect();
            let serving = None;
            api::SeriesEntry {
                kind: s.key.kind.as_str().to_owned(),
                name: s.key.name,
                used_by,
                versions: wire_versions(s.versions, serving),
            }
        })
        .collect();
    Ok(Json(api::SeriesList { series }))
}

#[cfg(test)]
mod tests {
    use std::collections::BTreeMap;

    use super::*;

    fn row(season: &str, predictors: &[(&str, f64)]) -> api::SeasonRow {
        api::SeasonRow {
            season: season.into(),
            first_day: "2020-12-01".into(),
            last_day: "2021-02-28".into(),
            calendar_days: 90,
            observed_days: 88,
            flood_days: 3,
            completeness: 88.0 / 90.0,
            used_in_fit: true,
            predictors: predictors
                .iter()
                .map(|(k, v)| ((*k).to_owned(), *v))
                .collect::<BTreeMap<_, _>>(),
            enso_category: None,
        }
    }

    #[test]
    fn season_csv_has_one_column_per_predictor_and_blanks_for_missing() {
        let history = api::SeasonHistory {
            gauge: "a".into(),
            datum: "STND".into(),
            flood_threshold_m: 0.85,
            seasons: vec![
                row("2020-DJF", &[("wind", 1.5), ("enso", -0.5)]),
                row("2021-DJF", &[("enso", 0.25)]),
            ],
        };
        let text = String::from_utf8(season_csv(&history).unwrap()).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(
            lines[0],
            "season,first_day,last_day,calendar_days,observed_days,flood_days,completeness,used_in_fit,enso,wind"
        );
        assert!(lines[1].starts_with("2020-DJF,2020-12-01,2021-02-28,90,88,3,"));
        assert!(lines[1].ends_with(",true,-0.5,1.5"), "{}", lines[1]);
        assert!(lines[2].ends_with(",true,0.25,"), "{}", lines[2]);
    }
}
