//! The seasonal outlook: the predictive distribution of a target season's flood days at one
//! gauge, read against two references, with each driver's expected effect, a plain
//! explanation and the cautions every outlook carries.
//!
//! The distribution is an equal-weight mixture over driver scenarios and parameter draws
//! (default [`DEFAULT_DRAWS`] components): draw `d` pairs scenario `d` (ENSO from the
//! forecast, MJO and wind from one resampled past season, the sea-level trend extrapolated
//! with its uncertainty, the tidal driver as predicted) with coefficients drawn from the fit's
//! estimated normal distribution (and NB2 theta drawn log-normally). Each component is
//! truncated at the season's length and renormalised. Randomness comes from one seeded
//! `ChaCha8Rng`, one stream per distribution, so an outlook is reproducible from its seed.
//!
//! Submodules: [`scenarios`] (the target season's driver scenarios), [`mixture`] (the
//! equal-weight mixture of truncated count pmfs), [`predictive`] (scenario x draw mixture of
//! a model), [`references`]
//! (1991-2020 climatology and trend-only models), [`explain`] (driver effects in words) and
//! [`cautions`](mod@cautions).

pub mod cautions;
pub mod engine;
pub mod explain;
pub mod issue;

pub mod mixture;
pub mod predictive;
pub mod references;
pub mod scenarios;

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use serde::Serialize;

pub use cautions::{CautionContext, cautions};
pub use engine::{
    DayChance, Engine, EngineChoice, EngineRequest, EngineSummary, WaterForecast, choose, lead,
};
pub use issue::{IssueOptions, Issued, issue};

pub use explain::DriverEffect;
pub use predictive::{DriverScenarios, predictive_pmf};
pub use references::{OutlookReferences, Reference, ReferenceKind};

use crate::fit::{FitPeriod, GaugeModel, Predictor, PreparedGauge};
use crate::season::Season;
use crate::verify::TercileEdges;

/// Components in an outlook's mixture unless asked otherwise.
pub const DEFAULT_DRAWS: usize = 2000;

/// Seed of an outlook's random streams unless asked otherwise.
pub const DEFAULT_SEED: u64 = 20_261_201;

/// `P(N >= days)`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Exceedance {
    /// The number of days `k`.
    pub days: u32,
    /// `P(N >= k)`.
    pub probability: f64,
}

/// Why an outlook could not be built.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum OutlookError {
    /// The model uses a predictor for which the target season has no scenario.
    #[error("{season_name} model uses {predictor}, but the target season has no value for it")]
    NoScenario {
        /// The predictor.
        predictor: Predictor,
        /// The model's season name.
        season_name: String,
    },
    /// Most parameter draws gave no usable mean (a degenerate fit).
    #[error("only {used} of {drawn} parameter draws gave a usable expected count")]
    DegenerateDraws {
        /// Draws used.
        used: usize,
        /// Draws made.
        drawn: usize,
    },
    /// A reference distribution that cannot give tercile edges.
    #[error("tercile edges of the {reference}: {source}")]
    Terciles {
        /// The reference's name.
        reference: String,
        /// The verification module's error.
        #[source]
        source: crate::verify::VerifyError,
    },
    /// Scenario sampling failed (e.g. a forecast category with no past season).
    #[error("driver scenarios: {0}")]
    Scenario(#[source] crate::drivers::ScenarioError),
    /// The model uses concurrent ENSO but there is no forecast for the target season.
    #[error(
        "the model uses the season's own ENSO, so the outlook for {target} needs an ENSO \
         forecast for {target} ({})",
        available.as_ref().map_or_else(
            || "the gauge names no forecast file".to_owned(),
            |a| format!("the gauge's forecast is for {a}")
        )
    )]
    NoEnsoForecast {
        /// The target's label.
        target: String,
        /// The season of the forecast the gauge has, if any.
        available: Option<String>,
    },
    /// The model uses ENSO but the gauge names no ENSO series.
    #[error("the model uses ENSO but the gauge names no ENSO index file")]
    NoEnsoSeries,
    /// No month of the preceding season's ENSO is known.
    #[error("no month of the season before {target} is in the ENSO index yet")]
    NoPrecedingEnso {
        /// The target's label.
        target: String,
    },
    /// A model could not be fitted.
    #[error(transparent)]
    Fit(#[from] crate::fit::FitError),
    /// The target season's name differs from the model's.
    #[error("the target season {target} is not a {season_name} season")]
    SeasonMismatch {
        /// The target's label.
        target: String,
        /// The model's season name.
        season_name: String,
    },
}

/// Options of an outlook.
#[derive(Debug, Clone, PartialEq)]
pub struct OutlookOptions {
    /// Mixture components (scenario x parameter draw pairs); 0 = no parameter uncertainty.
    pub draws: usize,
    /// Seed of the random streams.
    pub seed: u64,
    /// The k of each `P(N >= k)`; empty = the gauge's `exceed_days` (in [`build`]).
    pub exceed_days: Vec<u32>,
    /// Resample MJO and wind only from past seasons of the scenario's ENSO category.
    pub condition_on_enso: bool,
}

impl Default for OutlookOptions {
    fn default() -> Self {
        Self {
            draws: DEFAULT_DRAWS,
            seed: DEFAULT_SEED,
            exceed_days: Vec::new(),
            condition_on_enso: false,
        }
    }
}

/// What an outlook says about its gauge in the cautions.
#[derive(Debug, Clone, PartialEq)]
pub struct GaugeFacts {
    /// The gauge's id.
    pub id: String,
    /// The gauge's name.
    pub name: String,
    /// Flood threshold, metres above `datum`.
    pub threshold_m: f64,
    /// The datum.
    pub datum: String,
    /// Whether the threshold was derived rather than set locally.
    pub threshold_derived: bool,
}

/// The same season one year before the target, as observed.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LastSeason {
    /// Its label.
    pub season: String,
    /// Flood days observed.
    pub flood_days: u32,
    /// Days observed.
    pub observed_days: u32,
    /// Days in the season.
    pub calendar_days: u32,
}

/// Tercile probabilities of the outlook against one reference.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TercileOutlook {
    /// Which reference.
    pub reference: ReferenceKind,
    /// Its name, e.g. `1991-2020 climatology`.
    pub name: String,
    /// What the reference distribution is.
    pub description: String,
    /// The edge counts `[e1, e2]` of the reference's terciles.
    pub edges: [u32; 2],
    /// The share of the reference's mass at each edge count counted below the boundary (the
    /// tie rule that gives the reference exactly a third in each category).
    pub edge_lower_shares: [f64; 2],
    /// The reference's mean count.
    pub reference_mean: f64,
    /// The reference's own 10th and 90th percentiles (its 80% range), days.
    pub reference_range: [u32; 2],
    /// Whether the climatology fell back to the whole record (the 1991-2020 period had too
    /// few usable seasons); always `false` for the trend-only reference.
    pub fallback: bool,
    /// P(below normal).
    pub below: f64,
    /// P(near normal).
    pub near: f64,
    /// P(above normal).
    pub above: f64,
}

/// A seasonal outlook of flood days at one gauge.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outlook {
    /// The gauge's id.
    pub gauge_id: String,
    /// The target season's label.
    pub season: String,
    /// Days in the target season (the pmf's last index).
    pub season_days: u32,
    /// The model's family.
    pub family: crate::glm::Family,
    /// The seasons the model was fitted on.
    pub fit_period: FitPeriod,
    /// Mixture components.
    pub draws: usize,
    /// Seed of the random streams.
    pub seed: u64,
    /// Probability of each count of flood days, index = days, over `0..=season_days`.
    pub pmf: Vec<f64>,
    /// Expected flood days.
    pub mean: f64,
    /// Median flood days.
    pub median: u32,
    /// 10th percentile.
    pub p10: u32,
    /// 90th percentile.
    pub p90: u32,
    /// `P(N >= k)` for the gauge's `exceed_days`.
    pub exceedance: Vec<Exceedance>,
    /// Terciles against the climatology and, when the sea-level trend is available, against
    /// the trend-only expectation.
    pub terciles: Vec<TercileOutlook>,
    /// Mean count of the climatology reference for the target season's days.
    pub climatological_mean: f64,
    /// Mean count of the trend-only reference, when available.
    pub trend_only_mean: Option<f64>,
    /// The same season a year earlier, as observed, when the record has it.
    pub last_season_observed: Option<LastSeason>,
    /// Each driver of the model: its expected value and effect.
    pub drivers: Vec<DriverEffect>,
    /// Plain sentences on what drives the outlook.
    pub explanation: Vec<String>,
    /// Plain cautions; never empty.
    pub cautions: Vec<String>,
    /// Notes on how the outlook was made (fallbacks, dropped predictors).
    pub notes: Vec<String>,
    /// The engine the distribution comes from.
    pub engine: Engine,
    /// Why that engine leads, in one plain sentence.
    pub engine_reason: String,
    /// The other engine's answer, when it ran.
    pub other_engine: Option<EngineSummary>,
    /// The season's calendar of flood chances (from the water-level engine; empty when it
    /// could not run).
    pub days: Vec<DayChance>,
    /// The water-level engine's fit, for researchers.
    pub water: Option<crate::water::WaterReport>,
}

/// Everything an outlook is assembled from.
#[derive(Debug, Clone, Copy)]
pub struct OutlookInputs<'a> {
    /// The gauge.
    pub gauge: &'a GaugeFacts,
    /// The target season.
    pub target: &'a Season,
    /// The fitted gauge model of the target's season name.
    pub model: &'a GaugeModel,
    /// The climatology reference.
    pub climatology: &'a Reference,
    /// The trend-only reference, when the sea-level trend is available.
    pub trend_only: Option<&'a Reference>,
    /// The target season's driver scenarios (every predictor of the model, and the sea
    /// level for the trend-only reference).
    pub drivers: &'a [DriverScenarios],
    /// The same season a year earlier.
    pub last_season: Option<&'a LastSeason>,
    /// Options.
    pub options: &'a OutlookOptions,
}

fn stream(seed: u64, stream: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(stream);
    rng
}

/// Builds an outlook from fitted models and the target season's driver scenarios.
pub fn assemble(inputs: OutlookInputs<'_>) -> Result<Outlook, OutlookError> {
    let OutlookInputs {
        gauge,
        target,
        model,
        climatology,
        trend_only,
        drivers,
        last_season,
        options,
    } = inputs;
    if !target
        .spec()
        .name()
        .eq_ignore_ascii_case(&model.season_name)
    {
        return Err(OutlookError::SeasonMismatch {
            target: target.label(),
            season_name: model.season_name.clone(),
        });
    }
    let days = target.calendar_days();
    let distribution = predictive_pmf(
        model,
        drivers,
        days,
        options.draws,
        &mut stream(options.seed, 0),
    )?;
    let mean = distribution.mean();

    let mut terciles = Vec::new();
    let mut reference_means = Vec::new();
    for (i, reference) in [Some(climatology), trend_only]
        .into_iter()
        .flatten()
        .enumerate()
    {
        let reference_distribution = predictive_pmf(
            &reference.model,
            drivers,
            days,
            options.draws,
            &mut stream(options.seed, 1 + i as u64),
        )?;
        let edges =
            TercileEdges::from_reference(&reference_distribution.pmf).map_err(|source| {
                OutlookError::Terciles {
                    reference: reference.name.clone(),
                    source,
                }
            })?;
        let [below, near, above] = edges.categorise(&distribution.pmf);
        let reference_mean = reference_distribution.mean();
        reference_means.push(reference_mean);
        terciles.push(TercileOutlook {
            reference: reference.kind,
            name: reference.name.clone(),
            description: reference.description.clone(),
            edges: edges.edges(),
            edge_lower_shares: edges.lower_shares(),
            reference_mean,
            reference_range: [
                reference_distribution.quantile(0.1) as u32,
                reference_distribution.quantile(0.9) as u32,
            ],
            fallback: reference.fallback,
            below,
            near,
            above,
        });
    }
    let climatological_mean = reference_means[0];
    let trend_only_mean = reference_means.get(1).copied();

    let effects = driver_effects(model, drivers);
    let enso_shares = drivers
        .iter()
        .find(|d| d.predictor == Predictor::Enso)
        .map(|d| explain::enso_category_shares(&d.values));
    let quantile = |q: f64| distribution.quantile(q) as u32;
    let (p10, p90) = (quantile(0.1), quantile(0.9));
    let mut explanation = vec![explain::summary_sentence(
        mean,
        p10,
        p90,
        climatological_mean,
        &climatology.name,
        trend_only_mean,
    )];
    explanation.extend(
        effects
            .iter()
            .map(|e| explain::driver_sentence(e, enso_shares)),
    );

    let mut notes = model.notes.clone();
    if climatology.fallback {
        notes.push(climatology.description.clone());
    }
    if trend_only.is_none() {
        notes.push("no sea-level trend is available, so there is no trend-only reference".into());
    }
    Ok(Outlook {
        gauge_id: gauge.id.clone(),
        season: target.label(),
        season_days: days,
        family: model.family,
        fit_period: model.fit_period.clone(),
        draws: options.draws,
        seed: options.seed,
        median: quantile(0.5),
        p10,
        p90,
        exceedance: options
            .exceed_days
            .iter()
            .map(|&k| Exceedance {
                days: k,
                probability: distribution.exceedance(k as usize),
            })
            .collect(),
        mean,
        pmf: distribution.pmf.clone(),
        terciles,
        climatological_mean,
        trend_only_mean,
        last_season_observed: last_season.cloned(),
        drivers: effects,
        explanation,
        cautions: cautions(&CautionContext {
            gauge_name: &gauge.name,
            threshold_m: gauge.threshold_m,
            datum: &gauge.datum,
            threshold_derived: gauge.threshold_derived,
            climatology_fallback: climatology.fallback,
        }),
        notes,
        engine: Engine::Count,
        engine_reason: String::new(),
        other_engine: None,
        days: Vec::new(),
        water: None,
    })
}

fn driver_effects(model: &GaugeModel, drivers: &[DriverScenarios]) -> Vec<DriverEffect> {
    model
        .predictors
        .iter()
        .enumerate()
        .filter_map(|(j, &p)| {
            let scenarios = drivers.iter().find(|d| d.predictor == p)?;
            let coefficient = &model.coefficients[j + 1];
            let mut sorted = scenarios.values.clone();
            sorted.sort_by(f64::total_cmp);
            let value = sorted.iter().sum::<f64>() / sorted.len().max(1) as f64;
            let at = |q: f64| {
                let i = ((sorted.len() as f64 - 1.0) * q).round() as usize;
                sorted.get(i).copied().unwrap_or(f64::NAN)
            };
            let fit_mean = model.predictor_means[j];
            Some(DriverEffect {
                name: p,
                unit: p.unit(),
                value,
                value_p10: at(0.1),
                value_p90: at(0.9),
                fit_mean,
                rate_ratio: coefficient.rate_ratio,
                rate_ratio_ci: coefficient.rate_ratio_ci,
                per: coefficient.per,
                effect: (coefficient.estimate * (value - fit_mean)).exp(),
                source: scenarios.source.clone(),
            })
        })
        .collect()
}

/// The outlook of `target` at a prepared gauge from its fitted model of the target's season
/// name: draws the driver scenarios, fits the two references (climatology and trend-only) and
/// assembles the outlook.
pub fn build(
    model: &GaugeModel,
    prepared: &PreparedGauge,
    target: &Season,
    options: &OutlookOptions,
) -> Result<Outlook, OutlookError> {
    let references = references::fit_references(prepared, target.spec().name())?;
    build_with(model, &references, prepared, target, options)
}

/// As [`build`], with references already fitted (by [`references::fit_references`]).
pub fn build_with(
    model: &GaugeModel,
    references: &OutlookReferences,
    prepared: &PreparedGauge,
    target: &Season,
    options: &OutlookOptions,
) -> Result<Outlook, OutlookError> {
    let scenarios = scenarios::target_scenarios(
        prepared,
        target,
        &model.predictors,
        options.draws,
        options.condition_on_enso,
        &mut stream(options.seed, 3),
    )?;
    let last_season = prepared
        .season(&target.previous_year().label())
        .map(|s| LastSeason {
            season: s.season.label(),
            flood_days: s.flood_days,
            observed_days: s.observed_days,
            calendar_days: s.calendar_days,
        });
    let gauge = GaugeFacts {
        id: prepared.config.id.clone(),
        name: prepared.config.name.clone(),
        threshold_m: prepared.config.flood_threshold_m,
        datum: prepared.config.datum.clone(),
        threshold_derived: false,
    };
    let mut options = options.clone();
    if options.exceed_days.is_empty() {
        options.exceed_days = prepared.config.model.exceed_days.clone();
    }
    let mut outlook = assemble(OutlookInputs {
        gauge: &gauge,
        target,
        model,
        climatology: &references.climatology,
        trend_only: references.trend_only.as_ref(),
        drivers: &scenarios.drivers,
        last_season: last_season.as_ref(),
        options: &options,
    })?;
    outlook.notes.extend(scenarios.notes);
    outlook.notes.extend(prepared.notes.iter().cloned());
    Ok(outlook)
}
