//! What a hindcast reports: per case, per scheme, per season name and per gauge.

use serde::Serialize;

use super::baselines::{ConcurrentEnso, ModelKind};
use super::schemes::Scheme;
use super::scoring::{ModelScores, SkillReport};
use super::verdict::VerdictReport;
use crate::fit::{LeftOut, Predictor};
use crate::glm::Family;

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
    /// Its family, chosen by the full-record fit and kept for every refit (`None` for the
    /// water-level engine, which is not a count model).
    pub family: Option<Family>,
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
    /// Verdicts of the water-level engine against each baseline in this scheme.
    pub water_verdicts: Vec<VerdictReport>,
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
    /// The count model's verdicts against the climatology and, when there is one, the
    /// trend-only model.
    pub verdicts: Vec<VerdictReport>,
    /// The water-level engine's verdicts against the same references (empty without it).
    pub water_verdicts: Vec<VerdictReport>,
    /// How each season's own ENSO was known to its forecast.
    pub enso: ConcurrentEnso,
    /// Each engine's mean CRPS per scheme and averaged over the schemes.
    pub engines: Vec<EngineScore>,
    /// Plain notes (baselines left out, fallbacks).
    pub notes: Vec<String>,
}

/// One engine's out-of-sample CRPS, the figure the outlook picks its engine by.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EngineScore {
    /// The engine: the count model ([`ModelKind::Drivers`]) or [`ModelKind::Water`].
    pub model: ModelKind,
    /// Mean CRPS (days) per scheme, in scheme order.
    pub crps_by_scheme: Vec<f64>,
    /// Their average over the schemes.
    pub mean_crps: f64,
}

impl SeasonHindcast {
    /// The count model's verdict against `reference`.
    pub fn verdict(&self, reference: ModelKind) -> Option<&VerdictReport> {
        self.verdicts.iter().find(|v| v.reference == reference)
    }

    /// The verdict of `model` (the count model or the water engine) against `reference`.
    pub fn verdict_of(&self, model: ModelKind, reference: ModelKind) -> Option<&VerdictReport> {
        let list = match model {
            ModelKind::Water => &self.water_verdicts,
            _ => &self.verdicts,
        };
        list.iter().find(|v| v.reference == reference)
    }

    /// The engine score of `model`.
    pub fn engine(&self, model: ModelKind) -> Option<&EngineScore> {
        self.engines.iter().find(|e| e.model == model)
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
    pub gauge: String,
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
