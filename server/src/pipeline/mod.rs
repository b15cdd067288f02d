//! The seam between the service and the statistical pipeline of `tidetally-model`: every
//! call the service makes into the model goes through here, and the results come back as
//! wire types (explicit conversions live here, nowhere else).
//!
//! One run: stored inputs -> prepared gauge (season table + predictors) -> fit of the target
//! season's name -> hindcast of that name (its skill and verdict) -> outlook of the target
//! season. The default target is the first season after the record (2026-DJF for the demo);
//! other seasons are issued on demand by [`outlook_for_season`].

mod convert;
mod prepare;
mod verification;

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use tidetally_model::drivers::EnsoCategory;
use tidetally_model::fit::{self, FitOptions, PreparedGauge};
use tidetally_model::hindcast::{self, HindcastOptions, HindcastSetup, SeasonHindcast};
use tidetally_model::outlook::{self as model_outlook, OutlookOptions};
use tidetally_model::season::Season;

use crate::api;
use crate::middleware::etag_of;
use crate::store::LevelsRecord;
use crate::upload::GaugeMeta;

pub use prepare::{TideAnalysis, prepare_gauge};
pub use verification::verify_issued;

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

/// The season table of a gauge with each season's driver predictors and ENSO category
/// joined (the tidal driver, a harmonic analysis of the whole record, is left out here). When
/// the driver series cannot be read, the counts are still served without predictors.
pub fn season_history(inputs: &GaugeInputs) -> Result<api::SeasonHistory, PipelineError> {
    let config = prepare::gauge_config(inputs)?;
    let rows = match prepare_gauge(inputs, TideAnalysis::Skip) {
        Ok(prepared) => return Ok(history_of(&prepared)),
        Err(why) => {
            tracing::warn!(gauge = %inputs.meta.id, reason = %why, "season history without drivers");
            let record = prepare::gauge_record(inputs, &config)?;
            record.seasons.rows.iter().map(season_row).collect()
        }
    };
    Ok(api::SeasonHistory {
        gauge: config.id.clone(),
        datum: config.datum.clone(),
        flood_threshold_m: config.flood_threshold_m,
        seasons: rows,
    })
}

/// The season history of a prepared gauge, predictors joined.
fn history_of(prepared: &PreparedGauge) -> api::SeasonHistory {
    api::SeasonHistory {
        gauge: prepared.config.id.clone(),
        datum: prepared.config.datum.clone(),
        flood_threshold_m: prepared.config.flood_threshold_m,
        seasons: prepared
            .seasons
            .iter()
            .zip(&prepared.season_predictors)
            .map(|(season, predictors)| season_row_with_drivers(season, predictors))
            .collect(),
    }
}

/// Model season row -> wire season row (counts only).
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
        enso_category: None,
    }
}

fn enso_category_name(category: EnsoCategory) -> &'static str {
    match category {
        EnsoCategory::LaNina => "la_nina",
        EnsoCategory::Neutral => "neutral",
        EnsoCategory::ElNino => "el_nino",
    }
}

/// A prepared season -> wire season row, with every known predictor.
fn season_row_with_drivers(
    season: &fit::SeasonData,
    predictors: &tidetally_model::drivers::SeasonPredictors,
) -> api::SeasonRow {
    let values: BTreeMap<String, f64> = season
        .drivers
        .iter()
        .filter_map(|(p, v)| match v {
            // The tide is left out so the history is the same whether or not the harmonic
            // analysis ran (it runs only for a fit).
            fit::DriverValue::Known(_) if *p == fit::Predictor::Tide => None,
            fit::DriverValue::Known(v) => Some((p.to_string(), *v)),
            fit::DriverValue::Missing(_) => None,
        })
        .collect();
    api::SeasonRow {
        season: season.season.label(),
        first_day: season.season.first_day().to_string(),
        last_day: season.season.last_day().to_string(),
        calendar_days: season.calendar_days,
        observed_days: season.observed_days,
        flood_days: season.flood_days,
        completeness: if season.calendar_days == 0 {
            0.0
        } else {
            f64::from(season.observed_days) / f64::from(season.calendar_days)
        },
        used_in_fit: season.incomplete.is_none(),
        predictors: values,
        enso_category: predictors
            .enso_own_season
            .map(|v| enso_category_name(EnsoCategory::of(v)).to_owned()),
    }
}

/// Version of a fit: this build's version and a hash of every input.
pub fn model_version(inputs: &GaugeInputs) -> String {
    let mut parts: Vec<String> = vec![etag_of(inputs.toml.as_bytes())];
    parts.extend(inputs.levels.iter().map(|l| l.content_hash.clone()));
    for series in [&inputs.enso, &inputs.rmm, &inputs.wind] {
        parts.push(series.as_deref().map_or_else(String::new, etag_of));
    }
    for forecast in &inputs.enso_forecasts {
        let json = serde_json::to_vec(forecast).expect("wire types always serialize");
        parts.push(etag_of(&json));
    }
    let digest = etag_of(parts.join("|").as_bytes());
    format!("{}+{}", env!("CARGO_PKG_VERSION"), digest.trim_matches('"'))
}

fn invalid(e: impl std::fmt::Display) -> PipelineError {
    PipelineError::Invalid(e.to_string())
}

/// The out-of-sample hindcast of one season name, with the gauge's own settings.
fn hindcast_of(
    prepared: &PreparedGauge,
    season_name: &str,
) -> Result<SeasonHindcast, PipelineError> {
    let config = &prepared.config;
    let predictors = prepared.requested_predictors();
    let setup = HindcastSetup {
        gauge_name: &config.name,
        seasons: &prepared.seasons,
        season_name,
        predictors: &predictors,
        family: fit::family_request(config.model.family),
        enso_timing: prepared.settings.enso_timing,
        exceed_days: &config.model.exceed_days,
    };
    hindcast::hindcast_season(&setup, &HindcastOptions::default()).map_err(invalid)
}

/// The outlook of `target` from a prepared gauge (its ENSO forecast picked for `target`),
/// with `skill` attached; and the driver values behind it.
fn issue_outlook(
    prepared: &mut PreparedGauge,
    inputs: &GaugeInputs,
    target: &Season,
    skill: api::Skill,
    issue: &convert::Issue<'_>,
) -> Result<(api::Outlook, serde_json::Value), PipelineError> {
    prepare::with_forecast_for(prepared, inputs, target)?;
    let model =
        fit::fit_gauge(prepared, target.spec().name(), &FitOptions::default()).map_err(invalid)?;
    let outlook = model_outlook::build(&model, prepared, target, &OutlookOptions::default())
        .map_err(invalid)?;
    Ok((
        convert::outlook(&outlook, skill, issue),
        convert::driver_inputs(&outlook),
    ))
}

/// Fits the gauge's model, scores it out of sample and issues the outlook of its default
/// target season (the first season after the record).
pub fn build_gauge(inputs: &GaugeInputs) -> Result<GaugeResults, PipelineError> {
    prepare::require_levels(inputs)?;
    build_from(inputs, prepare_gauge(inputs, TideAnalysis::AsConfigured)?)
}

/// As [`build_gauge`], with the season history from the same preparation (one read of the
/// record instead of two).
pub fn build_with_history(
    inputs: &GaugeInputs,
) -> (
    Result<api::SeasonHistory, PipelineError>,
    Result<GaugeResults, PipelineError>,
) {
    let prepared = prepare::require_levels(inputs)
        .and_then(|_| prepare_gauge(inputs, TideAnalysis::AsConfigured));
    match prepared {
        Ok(prepared) => (Ok(history_of(&prepared)), build_from(inputs, prepared)),
        Err(why) => (season_history(inputs), Err(why)),
    }
}

fn build_from(
    inputs: &GaugeInputs,
    mut prepared: PreparedGauge,
) -> Result<GaugeResults, PipelineError> {
    let target = prepared.default_target().ok_or_else(|| {
        PipelineError::MissingInput(format!(
            "gauge {} has no observed day in its level record, so there is no season to issue",
            inputs.meta.id
        ))
    })?;
    let season_name = target.spec().name().to_owned();
    let model_version = model_version(inputs);
    let fitted_at = crate::store::now_rfc3339();
    let issue = convert::Issue {
        issued_at: &fitted_at,
        model_version: &model_version,
    };
    let season_hindcast = hindcast_of(&prepared, &season_name)?;
    let skill = convert::skill(&season_hindcast);
    let (outlook, drivers) = issue_outlook(&mut prepared, inputs, &target, skill, &issue)?;
    let label = target.label();
    Ok(GaugeResults {
        hindcast: convert::hindcast(&inputs.meta.id, &season_hindcast, &model_version),
        outlooks: BTreeMap::from([(label.clone(), outlook)]),
        driver_inputs: BTreeMap::from([(label, drivers)]),
        model_version,
        fitted_at,
    })
}

/// The outlook of a season the fit did not issue (computed on demand, blocking): the same
/// inputs and model version as `results`; the skill of the season's name is reused from an
/// issued outlook of that name, else measured by its own hindcast.
pub fn outlook_for_season(
    inputs: &GaugeInputs,
    results: &GaugeResults,
    target: &Season,
) -> Result<api::Outlook, PipelineError> {
    let season_name = target.spec().name();
    let mut prepared = prepare_gauge(inputs, TideAnalysis::AsConfigured)?;
    let known = results
        .outlooks
        .values()
        .find(|o| o.skill.season_name == season_name)
        .map(|o| o.skill.clone());
    let skill = match known {
        Some(skill) => skill,
        None => match hindcast_of(&prepared, season_name) {
            Ok(h) => convert::skill(&h),
            Err(why) => convert::skill_not_measured(season_name, &why.to_string()),
        },
    };
    let issue = convert::Issue {
        issued_at: &results.fitted_at,
        model_version: &results.model_version,
    };
    issue_outlook(&mut prepared, inputs, target, skill, &issue).map(|(o, _)| o)
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
