//! Stored inputs -> the model's prepared gauge: the season table from the stored level file,
//! the driver series parsed from their stored bytes, the sea-level trend, the tidal driver and
//! the ENSO forecast for the target season. The model's own `fit::prepare` does the same from
//! files named in the TOML; here the bytes come from the store.

use std::path::Path;

use tidetally_model::drivers::{EnsoForecast, EnsoSeries, RmmSeries, WindSeries};
use tidetally_model::fit::{self, GaugeDrivers, PreparedGauge};
use tidetally_model::gauge::{self, GaugeConfig, GaugeRecord};
use tidetally_model::ingest;
use tidetally_model::season::Season;

use super::{GaugeInputs, PipelineError};
use crate::store::LevelsRecord;

/// Whether the tidal driver (a harmonic analysis of the whole record) is computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TideAnalysis {
    /// Computed when the gauge's model uses the tide.
    AsConfigured,
    /// Left out (the season history does without it).
    Skip,
}

fn invalid(e: impl std::fmt::Display) -> PipelineError {
    PipelineError::Invalid(e.to_string())
}

pub(super) fn require_levels(inputs: &GaugeInputs) -> Result<&LevelsRecord, PipelineError> {
    inputs.levels.as_ref().ok_or_else(|| {
        PipelineError::MissingInput(format!(
            "gauge {} has no water levels; PUT /api/v1/gauges/{}/levels first",
            inputs.meta.id, inputs.meta.id
        ))
    })
}

/// The model's validated gauge description, from the stored TOML (its data paths are not
/// used: the data come from the store).
pub(super) fn gauge_config(inputs: &GaugeInputs) -> Result<GaugeConfig, PipelineError> {
    let source = format!("{}.toml", inputs.meta.id);
    GaugeConfig::from_toml_str(&inputs.toml, &source, Path::new("")).map_err(invalid)
}

fn levels_name(inputs: &GaugeInputs) -> String {
    format!("water levels of gauge {}", inputs.meta.id)
}

/// The gauge's record (daily maxima, season table) from its stored level file.
pub(super) fn gauge_record(
    inputs: &GaugeInputs,
    config: &GaugeConfig,
) -> Result<GaugeRecord, PipelineError> {
    let levels = require_levels(inputs)?;
    let name = levels_name(inputs);
    let summary = ingest::summarize(levels.csv.as_slice(), &config.ingest_options(), &name)
        .map_err(invalid)?;
    gauge::record_from_summary(config, summary, &name).map_err(invalid)
}

/// Prepares the gauge from its stored inputs. The ENSO forecast is left unset: pick it for a
/// target season with `with_forecast_for`.
pub fn prepare_gauge(
    inputs: &GaugeInputs,
    tide: TideAnalysis,
) -> Result<PreparedGauge, PipelineError> {
    let config = gauge_config(inputs)?;
    let record = gauge_record(inputs, &config)?;
    let drivers = gauge_drivers(inputs, &config, &record, tide)?;
    fit::prepare_from(config, &record, drivers).map_err(invalid)
}

fn gauge_drivers(
    inputs: &GaugeInputs,
    config: &GaugeConfig,
    record: &GaugeRecord,
    tide: TideAnalysis,
) -> Result<GaugeDrivers, PipelineError> {
    let id = &inputs.meta.id;
    let enso = match &inputs.enso {
        Some(csv) => Some(EnsoSeries::parse(csv.as_slice(), "stored ENSO index").map_err(invalid)?),
        None => None,
    };
    let rmm = match &inputs.rmm {
        Some(csv) => Some(RmmSeries::parse(csv.as_slice(), "stored RMM index").map_err(invalid)?),
        None => None,
    };
    let wind = match &inputs.wind {
        Some(csv) => Some(
            WindSeries::parse(
                csv.as_slice(),
                &format!("stored wind of gauge {id}"),
                config.utc_offset,
            )
            .map_err(invalid)?,
        ),
        None => None,
    };
    let sea_level = fit::sea_level_from_record(record);
    let uses_tide = config.model.predictors.contains(&gauge::Predictor::Tide);
    let tide = if uses_tide && tide == TideAnalysis::AsConfigured {
        let levels = require_levels(inputs)?;
        let series = ingest::read_levels(
            levels.csv.as_slice(),
            &config.ingest_options(),
            &levels_name(inputs),
        )
        .map_err(invalid)?;
        Some(fit::tidal_driver(config, &series.times, &series.levels_m).map_err(invalid)?)
    } else {
        None
    };
    Ok(GaugeDrivers {
        enso,
        rmm,
        wind,
        sea_level,
        enso_forecast: None,
        tide,
        notes: Vec::new(),
    })
}

/// Sets the prepared gauge's ENSO forecast to the newest stored one for `target` (none when
/// no stored forecast is for that season).
pub fn with_forecast_for(
    prepared: &mut PreparedGauge,
    inputs: &GaugeInputs,
    target: &Season,
) -> Result<(), PipelineError> {
    let label = target.label();
    let newest = inputs
        .enso_forecasts
        .iter()
        .filter(|f| f.season == label)
        .max_by(|a, b| a.issued.cmp(&b.issued));
    prepared.drivers.enso_forecast = match newest {
        Some(forecast) => {
            let json = serde_json::to_vec(forecast).expect("wire types always serialize");
            Some(
                EnsoForecast::parse(
                    json.as_slice(),
                    &format!("stored ENSO forecast for {label}"),
                    &prepared.config.seasons.specs,
                )
                .map_err(invalid)?,
            )
        }
        None => None,
    };
    Ok(())
}
