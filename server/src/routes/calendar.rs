//! The season's calendar endpoints: the outlook's day calendar in weeks as JSON or CSV, and
//! its days to watch as an iCalendar file. The outlook comes through the outlook endpoint's
//! own path ([`read::served_outlook`]: issued, kept, or computed off the runtime); shaping it
//! is linear in the season's days and done in the handler.

use std::sync::Arc;

use axum::Json;
use axum::extract::rejection::QueryRejection;
use axum::extract::{Path, Query, State};
use axum::http::{HeaderMap, HeaderValue, header};
use axum::response::{IntoResponse, Response};
use serde::Deserialize;

use super::read::{JSON_OR_CSV, gauge_entry, query_of, served_outlook};
use crate::api;
use crate::calendar::{self, CalendarError, ics};
use crate::error::AppError;
use crate::negotiate::{Format, csv_failed, csv_response, negotiate, vary_accept};
use crate::pipeline::PipelineError;
use crate::state::AppState;

/// Query of the calendar endpoints.
#[derive(Debug, Deserialize)]
pub struct CalendarQuery {
    season: Option<String>,
    format: Option<String>,
}

impl From<CalendarError> for AppError {
    fn from(err: CalendarError) -> Self {
        match err {
            CalendarError::NoDays { .. } => {
                AppError::Pipeline(PipelineError::MissingInput(err.to_string()))
            }
            CalendarError::BadField { .. } => AppError::Internal(err.to_string()),
        }
    }
}

/// The calendar of the asked (or default) season.
async fn season_calendar(
    state: &Arc<AppState>,
    id: &str,
    season: Option<&str>,
) -> Result<api::SeasonCalendar, AppError> {
    let outlook = served_outlook(state, id, season).await?;
    let entry = gauge_entry(state, id)?;
    Ok(calendar::season_calendar(&outlook.value, &entry.meta)?)
}

/// `response` with `Content-Disposition: attachment; filename="..."` for a downloaded file
/// (gauge ids and season labels are ASCII letters, digits and `-`).
fn with_attachment(
    mut response: Response,
    calendar: &api::SeasonCalendar,
    extension: &str,
) -> Response {
    let name = format!(
        "attachment; filename=\"tidetally-calendar-{}-{}.{extension}\"",
        calendar.gauge, calendar.season
    );
    if let Ok(value) = HeaderValue::from_str(&name) {
        response
            .headers_mut()
            .insert(header::CONTENT_DISPOSITION, value);
    }
    response
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}/calendar",
    operation_id = "getSeasonCalendar",
    tag = "outlooks",
    summary = "The season's calendar: each day's chance of a flood day in Monday-start weeks, with the days and weeks to watch (JSON, or CSV by `Accept: text/csv` or `?format=csv`)",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("season" = Option<String>, Query, description = "Season label `YEAR-NAME`, named for the year its first month falls in: `1995-DJF` is December 1995 to February 1996. Default: the earliest season served, as for the outlook.", example = "2026-DJF"), ("format" = Option<String>, Query, description = "`json` (default) or `csv` (RFC 4180, one row per day: `date,weekday,predicted_high_m,chance,watch`)", example = "json")),
    responses(
        (status = 200, description = "The calendar (as `text/csv` when asked)", content_type = "application/json", body = crate::api::SeasonCalendar),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 404, description = "No such gauge, or the record cannot support an outlook of that season", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The gauge has no model, or its outlook has no day calendar", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading, no model yet, or the on-demand queue is full", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}/calendar?season=LABEL&format=json|csv`.
pub async fn calendar(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    headers: HeaderMap,
    query: Result<Query<CalendarQuery>, QueryRejection>,
) -> Result<Response, AppError> {
    let query = query_of(query)?;
    let format = negotiate(query.format.as_deref(), &headers, JSON_OR_CSV)?;
    let calendar = season_calendar(&state, &id, query.season.as_deref()).await?;
    Ok(match format {
        Format::Csv => {
            let body = calendar::calendar_csv(&calendar).map_err(csv_failed)?;
            with_attachment(csv_response(body), &calendar, "csv")
        }
        Format::Json => {
            let mut response = Json(calendar).into_response();
            vary_accept(&mut response);
            response
        }
    })
}

/// Query of the iCalendar endpoint.
#[derive(Debug, Deserialize)]
pub struct IcsQuery {
    season: Option<String>,
}

#[utoipa::path(
    get,
    path = "/api/v1/gauges/{id}/calendar.ics",
    operation_id = "getSeasonCalendarIcs",
    tag = "outlooks",
    summary = "The season's days to watch as an iCalendar file (RFC 5545): one all-day event per day whose chance of a flood day meets the calendar's watch rule",
    params(("id" = String, Path, description = "Gauge id", example = "port-tamsin"), ("season" = Option<String>, Query, description = "Season label `YEAR-NAME`, named for the year its first month falls in: `1995-DJF` is December 1995 to February 1996. Default: the earliest season served, as for the outlook.", example = "2026-DJF")),
    responses(
        (status = 200, description = "The iCalendar file: CRLF lines folded at 75 octets, a stable UID per gauge and date, DTSTAMP the outlook's issue time; every event's description says it is a seasonal probability, not a warning", content_type = "text/calendar", body = String),
        (status = 304, description = "Not modified: If-None-Match matched the ETag"),
        (status = 400, description = "Bad query value", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 404, description = "No such gauge, or the record cannot support an outlook of that season", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 422, description = "The gauge has no model, or its outlook has no day calendar", content_type = "application/problem+json", body = crate::api::Problem),
        (status = 503, description = "Still loading, no model yet, or the on-demand queue is full", content_type = "application/problem+json", body = crate::api::Problem)
    )
)]
/// `GET /api/v1/gauges/{id}/calendar.ics?season=LABEL`.
pub async fn calendar_ics(
    State(state): State<Arc<AppState>>,
    Path(id): Path<String>,
    query: Result<Query<IcsQuery>, QueryRejection>,
) -> Result<Response, AppError> {
    let query = query_of(query)?;
    let calendar = season_calendar(&state, &id, query.season.as_deref()).await?;
    let body = ics::season_ics(&calendar)?;
    let response = ([(header::CONTENT_TYPE, ics::CONTENT_TYPE)], body).into_response();
    Ok(with_attachment(response, &calendar, "ics"))
}
