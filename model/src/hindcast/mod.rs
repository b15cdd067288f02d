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
pub mod schemes;
pub mod scoring;
pub mod verdict;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::Serialize;

pub use baselines::{ConcurrentEnso, ModelKind, known_at_issue};
pub use schemes::{DEFAULT_MIN_TRAINING, DEFAULT_NEIGHBOUR_YEARS, Scheme};
pub use scoring::{
    BinReport, BrierReport, ModelScores, RELIABILITY_BINS, RocPointReport, RocReport, SediReport,
    SkillEntry, SkillReport,
};
pub use verdict::{HEADLINE_SCORE, VerdictKind, VerdictReport};

use crate::drivers::EnsoTiming;
use crate::fit::{
    Design, DesignRow, FitError, LeftOut, Predictor, PreparedGauge, SeasonData, family_request,
    fit_design,
};
use crate::glm::{Family, FamilyRequest};
use crate::verify::{Bootstrap, VerifyError};

/// Mixture components per forecast unless asked otherwise (the outlook uses more; a hindcast
/// makes hundreds of forecasts and scores them together).
pub const DEFAULT_DRAWS: usize = 200;

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
    #[error("{season_name}: no usable season to hindcast")]
    NoSeasons {
        /// The season name.
        season_name: String,
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
}

impl Default for HindcastOptions {
    fn default() -> Self {
        Self {
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
}

/// A driver of the model and how a hindcast forecast knows its value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriverAtIssue {
    /// The predictor.
    pub predictor: Predictor,
    /// Whether the season's own value is used (known at issue time).
    pub known: bool,
    /// The rule in words.
    pub rule: String,
}

/// The family each system was fitted with.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SystemFamily {
    /// The system.
    pub model: ModelKind,
    /// Its family, chosen by the full-record fit and kept for every refit.
    pub family: Family,
}

/// One system's forecast mean of a case.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ForecastMean {
    /// The system.
    pub model: ModelKind,
    /// Its forecast mean, days.
    pub mean: f64,
}

/// One forecast season of a scheme.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CaseRecord {
    /// The season's label.
    pub season: String,
    /// Flood days observed.
    pub observed: u32,
    /// Days observed (the forecast's exposure and its largest count).
    pub observed_days: u32,
    /// Seasons the forecast was fitted on.
    pub training_seasons: usize,
    /// Each system's forecast mean.
    pub means: Vec<ForecastMean>,
    /// Each system's forecast pmf (index = days), in `means` order; kept for callers, not
    /// written to JSON.
    #[serde(skip)]
    pub pmfs: Vec<Vec<f64>>,
}

/// A season a scheme would forecast but could not.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SkippedCase {
    /// The season's label.
    pub season: String,
    /// Why.
    pub reason: String,
}

/// The hindcast of one scheme.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SchemeHindcast {
    /// The scheme and its parameters.
    pub scheme: Scheme,
    /// The scheme's rule in words.
    pub rule: String,
    /// The seasons forecast.
    pub cases: Vec<CaseRecord>,
    /// Seasons that could not be forecast, and why.
    pub skipped: Vec<SkippedCase>,
    /// Mean scores of each system.
    pub models: Vec<ModelScores>,
    /// Skill intervals: the driver model and the trend-only model against the climatology,
    /// and the driver model against the trend-only model.
    pub skill: Vec<SkillReport>,
    /// Verdicts of the driver model against each baseline in this scheme.
    pub verdicts: Vec<VerdictReport>,
}

impl SchemeHindcast {
    /// The skill report of `model` against `reference`.
    pub fn skill_of(&self, model: ModelKind, reference: ModelKind) -> Option<&SkillReport> {
        self.skill
            .iter()
            .find(|s| s.model == model && s.reference == reference)
    }

    /// The mean scores of `model`.
    pub fn scores_of(&self, model: ModelKind) -> Option<&ModelScores> {
        self.models.iter().find(|m| m.model == model)
    }
}

/// The hindcast of one season name at one gauge.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeasonHindcast {
    /// The season name.
    pub season_name: String,
    /// The driver model's predictors.
    pub predictors: Vec<Predictor>,
    /// How each driver's value is known at issue time.
    pub issue_time: Vec<DriverAtIssue>,
    /// The family of each system.
    pub families: Vec<SystemFamily>,
    /// Usable seasons of the name.
    pub usable_seasons: usize,
    /// Seasons of the name left out of every fit, and why.
    pub left_out: Vec<LeftOut>,
    /// Leave-one-year-out, then rolling origin.
    pub schemes: Vec<SchemeHindcast>,
    /// The verdicts against the climatology and, when there is one, the trend-only model.
    pub verdicts: Vec<VerdictReport>,
    /// Plain notes (baselines left out, fallbacks).
    pub notes: Vec<String>,
}

impl SeasonHindcast {
    /// The verdict against `reference`.
    pub fn verdict(&self, reference: ModelKind) -> Option<&VerdictReport> {
        self.verdicts.iter().find(|v| v.reference == reference)
    }

    /// The scheme named `name` (`leave_one_year_out` or `rolling_origin`).
    pub fn scheme(&self, name: &str) -> Option<&SchemeHindcast> {
        self.schemes.iter().find(|s| s.scheme.name() == name)
    }
}

/// A season name whose hindcast could not be run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NotRun {
    /// The season name.
    pub season_name: String,
    /// Why.
    pub error: String,
}

/// The options a hindcast ran with, as reported.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OptionsReport {
    /// Mixture components per forecast.
    pub draws: usize,
    /// Bootstrap resamples.
    pub resamples: usize,
    /// Seed.
    pub seed: u64,
    /// Rolling origin's minimum training seasons.
    pub min_training: usize,
    /// Leave-one-year-out's neighbour years.
    pub neighbour_years: u32,
    /// Treatment of the season's own ENSO.
    pub concurrent_enso: ConcurrentEnso,
}

/// The hindcast of every season name at one gauge.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct GaugeHindcast {
    /// The gauge's id.
    pub gauge_id: String,
    /// The gauge's name.
    pub gauge_name: String,
    /// The options.
    pub options: OptionsReport,
    /// One hindcast per season name that could be run.
    pub seasons: Vec<SeasonHindcast>,
    /// Season names that could not be run, and why.
    pub not_run: Vec<NotRun>,
    /// Notes from preparing the gauge.
    pub notes: Vec<String>,
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
            let setup = HindcastSetup {
                gauge_name: &config.name,
                seasons: &prepared.seasons,
                season_name: spec.name(),
                predictors: &predictors,
                family: family_request(config.model.family),
                enso_timing: prepared.settings.enso_timing,
                exceed_days: &config.model.exceed_days,
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
        gauge_id: config.id.clone(),
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
    if options.draws == 0 {
        return Err(HindcastError::NoDraws);
    }
    Ok(Bootstrap::new(options.resamples, options.seed)?)
}

/// One system of a season name's hindcast: its design columns and fixed family.
struct System {
    kind: ModelKind,
    design: Design,
    family: Family,
    /// The full-record fit, where every refit starts.
    start: refit::WarmStart,
}

/// Hindcasts one season name.
///
/// # Errors
/// Bad options, no usable season, or a full-record fit of the driver model or the
/// climatology that fails.
pub fn hindcast_season(
    setup: &HindcastSetup<'_>,
    options: &HindcastOptions,
) -> Result<SeasonHindcast, HindcastError> {
    let bootstrap = check_options(options)?;
    let mut notes = Vec::new();
    let requested = Design::build(setup.seasons, setup.season_name, setup.predictors);
    let mut columns = setup.predictors.to_vec();
    let with_trend = if columns.contains(&Predictor::SeaLevel) {
        Some(requested.clone())
    } else {
        columns.push(Predictor::SeaLevel);
        let d = Design::build(setup.seasons, setup.season_name, &columns);
        // The trend-only baseline needs the sea level in every season the model uses.
        (d.rows.len() == requested.rows.len()).then_some(d)
    };
    let full = match with_trend {
        Some(d) => d,
        None => {
            notes.push(
                "the sea-level trend is missing for some seasons, so there is no trend-only \
                 baseline"
                    .to_owned(),
            );
            requested
        }
    };
    if full.rows.is_empty() {
        return Err(HindcastError::NoSeasons {
            season_name: setup.season_name.to_owned(),
        });
    }
    let has_trend = full.predictors.contains(&Predictor::SeaLevel);
    let mut systems = Vec::new();
    for kind in [
        ModelKind::Drivers,
        ModelKind::Climatology,
        ModelKind::TrendOnly,
    ] {
        if kind == ModelKind::TrendOnly && !has_trend {
            continue;
        }
        let design = full.select(&kind.predictors(setup.predictors));
        match fit_design(&design, setup.family) {
            Ok(model) => systems.push(System {
                kind,
                design,
                family: model.family,
                start: refit::WarmStart::of(&model),
            }),
            Err(source) if kind == ModelKind::TrendOnly => notes.push(format!(
                "the trend-only baseline could not be fitted on the full record ({source}), so \
                 it is left out"
            )),
            Err(source) => {
                return Err(HindcastError::FullFit {
                    model: kind,
                    source,
                });
            }
        }
    }
    let concurrent_known = match setup.enso_timing {
        EnsoTiming::Preceding => true,
        EnsoTiming::Concurrent => options.concurrent_enso == ConcurrentEnso::Observed,
    };
    let perfect_enso = setup.enso_timing == EnsoTiming::Concurrent
        && options.concurrent_enso == ConcurrentEnso::Observed
        && setup.predictors.contains(&Predictor::Enso);
    if perfect_enso {
        notes.push(PERFECT_ENSO_CAVEAT.trim_start().to_owned());
    }
    let issue_time = setup
        .predictors
        .iter()
        .map(|&p| issue_rule(p, setup.enso_timing, options.concurrent_enso))
        .collect();
    let families = systems
        .iter()
        .map(|s| SystemFamily {
            model: s.kind,
            family: s.family,
        })
        .collect();
    let mut schemes = Vec::new();
    for (scheme_number, scheme) in options.schemes().into_iter().enumerate() {
        schemes.push(run_scheme(
            &systems,
            scheme,
            scheme_number as u64,
            concurrent_known,
            setup.exceed_days,
            options,
            &bootstrap,
        )?);
    }
    let mut verdicts = Vec::new();
    for reference in [ModelKind::Climatology, ModelKind::TrendOnly] {
        if reference == ModelKind::TrendOnly && !systems.iter().any(|s| s.kind == reference) {
            continue;
        }
        let entries: Vec<(Scheme, &SkillEntry)> = schemes
            .iter()
            .filter_map(|s| {
                s.skill_of(ModelKind::Drivers, reference)
                    .and_then(|r| r.entry(HEADLINE_SCORE))
                    .map(|e| (s.scheme, e))
            })
            .collect();
        let mut report =
            verdict::overall_verdict(setup.gauge_name, &full.season_name, reference, &entries);
        if perfect_enso {
            report.sentence.push_str(PERFECT_ENSO_CAVEAT);
        }
        verdicts.push(report);
    }
    Ok(SeasonHindcast {
        season_name: full.season_name.clone(),
        predictors: setup.predictors.to_vec(),
        issue_time,
        families,
        usable_seasons: full.rows.len(),
        left_out: full.left_out.clone(),
        schemes,
        verdicts,
        notes,
    })
}

fn issue_rule(p: Predictor, timing: EnsoTiming, concurrent: ConcurrentEnso) -> DriverAtIssue {
    let (known, rule) = match (p, timing, concurrent) {
        (Predictor::Enso, EnsoTiming::Preceding, _) => (
            true,
            "ENSO of the preceding season, observed before the season begins",
        ),
        (Predictor::Enso, EnsoTiming::Concurrent, ConcurrentEnso::Observed) => (
            true,
            "the season's own ENSO as observed, standing in for a forecast issued before the \
             season (past forecasts are not among the gauge's inputs): skill with a perfect \
             ENSO forecast, an upper bound",
        ),
        (Predictor::Enso, EnsoTiming::Concurrent, ConcurrentEnso::Resampled) => (
            false,
            "the season's own ENSO is not known at issue time: resampled from the training \
             seasons together with MJO and wind",
        ),
        (Predictor::Mjo | Predictor::Wind, _, _) => (
            false,
            "not known at issue time: each scenario takes the value of one training season \
             drawn at random, as the outlook resamples past seasons",
        ),
        (Predictor::SeaLevel, _, _) => (
            true,
            "the sea-level trend at the season's middle, from the full-record trend line (a \
             smooth line; not refitted per forecast)",
        ),
        (Predictor::Tide, _, _) => (true, "the predicted astronomical tide, known in advance"),
    };
    DriverAtIssue {
        predictor: p,
        known,
        rule: rule.to_owned(),
    }
}

/// What one case produced: its record, or why it was skipped.
enum CaseOutcome {
    Forecast(CaseRecord),
    Skipped(SkippedCase),
}

fn run_scheme(
    systems: &[System],
    scheme: Scheme,
    scheme_number: u64,
    concurrent_known: bool,
    exceed_days: &[u32],
    options: &HindcastOptions,
    bootstrap: &Bootstrap,
) -> Result<SchemeHindcast, HindcastError> {
    // Every system's design has the same rows in the same order.
    let rows = &systems[0].design.rows;
    let outcomes: Vec<Option<CaseOutcome>> = (0..rows.len())
        .into_par_iter()
        .map(|target| {
            let training = scheme.training(rows, target)?;
            Some(forecast_case(
                systems,
                target,
                &training,
                concurrent_known,
                options,
                scheme_number,
            ))
        })
        .collect();
    let mut cases = Vec::new();
    let mut skipped = Vec::new();
    for outcome in outcomes.into_iter().flatten() {
        match outcome {
            CaseOutcome::Forecast(c) => cases.push(c),
            CaseOutcome::Skipped(s) => skipped.push(s),
        }
    }
    let kinds: Vec<(ModelKind, Family)> = systems.iter().map(|s| (s.kind, s.family)).collect();
    let mut report = SchemeHindcast {
        scheme,
        rule: scheme.rule(),
        cases,
        skipped,
        models: Vec::new(),
        skill: Vec::new(),
        verdicts: Vec::new(),
    };
    if report.cases.is_empty() {
        return Ok(report);
    }
    let mut pmfs = vec![Vec::new(); 3];
    for case in &report.cases {
        for (system, pmf) in systems.iter().zip(&case.pmfs) {
            pmfs[system.kind.index()].push(pmf.clone());
        }
    }
    let set = scoring::CaseSet {
        observed: report.cases.iter().map(|c| c.observed).collect(),
        pmfs,
    };
    let scored = scoring::score(&set, &kinds, exceed_days)?;
    let skill = scoring::skill(
        &scored,
        &kinds,
        &[
            scoring::Comparison {
                models: &[ModelKind::Drivers, ModelKind::TrendOnly],
                reference: ModelKind::Climatology,
            },
            scoring::Comparison {
                models: &[ModelKind::Drivers],
                reference: ModelKind::TrendOnly,
            },
        ],
        bootstrap,
    );
    report.models = scored.table;
    report.skill = skill;
    let n = report.cases.len();
    report.verdicts = [ModelKind::Climatology, ModelKind::TrendOnly]
        .into_iter()
        .filter_map(|reference| {
            report
                .skill_of(ModelKind::Drivers, reference)
                .and_then(|r| r.entry(HEADLINE_SCORE))
                .map(|e| verdict::scheme_verdict(reference, e, n))
        })
        .collect();
    Ok(report)
}

fn stream(seed: u64, scheme: u64, case: usize, system: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream((scheme << 40) | ((case as u64) << 4) | system);
    rng
}

fn forecast_case(
    systems: &[System],
    target: usize,
    training: &[usize],
    concurrent_known: bool,
    options: &HindcastOptions,
    scheme_number: u64,
) -> CaseOutcome {
    let first = &systems[0].design.rows[target];
    let skip = |reason: String| {
        CaseOutcome::Skipped(SkippedCase {
            season: first.season.label(),
            reason,
        })
    };
    if training.is_empty() {
        return skip("no training season".to_owned());
    }
    let mut scenario_rng = stream(options.seed, scheme_number, target, 15);
    let scenario: Vec<usize> = (0..options.draws)
        .map(|_| training[scenario_rng.gen_range(0..training.len())])
        .collect();
    let known = |p: Predictor| known_at_issue(p, concurrent_known);
    let mut means = Vec::with_capacity(systems.len());
    let mut pmfs = Vec::with_capacity(systems.len());
    for system in systems {
        let design = &system.design;
        let sub = Design {
            season_name: design.season_name.clone(),
            predictors: design.predictors.clone(),
            rows: training.iter().map(|&i| design.rows[i].clone()).collect(),
            left_out: Vec::new(),
        };
        let request = match system.family {
            Family::Poisson => FamilyRequest::Poisson,
            Family::Negbin => FamilyRequest::Negbin,
        };
        let model = match refit::refit(&sub, request, &system.start) {
            Ok(m) => m,
            Err(e) => return skip(format!("{:?} refit: {e}", system.kind)),
        };
        let sources = predict::sources(&model.predictors, &design.predictors, known);
        let scenario_rows: Vec<&DesignRow> = scenario.iter().map(|&i| &design.rows[i]).collect();
        let mut rng = stream(
            options.seed,
            scheme_number,
            target,
            system.kind.index() as u64,
        );
        match predict::case_pmf(
            &model.glm,
            &sources,
            &design.rows[target],
            &scenario_rows,
            options.draws,
            &mut rng,
        ) {
            Ok(pmf) => {
                means.push(ForecastMean {
                    model: system.kind,
                    mean: crate::verify::forecast_mean(&pmf),
                });
                pmfs.push(pmf);
            }
            Err(e) => return skip(e.to_string()),
        }
    }
    CaseOutcome::Forecast(CaseRecord {
        season: first.season.label(),
        observed: first.flood_days,
        observed_days: first.observed_days,
        training_seasons: training.len(),
        means,
        pmfs,
    })
}
