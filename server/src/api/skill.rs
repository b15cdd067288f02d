//! Out-of-sample skill: the short summary every outlook carries and the full hindcast.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

/// What the out-of-sample comparison says, in one word the dashboards can switch on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The driver model scores better than both climatology and trend-only out of sample.
    BeatsClimatology,
    /// The driver model beats climatology but not the trend-only reference.
    TrendOnly,
    /// The driver model does not beat climatology out of sample.
    NoBetterThanClimatology,
    /// Too few complete seasons to score.
    NotMeasured,
}

/// The skill summary carried by an outlook.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Skill {
    /// The verdict.
    pub verdict: Verdict,
    /// The verdict in plain words.
    pub verdict_text: String,
    /// Seasons scored out of sample, count.
    pub seasons_scored: u32,
    /// The season name the skill was measured on, e.g. `DJF`.
    #[schema(example = "DJF")]
    pub season_name: String,
    /// The out-of-sample scheme the scores come from, e.g. `leave_one_year_out`.
    #[schema(value_type = crate::openapi::Scheme)]
    pub scheme: String,
    /// Mean scores of the model and the references.
    pub scores: Vec<ScoreRow>,
    /// The engine whose skill this is: `water` or `count`.
    #[serde(default)]
    #[schema(value_type = crate::openapi::Engine, required = true)]
    pub engine: String,
    /// How past seasons' ENSO was known: `at_issue` (as a real outlook would have known it)
    /// or `observed` (perfect ENSO, an upper bound).
    #[serde(default)]
    #[schema(value_type = crate::openapi::EnsoKnowledge, required = true)]
    pub enso: String,
    /// The verdict with perfect ENSO (an upper bound), when the engines use the season's own
    /// ENSO.
    #[serde(default)]
    #[schema(required = true)]
    pub perfect_enso_text: Option<String>,
}

/// One score of the model against the references (lower is better for every score here).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct ScoreRow {
    /// `crps`, `rps`, `log_score` or `brier_<k>`.
    #[schema(pattern = "^(crps|rps|log_score|brier_[0-9]+)$", example = "crps")]
    pub name: String,
    /// Mean score of the driver model, in the score's unit (`crps` days, `log_score` nats,
    /// `rps` and `brier_<k>` 0 to 1).
    pub model: f64,
    /// Mean score of the 1991-2020 climatology, in the score's unit.
    pub climatology: f64,
    /// Mean score of the trend-only model, in the score's unit (`null` when the gauge has no
    /// sea-level trend).
    #[schema(required = true)]
    pub trend_only: Option<f64>,
    /// Skill score against climatology: `1 - model / climatology`, dimensionless (1 is
    /// perfect, 0 no better than climatology).
    pub skill_vs_climatology: f64,
}

/// `GET /api/v1/gauges/{id}/hindcast`: out-of-sample skill of a gauge's model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Hindcast {
    /// The gauge id.
    #[schema(example = "port-tamsin")]
    pub gauge: String,
    /// Version of the fitted model.
    pub model_version: String,
    /// How the out-of-sample predictions were made, e.g. `leave-one-season-out`.
    pub method: String,
    /// The skill summary.
    pub skill: Skill,
    /// The out-of-sample prediction of each scored season.
    pub cases: Vec<HindcastCase>,
    /// Both engines side by side.
    #[serde(default)]
    #[schema(required = true)]
    pub engines: Vec<EngineSkill>,
}

/// One engine's out-of-sample record.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct EngineSkill {
    /// `water` or `count`.
    #[schema(value_type = crate::openapi::Engine)]
    pub engine: String,
    /// Mean CRPS averaged over the two schemes, days.
    pub mean_crps: f64,
    /// Mean CRPS per scheme, days: leave one year out, then rolling origin.
    pub crps_by_scheme: Vec<f64>,
    /// The verdict in plain words.
    pub verdict_text: String,
}

/// One scored season of the hindcast.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct HindcastCase {
    /// Season label.
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// Observed flood days, days.
    pub observed: u32,
    /// Predicted mean, days.
    pub mean: f64,
    /// Predicted 10th percentile, days.
    pub p10: u32,
    /// Predicted 90th percentile, days.
    pub p90: u32,
    /// CRPS of this season's prediction, days.
    pub crps: f64,
    /// The water-level engine's predicted mean, days, when it ran.
    #[serde(default)]
    #[schema(required = true)]
    pub water_mean: Option<f64>,
    /// The water-level engine's CRPS, days, when it ran.
    #[serde(default)]
    #[schema(required = true)]
    pub water_crps: Option<f64>,
}
