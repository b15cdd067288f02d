//! Hindcast verification: out-of-sample forecasts of every past season, scored against the
//! two baselines, with bootstrap intervals of skill and a verdict in plain words.
//!
//! For one season name at a gauge (all DJF seasons, say):
//! 1. [`schemes`]: each usable season is forecast from a refit on other seasons only, by
//!    leave-one-year-out (with the neighbouring years left out too) and by rolling origin;
//! 2. [`baselines`]: the driver model, the climatology (intercept and exposure only) and the
//!    trend-only model are refitted on the same training seasons, each with the family its
//!    full-record fit chose (so a refit never re-runs the family test);
//! 3. `predict`: each forecast is the full predictive distribution as the
//!    outlook builds it, a mixture over parameter draws and driver scenarios, with the drivers
//!    as they were known at issue time (see [`baselines::known_at_issue`]);
//! 4. [`scoring`]: every score of [`crate::verify`] is computed once per case; the bootstrap
//!    over seasons only resamples those arrays;
//! 5. [`verdict`](mod@verdict): skill is claimed only when the 95 % interval of the CRPSS lies
//!    above zero in both schemes.
//!
//! Randomness comes from `ChaCha8Rng` streams derived from one seed, one stream per
//! (scheme, case, system), so results do not depend on the order threads run in.

pub mod baselines;
mod predict;
mod refit;
mod report;
mod run;
pub mod schemes;
pub mod scoring;
pub mod verdict;

use rayon::prelude::*;

pub use baselines::{ConcurrentEnso, ModelKind, known_at_issue};
pub use report::{
    CaseRecord, DriverAtIssue, EngineScore, ForecastMean, GaugeHindcast, NotRun, OptionsReport,
    SchemeHindcast, SeasonHindcast, SkippedCase, SystemFamily,
};
pub use run::{hindcast_season, hindcast_season_under};
pub use schemes::{DEFAULT_MIN_TRAINING, DEFAULT_NEIGHBOUR_YEARS, Scheme};
pub use scoring::{
    BinReport, BrierReport, ModelScores, RELIABILITY_BINS, RocPointReport, RocReport, SediReport,
    SkillEntry, SkillReport,
};
pub use verdict::{HEADLINE_SCORE, VerdictKind, VerdictReport};

use crate::drivers::{EnsoSeries, EnsoTiming};
use crate::fit::{FitError, Predictor, PreparedGauge, SeasonData, family_request};
use crate::glm::FamilyRequest;
use crate::verify::{Bootstrap, VerifyError};
use crate::water::GaugeWater;

/// Mixture components per forecast unless asked otherwise (the outlook uses more; a hindcast
/// makes hundreds of forecasts and scores them together).
pub const DEFAULT_DRAWS: usize = 200;

/// Simulated seasons per water-engine forecast unless asked otherwise (the outlook uses
/// [`crate::water::DEFAULT_SIMULATIONS`]; a hindcast scores hundreds of forecasts together).
pub const DEFAULT_WATER_SIMULATIONS: usize = 500;

/// Bootstrap resamples unless asked otherwise.
pub const DEFAULT_RESAMPLES: usize = 1000;

/// Seed of a hindcast's random streams unless asked otherwise.
pub const DEFAULT_SEED: u64 = 20_261_202;

/// Appended to a verdict when the model uses the season's own ENSO and the hindcast stands
/// the observed value in for its forecast.
pub const PERFECT_ENSO_CAVEAT: &str = " The hindcast uses each season's ENSO as later \
    observed, as if it had been forecast perfectly; a real ENSO forecast does somewhat worse.";

/// Why a hindcast could not be run.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum HindcastError {
    /// The full-record fit of a system failed, so its family cannot be fixed.
    #[error("full-record fit of {model:?}: {source}")]
    FullFit {
        /// The system.
        model: ModelKind,
        /// The fit's error.
        #[source]
        source: FitError,
    },
    /// A score could not be computed.
    #[error("scores: {0}")]
    Verify(#[from] VerifyError),
    /// Most parameter draws of a forecast gave no usable mean.
    #[error("{season}: only {used} of {drawn} parameter draws gave a usable expected count")]
    DegenerateDraws {
        /// The season forecast.
        season: String,
        /// Draws used.
        used: usize,
        /// Draws made.
        drawn: usize,
    },
    /// Zero mixture components asked for.
    #[error("a hindcast needs at least one mixture component per forecast (draws = 0)")]
    NoDraws,
    /// A season name with no usable season.
    #[error(
        "{season_name}: no usable season to hindcast{}",
        missing.as_ref().map_or_else(String::new, |m| format!(" (first season left out: {m})"))
    )]
    NoSeasons {
        /// The season name.
        season_name: String,
        /// Why the first season was left out, which names a missing driver.
        missing: Option<String>,
    },
}

/// Options of a hindcast.
#[derive(Debug, Clone, PartialEq)]
pub struct HindcastOptions {
    /// Mixture components per forecast (parameter draw x driver scenario pairs).
    pub draws: usize,
    /// Bootstrap resamples (at least [`crate::verify::MIN_RESAMPLES`]).
    pub resamples: usize,
    /// Seed of every random stream.
    pub seed: u64,
    /// Training seasons the rolling origin needs before its first forecast.
    pub min_training: usize,
    /// Years on each side of the target left out by leave-one-year-out.
    pub neighbour_years: u32,
    /// How the season's own ENSO is treated when the model uses it.
    pub concurrent_enso: ConcurrentEnso,
    /// Simulated seasons per water-engine forecast.
    pub water_simulations: usize,
}

impl Default for HindcastOptions {
    fn default() -> Self {
        Self {
            water_simulations: DEFAULT_WATER_SIMULATIONS,
            draws: DEFAULT_DRAWS,
            resamples: DEFAULT_RESAMPLES,
            seed: DEFAULT_SEED,
            min_training: DEFAULT_MIN_TRAINING,
            neighbour_years: DEFAULT_NEIGHBOUR_YEARS,
            concurrent_enso: ConcurrentEnso::default(),
        }
    }
}

impl HindcastOptions {
    /// The two schemes these options define, leave-one-year-out first.
    pub fn schemes(&self) -> [Scheme; 2] {
        [
            Scheme::LeaveOneYearOut {
                neighbour_years: self.neighbour_years,
            },
            Scheme::RollingOrigin {
                min_training: self.min_training,
            },
        ]
    }
}

/// What a hindcast of one season name needs to know about the gauge.
#[derive(Debug, Clone, Copy)]
pub struct HindcastSetup<'a> {
    /// The gauge's name, for the verdict sentences.
    pub gauge_name: &'a str,
    /// Every season of the record (other season names are ignored).
    pub seasons: &'a [SeasonData],
    /// The season name, e.g. `DJF`.
    pub season_name: &'a str,
    /// The driver model's predictors.
    pub predictors: &'a [Predictor],
    /// The family the gauge asks for (fixed per system by its full-record fit).
    pub family: FamilyRequest,
    /// Whether the ENSO predictor is the preceding season's or the season's own.
    pub enso_timing: EnsoTiming,
    /// The `k` of each `P(N >= k)`.
    pub exceed_days: &'a [u32],
    /// The gauge's ENSO index (ENSO as known at issue time is persisted from it).
    pub enso: Option<&'a EnsoSeries>,
    /// The water-level engine of the season name, hindcast beside the count model.
    pub water: Option<&'a GaugeWater>,
}

/// Hindcasts every season name of a prepared gauge (season names in parallel).
///
/// # Errors
/// Options that no hindcast accepts (zero draws, too few resamples); a season name that
/// cannot be run is listed in [`GaugeHindcast::not_run`] instead.
pub fn hindcast_gauge(
    prepared: &PreparedGauge,
    options: &HindcastOptions,
) -> Result<GaugeHindcast, HindcastError> {
    check_options(options)?;
    let predictors = prepared.requested_predictors();
    let config = &prepared.config;
    let results: Vec<(String, Result<SeasonHindcast, HindcastError>)> = config
        .seasons
        .specs
        .par_iter()
        .map(|spec| {
            let water = GaugeWater::for_gauge(prepared, spec.name()).ok();
            let setup = HindcastSetup {
                gauge_name: &config.name,
                seasons: &prepared.seasons,
                season_name: spec.name(),
                predictors: &predictors,
                family: family_request(config.model.family),
                enso_timing: prepared.settings.enso_timing,
                exceed_days: &config.model.exceed_days,
                enso: prepared.drivers.enso.as_ref(),
                water: water.as_ref(),
            };
            (spec.name().to_owned(), hindcast_season(&setup, options))
        })
        .collect();
    let mut seasons = Vec::new();
    let mut not_run = Vec::new();
    for (season_name, result) in results {
        match result {
            Ok(h) => seasons.push(h),
            Err(e) => not_run.push(NotRun {
                season_name,
                error: e.to_string(),
            }),
        }
    }
    Ok(GaugeHindcast {
        gauge: config.id.clone(),
        gauge_name: config.name.clone(),
        options: OptionsReport {
            draws: options.draws,
            resamples: options.resamples,
            seed: options.seed,
            min_training: options.min_training,
            neighbour_years: options.neighbour_years,
            concurrent_enso: options.concurrent_enso,
        },
        seasons,
        not_run,
        notes: prepared.notes.clone(),
    })
}

fn check_options(options: &HindcastOptions) -> Result<Bootstrap, HindcastError> {
    if options.draws == 0 || options.water_simulations == 0 {
        return Err(HindcastError::NoDraws);
    }
    Ok(Bootstrap::new(options.resamples, options.seed)?)
}
