//! Bodies of the write endpoints and their receipts.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

/// The answer to a successful upload.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct UploadReceipt {
    /// What was stored, e.g. `gauge`, `levels`, `driver:enso`, `forecast:enso`.
    pub stored: String,
    /// The gauge it belongs to, if any.
    #[schema(required = true)]
    pub gauge: Option<String>,
    /// Data rows accepted, count (0 for documents such as a gauge TOML).
    pub rows: u64,
    /// Bytes received (after gzip decompression), bytes.
    pub bytes: u64,
    /// Strong ETag of the stored content.
    pub content_hash: String,
    /// What the service does next, in plain words.
    pub note: String,
    /// The stored version's id (`null` when nothing new was stored).
    #[schema(required = true)]
    pub version: Option<i64>,
    /// Water levels: readings at times the record did not have (else `null`).
    #[schema(required = true)]
    pub added: Option<u64>,
    /// Water levels: readings that replaced a stored one with a different value (else `null`).
    #[schema(required = true)]
    pub changed: Option<u64>,
    /// Water levels: readings equal to the stored ones (else `null`).
    #[schema(required = true)]
    pub unchanged: Option<u64>,
}

/// One stored version of an input.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct InputVersion {
    /// Version id (increasing with time).
    pub version: i64,
    /// Upload time (RFC 3339, UTC).
    pub uploaded_at: String,
    /// Data rows, count (0 for documents).
    pub rows: u64,
    /// Strong ETag of the content.
    pub content_hash: String,
    /// Whether the serving model was fitted on it.
    pub serving: bool,
}

/// Every stored version of a gauge's inputs.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct VersionList {
    /// The gauge.
    #[schema(example = "port-tamsin")]
    pub gauge: String,
    /// Whether the gauge is retired (hidden from the lists).
    pub retired: bool,
    /// Versions of its TOML, oldest first.
    pub toml: Vec<InputVersion>,
    /// Versions of its water-level record, oldest first.
    pub levels: Vec<InputVersion>,
    /// The driver series its TOML chooses, with their versions.
    pub series: Vec<SeriesEntry>,
}

/// A named driver series.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SeriesEntry {
    /// `enso`, `rmm`, `wind` or `enso_forecast`.
    #[schema(value_type = crate::openapi::SeriesKind)]
    pub kind: String,
    /// Its name (a gauge TOML chooses it by file stem).
    pub name: String,
    /// The gauges whose TOML chooses it.
    pub used_by: Vec<String>,
    /// Its versions, oldest first (a gauge's next refit uses the newest).
    pub versions: Vec<InputVersion>,
}

/// Every stored driver series.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SeriesList {
    /// The series, by kind and name.
    pub series: Vec<SeriesEntry>,
}

/// An ENSO forecast for a target season: ensemble members per model, or category
/// probabilities (DEVELOPERS.md, "Driver series"). Extra top-level fields (e.g. a `note`)
/// are allowed and not kept.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct EnsoForecast {
    /// Target season label.
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// Issue date, `YYYY-MM-DD`.
    pub issued: String,
    /// Ensemble members per model (pooled with equal weight per model).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub models: Option<Vec<EnsoForecastModel>>,
    /// Category probabilities.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub probabilities: Option<EnsoProbabilities>,
}

/// One model's ensemble members (Nino-3.4 anomaly, deg C).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct EnsoForecastModel {
    /// Model name.
    pub name: String,
    /// Member anomalies, deg C.
    pub members: Vec<f64>,
}

/// ENSO category probabilities.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
#[serde(deny_unknown_fields)]
pub struct EnsoProbabilities {
    /// P(La Nina), 0 to 1.
    pub la_nina: f64,
    /// P(neutral), 0 to 1.
    pub neutral: f64,
    /// P(El Nino), 0 to 1.
    pub el_nino: f64,
}
