//! `tidetally fit --gauge FILE`: the gauge's count model of each season name, as JSON.

use serde::Serialize;
use tidetally_model::fit::{self, FitOptions, GaugeModel, LeftOut};

/// The JSON printed by `fit`.
#[derive(Debug, Serialize)]
struct FitReport<'a> {
    gauge: &'a str,
    flood_threshold_m: f64,
    datum: &'a str,
    /// The predictors the gauge's TOML asks for.
    predictors: Vec<&'static str>,
    /// One fitted model per season name.
    models: Vec<GaugeModel>,
    /// Season names whose model could not be fitted, and why.
    not_fitted: Vec<NotFitted>,
    notes: &'a [String],
}

#[derive(Debug, Serialize)]
struct NotFitted {
    season_name: String,
    error: String,
    left_out: Vec<LeftOut>,
}

pub(super) fn run(args: super::FitArgs) -> anyhow::Result<()> {
    let prepared = super::prepare_gauge(&args.gauge)?;
    let config = &prepared.config;
    let mut models = Vec::new();
    let mut not_fitted = Vec::new();
    for spec in &config.seasons.specs {
        let options = FitOptions::default();
        match fit::fit_gauge(&prepared, spec.name(), &options) {
            Ok(model) => models.push(model),
            Err(e) => not_fitted.push(NotFitted {
                season_name: spec.name().to_owned(),
                error: e.to_string(),
                left_out: fit::gauge_design(&prepared, spec.name(), &options).left_out,
            }),
        }
    }
    if models.is_empty() {
        let reasons: Vec<String> = not_fitted.iter().map(|n| n.error.clone()).collect();
        anyhow::bail!("no season could be fitted: {}", reasons.join("; "));
    }
    super::print_json(&FitReport {
        gauge: &config.id,
        flood_threshold_m: config.flood_threshold_m,
        datum: &config.datum,
        predictors: prepared
            .requested_predictors()
            .iter()
            .map(|p| p.as_str())
            .collect(),
        models,
        not_fitted,
        notes: &prepared.notes,
    })
}
