//! Bodies of the write endpoints and their receipts.

use serde::{Deserialize, Serialize};

/// The answer to a successful upload.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UploadReceipt {
    /// What was stored, e.g. `gauge`, `levels`, `driver:enso`, `forecast:enso`.
    pub stored: String,
    /// The gauge it belongs to, if any.
    pub gauge: Option<String>,
    /// Data rows accepted (0 for documents such as a gauge TOML).
    pub rows: u64,
    /// Bytes received (after gzip decompression).
    pub bytes: u64,
    /// Strong ETag of the stored content.
    pub content_hash: String,
    /// What the service does next, in plain words.
    pub note: String,
}

/// An ENSO forecast for a target season: ensemble members per model, or category
/// probabilities (DEVELOPERS.md, "Driver series"). Extra top-level fields (e.g. a `note`)
/// are allowed and not kept.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct EnsoForecast {
    /// Target season label.
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
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EnsoForecastModel {
    /// Model name.
    pub name: String,
    /// Member anomalies.
    pub members: Vec<f64>,
}

/// ENSO category probabilities.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EnsoProbabilities {
    /// P(La Nina).
    pub la_nina: f64,
    /// P(neutral).
    pub neutral: f64,
    /// P(El Nino).
    pub el_nino: f64,
}
