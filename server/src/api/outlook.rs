//! Outlooks: one gauge's count distribution for a season, all gauges' outlooks, and the
//! record of issued outlooks.

use serde::{Deserialize, Serialize};
use utoipa::ToSchema;

use super::Skill;

/// `GET /api/v1/gauges/{id}/outlook?season=LABEL`: the predictive distribution of a season's
/// minor flood days at one gauge.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Outlook {
    /// The gauge id.
    #[schema(example = "port-tamsin")]
    pub gauge: String,
    /// Season label, e.g. `2026-DJF` (December 2026 to February 2027: a season is named for
    /// the year its first month falls in).
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// Calendar days in the season (the largest possible count), days.
    pub season_days: u32,
    /// Probability (0 to 1) of each count of flood days; index = days, sums to 1.
    pub pmf: Vec<f64>,
    /// Mean number of flood days, days.
    pub mean: f64,
    /// Median number of flood days, days.
    pub median: u32,
    /// 10th percentile of the number of flood days, days.
    pub p10: u32,
    /// 90th percentile of the number of flood days, days.
    pub p90: u32,
    /// `P(N >= days)` for each requested `days`.
    pub exceedance: Vec<Exceedance>,
    /// Tercile probabilities against the two references: the 1991-2020 climatology and the
    /// trend-only expectation.
    pub terciles: Vec<Terciles>,
    /// Mean flood days of the season in the 1991-2020 climatology (rate scaled to the full
    /// season), days.
    pub climatological_mean: f64,
    /// The most recent observed season of the same name, if any.
    #[schema(required = true)]
    pub last_season_observed: Option<LastSeason>,
    /// The drivers the model used, with their values for this season.
    pub drivers: Vec<DriverUse>,
    /// Out-of-sample skill of the model at this gauge.
    pub skill: Skill,
    /// Plain-language cautions; never empty.
    pub cautions: Vec<String>,
    /// When the outlook was issued (RFC 3339, UTC).
    pub issued_at: String,
    /// Version of the fitted model that made it.
    pub model_version: String,
    /// Plain sentences on what drives the outlook.
    pub explanation: Vec<String>,
    /// Mean flood days expected from the sea-level trend alone, days, when the gauge has a
    /// trend.
    #[schema(required = true)]
    pub trend_only_mean: Option<f64>,
    /// Count family of the fitted model: `poisson` or `negbin`.
    #[schema(value_type = crate::openapi::Family)]
    pub family: String,
    /// The seasons the model was fitted on.
    pub fit_period: FitPeriod,
    /// Notes on how the outlook was made (fallbacks, dropped predictors).
    pub notes: Vec<String>,
    /// The engine the distribution comes from: `water` (daily high waters simulated on the
    /// known tide) or `count` (the seasonal count model).
    #[serde(default)]
    #[schema(value_type = crate::openapi::Engine, required = true)]
    pub engine: String,
    /// Why that engine leads, in one plain sentence.
    #[serde(default)]
    #[schema(required = true)]
    pub engine_reason: String,
    /// The other engine's answer, when it ran.
    #[serde(default)]
    #[schema(required = true)]
    pub other_engine: Option<EngineSummary>,
    /// The season's calendar: each day's predicted high water and chance of a flood day
    /// (empty when the water-level engine could not run).
    #[serde(default)]
    #[schema(required = true)]
    pub days: Vec<DayChance>,
    /// The water-level engine's fitted driver effects on the daily high water.
    #[serde(default)]
    #[schema(required = true)]
    pub water_effects: Vec<WaterEffect>,
    /// The one number to plan with, consistent with the skill verdict.
    #[serde(default)]
    #[schema(required = true)]
    pub plan_on: PlanOn,
    /// The season's first calendar day (`YYYY-MM-DD`; a label's year is the year the season
    /// starts, so `2026-DJF` runs 2026-12-01 to 2027-02-28).
    #[serde(default)]
    #[schema(required = true)]
    pub first_day: String,
    /// The season's last calendar day (`YYYY-MM-DD`).
    #[serde(default)]
    #[schema(required = true)]
    pub last_day: String,
    /// What the counts of `pmf`, `mean`, `median`, `p10` and `p90` count: `days`.
    #[serde(default)]
    #[schema(required = true)]
    pub count_unit: String,
    /// The last day this outlook stands for (`YYYY-MM-DD`, the season's last day); after it
    /// the observed count replaces the outlook.
    #[serde(default)]
    #[schema(required = true)]
    pub valid_until: String,
    /// The water-level record's last local day (`YYYY-MM-DD`) the outlook was made from.
    #[serde(default)]
    #[schema(required = true)]
    pub record_last_day: Option<String>,
    /// What would change this outlook, in plain sentences.
    #[serde(default)]
    #[schema(required = true)]
    pub would_change: Vec<String>,
}

/// Where the number to plan with comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize, ToSchema)]
#[serde(rename_all = "snake_case")]
pub enum PlanBasis {
    /// The outlook itself: it beat its references out of sample.
    Outlook,
    /// The 1991-2020 climatology, which the outlook did not beat (or could not be checked
    /// against).
    #[default]
    Climatology,
    /// The average of the gauge's whole record, standing in for the 1991-2020 climatology
    /// where the record does not cover that period.
    RecordAverage,
    /// The expectation from the sea-level trend alone, which the outlook did not beat.
    TrendOnly,
}

/// The one number a planner plans with, and why.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize, ToSchema)]
pub struct PlanOn {
    /// Expected flood days of the chosen basis.
    pub days: f64,
    /// The basis's own 80% range (10th to 90th percentile), days.
    pub range: [u32; 2],
    /// Which distribution the number comes from.
    pub basis: PlanBasis,
    /// The choice in plain words, with the number and its range.
    pub sentence: String,
}

/// The other engine's answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct EngineSummary {
    /// `water` or `count`.
    #[schema(value_type = crate::openapi::Engine)]
    pub engine: String,
    /// Expected flood days, days.
    pub mean: f64,
    /// Median flood days, days.
    pub median: u32,
    /// 10th percentile, days.
    pub p10: u32,
    /// 90th percentile, days.
    pub p90: u32,
}

/// One day of the season's calendar.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct DayChance {
    /// Local-standard-time date, `YYYY-MM-DD`.
    pub date: String,
    /// Predicted high water (tide plus projected mean sea level), metres on the datum.
    pub predicted_high_m: f64,
    /// Chance of a flood day (share of simulated seasons), a probability from 0 to 1. A seasonal estimate, not
    /// a warning.
    pub chance: f64,
}

/// One driver's fitted effect on the daily high water (water-level engine).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct WaterEffect {
    /// `enso`, `mjo_in_phases`, `mjo_opposite_phases` or `wind`.
    #[schema(value_type = crate::openapi::WaterTerm)]
    pub name: String,
    /// What one unit of the driver is, in words (e.g. `per 1 degC`).
    pub per: String,
    /// Effect, metres per unit.
    pub estimate_m: f64,
    /// Season-clustered standard error, metres.
    pub std_error_m: f64,
    /// 95% interval `[low, high]`, metres.
    pub interval95_m: [f64; 2],
}

/// The seasons a model was fitted on.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct FitPeriod {
    /// First season label.
    pub first: String,
    /// Last season label.
    pub last: String,
    /// Number of seasons used, count.
    pub seasons: u32,
}

/// One exceedance probability.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Exceedance {
    /// Threshold count of days `k`, days.
    pub days: u32,
    /// `P(N >= k)`, a probability from 0 to 1.
    pub probability: f64,
}

/// Which reference the terciles are taken from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, ToSchema)]
pub enum TercileReference {
    /// The WMO standard normal period.
    #[serde(rename = "1991-2020 climatology")]
    Climatology1991To2020,
    /// The expectation of the trend-only model for this season.
    #[serde(rename = "trend-only")]
    TrendOnly,
}

/// Probabilities of the below / near / above normal categories.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Terciles {
    /// The reference the category edges come from.
    pub reference: TercileReference,
    /// Category edges `[e1, e2]` in days: below is `N < e1`, near `e1 <= N < e2`, above
    /// `N >= e2`.
    pub edges: [u32; 2],
    /// `P(N < e1)`, a probability from 0 to 1.
    pub below: f64,
    /// `P(e1 <= N < e2)`, a probability from 0 to 1.
    pub near: f64,
    /// `P(N >= e2)`, a probability from 0 to 1.
    pub above: f64,
    /// For each edge, the share of the reference's mass at the edge count counted below the
    /// boundary (the tie rule that gives the reference exactly a third in each category),
    /// fractions from 0 to 1.
    pub edge_lower_shares: [f64; 2],
    /// The reference's mean count, days.
    pub reference_mean: f64,
}

/// The last observed season of the same name.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct LastSeason {
    /// Season label.
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// Observed flood days, days.
    pub flood_days: u32,
    /// Observed days (exposure), days.
    pub observed_days: u32,
}

/// One driver used in an outlook.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct DriverUse {
    /// Predictor name, e.g. `enso`.
    pub name: String,
    /// The value used for this season, in `unit` (the mean over scenarios when it is
    /// forecast).
    pub value: f64,
    /// Unit of `value`, e.g. `degC`, `days`, `m/s`, `m`.
    pub unit: String,
    /// Multiplicative effect on the flood-day rate per unit of the predictor, `exp(beta)`,
    /// a ratio.
    pub rate_ratio: f64,
    /// 95% confidence interval `[low, high]` of `rate_ratio`, a ratio.
    pub rate_ratio_ci: [f64; 2],
    /// The step `rate_ratio` is per, in words, e.g. `per 1 degC`.
    pub per: String,
    /// 10th and 90th percentile of the value over the outlook's scenarios, in `unit`.
    pub value_range: [f64; 2],
    /// The expected count's multiplier from this value against the fit-period mean, a ratio.
    pub effect: f64,
    /// Where the value comes from, in words.
    pub source: String,
}

/// `GET /api/v1/outlooks?season=LABEL`: every gauge's outlook for one season.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct OutlookSet {
    /// The season asked for; null when the set holds each gauge's default (next) outlook,
    /// each carrying its own season.
    #[schema(example = "2026-DJF", required = true)]
    pub season: Option<String>,
    /// Outlooks of the gauges that have one, ordered by gauge id.
    pub outlooks: Vec<Outlook>,
    /// Gauges without an outlook for this season, and why.
    pub unavailable: Vec<Unavailable>,
}

/// A gauge left out of an [`OutlookSet`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct Unavailable {
    /// The gauge id.
    #[schema(example = "port-tamsin")]
    pub gauge: String,
    /// Why, in plain words.
    pub reason: String,
}

/// `GET /api/v1/outlooks/issued`: outlooks as they were served, for later verification.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct IssuedOutlookList {
    /// Issued outlooks, newest first.
    pub issued: Vec<IssuedOutlook>,
}

/// One outlook as it was issued.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct IssuedOutlook {
    /// Store identifier.
    #[schema(example = 1)]
    pub id: i64,
    /// The gauge id.
    #[schema(example = "port-tamsin")]
    pub gauge: String,
    /// Season label.
    #[schema(example = "2026-DJF")]
    pub season: String,
    /// Version of the model that made it.
    pub model_version: String,
    /// Issue time (RFC 3339, UTC).
    pub issued_at: String,
    /// The driver values the outlook was made from, by driver name (as stored with the
    /// outlook).
    #[schema(value_type = std::collections::BTreeMap<String, crate::openapi::DriverInput>)]
    pub driver_inputs: serde_json::Value,
    /// The outlook as served.
    pub outlook: Outlook,
    /// Scores against what happened, once the season's data is in.
    #[schema(required = true)]
    pub verification: Option<SeasonVerification>,
}

/// How an issued outlook fared.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct SeasonVerification {
    /// Observed flood days, days.
    pub observed: u32,
    /// Observed days (exposure), days.
    pub observed_days: u32,
    /// Continuous ranked probability score of the outlook's pmf, days (lower is better).
    pub crps: f64,
    /// `-ln p(observed)`, nats (lower is better).
    pub log_score: f64,
    /// Probability (0 to 1) the outlook gave to the observed tercile category (climatology
    /// reference).
    pub observed_category_probability: f64,
    /// Ranked probability score over the climatology terciles, 0 to 1 (lower is better).
    pub rps: f64,
    /// Brier score of each of the outlook's `P(N >= k)`.
    pub brier: Vec<BrierScore>,
}

/// The Brier score of one exceedance probability.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, ToSchema)]
pub struct BrierScore {
    /// The `k` of `P(N >= k)`, days.
    pub days: u32,
    /// `(p - o)^2`, with `o` = 1 when at least `k` flood days were observed; 0 to 1.
    pub score: f64,
}

/// `P(N >= k)` for each `k` from a pmf: `1 - sum_{j < k} pmf[j]`, clamped to `[0, 1]`.
pub fn exceedance_from_pmf(pmf: &[f64], days: &[u32]) -> Vec<Exceedance> {
    days.iter()
        .map(|&k| {
            let below: f64 = pmf.iter().take(k as usize).sum();
            Exceedance {
                days: k,
                probability: (1.0 - below).clamp(0.0, 1.0),
            }
        })
        .collect()
}
