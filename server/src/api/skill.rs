//! Out-of-sample skill: the short summary every outlook carries and the full hindcast.

use serde::{Deserialize, Serialize};

/// What the out-of-sample comparison says, in one word the dashboards can switch on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
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
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Skill {
    /// The verdict.
    pub verdict: Verdict,
    /// The verdict in plain words.
    pub verdict_text: String,
    /// Seasons scored out of sample.
    pub seasons_scored: u32,
    /// Mean scores of the model and the references.
    pub scores: Vec<ScoreRow>,
}

/// One score of the model against the references (lower is better for every score here).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ScoreRow {
    /// `crps`, `rps`, `log_score` or `brier_<k>`.
    pub name: String,
    /// Mean score of the driver model.
    pub model: f64,
    /// Mean score of the 1991-2020 climatology.
    pub climatology: f64,
    /// Mean score of the trend-only model.
    pub trend_only: f64,
    /// Skill score against climatology: `1 - model / climatology`.
    pub skill_vs_climatology: f64,
}

/// `GET /api/v1/gauges/{id}/hindcast`: out-of-sample skill of a gauge's model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Hindcast {
    /// The gauge id.
    pub gauge: String,
    /// Version of the fitted model.
    pub model_version: String,
    /// How the out-of-sample predictions were made, e.g. `leave-one-season-out`.
    pub method: String,
    /// The skill summary.
    pub skill: Skill,
    /// The out-of-sample prediction of each scored season.
    pub cases: Vec<HindcastCase>,
}

/// One scored season of the hindcast.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HindcastCase {
    /// Season label.
    pub season: String,
    /// Observed flood days.
    pub observed: u32,
    /// Predicted mean.
    pub mean: f64,
    /// Predicted 10th percentile.
    pub p10: u32,
    /// Predicted 90th percentile.
    pub p90: u32,
    /// CRPS of this season's prediction.
    pub crps: f64,
}
