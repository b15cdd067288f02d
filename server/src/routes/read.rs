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

use super::tables;
use crate::api;
use crate::catalog::{GaugeEntry, OnDemand, SerializedBody, ServedModel};
use crate::error::AppError;
use crate::negotiate::{Format, csv_failed, csv_response, negotiate, vary_accept};
use crate::outlook_set::{self, SeasonAsked};
use crate::pipeline;
use crate::query;
use crate::state::{self, AppState};
use crate::store;

/// Most issued outlooks one request lists.
const MAX_ISSUED: u32 = 500;

/// A gauge as served; before the startup load has finished, a gauge not loaded yet is "not
/// ready", not "not found" (each gauge is served as soon as it is loaded).
pub(crate) fn gauge_entry(state: &AppState, id: &str) -> Result<Arc<GaugeEntry>, AppError> {
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

pub(crate) fn query_of<T>(query: Result<Query<T>, QueryRejection>) -> Result<T, AppError> {
    query
        .map(|Query(q)| q)
        .map_err(|err| AppError::BadRequest(format!("bad query string: {}", err.body_text())))
}

/// A prepared JSON body with its ETag, and its compressed copies for the response layer to
/// choose from by `Accept-Encoding`.
pub(crate) fn prepared<T>(p: &SerializedBody<T>, content_type: &'static str) -> Response {
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
    path = "/api/v1/clock",
    operation_id = "getClock",
    tag = "meta",
    summary = "What today is for this service",
    description = "The service's date: the real UTC date, or the date set with \
`TIDETALLY_TODAY=YYYY-MM-DD`. The page judges whether an outlook is for a past season by it. \
Never cached (`Cache-Control: no-store`); outlook bodies carry no date that depends on today.",
    responses(
        (status = 200, description = "Today", content_type = "application/json", body = crate::api::Clock)
    )
)]
/// `GET /api/v1/clock`.
pub async fn clock(State(state): State<Arc<AppState>>) -> Response {
    let today = state.clock.today().format("%Y-%m-%d").to_string();
    (
        [(header::CACHE_CONTROL, "no-store")],
        Json(api::Clock { today }),
    )
        .into_response()
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
        (status = 200, description = "The gauges as point features; each feature's `properties.next_outlook` holds the headline numbers of the gauge's next outlook (null while it has none), so a map colours gauges without a second call", content_type = "application/geo+json", body = crate::api::FeatureCollection),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 503, description = "Still loading", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges.geojson`.
pub async fn gauges_geojson(State(state): State<Arc<AppState>>) -> Result<Response, AppError> {
    require_loaded(&state)?;
    let features = state
        .catalog
        .list()
        .iter()
        .map(|entry| {
            let summary = entry
                .default_outlook()
                .ok()
                .map(|served| api::OutlookSummary::of(&served.value));
            api::Feature::of(&entry.to_wire(), summary)
        })
        .collect();
    let body = serde_json::to_vec(&api::FeatureCollection::of(features))
        .map_err(|e| AppError::Internal(format!("GeoJSON: {e}")))?;
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
    let format = negotiate(query.format.as_deref(), &headers, JSON_OR_CSV)?;
    let entry = gauge_entry(&state, &id)?;
    let history = entry
        .history
        .as_ref()
        .map_err(|e| AppError::Pipeline(e.clone()))?;
    match format {
        Format::Csv => Ok(csv_response(
            tables::season_csv(&history.value).map_err(csv_failed)?,
        )),
        Format::Json => Ok(json_varying(history)),
    }
}

/// What the endpoints with a CSV form offer, JSON first (the default).
pub(crate) const JSON_OR_CSV: &[Format] = &[Format::Json, Format::Csv];

/// A prepared JSON body of an endpoint that also answers CSV.
fn json_varying<T>(p: &SerializedBody<T>) -> Response {
    let mut response = prepared(p, "application/json");
    vary_accept(&mut response);
    response
}

/// Query of the outlook endpoint.
#[derive(Debug, Deserialize)]
pub struct OutlookQuery {
    season: Option<String>,
    k: Option<String>,
    format: Option<String>,
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}/outlook",
    operation_id = "getOutlook",
    tag = "outlooks",
    summary = "The gauge's outlook of minor flood days for a season",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("season" = Option<String>, Query, description = "Season label `YEAR-NAME`, named for the year its first month falls in: `1995-DJF` is December 1995 to February 1996. Default: the earliest season served.", example = "2026-DJF"), ("k" = Option<String>, Query, description = "Comma-separated counts of days `k` for `P(N >= k)`, days (the CSV table holds every count)", example = "5,10"), ("format" = Option<String>, Query, description = "`json` (default) or `csv`; wins over `Accept` (which may ask for `application/json` or `text/csv`, with q-values)", example = "json")),
    responses(
        (status = 200, description = "The outlook; as `text/csv` (RFC 4180, when asked), its count table: a header line `days,probability,probability_at_least,probability_at_most`, then one row per count of days 0 to `season_days` with `pmf[days]`, `P(N >= days)` and `P(N <= days)`. The CSV has its own ETag.", content(
            (crate::api::Outlook = "application/json"),
            (String = "text/csv", example = json!("days,probability,probability_at_least,probability_at_most\r\n0,0.25,1,0.25\r\n1,0.5,0.75,0.75\r\n"))
        )),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 406, description = "Neither JSON nor CSV is acceptable (`?format=` or `Accept`)", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 404, description = "No such gauge, or the record cannot support an outlook of that season", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The gauge has no model", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading, no model yet, or the on-demand queue is full", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}/outlook?season=LABEL&k=5,10[&format=csv]`.
pub async fn outlook(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    headers: HeaderMap,
    query: Result<Query<OutlookQuery>, QueryRejection>,
) -> Result<Response, AppError> {
    let query = query_of(query)?;
    let format = negotiate(query.format.as_deref(), &headers, JSON_OR_CSV)?;
    let served = served_outlook(&state, &id, query.season.as_deref()).await?;
    let days = match &query.k {
        Some(text) => Some(
            query::parse_k_list(text, served.value.season_days).map_err(AppError::BadRequest)?,
        ),
        None => None,
    };
    match (format, days) {
        (Format::Csv, _) => Ok(csv_response(
            tables::outlook_csv(&served.value).map_err(csv_failed)?,
        )),
        (Format::Json, None) => Ok(json_varying(&served)),
        (Format::Json, Some(days)) => {
            let mut outlook = served.value.clone();
            outlook.exceedance = api::exceedance_from_pmf(&outlook.pmf, &days);
            let mut response = Json(outlook).into_response();
            vary_accept(&mut response);
            Ok(response)
        }
    }
}
/// The gauge's outlook of `season` as served, or without a season its default (the earliest
/// season its fit issued): issued by the fit, kept from an earlier on-demand run, or computed
/// now off the runtime. The gauge and season errors are those of the outlook endpoint.
pub(crate) async fn served_outlook(
    state: &Arc<AppState>,
    id: &str,
    season: Option<&str>,
) -> Result<Arc<SerializedBody<api::Outlook>>, AppError> {
    let entry = gauge_entry(state, id)?;
    let model = entry
        .model
        .as_ref()
        .map_err(|e| AppError::Pipeline(e.clone()))?;
    // The season is parsed once; an outlook not issued by the fit is computed for it.
    let (label, target) = match season {
        Some(text) => {
            let target =
                query::parse_season(text, &entry.meta.seasons).map_err(AppError::BadRequest)?;
            (target.label(), Some(target))
        }
        None => (
            entry
                .default_season(model)
                .ok_or_else(|| AppError::NotFound(format!("gauge {id:?} serves no outlook")))?,
            None,
        ),
    };
    if let Some(served) = model.outlooks.get(&label) {
        return Ok(Arc::clone(served));
    }
    match model.cached(&label) {
        Some(cached) => cached,
        None => {
            // Without `?season=` the label is one the fit served.
            let target = target.ok_or_else(|| {
                AppError::NotFound(format!("gauge {id:?} serves no outlook for {label}"))
            })?;
            outlook_on_demand(state, &entry, Arc::clone(model), target).await?
        }
    }
    .map_err(AppError::Pipeline)
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
    format: Option<String>,
}

#[utoipa::path(
    get,
    path = "/api/v1/outlooks",
    operation_id = "listOutlooks",
    tag = "outlooks",
    summary = "Every gauge's outlook for a season, or each gauge's next outlook",
    params(("season" = Option<String>, Query, description = "Season label `YEAR-NAME`, named for the year its first month falls in: `1995-DJF` is December 1995 to February 1996. Without it, each gauge's default (next) outlook, each carrying its own season, and the set's season is null", example = "2026-DJF"), ("format" = Option<String>, Query, description = "`json` (default) or `csv`; wins over `Accept` (which may ask for `application/json` or `text/csv`, with q-values)", example = "json")),
    responses(
        (status = 200, description = "The outlooks, and the gauges without one; as `text/csv` (RFC 4180, when asked), one row per gauge ordered by id with the headline numbers of its outlook (those of `OutlookSummary`): `gauge,season,mean,p10,p90,plan_on_days,plan_on_low,plan_on_high,plan_on_basis,k,probability_at_least_k,tercile_reference,below,near,above,verdict,engine,plan_on_sentence,unavailable`; a gauge without an outlook has only `gauge` and its reason in `unavailable`. The CSV has its own ETag.", content(
            (crate::api::OutlookSet = "application/json"),
            (String = "text/csv", example = json!("gauge,season,mean,p10,p90,plan_on_days,plan_on_low,plan_on_high,plan_on_basis,k,probability_at_least_k,tercile_reference,below,near,above,verdict,engine,plan_on_sentence,unavailable\r\nport-tamsin,2026-DJF,4.2,1,8,4.2,1,8,outlook,5,0.38,1991-2020 climatology,0.2,0.3,0.5,beats_climatology,water,\"Plan on about 4 flood days (1 to 8).\",\r\n"))
        )),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 406, description = "Neither JSON nor CSV is acceptable (`?format=` or `Accept`)", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/outlooks[?season=LABEL]`: every gauge's outlook of one season, or without a
/// season each gauge's default (next) outlook; kept serialized and compressed until any gauge
/// changes ([`crate::outlook_set`]).
pub async fn outlooks(
    State(state): State<Arc<AppState>>,
    headers: HeaderMap,
    query: Result<Query<OutlooksQuery>, QueryRejection>,
) -> Result<Response, AppError> {
    let query = query_of(query)?;
    let format = negotiate(query.format.as_deref(), &headers, JSON_OR_CSV)?;
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
    match format {
        Format::Csv => Ok(csv_response(
            tables::outlook_set_csv(&set.value).map_err(csv_failed)?,
        )),
        Format::Json => Ok(json_varying(&set)),
    }
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
