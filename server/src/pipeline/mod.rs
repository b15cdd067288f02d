//! The seam between the service and the statistical pipeline of `tidetally-model`: every
//! call the service makes into the model goes through here, and the results come back as
//! wire types (explicit conversions live here, nowhere else).
//!
//! One run: stored inputs -> prepared gauge (season table + predictors) -> fit of the target
//! season's name -> hindcast of that name (its skill and verdict) -> outlook of the target
//! season. The default target is the first season after the record (2026-DJF for the demo);
//! other seasons are issued on demand by [`outlook_for_season`].

mod convert;
mod plan_on;
mod prepare;
mod verification;

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use tidetally_model::drivers::EnsoCategory;
use tidetally_model::fit::{self, GaugeToml, PreparedGauge, TideAnalysis};
use tidetally_model::outlook::{self as model_outlook, IssueOptions};
use tidetally_model::season::Season;

use crate::api;
use crate::etag::etag_of;
use crate::store::LevelsRecord;
use crate::upload::GaugeMeta;

pub use convert::IssueStamp;
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
    /// The stored gauge TOML, validated once when it was read from the store.
    pub toml: GaugeToml,
    /// The water-level record.
    pub levels: Option<LevelsRecord>,
    /// Monthly ENSO CSV.
    pub enso: Option<Vec<u8>>,
    /// Daily RMM CSV.
    pub rmm: Option<Vec<u8>>,
    /// The gauge's wind CSV.
    pub wind: Option<Vec<u8>>,
    /// Stored ENSO forecasts (one per target season).
    pub enso_forecasts: Vec<StoredForecast>,
}

/// A stored ENSO forecast: its target season's label and its JSON body as uploaded (the
/// model parses it, free-text `note` included, when a run uses it).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StoredForecast {
    /// The target season's label, e.g. `2026-DJF`.
    pub season: String,
    /// The JSON body as uploaded.
    pub json: Vec<u8>,
}

/// A gauge's fitted results as served: stored as JSON in the store after each refit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GaugeResults {
    /// The shape these results were made in ([`RESULTS_FORMAT`]; 0 for results stored before
    /// the number was kept). Stored results of another shape are refitted, not served.
    #[serde(default)]
    pub results_format: u32,
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

/// The shape of [`GaugeResults`] and the outlooks in it: raise it whenever a served field is
/// added or its meaning changes, so a store written by an older build is refitted at start-up
/// instead of serving results without the new fields.
pub const RESULTS_FORMAT: u32 = 3;

/// The season table of a gauge with each season's driver predictors and ENSO category
/// joined (the tidal driver, a harmonic analysis of the whole record, is left out here). When
/// the driver series cannot be read, the counts are still served without predictors.
pub fn season_history(inputs: &GaugeInputs) -> Result<api::SeasonHistory, PipelineError> {
    let sources = prepare::sources(inputs, None)?;
    match fit::prepare(&sources, TideAnalysis::Skip) {
        Ok(prepared) => Ok(history_of(&prepared)),
        Err(why) => {
            tracing::warn!(gauge = %inputs.meta.id, reason = %why, "season history without drivers");
            let recorded = fit::record_gauge(&sources).map_err(invalid)?;
            Ok(api::SeasonHistory {
                gauge: recorded.config.id.clone(),
                datum: recorded.config.datum.clone(),
                flood_threshold_m: recorded.config.flood_threshold_m,
                seasons: recorded
                    .record
                    .seasons
                    .rows
                    .iter()
                    .map(season_row)
                    .collect(),
            })
        }
    }
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
    let mut parts: Vec<String> = vec![etag_of(inputs.toml.source().text.as_bytes())];
    parts.extend(inputs.levels.iter().map(|l| l.content_hash.clone()));
    for series in [&inputs.enso, &inputs.rmm, &inputs.wind] {
        parts.push(series.as_deref().map_or_else(String::new, etag_of));
    }
    for forecast in &inputs.enso_forecasts {
        parts.push(etag_of(&forecast.json));
    }
    let digest = etag_of(parts.join("|").as_bytes());
    format!("{}+{}", env!("CARGO_PKG_VERSION"), digest.trim_matches('"'))
}

fn invalid(e: impl std::fmt::Display) -> PipelineError {
    PipelineError::Invalid(e.to_string())
}

/// An outlook as served, with its hindcast and the driver values behind it.
#[derive(Debug, Clone)]
pub struct WireOutlook {
    /// The outlook.
    pub outlook: api::Outlook,
    /// The hindcast of its season name (both engines).
    pub hindcast: Option<api::Hindcast>,
    /// The driver values behind it, for the record of issued outlooks.
    pub driver_inputs: serde_json::Value,
}

/// Issues the outlook of `target` from a prepared gauge (holding the ENSO forecast for
/// `target`) through the model's one path ([`model_outlook::issue()`]), converted to wire
/// types. The command line and the service both come here.
pub fn issue_outlook(
    prepared: &PreparedGauge,
    target: &Season,
    options: &IssueOptions,
    stamp: &convert::IssueStamp<'_>,
) -> Result<WireOutlook, PipelineError> {
    let issued = model_outlook::issue(prepared, target, options).map_err(invalid)?;
    let lead = issued.outlook.engine;
    let skill = match &issued.at_issue {
        Some(h) => convert::engine_skill(h, lead, issued.perfect_enso.as_ref()),
        None => convert::skill_not_measured(
            target.spec().name(),
            "no season of this name could be hindcast",
        ),
    };
    let hindcast = issued.at_issue.as_ref().map(|h| {
        convert::hindcast(
            &prepared.config.id,
            h,
            issued.perfect_enso.as_ref(),
            lead,
            stamp.model_version,
        )
    });
    let mut outlook = convert::outlook(&issued.outlook, skill, stamp);
    convert::date_outlook(&mut outlook, target, prepared.last_observed_day);
    Ok(WireOutlook {
        driver_inputs: convert::driver_inputs(&issued.outlook),
        outlook,
        hindcast,
    })
}

/// Fits the gauge's model, scores it out of sample and issues the outlook of its default
/// target season (the first season after the record).
pub fn build_gauge(inputs: &GaugeInputs) -> Result<GaugeResults, PipelineError> {
    build_from(inputs, prepare_stored(inputs, None)?)
}

/// The gauge prepared from its stored inputs (with the stored ENSO forecast for `target`).
fn prepare_stored(
    inputs: &GaugeInputs,
    target: Option<&Season>,
) -> Result<PreparedGauge, PipelineError> {
    let sources = prepare::sources(inputs, target)?;
    fit::prepare(&sources, TideAnalysis::AsConfigured).map_err(invalid)
}

/// As [`build_gauge`], with the season history from the same preparation (one read of the
/// record instead of two).
pub fn build_with_history(
    inputs: &GaugeInputs,
) -> (
    Result<api::SeasonHistory, PipelineError>,
    Result<GaugeResults, PipelineError>,
) {
    match prepare_stored(inputs, None) {
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
    let issue = convert::IssueStamp {
        issued_at: &fitted_at,
        model_version: &model_version,
    };
    prepared
        .set_enso_forecast(prepare::forecast_for(inputs, &target).as_ref())
        .map_err(invalid)?;
    let issued = issue_outlook(&prepared, &target, &IssueOptions::default(), &issue)?;
    let hindcast = issued.hindcast.ok_or_else(|| {
        PipelineError::Invalid(format!(
            "no {season_name} season of gauge {} could be hindcast out of sample",
            inputs.meta.id
        ))
    })?;
    let (outlook, drivers) = (issued.outlook, issued.driver_inputs);
    let label = target.label();
    Ok(GaugeResults {
        results_format: RESULTS_FORMAT,
        hindcast,
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
    let prepared = prepare_stored(inputs, Some(target))?;
    let issue = convert::IssueStamp {
        issued_at: &results.fitted_at,
        model_version: &results.model_version,
    };
    issue_outlook(&prepared, target, &IssueOptions::default(), &issue).map(|w| w.outlook)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_gauge_without_levels_says_what_to_upload() {
        let text = tidetally_test_support::fixtures::gauge_toml("port-alder");
        let source = tidetally_model::fit::TextSource {
            name: "port-alder.toml".into(),
            text,
        };
        let toml = GaugeToml::parse(source, std::path::Path::new("")).expect("example parses");
        let inputs = GaugeInputs {
            meta: crate::upload::GaugeMeta::of(toml.config()),
            toml,
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
