//! The seam between the service and the statistical pipeline of `tidetally-model`: every
//! call the service makes into the model goes through here, and the results come back as
//! wire types (explicit conversions live here, nowhere else).
//!
//! Steps whose model code is not merged yet answer [`PipelineError::NotAvailable`], which the
//! HTTP edge serves as `503 /problems/not-available`.

use std::collections::BTreeMap;
use std::path::Path;

use serde::{Deserialize, Serialize};

use tidetally_model::gauge::{self, GaugeConfig};
use tidetally_model::ingest;

use crate::api;
use crate::store::LevelsRecord;
use crate::upload::GaugeMeta;

/// Why a pipeline step gave no result.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PipelineError {
    /// This step is not part of this build of the service yet.
    #[error("the {0} step is not available in this build of the service")]
    NotAvailable(&'static str),
    /// An input the step needs has not been uploaded.
    #[error("{0}")]
    MissingInput(String),
    /// The inputs are unusable (the model's own message, naming file, line and field).
    #[error("{0}")]
    Invalid(String),
    /// The fitted model serves no outlook for the asked season.
    #[error("gauge {gauge} has no outlook for season {season}; outlooks are served for: {served}")]
    SeasonNotServed {
        /// The gauge.
        gauge: String,
        /// The season asked for.
        season: String,
        /// The seasons served, comma separated.
        served: String,
    },
}

/// Everything stored for one gauge, read back for a pipeline run.
#[derive(Debug, Clone)]
pub struct GaugeInputs {
    /// The checked gauge description.
    pub meta: GaugeMeta,
    /// The gauge TOML text.
    pub toml: String,
    /// The water-level record.
    pub levels: Option<LevelsRecord>,
    /// Monthly ENSO CSV.
    pub enso: Option<Vec<u8>>,
    /// Daily RMM CSV.
    pub rmm: Option<Vec<u8>>,
    /// The gauge's wind CSV.
    pub wind: Option<Vec<u8>>,
    /// Stored ENSO forecasts, by target season.
    pub enso_forecasts: Vec<api::EnsoForecast>,
}

/// A gauge's fitted results as served: stored as JSON in the store after each refit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GaugeResults {
    /// Version of the fit (model code version and a hash of the inputs).
    pub model_version: String,
    /// When it was fitted (RFC 3339).
    pub fitted_at: String,
    /// Out-of-sample skill.
    pub hindcast: api::Hindcast,
    /// Outlooks for the seasons the model can issue, by season label.
    pub outlooks: BTreeMap<String, api::Outlook>,
    /// The driver values behind each outlook, by season label.
    pub driver_inputs: BTreeMap<String, serde_json::Value>,
}

fn require_levels(inputs: &GaugeInputs) -> Result<&LevelsRecord, PipelineError> {
    inputs.levels.as_ref().ok_or_else(|| {
        PipelineError::MissingInput(format!(
            "gauge {} has no water levels; PUT /api/v1/gauges/{}/levels first",
            inputs.meta.id, inputs.meta.id
        ))
    })
}

/// The model's validated gauge description, from the stored TOML (its data paths are not
/// used: the data come from the store).
fn gauge_config(inputs: &GaugeInputs) -> Result<GaugeConfig, PipelineError> {
    let source = format!("{}.toml", inputs.meta.id);
    GaugeConfig::from_toml_str(&inputs.toml, &source, Path::new(""))
        .map_err(|e| PipelineError::Invalid(e.to_string()))
}

/// The season table of a gauge (counts of flood days and observed days per season; the
/// driver predictors join it once the drivers step is wired).
pub fn season_history(inputs: &GaugeInputs) -> Result<api::SeasonHistory, PipelineError> {
    let levels = require_levels(inputs)?;
    let config = gauge_config(inputs)?;
    let name = format!("water levels of gauge {}", inputs.meta.id);
    let summary = ingest::summarize(levels.csv.as_slice(), &config.ingest_options(), &name)
        .map_err(|e| PipelineError::Invalid(e.to_string()))?;
    let record = gauge::record_from_summary(&config, summary, &name)
        .map_err(|e| PipelineError::Invalid(e.to_string()))?;
    Ok(api::SeasonHistory {
        gauge: config.id.clone(),
        datum: config.datum.clone(),
        flood_threshold_m: config.flood_threshold_m,
        seasons: record.seasons.rows.iter().map(season_row).collect(),
    })
}

/// Model season row -> wire season row.
fn season_row(row: &tidetally_model::season::SeasonRow) -> api::SeasonRow {
    api::SeasonRow {
        season: row.label.clone(),
        first_day: row.season.first_day().to_string(),
        last_day: row.season.last_day().to_string(),
        calendar_days: row.calendar_days,
        observed_days: row.observed_days,
        flood_days: row.flood_days,
        completeness: row.completeness,
        used_in_fit: row.included,
        predictors: BTreeMap::new(),
    }
}

/// Fits the gauge's model, scores it out of sample and issues its outlooks.
pub fn build_gauge(inputs: &GaugeInputs) -> Result<GaugeResults, PipelineError> {
    require_levels(inputs)?;
    Err(PipelineError::NotAvailable("model fit"))
}

/// How an issued outlook fared against the observed season, once it is in the season table.
pub fn verify_issued(
    _outlook: &api::Outlook,
    _observed: &api::SeasonRow,
) -> Result<api::SeasonVerification, PipelineError> {
    Err(PipelineError::NotAvailable("verification"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_gauge_without_levels_says_what_to_upload() {
        let meta = crate::upload::parse_gauge_toml(crate::upload::tests_support::EXAMPLE)
            .expect("example parses");
        let inputs = GaugeInputs {
            meta,
            toml: String::new(),
            levels: None,
            enso: None,
            rmm: None,
            wind: None,
            enso_forecasts: vec![],
        };
        let err = build_gauge(&inputs).unwrap_err();
        assert!(
            err.to_string()
                .contains("PUT /api/v1/gauges/port-alder/levels"),
            "{err}"
        );
    }
}
