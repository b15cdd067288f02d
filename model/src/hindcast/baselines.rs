//! The forecast systems a hindcast compares: the gauge's driver model and the two baselines,
//! all refitted the same way on the same training seasons.
//!
//! - **climatology**: intercept and exposure only (`ln(observed days)` offset);
//! - **trend-only**: the sea-level trend alone.

use serde::Serialize;

use crate::fit::Predictor;

/// One forecast system of a hindcast.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ModelKind {
    /// The gauge's model with the drivers its TOML asks for.
    Drivers,
    /// Intercept and exposure only: the long-term average rate.
    Climatology,
    /// The sea-level trend alone.
    TrendOnly,
    /// The water-level engine (daily high waters simulated on the known tide).
    Water,
}

impl ModelKind {
    /// Every system, in index order.
    pub const ALL: [ModelKind; 4] = [
        ModelKind::Drivers,
        ModelKind::Climatology,
        ModelKind::TrendOnly,
        ModelKind::Water,
    ];

    /// The predictors of this system, given the gauge model's.
    pub fn predictors(self, gauge_predictors: &[Predictor]) -> Vec<Predictor> {
        match self {
            ModelKind::Drivers => gauge_predictors.to_vec(),
            ModelKind::Climatology => Vec::new(),
            ModelKind::TrendOnly => vec![Predictor::SeaLevel],
            ModelKind::Water => Vec::new(),
        }
    }

    /// The system in words, as a reference in a verdict.
    pub fn words(self) -> &'static str {
        match self {
            ModelKind::Drivers => "the driver model",
            ModelKind::Climatology => "the long-term average",
            ModelKind::TrendOnly => "the sea-level trend alone",
            ModelKind::Water => "the water-level engine",
        }
    }

    /// Index of the system in a hindcast's per-model arrays.
    pub(crate) fn index(self) -> usize {
        match self {
            ModelKind::Drivers => 0,
            ModelKind::Climatology => 1,
            ModelKind::TrendOnly => 2,
            ModelKind::Water => 3,
        }
    }
}

/// Whether a predictor's value for a past season was known when its outlook would have been
/// issued (before the season began).
///
/// - ENSO of the preceding season, the sea-level trend and the astronomical tide: known (the
///   tide is predicted; the trend is a smooth line, evaluated from the full-record fit);
/// - MJO activity and along-shore wind of the season itself: not known, so they are resampled
///   from the training seasons, as the outlook resamples past seasons;
/// - ENSO of the season itself (`enso_timing = "concurrent"`): as [`ConcurrentEnso`] says.
pub fn known_at_issue(predictor: Predictor, concurrent_enso_known: bool) -> bool {
    match predictor {
        Predictor::Enso => concurrent_enso_known,
        Predictor::Mjo | Predictor::Wind => false,
        Predictor::SeaLevel | Predictor::Tide => true,
    }
}

/// How a hindcast treats the season's own ENSO when the gauge's model uses it
/// (`enso_timing = "concurrent"`): the outlook takes it from an ENSO forecast, but forecasts
/// issued in past years are not part of a gauge's inputs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ConcurrentEnso {
    /// The observed seasonal ENSO stands in for its forecast (a perfect ENSO forecast, which
    /// short-lead ENSO forecasts approach; the skill is then an upper bound on what a real
    /// forecast gives).
    #[default]
    Observed,
    /// Resampled from the training seasons with MJO and wind (no ENSO foresight at all: a
    /// lower bound).
    Resampled,
    /// As known when the outlook would have been issued: the month before the season carried
    /// forward, with the error of that persistence in the training seasons
    /// ([`crate::water::enso_at_issue`]). What a real outlook would have scored.
    AtIssue,
}

impl ConcurrentEnso {
    /// The treatment in words.
    pub fn words(self) -> &'static str {
        match self {
            ConcurrentEnso::Observed => {
                "each season's ENSO as later observed (a perfect ENSO forecast: an upper bound)"
            }
            ConcurrentEnso::Resampled => "ENSO resampled from the training seasons (no foresight)",
            ConcurrentEnso::AtIssue => {
                "ENSO as known at issue time: the month before the season carried forward with \
                 its past error"
            }
        }
    }
}
