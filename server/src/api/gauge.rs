//! Gauges, the gauge list, the GeoJSON feature collection and the season history.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use super::OutlookSummary;

/// One gauge as the API shows it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Gauge {
    /// Identifier: lowercase letters, digits and `-`.
    #[schema(example = "port-tamsin")]
    pub id: String,
    /// Human name.
    pub name: String,
    /// Degrees north (WGS 84).
    pub latitude: f64,
    /// Degrees east (WGS 84).
    pub longitude: f64,
    /// The datum levels and the threshold are relative to.
    #[schema(example = "VBZ")]
    pub datum: String,
    /// Minor flood threshold, metres above `datum`.
    pub flood_threshold_m: f64,
    /// Local standard time of the gauge as an offset from UTC, hours and minutes, e.g. `-05:00`.
    pub utc_offset: String,
    /// Season names defined for this gauge, e.g. `["DJF", "MAM", "JJA", "SON"]`.
    #[schema(example = json!(["DJF", "MAM", "JJA", "SON"]))]
    pub seasons: Vec<String>,
    /// The stored water-level record, when one has been uploaded.
    #[schema(required = true)]
    pub record: Option<RecordSpan>,
    /// Whether a fitted model is serving outlooks for this gauge.
    pub model_ready: bool,
    /// Why no model is serving, when `model_ready` is false.
    #[schema(required = true)]
    pub model_status: Option<String>,
}

/// The span of a stored water-level record.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct RecordSpan {
    /// First reading time (ISO 8601, as uploaded).
    pub first: String,
    /// Last reading time (ISO 8601, as uploaded).
    pub last: String,
    /// Number of data rows, count (including rows with a missing level).
    pub readings: u64,
    /// When the record was uploaded (RFC 3339, UTC).
    pub uploaded_at: String,
}

/// `GET /api/v1/gauges`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct GaugeList {
    /// All gauges, ordered by id.
    pub gauges: Vec<Gauge>,
}

/// `GET /api/v1/gauges.geojson`: an RFC 7946 FeatureCollection of gauge points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct FeatureCollection {
    /// Always `FeatureCollection`.
    #[serde(rename = "type")]
    #[schema(example = "FeatureCollection")]
    pub kind: String,
    /// One feature per gauge.
    pub features: Vec<Feature>,
}

/// One gauge as a GeoJSON Feature.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Feature {
    /// Always `Feature`.
    #[serde(rename = "type")]
    #[schema(example = "Feature")]
    pub kind: String,
    /// The gauge id.
    pub id: String,
    /// The gauge position.
    pub geometry: Point,
    /// Gauge attributes.
    pub properties: GaugeProperties,
}

/// A GeoJSON Point; `coordinates` are `[longitude, latitude]` (RFC 7946 section 3.1.1).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Point {
    /// Always `Point`.
    #[serde(rename = "type")]
    #[schema(example = "Point")]
    pub kind: String,
    /// `[longitude, latitude]` in degrees.
    pub coordinates: [f64; 2],
}

/// The properties of a gauge feature.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct GaugeProperties {
    /// The gauge id.
    pub id: String,
    /// Human name.
    pub name: String,
    /// Datum of the threshold.
    pub datum: String,
    /// Minor flood threshold, metres above `datum`.
    pub flood_threshold_m: f64,
    /// Whether outlooks are being served.
    pub model_ready: bool,
    /// Path of the gauge's resource in this API.
    pub href: String,
    /// The headline numbers of the gauge's next (default) outlook, the one
    /// `GET /api/v1/gauges/{id}/outlook` serves without `?season=`; null while the gauge has
    /// no outlook yet (no model serving).
    #[schema(required = true)]
    pub next_outlook: Option<OutlookSummary>,
}

impl FeatureCollection {
    /// The collection of the given features, in order.
    pub fn of(features: Vec<Feature>) -> Self {
        Self {
            kind: "FeatureCollection".into(),
            features,
        }
    }
}

impl Feature {
    /// A gauge as a point feature, `[lon, lat]` order, with its next outlook's summary.
    pub fn of(gauge: &Gauge, next_outlook: Option<OutlookSummary>) -> Self {
        Self {
            kind: "Feature".into(),
            id: gauge.id.clone(),
            geometry: Point {
                kind: "Point".into(),
                coordinates: [gauge.longitude, gauge.latitude],
            },
            properties: GaugeProperties {
                id: gauge.id.clone(),
                name: gauge.name.clone(),
                datum: gauge.datum.clone(),
                flood_threshold_m: gauge.flood_threshold_m,
                model_ready: gauge.model_ready,
                href: format!("/api/v1/gauges/{}", gauge.id),
                next_outlook,
            },
        }
    }
}

/// `GET /api/v1/gauges/{id}/seasons`: the gauge's season table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SeasonHistory {
    /// The gauge id.
    #[schema(example = "port-tamsin")]
    pub gauge: String,
    /// Datum of the threshold.
    pub datum: String,
    /// Minor flood threshold, metres above `datum`.
    pub flood_threshold_m: f64,
    /// One row per season, oldest first.
    pub seasons: Vec<SeasonRow>,
}

/// One season of the season table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SeasonRow {
    /// Season label, e.g. `2026-DJF` (December 2026 to February 2027: a season is named for
    /// the year its first month falls in).
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// First calendar day (`YYYY-MM-DD`).
    pub first_day: String,
    /// Last calendar day (`YYYY-MM-DD`).
    pub last_day: String,
    /// Calendar days in the season, days.
    pub calendar_days: u32,
    /// Days with enough readings to count (the exposure), days.
    pub observed_days: u32,
    /// Observed days whose highest level reached the threshold, days.
    pub flood_days: u32,
    /// `observed_days / calendar_days`, a fraction from 0 to 1.
    pub completeness: f64,
    /// Whether the season is complete enough to enter the fit.
    pub used_in_fit: bool,
    /// Seasonal predictor values by name (e.g. `enso`, `mjo`, `wind`, `sea_level`, `tide`);
    /// a missing value is absent. Each in its driver's unit (an outlook's `drivers[].unit`).
    pub predictors: BTreeMap<String, f64>,
    /// ENSO category of the season's own months (`la_nina`, `neutral`, `el_nino`), when the
    /// ENSO index covers them.
    #[schema(value_type = Option<crate::openapi::EnsoCategory>, required = true)]
    pub enso_category: Option<String>,
}
